"""The Python entry points: audit and calibrate a sweep end to end, as the command line does.

:func:`audit` gathers the evidence once (:mod:`sweepaudit.audit`), compares it with a baseline audit
when one is given (:mod:`sweepaudit.baseline`), decides the verdict once with the comparison
included (:mod:`sweepaudit.verdict`) and writes the JSON document once (:mod:`sweepaudit.document`).
With a trial ledger the ledger stays locked from the count to the record (:mod:`sweepaudit.gate`).

Every command-line option has a keyword here (``periods_per_year=52``, ``resamples=2000``,
``seed=7``, ``policy="policy.toml"``, ``baseline="last.json"``, ``ledger="trials.jsonl"``,
``trials=40``, ``select="lookback=20, band=1.5"``, ``strategy="carry"``, ...). The results show
themselves (:class:`AuditResult`, :class:`CalibrationResult`): a short ``repr``, an HTML view for
notebooks, the JSON contract, the report, the figures and the terminal view.
"""

from __future__ import annotations

import io
import json
import os
from collections.abc import Callable
from contextlib import AbstractContextManager, nullcontext
from dataclasses import replace
from typing import Any

from rich.console import Console

from . import results, validate
from .audit import gather_evidence
from .engine import executor_for
from .baseline import compare_checks, compare_results, read_baseline
from .calibration import calibrate_sweep
from .document import (
    audit_document,
    calibration_document,
    checks_block,
    figure_material,
    inspection_document,
    results_document,
)
from .errors import InputError
from .gate import counted_trials, trials_to_count
from .policy import DEFAULT_POLICY, Policy, load_policy_file, policy_from_mapping
from .read import LoadOptions, load_sweep
from .render.calibration import render_calibration
from .render.files import write_atomic
from .render.json import dumps
from .render.junit import audit_to_junit
from .render.notebook import audit_html, audit_summary, calibration_html, calibration_summary
from .render.report import build_report, write_report
from .render.safe import visible_document
from .render.terminal import render_terminal
from .results import AuditSettings, BaselineComparison, Evidence, Inspection, Verdict
from .sensitivity import what_would_change
from .sweep import Sweep
from .verdict import decide

__all__ = ["audit", "calibrate", "inspect", "AuditResult", "CalibrationResult"]

Command = str | Callable[[Evidence], str] | None
PolicyLike = Policy | str | os.PathLike | None

#: The resamples of ``quick=True`` (``--quick``): a fast look, not a final audit.
QUICK_RESAMPLES = 1_000
Publish = Callable[[results.AuditResult], AbstractContextManager[Any]]


# ---------------------------------------------------------------------------------------------
# the results, as a notebook shows them


def _text_view(document: dict, render: Callable[..., None], width: int) -> str:
    """What ``render`` prints for ``document``, as plain text ``width`` columns wide."""
    console = Console(file=io.StringIO(), width=width, color_system=None, markup=False, emoji=False,
                      highlight=False)
    render(document, console)
    return console.file.getvalue()


class _Shown:
    """What both results share: the JSON contract as a dict or text, the terminal view."""

    document: dict
    _render: Callable[..., None]

    def to_dict(self) -> dict:
        """The JSON document as plain Python values (a copy: changing it changes nothing here)."""
        return json.loads(dumps(self.document))

    def to_json(self, path: str | os.PathLike | None = None) -> str:
        """The JSON document as text (what ``--json`` writes); written atomically to ``path`` if given."""
        text = dumps(self.document)
        if path is not None:
            write_atomic(path, text)
        return text

    def terminal(self, width: int = 100) -> str:
        """The terminal view as plain text (no colour), ``width`` columns wide."""
        width = validate.whole_number(width, "width", minimum=40)
        return _text_view(visible_document(self.document), type(self)._render, width)

    def show(self) -> None:
        """Print the terminal view (with colour where the terminal has it)."""
        type(self)._render(visible_document(self.document))


