"""Writing outputs as one transaction: nothing lost, nothing half-written, nothing left behind.

An audit's outputs (JSON, JUnit, the report and its figures, the terminal text) are rendered in
memory, then written in three steps:

1. **stage**: each file is written, flushed and synced to a new hidden file beside its target
   (``.<name>~sweepaudit-<16 hex>.tmp``); an existing target gets a hard link (or, where links are
   not supported, a copy) ``...bak`` so that it can be put back;
2. **commit**: the staged files are renamed over their targets, in order (a rename is atomic: a
   reader sees the old file or the whole new one);
3. **finish** (everything succeeded, the trial ledger appended) removes the backups; **rollback**
   (any failure, at any step) removes what this run staged or created and puts every backup back.

The tool deletes or renames only files it created: its own temporary and backup files, a target it
created in this run, and (see :mod:`sweepaudit.render.report.write`) figures listed in its own
manifest. Hidden files of the pattern above that a killed run left behind are removed by a later
run writing to the same folder when they are provably ours: the exact name pattern, a regular
file, owned by the user running sweepaudit and untouched for :data:`STALE_AFTER` seconds. Nothing
else is ever removed.

A kill -9 during staging leaves every target as it was; during the commit (a few renames) each
target is either the old file or the new one, whole.
"""

from __future__ import annotations

import errno
import io
import os
import re
import secrets
import stat
import sys
import time
from pathlib import Path
from typing import Protocol, TextIO

from ..errors import OutputError
from ..readfile import describe

__all__ = [
    "STALE_AFTER",
    "Step",
    "FileStep",
    "Transaction",
    "check_target",
    "folder_of",
    "hidden_name",
    "new_hidden_file",
    "remove_stale",
    "write_atomic",
    "write_terminal",
]

#: Seconds after which a hidden temporary or backup file of ours counts as left by a killed run.
STALE_AFTER = 3600.0

_MARK = "~sweepaudit-"
_OURS = re.compile(r"\..{1,64}~sweepaudit-[0-9a-f]{16}\.(?:tmp|bak)", re.DOTALL)


def folder_of(path: Path) -> Path:
    """The folder a path's file lives in (``.`` for a bare name)."""
    return path.parent if str(path.parent) else Path(".")


def hidden_name(name: str, kind: str) -> str:
    """A hidden name of ours for a temporary (``tmp``) or backup (``bak``) file of ``name``."""
    # At most 64 characters of the target's name: the hidden name stays within the 255-byte limit
    # of a file name whatever the target's length.
    return f".{name[:64]}{_MARK}{secrets.token_hex(8)}.{kind}"


def new_hidden_file(folder: Path, name: str, data: bytes, *, kind: str = "tmp") -> Path:
    """A new hidden file in ``folder`` (for the target ``name``) holding ``data``, synced to disk.

    Created exclusively (never over an existing file) with the usual permissions (umask applies).
    On any failure nothing is left behind and the ``OSError`` propagates.
    """
    path = folder / hidden_name(name, kind)
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL | os.O_CLOEXEC, 0o666)
    try:
        view = memoryview(data)
        while view:
            view = view[os.write(fd, view):]
        os.fsync(fd)
    except BaseException:
        os.close(fd)
        _unlink(path)
        raise
    os.close(fd)
    return path


def _unlink(path: Path) -> None:
    try:
        os.unlink(path)
    except FileNotFoundError:
        pass


def remove_stale(folder: Path, *, target: str | None = None, now: float | None = None) -> list[Path]:
    """Remove the hidden files a killed run of sweepaudit left in ``folder``; return them.

    Only names of our pattern (for ``target``'s name when given), regular files (not links), owned
    by this user and not modified for :data:`STALE_AFTER` seconds. Errors are ignored: a file that
    cannot be removed stays.
    """
    now = time.time() if now is None else now
    prefix = None if target is None else f".{target[:64]}{_MARK}"
    removed = []
    try:
        names = os.listdir(folder)
    except OSError:
        return removed
    for name in names:
        if not _OURS.fullmatch(name) or (prefix is not None and not name.startswith(prefix)):
            continue
        path = folder / name
        try:
            st = os.lstat(path)
            if stat.S_ISREG(st.st_mode) and st.st_uid == os.geteuid() and now - st.st_mtime > STALE_AFTER:
                os.unlink(path)
                removed.append(path)
        except OSError:
            continue
    return removed


def check_target(path: str | os.PathLike, what: str) -> Path:
    """The file an output will be written to, checked before any work is done.

    A symbolic link is followed (the output replaces the file it points to, the link stays).
    Refused: a missing or unwritable folder, a folder or any non-regular file at the path (a
    device, a FIFO), a symbolic-link loop, a name too long.

    Raises
    ------
    OutputError
        Naming the output (``what``) and the path.
    """
    given = Path(path)
    target = Path(os.path.realpath(given)) if os.path.islink(given) else given
    folder = folder_of(target)
    try:
        if not stat.S_ISDIR(os.stat(folder).st_mode):
            raise OutputError(f"cannot write the {what} {given}: {folder} is not a folder")
    except FileNotFoundError:
        raise OutputError(f"cannot write the {what} {given}: folder {folder} does not exist") from None
    except OSError as exc:
        raise OutputError(f"cannot write the {what} {given}: folder {folder}: {describe(exc)}") from None
    if not os.access(folder, os.W_OK | os.X_OK):
        raise OutputError(f"cannot write the {what} {given}: folder {folder} is not writable")
    try:
        mode = os.stat(target).st_mode
    except FileNotFoundError:
        return target
    except OSError as exc:
        raise OutputError(f"cannot write the {what} {given}: {describe(exc)}") from None
    if stat.S_ISDIR(mode):
        raise OutputError(f"cannot write the {what} {given}: it is a folder; give a file name")
    if not stat.S_ISREG(mode):
        raise OutputError(f"cannot write the {what} {given}: it is not a regular file")
    return target


