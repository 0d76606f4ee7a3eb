"""Reading a file's bytes safely: regular files only, within a size limit, never blocking.

Every file sweepaudit reads (the sweep, a benchmark file, the policy, a baseline, the trial
ledger) goes through :func:`read_bytes` or :func:`open_regular`, so that a device (``/dev/zero``
reads without end), a FIFO (blocks until a writer comes), a folder, a symbolic-link loop or a
sparse file of a terabyte becomes one clear error instead of a hang, a traceback or a process that
grows until the machine kills it. The errors are ``OSError``s; :func:`describe` words them for the
one-line messages the callers raise (each caller names its file and what it is).
"""

from __future__ import annotations

import errno
import os
import stat
from collections.abc import Callable
from typing import BinaryIO, TypeVar

T = TypeVar("T")

__all__ = [
    "KiB",
    "MiB",
    "GiB",
    "NotARegularFile",
    "FileTooLarge",
    "check_regular",
    "open_regular",
    "read_bytes",
    "read_locked",
    "read_stream",
    "explained",
    "describe",
]

KiB, MiB, GiB = 1 << 10, 1 << 20, 1 << 30
_CHUNK = 1 << 20

_KINDS = (
    (stat.S_ISCHR, "a character device"),
    (stat.S_ISBLK, "a block device"),
    (stat.S_ISFIFO, "a FIFO (named pipe)"),
    (stat.S_ISSOCK, "a socket"),
    (stat.S_ISDIR, "a directory"),
)


class NotARegularFile(OSError):
    """The path names a device, a FIFO, a socket or a directory; ``kind`` says which."""

    def __init__(self, path: str, kind: str) -> None:
        super().__init__(errno.EINVAL, f"it is {kind}, not a regular file", path)
        self.kind = kind


class FileTooLarge(OSError):
    """The file holds more bytes than the caller's limit."""

    def __init__(self, path: str, limit: int) -> None:
        super().__init__(errno.EFBIG, f"it is larger than the {_size(limit)} limit for this file", path)
        self.limit = limit


def _size(n: int) -> str:
    for unit, name in ((GiB, "GiB"), (MiB, "MiB"), (KiB, "KiB")):
        if n >= unit and n % unit == 0:
            return f"{n // unit} {name}"
    return f"{n:,} bytes"


def _kind(mode: int) -> str | None:
    for test, kind in _KINDS:
        if test(mode):
            return kind
    return None if stat.S_ISREG(mode) else "not a regular file"


def check_regular(path: str | os.PathLike) -> None:
    """Refuse, without opening it, a path that is missing or not a regular file (as :func:`open_regular`)."""
    where = os.fspath(path)
    kind = _kind(os.stat(where).st_mode)
    if kind == "a directory":
        raise IsADirectoryError(errno.EISDIR, "Is a directory", where)
    if kind is not None:
        raise NotARegularFile(where, kind)


def open_regular(path: str | os.PathLike, flags: int = os.O_RDONLY, mode: int = 0o666) -> int:
    """Open ``path`` and return the descriptor, refusing anything but a regular file.

    The path is checked with ``stat`` before it is opened (a device is never opened), opened with
    ``O_NONBLOCK`` (a FIFO that appeared meanwhile cannot block) and checked again on the open
    descriptor. ``flags`` may add ``O_CREAT``, ``O_APPEND``, ... (a missing file is then created).

    Raises
    ------
    FileNotFoundError, IsADirectoryError, PermissionError, OSError
        From the system (``ELOOP`` for a symbolic-link loop, ``ENAMETOOLONG``, ...).
    NotARegularFile
        For a device, FIFO, socket or directory.
    """
    where = os.fspath(path)
    try:
        kind = _kind(os.stat(where).st_mode)
    except FileNotFoundError:
        if not flags & os.O_CREAT:
            raise
        kind = None
    if kind == "a directory":
        raise IsADirectoryError(errno.EISDIR, "Is a directory", where)
    if kind is not None:
        raise NotARegularFile(where, kind)
    fd = os.open(where, flags | os.O_NONBLOCK | os.O_NOCTTY | os.O_CLOEXEC, mode)
    try:
        kind = _kind(os.fstat(fd).st_mode)
        if kind is not None:
            raise NotARegularFile(where, kind)
        os.set_blocking(fd, True)
    except BaseException:
        os.close(fd)
        raise
    return fd


def _read_chunks(read: Callable[[int, int], bytes], limit: int, where: str, first: int = _CHUNK) -> bytes:
    """``read(size, done)`` until it returns nothing, never more than ``limit`` bytes in all; the
    first read asks for ``first`` bytes (a regular file's size and one more: read in one call,
    the bytes are not copied again to be joined)."""
    chunks: list[bytes] = []
    total = 0
    while True:
        chunk = read(min(first if not chunks else _CHUNK, limit + 1 - total), total)
        if not chunk:
            return b"".join(chunks)
        chunks.append(chunk)
        total += len(chunk)
        if total > limit:
            raise FileTooLarge(where, limit)


def read_bytes(path: str | os.PathLike, *, limit: int) -> bytes:
    """The bytes of the regular file ``path``, at most ``limit`` of them (else :class:`FileTooLarge`).

    The limit holds while reading, so a file that grows (or whose size the system misstates) cannot
    exceed it either.
    """
    where = os.fspath(path)
    fd = open_regular(where)
    try:
        stated = os.fstat(fd).st_size
        if stated > limit:
            raise FileTooLarge(where, limit)
        return _read_chunks(lambda size, done: os.read(fd, size), limit, where, first=max(_CHUNK, stated + 1))
    finally:
        os.close(fd)


def read_locked(fd: int, *, limit: int, where: str) -> bytes:
    """The whole content of an open regular file, from its start, at most ``limit`` bytes."""
    if os.fstat(fd).st_size > limit:
        raise FileTooLarge(where, limit)
    return _read_chunks(lambda size, done: os.pread(fd, size, done), limit, where)


def read_stream(stream: BinaryIO, *, limit: int, where: str) -> bytes:
    """A binary stream (standard input) read to its end, at most ``limit`` bytes."""
    return _read_chunks(lambda size, done: stream.read(size), limit, where)


def explained(action: Callable[[], T], fail: Callable[[str], Exception], *, missing: str, folder: str,
              other: str) -> T:
    """``action()``, its ``OSError`` raised as ``fail(message)`` (one line for the caller's file):
    ``missing`` for a missing file, ``folder`` for a directory, else ``"<other>: <reason>"`` with
    the reason from :func:`describe`."""
    try:
        return action()
    except FileNotFoundError:
        raise fail(missing) from None
    except IsADirectoryError:
        raise fail(folder) from None
    except OSError as exc:
        raise fail(f"{other}: {describe(exc)}") from None


def describe(exc: OSError) -> str:
    """An ``OSError`` from reading or writing a file, in words for a one-line message."""
    if isinstance(exc, (NotARegularFile, FileTooLarge)):
        return exc.strerror
    if exc.errno == errno.ENOENT:
        return "no such file or folder"
    if exc.errno == errno.EISDIR:
        return "it is a directory, not a file"
    if exc.errno == errno.ELOOP:
        return "too many levels of symbolic links (a symbolic-link loop?)"
    if exc.errno == errno.ENAMETOOLONG:
        return "file name too long"
    text = exc.strerror or type(exc).__name__
    return text[:1].lower() + text[1:]