class AuditResult(_Shown, results.AuditResult):
    """One audit, as :func:`audit` returns it: the evidence, the verdict, the JSON document, and the
    ways to show and write them.

    * ``repr(result)``: the verdict, the selected configuration, each check on one line, the caution;
      ``result._repr_html_()``: the notebook view (verdict panel, key figures with their intervals,
      checks table, caution);
    * ``to_dict()``, ``to_json(path=None)``: the JSON contract (``sweepaudit.audit/1``);
      ``to_junit(path=None)``: the checks as JUnit XML;
    * ``write_report(path)``: the audit report, Markdown (``.md``) or HTML (``.html``);
    * ``figures()``: the report's figures as matplotlib Figures, by name;
    * ``terminal()``, ``show()``: the terminal view as text, or printed;
    * typed results of each method: ``intervals``, ``sharpe``, ``haircut``, ``overfitting``,
      ``overfitting_diagnosis``, ``snooping``, ``tails``, ``surface``, ``long_run``,
      ``deflation_curve``; ``verdict``, ``checks``, ``check(id)``, ``decision``.
    """

    _render = staticmethod(render_terminal)

    def __repr__(self) -> str:
        return audit_summary(self.document)

    def _repr_html_(self) -> str:
        return audit_html(self.document)

    def to_junit(self, path: str | os.PathLike | None = None) -> str:
        """The checks as JUnit XML (what ``--junit`` writes); written atomically to ``path`` if given."""
        text = audit_to_junit(self.document)
        if path is not None:
            write_atomic(path, text)
        return text

    def write_report(self, path: str | os.PathLike) -> None:
        """Write the audit report: Markdown for ``.md`` (figures in ``<stem>_figures/`` beside it) or
        one self-contained HTML file for ``.html``."""
        write_report(path, self.document, self.figure_material)

    def figures(self) -> dict[str, Any]:
        """The report's figures as ``matplotlib.figure.Figure`` objects, by name, in report order
        (drawn from the document and the figure material; no statistic is computed)."""
        return {f.name: f.plot for f in build_report(self.document, self.figure_material).figures}


class CalibrationResult(_Shown, results.CalibrationResult):
    """A calibration, as :func:`calibrate` returns it: the rates and the JSON document.

    ``repr`` and ``_repr_html_()`` show the false-go rate, the power and each check's failure
    rates; ``to_dict()``, ``to_json()``, ``terminal()``, ``show()`` as for :class:`AuditResult`;
    ``false_go``, ``power``, ``null``, ``calibration`` give the typed results.
    """

    _render = staticmethod(render_calibration)

    def __repr__(self) -> str:
        return calibration_summary(self.document)

    def _repr_html_(self) -> str:
        return calibration_html(self.document)


# ---------------------------------------------------------------------------------------------
# audit