class Step(Protocol):
    """One staged part of a transaction."""

    def commit(self) -> None: ...

    def rollback(self) -> None: ...

    def finish(self) -> None: ...


def _identity(path: Path) -> tuple[int, int]:
    st = os.lstat(path)
    return st.st_dev, st.st_ino


class FileStep:
    """One file: staged beside its target on creation, renamed over it at commit.

    Raises
    ------
    OutputError
        When staging fails (nothing is left behind).
    """

    def __init__(self, target: str | os.PathLike, data: str | bytes, *, what: str) -> None:
        self.target = check_target(target, what)
        self.what = what
        self.temp: Path | None = None
        self.backup: Path | None = None
        self.committed = False
        folder = folder_of(self.target)
        payload = data.encode("utf-8") if isinstance(data, str) else data
        remove_stale(folder, target=self.target.name)
        try:
            self.temp = new_hidden_file(folder, self.target.name, payload)
            self.identity = _identity(self.temp)
            self.backup = self._keep_previous(folder)
        except OSError as exc:
            try:
                self.rollback()
            except OSError:
                pass  # what stays is hidden, ours, and removed by a later run
            raise OutputError(f"cannot write the {what} {target}: {describe(exc)}") from None

    def _keep_previous(self, folder: Path) -> Path | None:
        """A hidden hard link to (or copy of) the file the commit will replace, if there is one."""
        try:
            if not stat.S_ISREG(os.lstat(self.target).st_mode):
                return None
        except FileNotFoundError:
            return None
        backup = folder / hidden_name(self.target.name, "bak")
        try:
            os.link(self.target, backup)
            return backup
        except OSError as exc:
            if exc.errno not in (errno.EPERM, errno.ENOTSUP, errno.EXDEV, errno.EMLINK, errno.ENOSYS):
                raise
        return new_hidden_file(folder, self.target.name, self.target.read_bytes(), kind="bak")

    def commit(self) -> None:
        try:
            os.replace(self.temp, self.target)
        except OSError as exc:
            raise OutputError(f"cannot write the {self.what} {self.target}: {describe(exc)}") from None
        self.committed = True

    def rollback(self) -> None:
        """Put the previous file back (or remove the one this run created); drop the staged file."""
        if self.committed:
            if self.backup is not None:
                os.replace(self.backup, self.target)
                self.backup = None
            elif _identity(self.target) == self.identity:
                os.unlink(self.target)
            self.committed = False
        for path in (self.temp, self.backup):
            if path is not None:
                _unlink(path)

    def finish(self) -> None:
        if self.backup is not None:
            _unlink(self.backup)


class Transaction:
    """Steps staged one by one, committed together, finished or rolled back together.

    Use as a context manager: leaving the block normally finishes every step (backups removed);
    leaving it by an exception rolls every step back, in reverse order, whatever stage it reached.
    """

    def __init__(self) -> None:
        self.steps: list[Step] = []

    def add(self, step: Step) -> Step:
        self.steps.append(step)
        return step

    def commit(self) -> None:
        for step in self.steps:
            step.commit()

    def rollback(self) -> None:
        for step in reversed(self.steps):
            try:
                step.rollback()
            except OSError:
                continue  # best effort: what cannot be undone stays, hidden files are cleaned later

    def finish(self) -> None:
        for step in self.steps:
            try:
                step.finish()
            except OSError:
                continue

    def __enter__(self) -> Transaction:
        return self

    def __exit__(self, kind, error, trace) -> bool:
        if kind is None:
            self.finish()
        else:
            self.rollback()
        return False


def write_atomic(path: str | os.PathLike, data: str | bytes, *, what: str = "file") -> None:
    """Write one file so that readers see the old file or the whole new one, never a part.

    Raises
    ------
    OutputError
        When the target's folder is missing or unwritable, or the disk is full (the previous file,
        if any, is then left as it was).
    """
    with Transaction() as outputs:
        outputs.add(FileStep(path, data, what=what))
        outputs.commit()


def write_terminal(text: str, stream: TextIO | None = None) -> None:
    """Write the terminal output to standard output (or ``stream``) straight through its descriptor.

    A reader that went away (a closed pipe, ``| head``) is not an error: the rest is dropped.

    Raises
    ------
    OutputError
        When standard output cannot be written (a full disk, an I/O error).
    """
    stream = stream or sys.stdout
    try:
        fd = stream.fileno()
    except (AttributeError, OSError, io.UnsupportedOperation):
        fd = None
    try:
        if fd is None:
            stream.write(text)
            stream.flush()
            return
        stream.flush()
        view = memoryview(text.encode(getattr(stream, "encoding", None) or "utf-8", errors="replace"))
        while view:
            view = view[os.write(fd, view):]
    except BrokenPipeError:
        return
    except OSError as exc:
        raise OutputError(f"cannot write to standard output: {describe(exc)}") from None
