"""The trial ledger (``--ledger PATH``): a JSON Lines file, kept in the strategy repository, with
one record per audit. It remembers every configuration a researcher has tried, so the deflated
Sharpe ratio can count all of them as trials, not only the configurations of the sweep in hand.

Counting rule (:func:`tally_trials`): a trial is a configuration, identified by its key (its name
and parameter values, :mod:`sweepaudit.names`), of a strategy (an optional label). The trials are
the distinct (strategy, configuration) pairs of every record, this audit's included. Re-auditing
the same grid on more data adds no trials; widening the grid adds only the new configurations.
Each record keeps the data fingerprint of its sweep for the audit trail, and the digest of its
grid (``grid``: the sorted configuration keys, hashed); the keys themselves
(``configurations_tried``) are listed the first time a grid appears in the ledger, so a weekly gate
re-auditing one grid adds a short line each week, not the grid again.

Records that name no configurations count by their data fingerprint, as every record did before
the ledger counted configurations: each distinct fingerprint its configurations once. Such a record
is an old one (it has only ``fingerprint`` and ``configurations``), or one of a sweep whose
configuration names were generated (an array without names), which say nothing about what was
tried. When a record naming configurations, or this audit, has the same data fingerprint, the
old record was that sweep, so it is counted as those configurations (it adds nothing more). A
record naming a grid whose listing line is no longer in the ledger counts by fingerprint too.
The count is never below the sweep's own configurations.

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
from collections import Counter
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

import numpy as np

from . import validate
from ._version import LEDGER_SCHEMA, __version__
from .errors import InputError
from .readfile import GiB, describe, open_regular, read_bytes, read_locked
from .results import LedgerEntry, LedgerTally
from .sweep import Sweep

__all__ = [
    "LEDGER_SCHEMA",
    "LedgerEntry",
    "LedgerTally",
    "Ledger",
    "sweep_fingerprint",
    "parse_ledger",
    "read_ledger",
    "tally_trials",
    "tally_note",
    "record_trials",
    "trial_keys",
    "grid_digest",
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


def trial_keys(sweep: Sweep) -> tuple[str, ...] | None:
    """The keys of a sweep's configurations as the ledger counts them; None when the names were
    generated (an array without names: ``config 1``, ``config 2``, ... say nothing about what was
    tried, so such a sweep counts by its data fingerprint)."""
    if sweep.reading.get("configuration_names") == "generated":
        return None
    return sweep.configuration_keys


def grid_digest(keys: Sequence[str]) -> str:
    """SHA-256 of a grid: its configuration keys sorted (Python string order) and written as a JSON
    list (``json.dumps`` defaults, non-ASCII kept, UTF-8). Names the grid in later records."""
    return hashlib.sha256(json.dumps(sorted(keys), ensure_ascii=False).encode("utf-8")).hexdigest()


def _is_digest(value: Any) -> bool:
    return isinstance(value, str) and len(value) == 64 and all(c in "0123456789abcdef" for c in value)


def record_trials(
    entry: LedgerEntry, *, path: str = "<ledger>"
) -> tuple[str | None, tuple[str, ...] | None, str | None]:
    """The strategy label, the configuration keys listed, and the grid digest of a record.

    Keys are listed the first time a grid appears in a ledger; later records name it by ``grid``
    only. A record with neither (an old record, or one of a sweep whose names were generated) names
    no configurations and counts by its data fingerprint.

    Raises
    ------
    InputError
        Naming the file and the record's line when ``strategy``, ``grid`` or
        ``configurations_tried`` is malformed, or the listed keys do not give the grid's digest.
    """
    record = entry.record
    strategy, grid, keys = record.get("strategy"), record.get("grid"), record.get("configurations_tried")
    if strategy is not None and not isinstance(strategy, str):
        raise _bad_line(path, entry.line, f"strategy must be a string or null; got {strategy!r}")
    if grid is not None and not _is_digest(grid):
        raise _bad_line(path, entry.line, f"grid must be 64 lowercase hex digits or null; got {grid!r}")
    if keys is None:
        return strategy, None, grid
    if not isinstance(keys, list) or not all(isinstance(k, str) for k in keys):
        raise _bad_line(path, entry.line, "configurations_tried must be a list of configuration keys (strings) or null")
    if len(keys) != entry.configurations or len(set(keys)) != len(keys):
        raise _bad_line(
            path, entry.line,
            f"configurations_tried must list the record's {entry.configurations} configurations once each; "
            f"it lists {len(keys)} ({len(set(keys))} distinct)",
        )
    digest = grid_digest(keys)
    if grid is not None and grid != digest:
        raise _bad_line(path, entry.line, "grid is not the digest of configurations_tried (the line was edited?)")
    return strategy, tuple(keys), digest


@dataclass
class _Tried:
    """What a ledger's records tried, read once: the keys of each strategy label, and the records
    that count by their data fingerprint."""

    by_label: dict[str | None, set[str]] = field(default_factory=dict)
    #: grid digest -> its keys (from the record that listed them)
    grids: dict[str, tuple[str, ...]] = field(default_factory=dict)
    #: (label, grid) already counted: the same grid again adds nothing, skip it
    applied: set[tuple[str | None, str]] = field(default_factory=set)
    #: data fingerprint -> (label, grid) of the first record (or this audit) with known keys
    named: dict[str, tuple[str | None, str]] = field(default_factory=dict)
    #: data fingerprint -> (label, configurations) of records counted by fingerprint
    unnamed: dict[str, tuple[str | None, int]] = field(default_factory=dict)
    unnamed_records: int = 0

    def apply(self, label: str | None, grid: str) -> None:
        if (label, grid) not in self.applied:
            self.applied.add((label, grid))
            self.by_label.setdefault(label, set()).update(self.grids[grid])

    def count(self) -> tuple[Counter, int]:
        """Trials per strategy label, and the trials of the fingerprints no known grid explains."""
        labels: Counter = Counter({label: len(keys) for label, keys in self.by_label.items()})
        identified: dict[str | None, set[str]] = {}  # old records' configurations, known by fingerprint
        by_print = 0
        for fingerprint, (label, configurations) in self.unnamed.items():
            if fingerprint in self.named:
                named_label, grid = self.named[fingerprint]
                if (named_label, grid) not in self.applied:
                    known = self.by_label.get(named_label, set())
                    identified.setdefault(named_label, set()).update(k for k in self.grids[grid] if k not in known)
            else:
                labels[label] += configurations
                by_print += configurations
        labels.update({label: len(keys) for label, keys in identified.items()})
        return labels, by_print


def _read_tried(entries: Sequence[LedgerEntry], path: str) -> _Tried:
    tried = _Tried()
    for e in entries:
        label, keys, grid = record_trials(e, path=path)
        if keys is not None:
            tried.grids.setdefault(grid, keys)
        if grid is not None and grid in tried.grids:
            tried.named.setdefault(e.fingerprint, (label, grid))
            tried.apply(label, grid)
        else:  # an old record, generated names, or a grid whose listing line is gone: by fingerprint
            tried.unnamed.setdefault(e.fingerprint, (label, e.configurations))
            tried.unnamed_records += 1
    return tried


def tally_trials(
    entries: Sequence[LedgerEntry],
    *,
    fingerprint: str,
    configurations: int,
    path: str = "<ledger>",
    keys: Sequence[str] | None = None,
    strategy: str | None = None,
) -> LedgerTally:
    """Count the trials: the distinct (strategy, configuration) pairs of the records and this audit,
    plus the configurations of each distinct fingerprint of the records counted by fingerprint (see
    the module notes).

    Parameters
    ----------
    entries : sequence of LedgerEntry
        The ledger's records.
    fingerprint : str
        This sweep's data fingerprint (:func:`sweep_fingerprint`).
    configurations : int
        This sweep's configurations.
    path : str
        The ledger, for messages.
    keys : sequence of str, optional
        This sweep's configuration keys (:func:`trial_keys`); None counts it by its fingerprint.
    strategy : str, optional
        This audit's strategy label.

    Raises
    ------
    InputError
        When a record is malformed (naming its line), or the count exceeds :data:`MAX_TRIALS`.
    """
    tried = _read_tried(entries, path)
    grid = None
    if keys is not None:
        keys = tuple(keys)
        if len(keys) != configurations or len(set(keys)) != len(keys):
            raise InputError(f"keys must name the sweep's {configurations} configurations once each; got {len(keys)}")
        grid = grid_digest(keys)
        recorded = grid in tried.grids
        tried.grids.setdefault(grid, keys)
        tried.named.setdefault(fingerprint, (strategy, grid))
    before, _ = tried.count()
    if grid is not None:
        tried.apply(strategy, grid)
    elif fingerprint not in tried.named:
        tried.unnamed.setdefault(fingerprint, (strategy, configurations))
    after, by_print = tried.count()
    trials = max(sum(after.values()), configurations)
    if trials > MAX_TRIALS:
        raise InputError(
            f"the trial ledger counts {trials:,} trials, more than the {MAX_TRIALS:,} sweepaudit can count; "
            "check its records' configurations",
            path=path,
        )
    prints = {e.fingerprint for e in entries}
    return LedgerTally(
        path=path, records=len(entries), sweeps_before=len(prints), fingerprint=fingerprint,
        configurations=configurations, new_sweep=fingerprint not in prints, trials=trials, strategy=strategy,
        by_configuration=grid is not None, trials_before=sum(before.values()),
        trials_added=trials - sum(before.values()), fingerprint_records=tried.unnamed_records,
        fingerprint_trials=by_print,
        strategies=tuple(sorted(after.items(), key=lambda kv: (kv[0] is not None, kv[0] or ""))),
        grid=grid, grid_recorded=grid is not None and recorded,
    )


def tally_note(tally: LedgerTally) -> str:
    """The ledger's count in words: what it counts, what this audit added, and the old records."""
    label = f" of strategy {tally.strategy!r}" if tally.strategy is not None else ""
    added = (f"{tally.trials_added:,} of this sweep's {tally.configurations:,} configurations{label} are new"
             if tally.by_configuration else
             f"this sweep's configuration names were generated, so its {tally.configurations:,} configurations "
             "count by its data fingerprint")
    note = (f"{tally.trials:,} trials counted by the ledger {tally.path} (a trial is a configuration of a strategy; "
            f"re-auditing one on more data adds none): {added}")
    if tally.fingerprint_records:
        note += (f"; {tally.fingerprint_records:,} record(s) name no configurations and count by their data "
                 f"fingerprint: {tally.fingerprint_trials:,} trials")
    return note


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
    strategy: str | None = None,
    keys: Sequence[str] | None = None,
    tally: LedgerTally | None = None,
) -> dict[str, Any]:
    """One ledger record (``date`` defaults to now, UTC, ISO 8601 to the second).

    ``strategy`` and ``keys`` (the sweep's configuration keys; None when they were generated) say
    what was tried: ``grid`` is their digest (:func:`grid_digest`), and ``configurations_tried``
    lists them, sorted, unless ``tally`` says this ledger already lists that grid. ``tally`` adds
    the ledger's count (``trials_counted``) and what this audit added (``trials_added``).
    """
    when = (date or datetime.now(timezone.utc)).astimezone(timezone.utc)
    listed = keys is not None and not (tally is not None and tally.grid_recorded)
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
        "strategy": strategy,
        "grid": grid_digest(keys) if keys is not None else None,
        "configurations_tried": sorted(keys) if listed else None,
        "trials_counted": tally.trials if tally is not None else None,
        "trials_added": tally.trials_added if tally is not None else None,
    }


class Ledger:
    """An open, exclusively locked ledger; use :func:`open_ledger`."""

    def __init__(self, path: str, fd: int, entries: tuple[LedgerEntry, ...], ends_with_newline: bool) -> None:
        self.path = path
        self._fd = fd
        self.entries = entries
        self._needs_newline = not ends_with_newline
        self._appended: tuple[int, int] | None = None

    def tally(self, *, fingerprint: str, configurations: int, keys: Sequence[str] | None = None,
              strategy: str | None = None) -> LedgerTally:
        return tally_trials(self.entries, fingerprint=fingerprint, configurations=configurations, path=self.path,
                            keys=keys, strategy=strategy)

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
