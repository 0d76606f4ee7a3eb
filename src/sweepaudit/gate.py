"""The audit as a CI gate: the glue between an audit and its baseline and trial ledger.

Used by the command line; library users can call these directly.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from .audit import AuditResults
from .baseline import compare_with_baseline
from .errors import InputError
from .ledger import LedgerTally
from .verdict import decide

__all__ = ["with_baseline", "trials_to_count", "ledger_to_dict"]


def with_baseline(results: AuditResults, baseline_document: dict[str, Any], *, path: str) -> AuditResults:
    """The audit compared with an earlier audit document, and its verdict decided again so that
    the ``baseline_drift`` check takes part."""
    from .render.json import audit_to_dict  # the comparison works on the JSON contract

    comparison = compare_with_baseline(
        audit_to_dict(results), baseline_document, path=path, policy=results.policy
    )
    compared = replace(results, baseline=comparison)
    return replace(compared, verdict=decide(compared, results.policy))


def trials_to_count(
    configurations: int, *, declared: int | None = None, tally: LedgerTally | None = None
) -> tuple[int | None, str | None]:
    """The trials the deflated Sharpe ratio counts, and a note saying where the number came from.

    ``declared`` (``--trials``) may not be below the sweep's configurations. With a ledger the
    count is the larger of the two. Without either: ``(None, None)`` (the sweep's configurations).
    """
    if declared is not None and declared < configurations:
        raise InputError(
            f"--trials must be at least the sweep's {configurations} configurations (every "
            f"configuration of the sweep is a trial); got {declared}"
        )
    if tally is None:
        if declared is None:
            return None, None
        return declared, f"{declared} trials declared with --trials"
    if declared is None:
        return tally.trials, f"{tally.trials} trials counted by the ledger {tally.path}"
    used = max(declared, tally.trials)
    source = "--trials" if declared >= tally.trials else "the ledger"
    return used, (
        f"{used} trials: the larger of --trials ({declared}) and the ledger's count ({tally.trials}), "
        f"from {source}"
    )


def ledger_to_dict(tally: LedgerTally, *, declared: int | None, used: int | None, note: str | None) -> dict:
    """The JSON ``ledger`` block."""
    return {
        "path": tally.path,
        "fingerprint": tally.fingerprint,
        "new_sweep": tally.new_sweep,
        "records_before": tally.records,
        "sweeps_recorded": tally.sweeps_recorded,
        "trials_counted": tally.trials,
        "trials_declared": declared,
        "trials_used": used,
        "note": note,
    }
