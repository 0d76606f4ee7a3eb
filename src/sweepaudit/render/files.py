"""Atomic file output: write to a temporary file beside the target, then rename."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from ..errors import InputError

__all__ = ["share", "write_atomic"]


def share(path: str | os.PathLike, *, folder: bool = False) -> None:
    """Give a file (or folder) the permissions of any the user creates: temporary ones are private."""
    mask = os.umask(0)
    os.umask(mask)
    os.chmod(path, (0o777 if folder else 0o666) & ~mask)


def write_atomic(path: str | os.PathLike, data: str | bytes) -> None:
    """Write ``data`` to ``path`` so that readers see the old file or the whole new one, never a part.

    Raises
    ------
    InputError
        When the target's folder does not exist or cannot be written.
    """
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"cannot write {target}: folder {folder} does not exist")
    payload = data.encode("utf-8") if isinstance(data, str) else data
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise InputError(f"cannot write {target}: {exc.strerror}") from None
    try:
        share(tmp)  # mkstemp makes the file private (0600)
        with os.fdopen(fd, "wb") as handle:
            handle.write(payload)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
