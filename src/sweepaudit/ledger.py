"""The trial ledger (``--ledger PATH``): a JSON Lines file, kept in the strategy repository, with
one record per audit. It remembers every sweep a researcher has audited, so the deflated Sharpe
ratio can count all of them as trials, not only the configurations of the sweep in hand.

Counting rule: the trials are the sum of the configurations of every distinct fingerprint in the
ledger, plus this sweep's configurations when its fingerprint is new. Re-auditing the same sweep
adds no trials. The count is never below the sweep's own configurations.

Concurrency: the ledger is opened with ``O_APPEND`` and held under an exclusive ``fcntl.flock``
for the whole read-count-append cycle (callers hold it across the audit, so concurrent audits
sharing a ledger count each other's sweeps in some order). Each record is written as one full
line with one ``os.write``; a write that fails midway (a full disk) is cut back to the ledger's
previous end, so no partial line is ever left. A corrupted line stops the run with its line number;
the ledger is never rewritten, so nothing in it is lost. The ledger must be a regular file (a
device, FIFO or folder is refused) of at most :data:`LEDGER_FILE_LIMIT` bytes, and a record counts
at most :data:`MAX_TRIALS` configurations.
"""

from __future__ import annotations

import fcntl
import hashlib
import json
import os
from collections.abc import Iterator
from contextlib import contextmanager
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

import numpy as np

from . import validate
from ._version import LEDGER_SCHEMA, __version__
from .errors import InputError
from .readfile import GiB, describe, open_regular, read_bytes, read_locked
from .results import LedgerEntry, LedgerTally

__all__ = [
    "LEDGER_SCHEMA",
    "LedgerEntry",
    "LedgerTally",
    "Ledger",
    "sweep_fingerprint",
    "parse_ledger",
    "read_ledger",
    "tally_trials",
    "ledger_record",
    "open_ledger",
    "LEDGER_FILE_LIMIT",
    "MAX_TRIALS",
]

#: The most bytes a ledger may hold (a record is about 300 bytes: millions of audits).
LEDGER_FILE_LIMIT = 1 * GiB
#: The most trials sweepaudit counts, from a declaration or summed over a ledger: far beyond any
#: search a computer can run, and every count up to it is exact as a float (below 2**53).
MAX_TRIALS = 10**15

def sweep_fingerprint(returns: np.ndarray, configurations: tuple[str, ...] | list[str]) -> str:
    """SHA-256 fingerprint of a sweep's data.

    Definition: the configurations are put in order of their names (Python string order, i.e.
    by code point) and the matrix's columns with them; the hash then covers, in order, the tag
    ``sweepaudit.ledger/1`` and a newline, the shape ``"<windows>x<configurations>"`` and a newline,
    the sorted names as a JSON list (UTF-8, non-ASCII kept) and a newline, and the returns as
    little-endian float64 bytes, window by window (row-major), with -0.0 written as 0.0.

    It is computed from the loaded, normalised matrix (fractions, windows in time order), not from
    the file's bytes: the same data saved as CSV or Parquet, long or wide, with the columns in any
    order, gives the same fingerprint as long as the numbers parse to the same float64 values (a
    percent file divided by 100 can differ from a fraction file in the last bit, and then counts
    as a different sweep). Window labels are not part of it.
    """
    x = np.asarray(returns, dtype=np.float64)
    names = list(configurations)
    if x.ndim != 2 or x.shape[1] != len(names):
        raise InputError(f"returns must be a T x N matrix with one name per column; got shape {x.shape}")
    order = sorted(range(len(names)), key=names.__getitem__)
    x = np.ascontiguousarray(x[:, order]) + 0.0  # + 0.0 turns -0.0 into 0.0
    digest = hashlib.sha256()
    digest.update(LEDGER_SCHEMA.encode("ascii") + b"\n")
    digest.update(f"{x.shape[0]}x{x.shape[1]}\n".encode("ascii"))
    digest.update(json.dumps([names[k] for k in order], ensure_ascii=False).encode("utf-8") + b"\n")
    digest.update(x.astype("<f8", copy=False).tobytes(order="C"))
    return digest.hexdigest()


