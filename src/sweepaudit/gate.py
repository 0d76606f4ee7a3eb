"""The audit as a CI gate: the glue between an audit and its baseline and trial ledger.

Used by the command line; library users can call these directly.
"""

from __future__ import annotations

import os
from collections.abc import Callable
from contextlib import ExitStack
from dataclasses import dataclass, replace
from typing import Any

from .audit import AuditResults, AuditSettings, audit
from .baseline import compare_with_baseline
from .errors import InputError
from .ledger import LedgerTally, ledger_record, open_ledger, sweep_fingerprint
from .policy import Policy
from .sweep import Sweep
from .verdict import decide

__all__ = ["GatedAudit", "gated_audit", "with_baseline", "trials_to_count", "ledger_to_dict"]


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


@dataclass(frozen=True, eq=False)
class GatedAudit:
    """An audit run as a gate.

    Attributes
    ----------
    results : AuditResults
        With ``baseline`` filled when a baseline was given.
    document : dict
        The audit JSON, with the ``policy_source``, ``baseline`` and ``ledger`` blocks.
    """

    results: AuditResults
    document: dict


def gated_audit(
    sweep: Sweep,
    *,
    settings: AuditSettings,
    policy: Policy,
    policy_source: str = "defaults",
    baseline: dict[str, Any] | None = None,
    baseline_path: str | None = None,
    ledger_path: str | os.PathLike | None = None,
    declared_trials: int | None = None,
    command: Callable[[AuditResults], str] | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> GatedAudit:
    """Audit a sweep with the gate's extras: trials from a ledger, a baseline, the JSON document.

    The ledger (when given) is locked from before the audit until its record is appended, so
    the count and the record are one step. ``settings.trials`` is replaced by the trials counted
    (see :func:`trials_to_count`). ``command(results)`` gives the JSON's reproduce command.
    """
    from .render.json import audit_to_dict

    trials_to_count(sweep.n_configurations, declared=declared_trials)  # reject a bad --trials early
    with ExitStack() as stack:
        ledger = stack.enter_context(open_ledger(ledger_path)) if ledger_path is not None else None
        tally = None
        if ledger is not None:
            tally = ledger.tally(
                fingerprint=sweep_fingerprint(sweep.returns, sweep.configurations),
                configurations=sweep.n_configurations,
            )
        trials, note = trials_to_count(sweep.n_configurations, declared=declared_trials, tally=tally)
        results = audit(sweep, settings=replace(settings, trials=trials), policy=policy, progress=progress)
        if baseline is not None:
            results = with_baseline(results, baseline, path=str(baseline_path))
        document = audit_to_dict(
            results,
            command=command(results) if command is not None else None,
            policy_source=policy_source,
            ledger=ledger_to_dict(tally, declared=declared_trials, used=trials, note=note) if tally else None,
        )
        if ledger is not None:
            ledger.append(ledger_record(
                fingerprint=tally.fingerprint,
                configurations=sweep.n_configurations,
                windows=sweep.n_windows,
                selected=results.selected,
                verdict=document["verdict"],
                input_path=sweep.path,
                trials=trials,
            ))
    return GatedAudit(results, document)
