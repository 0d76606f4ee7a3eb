"""The Python entry point: audit a sweep end to end, as the command line does.

:func:`audit` gathers the evidence once (:mod:`sweepaudit.audit`), compares it with a baseline audit
when one is given (:mod:`sweepaudit.baseline`), decides the verdict once with the comparison
included (:mod:`sweepaudit.verdict`) and writes the JSON document once (:mod:`sweepaudit.document`).
With a trial ledger the ledger stays locked from the count to the record (:mod:`sweepaudit.gate`).
"""

from __future__ import annotations

import os
from collections.abc import Callable
from contextlib import AbstractContextManager, nullcontext
from dataclasses import replace
from typing import Any

from .audit import gather_evidence
from .errors import InputError
from .baseline import compare_checks, compare_results, read_baseline
from .document import audit_document, checks_block, figure_material, inspection_document, results_document
from .gate import counted_trials
from .policy import DEFAULT_POLICY, Policy
from .read import LoadOptions, load_sweep
from .results import AuditResult, AuditSettings, BaselineComparison, Evidence, Inspection, Verdict
from .sensitivity import what_would_change
from .sweep import Sweep
from .verdict import decide

__all__ = ["audit", "inspect"]

Command = str | Callable[[Evidence], str] | None
Publish = Callable[[AuditResult], AbstractContextManager[Any]]


def audit(
    data: Any,
    *,
    options: LoadOptions | None = None,
    settings: AuditSettings | None = None,
    policy: Policy | None = None,
    baseline: dict[str, Any] | None = None,
    baseline_path: str | os.PathLike | None = None,
    ledger: str | os.PathLike | None = None,
    trials: int | None = None,
    command: Command = None,
    policy_source: str = "defaults",
    progress: Callable[[int, int], None] | None = None,
    memory_budget: int | None = None,
    publish: Publish | None = None,
    sensitivity: bool = True,
    **input_options: Any,
) -> AuditResult:
    """Audit a sweep: resample once, run every method once, decide the verdict once.

    Parameters
    ----------
    data : Sweep, path, DataFrame or array
        A :class:`Sweep` (from :func:`sweepaudit.load_sweep`), or anything :func:`load_sweep` reads:
        a file path, a wide or long DataFrame, a numpy array; read with ``options`` and the input
        options given by keyword (``periods_per_year=52``, ``benchmark="buy_and_hold"``,
        ``windows="monthly"``, ``dates=...``, ``configurations=...``; see :class:`LoadOptions`).
    options : LoadOptions, optional
        How to read ``data`` (not with a Sweep).
    settings : AuditSettings, optional
        Every knob that changes a figure.
    policy : Policy, optional
        The verdict's thresholds (default policy).
    baseline : dict, optional
        An earlier audit document to compare with (the ``baseline_drift`` check); read from
        ``baseline_path`` when only the path is given.
    baseline_path : path, optional
        Where the baseline came from (reported in the comparison).
    ledger : path, optional
        A trial ledger: every sweep it records counts as trials; this audit is appended to it.
    trials : int, optional
        Trials the deflated Sharpe ratio counts (at least the sweep's configurations; default
        ``settings.trials``); with a ledger the larger count wins.
    command : str or callable, optional
        The reproduce command for the document, or ``command(evidence) -> str``.
    policy_source : str
        Where the policy came from (a file's path or ``"defaults"``), for the document.
    progress : callable, optional
        ``progress(done, total)`` as the resamples are worked through.
    memory_budget : int, optional
        Bytes the ``B x N`` resampled moments may take before the engine streams.
    publish : callable, optional
        ``publish(result)`` returns a context manager that writes the audit's outputs: it is
        entered once the document exists (the ledger still locked), the ledger record is appended
        inside it, and it is left with the record's outcome. So the record follows the outputs
        (an output that fails leaves the ledger unchanged), a failing append reaches the outputs
        (which can roll back), and a failure on leaving (the terminal output) takes the record
        back.
    sensitivity : bool
        Re-decide the verdict under each reasonable alternative choice (:mod:`sweepaudit.sensitivity`,
        the ``sensitivity`` block and ``result.sensitivity``); False skips it.

    Returns
    -------
    AuditResult
    """
    sweep = _sweep(data, options, input_options)
    settings = settings or AuditSettings()
    policy = policy or DEFAULT_POLICY
    if baseline is None and baseline_path is not None:
        baseline = read_baseline(baseline_path)
    declared = trials if trials is not None else settings.trials
    with counted_trials(sweep, ledger=ledger, declared=declared) as count:
        evidence = gather_evidence(
            sweep, settings=replace(settings, trials=count.trials), policy=policy, progress=progress,
            memory_budget=memory_budget,
        )
        verdict, comparison = _judge(evidence, policy, baseline, baseline_path)
        what_if = what_would_change(evidence, verdict, baseline=comparison) if sensitivity else None
        document = audit_document(
            evidence, verdict, command=command(evidence) if callable(command) else command,
            policy_source=policy_source, baseline=comparison, ledger=count.block(), sensitivity=what_if,
        )
        result = AuditResult(evidence, verdict, document, figure_material(evidence), comparison, what_if)
        try:
            with publish(result) if publish is not None else nullcontext():
                count.record(sweep, selected=evidence.selected, verdict=verdict.decision)
        except BaseException:
            count.retract()  # an output failed after the record: take it back, the ledger still locked
            raise
    return result


def inspect(data: Any, *, options: LoadOptions | None = None, policy: Policy | None = None,
            **input_options: Any) -> Inspection:
    """Read ``data`` exactly as :func:`audit` would and say how, without auditing.

    Parameters
    ----------
    data : path, DataFrame or array (or a Sweep)
        As for :func:`audit`.
    options : LoadOptions, optional
    policy : Policy, optional
        Its ``plausible_returns`` bounds are compared with the data (default policy).
    **input_options
        Any :class:`LoadOptions` field, ``dates`` and ``configurations``, by keyword.

    Returns
    -------
    Inspection
        The sweep and the ``sweepaudit.inspect/1`` document.
    """
    sweep = _sweep(data, options, input_options)
    return Inspection(sweep, inspection_document(sweep, policy or DEFAULT_POLICY))


def _sweep(data: Any, options: LoadOptions | None, input_options: dict[str, Any]) -> Sweep:
    """A Sweep as given, or read from a path, a DataFrame or an array."""
    if isinstance(data, Sweep):
        if options is not None or input_options:
            given = ", ".join(input_options) or "options"
            raise InputError(f"input options ({given}) go with a file, a DataFrame or an array, not with a Sweep")
        return data
    return load_sweep(data, options, **input_options)


def _judge(
    evidence: Evidence, policy: Policy, baseline: dict[str, Any] | None, path: str | os.PathLike | None
) -> tuple[Verdict, BaselineComparison | None]:
    """The verdict, decided once; with a baseline, the comparison the drift check reads and, once
    the verdict's checks exist, the change of every check."""
    if baseline is None:
        return decide(evidence, policy), None
    current = {"results": results_document(evidence), "selected": {"configuration": evidence.selected}}
    figures = compare_results(current, baseline, path=str(path) if path is not None else "<baseline>", policy=policy)
    verdict = decide(evidence, policy, figures)
    return verdict, compare_checks(figures, checks_block(verdict), baseline)