# Longer than 60 lines: one keyword per command-line option, each documented; the body is about
# 25 lines, its steps in the functions below.
def audit(
    data: Any,
    *,
    options: LoadOptions | None = None,
    settings: AuditSettings | None = None,
    policy: PolicyLike = None,
    baseline: dict[str, Any] | str | os.PathLike | None = None,
    baseline_path: str | os.PathLike | None = None,
    ledger: str | os.PathLike | None = None,
    trials: int | None = None,
    strategy: str | None = None,
    select: str | None = None,
    seed: int | None = None,
    resamples: int | None = None,
    quick: bool = False,
    confidence: float | None = None,
    bootstrap: str | None = None,
    block_length: float | None = None,
    interval_method: str | None = None,
    command: Command = None,
    policy_source: str | None = None,
    progress: Callable[[int, int], None] | None = None,
    memory_budget: int | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
    publish: Publish | None = None,
    sensitivity: bool = True,
    **input_options: Any,
) -> AuditResult:
    """Audit a sweep: resample once, run every method once, decide the verdict once.

    Parameters
    ----------
    data : path, DataFrame, array or Sweep
        A CSV, TSV or Parquet file; a wide DataFrame (a DatetimeIndex or a window column; plain
        column names or a MultiIndex of parameters); a long DataFrame (named columns); a T x N
        numpy array (with ``dates=`` and ``configurations=``); or a :class:`Sweep`.
    options : LoadOptions, optional
        How to read ``data``; ``**input_options`` (any :class:`LoadOptions` field by keyword:
        ``periods_per_year=52``, ``benchmark="buy_and_hold"``, ``windows="monthly"``, ``units=...``,
        and ``dates``, ``configurations`` for arrays) override it. Not with a Sweep.
    settings : AuditSettings, optional
        Every knob that changes a figure; the keywords ``seed``, ``resamples``, ``quick``,
        ``confidence``, ``bootstrap``, ``block_length``, ``interval_method`` and ``select``
        override its fields.
    policy : Policy or path, optional
        The verdict's thresholds: a :class:`Policy`, or a TOML file (``"policy.toml"``, or a
        ``pyproject.toml`` with a ``[tool.sweepaudit]`` table) as ``--policy`` reads it. Default:
        the default policy (the command line also looks for a ``pyproject.toml``; pass its path
        here to apply it).
    baseline : dict or path, optional
        An earlier audit (its document, or its JSON file as ``--baseline``): report what moved and
        gate on worsening (the ``baseline_drift`` check).
    baseline_path : path, optional
        Where a baseline given as a dict came from (reported in the comparison).
    ledger : path, optional
        A trial ledger (``--ledger``): every configuration tried so far counts as a trial; this
        audit is appended to it.
    trials : int, optional
        Trials the deflated Sharpe ratio counts (at least the sweep's configurations); with a
        ledger the larger count wins.
    strategy : str, optional
        The strategy's label in the ledger (``--strategy``; default: the policy's ``strategy``).
    select : str, optional
        The configuration to judge instead of the highest full-sample Sharpe ratio (``--select``):
        its name, or its parameter values in any order and spacing (``"entry_z=1.5, train_days=21"``).
    seed, resamples, confidence, bootstrap, block_length, interval_method : optional
        As the options of the same names; ``quick=True`` is ``--quick`` (1,000 resamples).
    command : str or callable, optional
        The reproduce command for the document, or ``command(evidence) -> str``.
    policy_source : str, optional
        Where the policy came from, for the document (default: its path, or ``"defaults"``).
    progress : callable, optional
        ``progress(done, total)`` as the resamples are worked through.
    memory_budget : int, optional
        Bytes of working memory (default: the policy's ``memory_budget`` MiB); beyond it the audit
        streams over blocks of configurations, with the same figures.
    scheduler : str, optional
        Address of a Dask scheduler: the blocks of configurations run on its cluster (default: the
        ``SWEEPAUDIT_SCHEDULER`` environment variable; none: in process).
    workers : int, optional
        Start a local Dask cluster of this many worker processes for the audit.
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

    Raises
    ------
    InputError, DegenerateDataError, PolicyError
        Bad input or arguments, with a message naming the argument (or file, column and row).
    """
    policy, policy_source = _policy(policy, policy_source)
    settings = _settings(settings, policy, seed=seed, resamples=resamples, quick=quick, confidence=confidence,
                         bootstrap=bootstrap, block_length=block_length, interval_method=interval_method,
                         selected=select)
    strategy = validate.label(strategy, "strategy") if strategy is not None else policy.strategy
    if isinstance(baseline, (str, os.PathLike)):
        baseline, baseline_path = read_baseline(baseline), baseline
    elif baseline is None and baseline_path is not None:
        baseline = read_baseline(baseline_path)
    if memory_budget is not None:
        memory_budget = validate.whole_number(memory_budget, "memory_budget", minimum=0)
    if workers is not None:
        workers = validate.whole_number(workers, "workers", minimum=1)
    sweep = _sweep(data, options, input_options)
    if settings.selected is not None:
        settings = replace(settings, selected=sweep.configurations[sweep.index_of(settings.selected)])
    declared = trials if trials is not None else settings.trials
    with counted_trials(sweep, ledger=ledger, declared=declared, strategy=strategy) as count:
        executor = executor_for(scheduler, workers)
        try:
            evidence = gather_evidence(
                sweep, settings=replace(settings, trials=count.trials), policy=policy, progress=progress,
                memory_budget=memory_budget, executor=executor,
            )
        finally:
            executor.close()
        verdict, comparison = _judge(evidence, policy, baseline, baseline_path)
        what_if = (what_would_change(evidence, verdict, baseline=comparison, memory_budget=memory_budget)
                   if sensitivity else None)
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


def _policy(policy: PolicyLike, source: str | None) -> tuple[Policy, str]:
    """The policy and where it came from: a Policy as given, or a TOML file read as ``--policy``."""
    if policy is None:
        return DEFAULT_POLICY, source or "defaults"
    if isinstance(policy, Policy):
        return policy, source or ("defaults" if policy == DEFAULT_POLICY else "<Policy>")
    if isinstance(policy, (str, os.PathLike)):
        loaded = load_policy_file(policy)
        return loaded.policy, source or loaded.source
    raise InputError(f"policy must be a Policy or the path of a TOML file; got {type(policy).__name__}")