def _bad_line(path: str, line: int, detail: str) -> InputError:
    return InputError(
        f"line {line} of the trial ledger is not a valid record ({detail}); the ledger was left "
        "unchanged: repair or remove that line",
        path=path,
    )


def parse_ledger(data: bytes, *, path: str = "<ledger>") -> tuple[LedgerEntry, ...]:
    """Parse the bytes of a ledger; blank lines are ignored.

    Raises
    ------
    InputError
        Naming the file and the 1-based line of the first bad record.
    """
    entries = []
    for number, raw in enumerate(data.split(b"\n"), start=1):
        if not raw.strip():
            continue
        try:
            record = json.loads(raw.decode("utf-8"))
        except UnicodeDecodeError:
            raise _bad_line(path, number, "not UTF-8 text") from None
        except json.JSONDecodeError as exc:
            raise _bad_line(path, number, f"not JSON: {exc.msg} at column {exc.colno}") from None
        if not isinstance(record, dict):
            raise _bad_line(path, number, "not a JSON object")
        fingerprint = record.get("fingerprint")
        if not (isinstance(fingerprint, str) and len(fingerprint) == 64
                and all(c in "0123456789abcdef" for c in fingerprint)):
            raise _bad_line(path, number, f"fingerprint must be 64 lowercase hex digits; got {fingerprint!r}")
        try:
            count = validate.whole_number(record.get("configurations"), "configurations", minimum=1,
                                          maximum=MAX_TRIALS)
        except InputError as exc:
            raise _bad_line(path, number, str(exc)) from None
        entries.append(LedgerEntry(number, fingerprint, count, record))
    return tuple(entries)


def read_ledger(path: str | Path) -> tuple[LedgerEntry, ...]:
    """Read a ledger without locking it (for reports); a missing file is an empty ledger."""
    try:
        data = read_bytes(path, limit=LEDGER_FILE_LIMIT)
    except FileNotFoundError:
        return ()
    except OSError as exc:
        raise InputError(f"cannot read the trial ledger: {describe(exc)}", path=str(path)) from None
    return parse_ledger(data, path=str(path))


def tally_trials(
    entries: tuple[LedgerEntry, ...], *, fingerprint: str, configurations: int, path: str = "<ledger>"
) -> LedgerTally:
    """Count the trials: configurations summed over distinct fingerprints, this sweep included.

    Raises
    ------
    InputError
        When the count exceeds :data:`MAX_TRIALS`.
    """
    distinct: dict[str, int] = {}
    for e in entries:
        distinct.setdefault(e.fingerprint, e.configurations)
    new = fingerprint not in distinct
    trials = sum(distinct.values()) + (configurations if new else 0)
    if trials > MAX_TRIALS:
        raise InputError(
            f"the trial ledger counts {trials:,} trials, more than the {MAX_TRIALS:,} sweepaudit can count; "
            "check its records' configurations",
            path=path,
        )
    return LedgerTally(
        path=path,
        records=len(entries),
        sweeps_before=len(distinct),
        fingerprint=fingerprint,
        configurations=configurations,
        new_sweep=new,
        trials=max(trials, configurations),
    )


def ledger_record(
    *,
    fingerprint: str,
    configurations: int,
    windows: int,
    selected: str,
    verdict: str,
    input_path: str,
    trials: int,
    date: datetime | None = None,
) -> dict[str, Any]:
    """One ledger record (``date`` defaults to now, UTC, ISO 8601 to the second)."""
    when = (date or datetime.now(timezone.utc)).astimezone(timezone.utc)
    return {
        "schema": LEDGER_SCHEMA,
        "fingerprint": fingerprint,
        "configurations": configurations,
        "windows": windows,
        "date": when.isoformat(timespec="seconds").replace("+00:00", "Z"),
        "selected": selected,
        "verdict": verdict,
        "trials": trials,
        "version": __version__,
        "input": input_path,
    }


