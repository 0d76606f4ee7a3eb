"""The audit as a CI gate: the trials a deflation counts, from a declaration and the trial ledger.

:func:`counted_trials` holds the ledger locked from before the audit until its record is appended,
so the count and the record are one step (see :mod:`sweepaudit.ledger`). The baseline comparison is
pure dict work in :mod:`sweepaudit.baseline`; :func:`sweepaudit.api.audit` wires both in.
"""

from __future__ import annotations

import os
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass

from .document import ledger_block
from .errors import InputError
from .ledger import MAX_TRIALS, Ledger, ledger_record, open_ledger, sweep_fingerprint, tally_note, trial_keys
from .methods.inference import declared_trials
from .results import LedgerTally
from .sweep import Sweep

__all__ = ["TrialCount", "trials_to_count", "counted_trials"]


def trials_to_count(
    configurations: int, *, declared: int | None = None, tally: LedgerTally | None = None, name: str = "trials"
) -> tuple[int | None, str | None]:
    """The trials the deflated Sharpe ratio counts, and a note saying where the number came from.

    ``declared`` may not be below the sweep's configurations nor above
    :data:`~sweepaudit.ledger.MAX_TRIALS` (``name`` is the argument or option it came from, for the
    message). With a ledger the count is the larger of the two. Without either: ``(None, None)``
    (the sweep's configurations).
    """
    if declared is not None:
        declared = declared_trials(declared, configurations, name=name)
        if declared > MAX_TRIALS:
            raise InputError(f"{name} must be at most {MAX_TRIALS:,} trials; got {declared:,}")
    if tally is None:
        if declared is None:
            return None, None
        return declared, f"{declared} trials declared with --trials"
    if declared is None:
        return tally.trials, tally_note(tally)
    used = max(declared, tally.trials)
    source = "--trials" if declared >= tally.trials else "the ledger"
    return used, (
        f"{used} trials: the larger of --trials ({declared}) and the ledger's count ({tally.trials}), "
        f"from {source}; {tally_note(tally)}"
    )


@dataclass
class TrialCount:
    """The trials of one audit and, with a ledger, the open ledger that will record it.

    Attributes
    ----------
    trials : int or None
        The count the deflation uses (None: the sweep's configurations).
    note : str or None
        Where the count came from.
    declared : int or None
        The declared count, as given.
    tally : LedgerTally or None
        What the ledger said before this audit.
    keys : tuple of str or None
        The sweep's configuration keys as recorded (None: counted by its data fingerprint).
    """

    trials: int | None
    note: str | None
    declared: int | None
    tally: LedgerTally | None = None
    _ledger: Ledger | None = None
    keys: tuple[str, ...] | None = None

    def block(self) -> dict | None:
        """The JSON ``ledger`` block, or None without a ledger."""
        if self.tally is None:
            return None
        return ledger_block(self.tally, declared=self.declared, used=self.trials, note=self.note)

    def record(self, sweep: Sweep, *, selected: str, verdict: str) -> None:
        """Append this audit to the ledger (nothing without one)."""
        if self._ledger is None or self.tally is None:
            return
        self._ledger.append(ledger_record(
            fingerprint=self.tally.fingerprint,
            configurations=sweep.n_configurations,
            windows=sweep.n_windows,
            selected=selected,
            verdict=verdict,
            input_path=sweep.path,
            trials=self.trials,
            strategy=self.tally.strategy,
            keys=self.keys,
            tally=self.tally,
        ))


    def retract(self) -> None:
        """Take back the record :meth:`record` appended (the ledger is still locked)."""
        if self._ledger is not None:
            self._ledger.retract()


@contextmanager
def counted_trials(
    sweep: Sweep, *, ledger: str | os.PathLike | None = None, declared: int | None = None,
    strategy: str | None = None,
) -> Iterator[TrialCount]:
    """The trials of an audit of ``sweep``, the ledger (when given) locked until the block ends.

    ``strategy`` labels the configurations in the ledger (a trial is a configuration of a
    strategy). A declaration below the sweep's configurations is refused before the ledger is opened.
    """
    trials_to_count(sweep.n_configurations, declared=declared)
    if ledger is None:
        trials, note = trials_to_count(sweep.n_configurations, declared=declared)
        yield TrialCount(trials, note, declared)
        return
    keys = trial_keys(sweep)
    with open_ledger(ledger) as book:
        tally = book.tally(
            fingerprint=sweep_fingerprint(sweep.returns, sweep.configurations), configurations=sweep.n_configurations,
            keys=keys, strategy=strategy,
        )
        trials, note = trials_to_count(sweep.n_configurations, declared=declared, tally=tally)
        yield TrialCount(trials, note, declared, tally, book, keys)