def _settings(settings: AuditSettings | None, policy: Policy, *, quick: bool, **changes: Any) -> AuditSettings:
    """``settings`` (default ``AuditSettings()``) with the keywords given; ``resamples`` and
    ``confidence`` obey the policy's ranges, as the command-line options do."""
    settings = settings or AuditSettings()
    if not isinstance(settings, AuditSettings):
        raise InputError(f"settings must be an AuditSettings; got {type(settings).__name__}")
    changes = {k: v for k, v in changes.items() if v is not None}
    if quick:
        if "resamples" in changes:
            raise InputError("give either resamples or quick, not both")
        changes["resamples"] = QUICK_RESAMPLES
    overrides = {k: changes[k] for k in ("confidence", "resamples") if k in changes}
    if overrides:
        policy_from_mapping(overrides, source="audit() argument")
    if "seed" in changes:
        changes["seed"] = validate.whole_number(changes["seed"], "seed", minimum=0)
    return replace(settings, **changes)


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


# ---------------------------------------------------------------------------------------------
# calibrate and inspect


# Longer than 60 lines: the options of `sweepaudit calibrate` by keyword, documented; the body is
# about 15 lines.
def calibrate(
    data: Any,
    *,
    sweeps: int = 200,
    edge: float = 1.0,
    resamples: int = 1_000,
    seed: int = 0,
    policy: PolicyLike = None,
    trials: int | None = None,
    select: str | None = None,
    settings: AuditSettings | None = None,
    options: LoadOptions | None = None,
    command: str | None = None,
    policy_source: str | None = None,
    progress: Callable[[int, int], None] | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
    **input_options: Any,
) -> CalibrationResult:
    """How often the verdict says go on null sweeps shaped like this one, and its power against a
    planted edge (``sweepaudit calibrate``).

    Parameters
    ----------
    data : path, DataFrame, array or Sweep
        As for :func:`audit`, read with ``options`` and ``**input_options``.
    sweeps : int
        Null sweeps to audit (standard error of a 5% rate: 1.5% at 200).
    edge : float
        Annualized Sharpe ratio of the edge planted in the selected configuration for the power
        estimate; 0 skips it. Needs the periods per year.
    resamples : int
        Bootstrap resamples per audit.
    seed : int
        Master seed of the null sweeps and of every audit.
    policy : Policy or path, optional
        As for :func:`audit`.
    trials : int, optional
        Trials the deflated Sharpe ratio counts in each audit (at least the configurations).
    select : str, optional
        The configuration to judge (and to plant the edge in), matched as for :func:`audit`.
    settings : AuditSettings, optional
        The audits' other settings (bootstrap, block length, ...); seeds are replaced.
    scheduler, workers : optional
        Run the simulated sweeps' audits on a Dask cluster, as for :func:`audit` (each audit a task of
        its own; the figures do not depend on where they ran).

    Returns
    -------
    CalibrationResult
    """
    policy, policy_source = _policy(policy, policy_source)
    validate.at_least(sweeps, "sweeps", 1)
    validate.at_least(resamples, "resamples", 1)
    validate.at_least(edge, "edge", 0, what="0 (an annualized Sharpe ratio)")
    seed = validate.whole_number(seed, "seed", minimum=0)
    base = settings or AuditSettings()
    sweep = _sweep(data, options, input_options)
    select = select if select is not None else base.selected
    declared = trials if trials is not None else base.trials
    if declared is not None:
        trials_to_count(sweep.n_configurations, declared=declared)
    settings = replace(base, seed=seed, resamples=resamples, trials=declared,
                       selected=sweep.configurations[sweep.index_of(select)] if select is not None else None)
    outcome = calibrate_sweep(sweep, sweeps=sweeps, edge=edge, settings=settings, resamples=resamples,
                              policy=policy, seed=seed, progress=progress, scheduler=scheduler, workers=workers)
    document = calibration_document(outcome, command=command, policy_source=policy_source)
    return CalibrationResult(outcome, document)


def inspect(data: Any, *, options: LoadOptions | None = None, policy: PolicyLike = None,
            **input_options: Any) -> Inspection:
    """Read ``data`` exactly as :func:`audit` would and say how, without auditing.

    Parameters
    ----------
    data : path, DataFrame or array (or a Sweep)
        As for :func:`audit`.
    options : LoadOptions, optional
    policy : Policy or path, optional
        Its ``plausible_returns`` bounds are compared with the data (default policy).
    **input_options
        Any :class:`LoadOptions` field, ``dates`` and ``configurations``, by keyword.

    Returns
    -------
    Inspection
        The sweep and the ``sweepaudit.inspect/1`` document.
    """
    sweep = _sweep(data, options, input_options)
    return Inspection(sweep, inspection_document(sweep, _policy(policy, None)[0]))