class Ledger:
    """An open, exclusively locked ledger; use :func:`open_ledger`."""

    def __init__(self, path: str, fd: int, entries: tuple[LedgerEntry, ...], ends_with_newline: bool) -> None:
        self.path = path
        self._fd = fd
        self.entries = entries
        self._needs_newline = not ends_with_newline
        self._appended: tuple[int, int] | None = None

    def tally(self, *, fingerprint: str, configurations: int) -> LedgerTally:
        return tally_trials(self.entries, fingerprint=fingerprint, configurations=configurations, path=self.path)

    def append(self, record: dict[str, Any]) -> None:
        """Append one record as one line, in one write (O_APPEND puts it at the end).

        A write that fails midway (a full disk) is cut back to the previous end: the ledger then
        holds exactly what it held before, and the error says so.
        """
        # ASCII only: names and paths with control characters or bidirectional overrides are
        # escaped, so printing the ledger cannot drive a terminal.
        line = json.dumps(record, ensure_ascii=True, allow_nan=False, separators=(",", ":")) + "\n"
        data = (("\n" if self._needs_newline else "") + line).encode("ascii")
        end = os.fstat(self._fd).st_size
        try:
            written = os.write(self._fd, data)
            # A short write is only possible on a full disk; we hold the lock, so finish the line.
            while written < len(data):
                written += os.write(self._fd, data[written:])
            os.fsync(self._fd)
        except OSError as exc:
            try:
                os.ftruncate(self._fd, end)
            except OSError:
                pass
            raise InputError(
                f"cannot append to the trial ledger ({describe(exc)}); the ledger was left as it was",
                path=self.path,
            ) from None
        self._needs_newline = False
        self._appended = (end, end + len(data))
        fingerprint = record["fingerprint"]
        line_number = (self.entries[-1].line if self.entries else 0) + 1
        self.entries = (*self.entries, LedgerEntry(line_number, fingerprint, record["configurations"], record))


    def retract(self) -> None:
        """Take back the record this run appended (when an output failed after it), while the lock
        is still held; nothing if none was appended or the ledger no longer ends with it."""
        if self._appended is None:
            return
        start, end = self._appended
        try:
            if os.fstat(self._fd).st_size == end:
                os.ftruncate(self._fd, start)
                os.fsync(self._fd)
        except OSError:
            pass
        self._appended = None
        self.entries = self.entries[:-1]


@contextmanager
def open_ledger(path: str | Path) -> Iterator[Ledger]:
    """Open (creating it if needed), lock and read a ledger; the lock is held until the block ends.

    Raises
    ------
    InputError
        When the folder is missing, the file cannot be opened, or a line is corrupted (the file is
        then left exactly as it was).
    """
    where = str(path)
    folder = Path(path).parent if str(Path(path).parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"cannot keep the trial ledger: folder {folder} does not exist", path=where)
    try:
        fd = open_regular(where, os.O_RDWR | os.O_CREAT | os.O_APPEND, 0o666)
    except IsADirectoryError:
        raise InputError("the trial ledger is a folder, not a file", path=where) from None
    except OSError as exc:
        raise InputError(f"cannot open the trial ledger: {describe(exc)}", path=where) from None
    try:
        fcntl.flock(fd, fcntl.LOCK_EX)
        try:
            data = read_locked(fd, limit=LEDGER_FILE_LIMIT, where=where)
        except OSError as exc:
            raise InputError(f"cannot read the trial ledger: {describe(exc)}", path=where) from None
        entries = parse_ledger(data, path=where)
        yield Ledger(where, fd, entries, ends_with_newline=(not data or data.endswith(b"\n")))
    finally:
        try:
            fcntl.flock(fd, fcntl.LOCK_UN)
        finally:
            os.close(fd)
