"""Orchestration: Sweep + AuditSettings + Policy -> Evidence. Each method runs once; no verdict here.

The resamples are drawn once and their moments computed once by the engine; every bootstrap-based
method (intervals, reality check, SPA, StepM) consumes the same
:class:`~sweepaudit.resample.ResampledMoments`. The verdict (:mod:`sweepaudit.verdict`) judges the
evidence afterwards, once, baseline included; :func:`sweepaudit.api.audit` wires the two.
"""

from __future__ import annotations

import functools
import warnings
from collections.abc import Callable
from dataclasses import dataclass, fields, replace

import numpy as np

from . import validate
from .engine import InProcess, WeightTable, meanwhile, moments_and_intervals, plan_blocks, single_threaded
from .errors import InputError, SweepAuditWarning
from .format import number, percent
from .methods.bootstrap_ci import at_level, bootstrap_intervals, part_columns, part_intervals
from .methods.cscv import cscv
from .methods.deflation import deflated_by_trials
from .methods.haircut import haircut_sharpe
from .methods.inference import Family, sharpe_inference, sharpe_inference_of_family
from .methods.longrun import family_block_length, long_run_variance
from .methods.overfitting import overfitting_diagnosis
from .methods.snooping import COLUMN_BLOCK, snooping_block, snooping_from_blocks, stored_further_pass
from .methods.stability import MIN_PERIOD, default_rolling_windows, edge_stability
from .methods.surface import isolated_peak
from .methods.tails import MIN_FAMILY, family_stress, tail_test
from .methods.walkforward import MIN_RECORD, default_warmup, walk_forward
from .policy import DEFAULT_POLICY, Policy
from .resample import Resamples, draw_resamples, moment_chunk, resampled_moments
from .results import (
    AuditSettings,
    BlockLengthChoice,
    BootstrapIntervals,
    CscvResult,
    DeflatedCurve,
    EdgeStability,
    EffectiveTrials,
    Evidence,
    LongRunVariance,
    OverfittingDiagnosis,
    SharpeInference,
    Snooping,
    TailTest,
    WalkForward,
)
from .streamed import Stream
from .sweep import Sweep

__all__ = ["gather_evidence", "reassess", "RESAMPLING_SETTINGS"]


def gather_evidence(
    sweep: Sweep,
    *,
    settings: AuditSettings | None = None,
    policy: Policy | None = None,
    progress: Callable[[int, int], None] | None = None,
    memory_budget: int | None = None,
    executor=None,
    verdict_only: bool = False,
) -> Evidence:
    """Run every method of the audit once on one sweep and gather what they found.

    Parameters
    ----------
    sweep : Sweep
    settings : AuditSettings, optional
        Every knob that changes a figure (default: ``AuditSettings()``).
    policy : Policy, optional
        Supplies the levels and the method options the settings leave open (default policy).
    progress : callable, optional
        ``progress(done, total)`` as the resamples are worked through.
    memory_budget : int, optional
        Bytes of working memory (default: the policy's ``memory_budget``): when the ``B x N``
        resampled moments do not fit, the audit streams over blocks of configurations
        (:mod:`sweepaudit.streamed`).
    executor : optional
        Where the blocks run (:func:`sweepaudit.engine.executor_for`); an executor other than the
        in-process one always streams. Default: in process.
    verdict_only : bool
        Leave out the figures no check reads (CSCV's stochastic-dominance figures, None in the
        result): for callers that decide the verdict and discard the evidence, such as
        :mod:`sweepaudit.calibration`. The verdict is the same.

    Returns
    -------
    Evidence
    """
    settings = settings or AuditSettings()
    policy = policy or DEFAULT_POLICY
    count = validate.whole_number(
        settings.resamples if settings.resamples is not None else policy.resamples, "resamples", minimum=1
    )
    budget = policy.memory_budget * 2**20 if memory_budget is None else memory_budget
    plan = plan_blocks(sweep.n_configurations, sweep.n_windows, count, budget)
    distributed = executor is not None and not isinstance(executor, InProcess)
    with single_threaded(), warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", SweepAuditWarning)
        if (plan.in_memory and not distributed) or sweep.n_configurations < MIN_FAMILY:
            parts = _in_memory(sweep, settings, policy, count, progress, plan.keep_weights, verdict_only)
        else:
            parts = _streamed(sweep, settings, policy, count, plan, executor or InProcess(), progress)
        haircut = haircut_sharpe(
            parts.inference.configuration_sharpes, observations=sweep.n_windows, selected=parts.selected,
            tests=parts.inference.trials, periods_per_year=sweep.periods_per_year,
        )
        walk, stability, time_notes = _time_structure(sweep, parts.selected, policy, parts.long_run, parts.tails)
        confidence = settings.confidence if settings.confidence is not None else policy.confidence
        walk, stability = _time_intervals(sweep.returns[:, parts.selected], walk, stability, parts.resamples,
                                          confidence, settings.interval_method, parts.weights)
    caught_notes = tuple(str(w.message) for w in caught if issubclass(w.category, SweepAuditWarning)) + time_notes
    return _evidence(sweep, settings, policy, parts, haircut, caught_notes, walk, stability)


@dataclass(frozen=True, eq=False)
class _Parts:
    """What the methods found, on either path, before the notes are written."""

    sharpe: np.ndarray
    selected: int
    rule: str
    long_run: LongRunVariance
    resamples: Resamples
    block_source: str
    choice: BlockLengthChoice | None
    intervals: BootstrapIntervals
    variance_of_means: np.ndarray
    inference: SharpeInference
    snooping: Snooping | None
    overfit: CscvResult | None
    diagnosis: OverfittingDiagnosis | None
    tails: TailTest | None
    weights: WeightTable | None = None


def _in_memory(sweep, settings, policy, count, progress, keep_weights: bool, verdict_only: bool = False) -> _Parts:
    """Every method on the whole matrix, the ``B x N`` moments computed at once (the weights kept
    for the time structure's product when the plan keeps them)."""
    confidence = settings.confidence if settings.confidence is not None else policy.confidence
    x = sweep.returns
    # CSCV reads only the returns: on the second core, when one is free, while the rest runs here.
    overfit = (meanwhile(functools.partial(cscv, x, partitions=policy.partitions, statistic=policy.overfitting_statistic,
                                           dominance=not verdict_only, warn=False))
               if x.shape[1] >= 2 else None)
    sharpe = x.mean(axis=0) / x.std(axis=0, ddof=1)
    selected, rule = _select(sweep, settings, sharpe)
    long_run = long_run_variance(x)
    resamples, block_source, choice = _resamples(sweep, settings, count, selected)
    table = WeightTable(resamples, lazy=True) if keep_weights and resamples.seed is not None else None
    moments, intervals = moments_and_intervals(
        x, resamples, progress=progress, table=table,
        intervals=functools.partial(bootstrap_intervals, confidence=confidence, method=settings.interval_method,
                                    long_run=long_run),
    )
    inference = _inference(sweep, settings, policy, selected, long_run)
    snooping, variance = _snooping_in_memory(x, moments, intervals, policy, long_run)
    diagnosis = tails = None
    if snooping is not None:
        overfit = overfit.result()
        for message in overfit.warnings:  # issued here, in the audit's order
            warnings.warn(message, SweepAuditWarning, stacklevel=2)
        diagnosis = _diagnosis(overfit, policy)
        tails = _tails(x, selected, snooping, policy)
    else:
        overfit = None
    return _Parts(sharpe, selected, rule, long_run, resamples, block_source, choice, intervals,
                  variance, inference, snooping, overfit, diagnosis, tails, table)


def _streamed(sweep, settings, policy, count, plan, executor, progress) -> _Parts:
    """Every method from per-block summaries (:mod:`sweepaudit.streamed`); never ``B x N`` at once."""
    confidence = settings.confidence if settings.confidence is not None else policy.confidence
    stream = Stream(sweep.returns, plan, executor, partitions=policy.partitions,
                    statistic=policy.overfitting_statistic, threshold=policy.stress_threshold, progress=progress)
    first = stream.first_pass()
    selected, rule = _select(sweep, settings, first.sharpe)
    choice = None
    if settings.block_length is None:
        choice = stream.block_length(first, selected, settings.bootstrap)
    resamples, block_source, choice = _resamples(sweep, settings, count, selected, choice)
    second = stream.resampled_pass(resamples, confidence=confidence, method=settings.interval_method, selected=selected)
    inference = sharpe_inference_of_family(
        stream.family(first, selected), selected=selected, long_run=first.long_run, trials=settings.trials,
        periods_per_year=sweep.periods_per_year, confidence=policy.track_record_confidence,
        variance_mode=policy.deflation_variance, trials_for_deflation=policy.deflation_trials,
        sharpe_variance=policy.sharpe_variance, significance=policy.significance,
    )
    snooping = _snooping(first.mean, sweep.n_windows, second.snooping, policy, first.long_run, stream.further(resamples))
    overfit = stream.cscv(first)
    tails = tail_test(stream.stress(first, selected, policy.stress_share),
                      critical_value=snooping.gating_stepm.critical_value_for(selected))
    return _Parts(first.sharpe, selected, rule, first.long_run, resamples, block_source, choice, second.intervals,
                  second.variance, inference, snooping, overfit, _diagnosis(overfit, policy), tails,
                  executor.kept_weights(resamples))


def _evidence(
    sweep: Sweep, settings: AuditSettings, policy: Policy, p: _Parts, haircut, caught: tuple[str, ...],
    walk: WalkForward | None, stability: EdgeStability | None,
) -> Evidence:
    """The evidence of either path (the surface and curve read off the parts)."""
    share, share_low = _bootstrap_share(p.variance_of_means, p.long_run)
    return Evidence(
        sweep=sweep, settings=settings, policy=policy, selected_index=p.selected, selection_rule=p.rule,
        resamples=p.resamples, block_length_source=p.block_source, intervals=p.intervals, sharpe_ratios=p.sharpe,
        warnings=_notes(sweep, p.selected, p.inference, caught, p.snooping, p.intervals, policy, share_low),
        sharpe=p.inference, haircut=haircut, overfitting=p.overfit, overfitting_diagnosis=p.diagnosis,
        snooping=p.snooping,
        surface=isolated_peak(sweep.parameters, p.sharpe, selected=p.selected,
                              sharpe_distribution=p.intervals.sharpe_distribution_of(p.selected)),
        deflation_curve=_curve(p.inference), long_run=p.long_run, block_choice=p.choice,
        bootstrap_share=share, bootstrap_share_low=share_low, tails=p.tails, walk_forward=walk, stability=stability,
    )


#: The settings whose change needs new resamples (drawn again from the seed); the interval level
#: and method re-read the kept bootstrap distributions instead.
RESAMPLING_SETTINGS = ("seed", "resamples", "bootstrap", "block_length")

# The policy keys each part of the evidence depends on (the others only change what the verdict reads).
_SHARPE_KEYS = frozenset({"deflation_variance", "deflation_trials", "sharpe_variance", "track_record_confidence",
                          "significance"})
_CSCV_KEYS = frozenset({"partitions", "overfitting_statistic"})
_RULE_KEYS = frozenset({"max_probability_of_overfitting", "max_probability_of_loss", "min_strength_share"})
_STRESS_KEYS = frozenset({"stress_threshold", "stress_share"})
_TIME_KEYS = frozenset({"walk_forward_warmup", "walk_forward_lookback", "recent_share"}) | _STRESS_KEYS


def reassess(
    evidence: Evidence,
    *,
    policy: Policy | None = None,
    settings: AuditSettings | None = None,
    memory_budget: int | None = None,
    verdict_only: bool = False,
) -> Evidence:
    """The evidence of the same audit under another policy or other resampling settings, re-running
    only the methods the change reaches.

    What runs again, and what is reused:

    * new resampling settings (:data:`RESAMPLING_SETTINGS`: another bootstrap kind, block length,
      count or seed), or another significance level (StepM's stepping needs the moments): the
      resamples are drawn again from the seed and the methods that read them run again (intervals,
      reality check, SPA, StepM, the family-tails bar, the surface's standard error, the intervals
      of the walk-forward record and of the two periods). When the new resamples' moments would
      not fit the memory budget, the whole audit runs again (:func:`gather_evidence`, streamed);
    * another interval level or method only: the kept bootstrap distributions are re-read
      (:func:`~sweepaudit.methods.bootstrap_ci.at_level`), no resampling (a streamed audit kept the
      selected configuration's only: the whole audit runs again);
    * the Sharpe inference's choices (trial variance, trial count, Sharpe variance): the inference
      runs again on the audit's long-run variance and effective trials (no eigenvalues again);
    * the CSCV statistic or partitions: CSCV runs again; only the rule's thresholds: the rule is
      read again off the same CSCV result;
    * the stress or time-structure keys: the family-tails test and the time structure run again;
    * what the verdict only reads (the snooping scale and gating test, the deflated threshold):
      the same results, relabelled.

    The long-run variance, the haircut and the warnings are the audit's own. The verdict decided on
    the result equals the one decided on :func:`gather_evidence` under the new policy and settings
    (``tests/test_sensitivity.py`` checks it for every alternative the sensitivity tries).

    Parameters
    ----------
    evidence : Evidence
        The audit to read again.
    policy : Policy, optional
        Default: the audit's own.
    settings : AuditSettings, optional
        Default: the audit's own. The selected configuration and the trials cannot change (that is a
        new audit).
    memory_budget : int, optional
        As for :func:`gather_evidence`.
    verdict_only : bool
        As for :func:`gather_evidence` (the sensitivity block decides verdicts only).

    Returns
    -------
    Evidence
    """
    policy = policy or evidence.policy
    settings = settings or evidence.settings
    if (settings.selected, settings.trials) != (evidence.settings.selected, evidence.settings.trials):
        raise InputError("reassess keeps the selected configuration and the trials counted; another selection "
                         "or trial count is a new audit (gather_evidence)")
    changed = {f.name for f in fields(policy) if getattr(policy, f.name) != getattr(evidence.policy, f.name)}
    count = settings.resamples if settings.resamples is not None else policy.resamples
    confidence = settings.confidence if settings.confidence is not None else policy.confidence
    sweep = evidence.sweep
    resampling = count != evidence.resamples.count or any(
        getattr(settings, name) != getattr(evidence.settings, name) for name in RESAMPLING_SETTINGS)
    parts: dict = {"policy": policy, "settings": settings}
    moments = table = None
    if resampling or ("significance" in changed and evidence.snooping is not None):
        budget = policy.memory_budget * 2**20 if memory_budget is None else memory_budget
        plan = plan_blocks(sweep.n_configurations, sweep.n_windows, count, budget)
        if not plan.in_memory:
            return gather_evidence(sweep, settings=settings, policy=policy, memory_budget=memory_budget,
                                   verdict_only=verdict_only)
        with single_threaded():
            moments, table = _resampled_parts(evidence, settings, policy, count, confidence, parts, plan.keep_weights)
    elif (confidence, settings.interval_method) != (evidence.confidence, evidence.intervals.method):
        if evidence.intervals.distribution_columns is not None:  # a streamed audit kept the selected one's only
            return gather_evidence(sweep, settings=settings, policy=policy, memory_budget=memory_budget)
        parts["intervals"] = at_level(evidence.intervals, confidence, settings.interval_method)
    if changed & _SHARPE_KEYS and evidence.sharpe is not None:
        parts["sharpe"] = _reinference(evidence, settings, policy)
        parts["deflation_curve"] = _curve(parts["sharpe"])
    if evidence.snooping is not None:
        parts.update(_selection_parts(evidence, policy, changed, parts.get("snooping"), memory_budget, verdict_only))
    if changed & _TIME_KEYS or moments is not None:
        parts.update(_time_parts(evidence, settings, policy, changed, parts, confidence, table))
    return replace(evidence, **parts)


def _resampled_parts(evidence: Evidence, settings: AuditSettings, policy: Policy, count: int, confidence: float,
                     parts: dict, keep_weights: bool = False):
    """New resamples and what reads them (see :func:`reassess`), into ``parts``; the moments back, and
    the weights when ``keep_weights`` (drawn once for the time structure's product too)."""
    sweep, k = evidence.sweep, evidence.selected_index
    resamples, source, choice = _resamples(sweep, settings, count, k)
    table = WeightTable(resamples, lazy=True) if keep_weights and resamples.seed is not None else None
    # The long-run standard errors read only the returns: the audit's own serve every resampling.
    kept = evidence.intervals
    errors = (None if kept.mean_standard_error is None else
              (kept.mean_standard_error, kept.sharpe_standard_error, kept.degrees_of_freedom))
    moments, intervals = moments_and_intervals(
        sweep.returns, resamples, table=table,
        intervals=functools.partial(bootstrap_intervals, confidence=confidence, method=settings.interval_method,
                                    long_run=evidence.long_run, standard_errors=errors),
    )
    snooping, variance = _snooping_in_memory(sweep.returns, moments, intervals, policy, evidence.long_run)
    share, share_low = _bootstrap_share(variance, evidence.long_run)
    parts.update(
        resamples=resamples, block_length_source=source, block_choice=choice, intervals=intervals,
        bootstrap_share=share, bootstrap_share_low=share_low,
        surface=isolated_peak(sweep.parameters, evidence.sharpe_ratios, selected=k,
                              sharpe_distribution=intervals.sharpe_distribution_of(k)),
    )
    if snooping is not None:
        parts["snooping"] = snooping
    return moments, table


def _selection_parts(evidence: Evidence, policy: Policy, changed: set[str], snooping: Snooping | None,
                     memory_budget: int | None = None, verdict_only: bool = False) -> dict:
    """The data-snooping labels, CSCV and the family-tails test under ``policy`` (see :func:`reassess`);
    ``snooping``: the tests run again on new resamples, if they were."""
    x, k = evidence.sweep.returns, evidence.selected_index
    if snooping is None:
        snooping = replace(evidence.snooping, gating=policy.snooping_test, scale=policy.snooping_scale)
    if evidence.tails is not None and not changed & _STRESS_KEYS:
        # The stress windows and the charged record read only the returns: only the bar is new.
        tails = tail_test(evidence.tails.stress, critical_value=snooping.gating_stepm.critical_value_for(k))
    else:
        tails = _tails(x, k, snooping, policy)
    parts: dict = {"snooping": snooping, "tails": tails}
    if changed & _CSCV_KEYS:
        # A streamed audit (it kept the selected configuration's distributions only) streams CSCV too.
        streamed = evidence.resamples.count if evidence.intervals.distribution_columns is not None else None
        parts["overfitting"], parts["overfitting_diagnosis"] = _overfitting(x, policy, streamed, memory_budget,
                                                                            dominance=not verdict_only)
    elif changed & _RULE_KEYS:
        parts["overfitting_diagnosis"] = _diagnosis(evidence.overfitting, policy)
    return parts


def _time_parts(evidence: Evidence, settings: AuditSettings, policy: Policy, changed: set[str], parts: dict,
                confidence: float, table: WeightTable | None = None) -> dict:
    """The walk-forward record and the edge over time with their intervals, under the new parts (``table``:
    the new resamples' weights, when kept)."""
    sweep, k = evidence.sweep, evidence.selected_index
    walk, stability = evidence.walk_forward, evidence.stability
    tails = parts.get("tails", evidence.tails)
    if changed & _TIME_KEYS:
        walk, stability, _ = _time_structure(sweep, k, policy, evidence.long_run, tails)
    walk, stability = _time_intervals(sweep.returns[:, k], walk, stability, parts.get("resamples", evidence.resamples),
                                      confidence, settings.interval_method, table)
    return {"walk_forward": walk, "stability": stability}


def _select(sweep: Sweep, settings: AuditSettings, sharpe: np.ndarray) -> tuple[int, str]:
    if settings.selected is not None:
        return sweep.index_of(settings.selected), "named by the user"
    return int(np.argmax(sharpe)), "highest full-sample Sharpe ratio, the configuration a researcher would pick"


def _resamples(
    sweep: Sweep, settings: AuditSettings, count: int, selected: int, choice: BlockLengthChoice | None = None
) -> tuple[Resamples, str, BlockLengthChoice | None]:
    """The audit's one set of resamples, where its block length came from, and how it was chosen
    (``choice``: the family block length already chosen from block summaries)."""
    if settings.block_length is None:
        if choice is None:
            choice = family_block_length(sweep.returns, selected=selected, kind=settings.bootstrap)
        block, source = choice.length, "automatic: " + choice.rule
    else:
        block, source = float(settings.block_length), "given"
    resamples = draw_resamples(
        sweep.n_windows, count=count, kind=settings.bootstrap, block_length=block, seed=settings.seed
    )
    return resamples, source, choice


def _inference(
    sweep: Sweep, settings: AuditSettings, policy: Policy, selected: int, long_run: LongRunVariance,
    effective: EffectiveTrials | None = None,
) -> SharpeInference:
    return sharpe_inference(
        sweep.returns,
        selected=selected,
        trials=settings.trials,
        periods_per_year=sweep.periods_per_year,
        confidence=policy.track_record_confidence,
        variance_mode=policy.deflation_variance,
        trials_for_deflation=policy.deflation_trials,
        sharpe_variance=policy.sharpe_variance,
        long_run=long_run,
        significance=policy.significance,
        effective=effective,
    )


def _reinference(evidence: Evidence, settings: AuditSettings, policy: Policy) -> SharpeInference:
    """The Sharpe inference under ``policy`` from the family the audit's own inference summarised (every
    configuration's Sharpe ratio, the selected one's moments and series, the effective trials): the
    same figures as on the matrix (the streamed path's rule), without a T x N pass."""
    sweep, k, s = evidence.sweep, evidence.selected_index, evidence.sharpe
    family = Family(sweep.n_windows, s.configuration_sharpes, sweep.returns[:, k], s.skewness, s.kurtosis,
                    s.effective_trials_detail)
    return sharpe_inference_of_family(
        family, selected=k, long_run=evidence.long_run, trials=settings.trials,
        periods_per_year=sweep.periods_per_year, confidence=policy.track_record_confidence,
        variance_mode=policy.deflation_variance, trials_for_deflation=policy.deflation_trials,
        sharpe_variance=policy.sharpe_variance, significance=policy.significance,
    )


def _bootstrap_share(variance_of_means: np.ndarray, long_run: LongRunVariance) -> tuple[float, float]:
    """How much of each configuration's long-run variance the resamples reproduce: median, 10th percentile."""
    t = long_run.windows
    share = t * variance_of_means / long_run.variance
    return float(np.median(share)), float(np.quantile(share, 0.1))


def _snooping(mean, windows, blocks, policy: Policy, long_run: LongRunVariance, further) -> Snooping:
    """The data-snooping tests under each scale, from the blocks' maxima (one fused pass)."""
    check, spa, stepm = snooping_from_blocks(mean, windows, blocks, long_run=long_run, level=policy.significance,
                                             further=further)
    return Snooping(
        reality_check=check,
        spa_long_run=spa["long-run"], spa_bootstrap=spa["bootstrap"], spa_unstudentized=spa["none"],
        stepm_long_run=stepm["long-run"], stepm_bootstrap=stepm["bootstrap"], stepm_unstudentized=stepm["none"],
        gating=policy.snooping_test, scale=policy.snooping_scale,
    )


def _snooping_in_memory(x: np.ndarray, moments, intervals: BootstrapIntervals, policy: Policy,
                        long_run: LongRunVariance) -> tuple[Snooping | None, np.ndarray]:
    """The data-snooping tests on the whole matrix's moments (None for one configuration) and each
    configuration's variance of the resampled means."""
    if x.shape[1] < 2:
        return None, np.var(intervals.mean_distribution, axis=0)
    t, n = x.shape
    mean = x.mean(axis=0)
    blocks = [snooping_block(moments.mean[:, a:a + COLUMN_BLOCK], mean[a:a + COLUMN_BLOCK], t, start=a)
              for a in range(0, n, COLUMN_BLOCK)]
    snooping = _snooping(mean, t, blocks, policy, long_run, stored_further_pass(moments.mean))
    return snooping, np.concatenate([b.variance_of_mean for b in blocks])


def _overfitting(x: np.ndarray, policy: Policy, streamed: int | None = None,
                 memory_budget: int | None = None, dominance: bool = True) -> tuple[CscvResult, OverfittingDiagnosis]:
    """CSCV and the rule read off it; ``streamed`` (the audit's resample count): over the blocks of
    configurations a streamed audit of that count uses (the same figures), never ``T x N`` at once;
    ``dominance=False``: without the dominance figures, which the rule does not read (in memory)."""
    if streamed:
        budget = policy.memory_budget * 2**20 if memory_budget is None else memory_budget
        plan = plan_blocks(x.shape[1], x.shape[0], streamed, budget)
        overfit = Stream(x, plan, InProcess(), partitions=policy.partitions, statistic=policy.overfitting_statistic,
                         threshold=policy.stress_threshold).cscv_alone()
    else:
        overfit = cscv(x, partitions=policy.partitions, statistic=policy.overfitting_statistic, dominance=dominance)
    return overfit, _diagnosis(overfit, policy)


def _tails(x: np.ndarray, selected: int, snooping: Snooping, policy: Policy) -> TailTest:
    """The family-tails test, held to the gating StepM's bar for the selected configuration."""
    stress = family_stress(x, selected=selected, threshold=policy.stress_threshold, share=policy.stress_share)
    return tail_test(stress, critical_value=snooping.gating_stepm.critical_value_for(selected))


def _diagnosis(overfit: CscvResult, policy: Policy) -> OverfittingDiagnosis:
    return overfitting_diagnosis(
        overfit,
        max_probability_of_overfitting=policy.max_probability_of_overfitting,
        max_probability_of_loss=policy.max_probability_of_loss,
        min_strength_share=policy.min_strength_share,
    )


def _time_structure(
    sweep: Sweep, selected: int, policy: Policy, long_run: LongRunVariance, tails: TailTest | None
) -> tuple[WalkForward | None, EdgeStability | None, tuple[str, ...]]:
    """The walk-forward record of re-picking the winner and the selected configuration's edge over time."""
    t, n = sweep.returns.shape
    notes: list[str] = []
    walk = None
    warmup = policy.walk_forward_warmup or default_warmup(t)
    if n >= 2 and t - warmup >= MIN_RECORD:
        walk = walk_forward(
            sweep.returns, selected=selected, warmup=warmup, lookback=policy.walk_forward_lookback or None,
            # The family's median AR(1) coefficient: steadier than each configuration's own estimate.
            persistence=float(np.median(long_run.ar_coefficient)),
            stress=None if tails is None else tails.stress,
        )
    elif n >= 2:
        notes.append(f"the walk-forward record was not computed: a warm-up of {warmup} windows leaves fewer than "
                     f"{MIN_RECORD} of the {t} windows to trade (walk_forward_warmup)")
    stability = None
    if t >= 3 * MIN_PERIOD:
        stability = edge_stability(sweep.returns[:, selected], recent_share=policy.recent_share,
                                   rolling_windows=default_rolling_windows(t, sweep.periods_per_year))
    else:
        notes.append(f"the edge over time was not examined: {t} windows are too few to cut into thirds of at "
                     f"least {MIN_PERIOD}")
    return walk, stability, tuple(notes)


def _time_intervals(
    own: np.ndarray, walk: WalkForward | None, stability: EdgeStability | None, resamples: Resamples,
    confidence: float, method: str, table: WeightTable | None = None,
) -> tuple[WalkForward | None, EdgeStability | None]:
    """Intervals of the walk-forward record and of the two periods, from the audit's own resamples.

    Each part enters as two columns (its returns where it holds, zero elsewhere, and its indicator);
    their moments come from the same resamples as every other figure (the weights kept by the audit's
    product, else replayed from the seed: the same weights).
    """
    t = own.size
    parts, where = [], np.arange(t)
    if walk is not None:
        series = np.zeros(t)
        series[walk.warmup:] = walk.record
        parts.append((series, where >= walk.warmup))
    if stability is not None:
        parts += [(own, where < stability.early.stop), (own, where >= stability.recent.start)]
    if not parts:
        return walk, stability
    chunk = moment_chunk(t)
    moments = resampled_moments(part_columns(parts), resamples, chunk=chunk,
                                weights=None if table is None else table.chunks(chunk))
    found = list(part_intervals(parts, moments, confidence=confidence, method=method))
    if walk is not None:
        walk = replace(walk, intervals=found.pop(0))
    if stability is not None:
        stability = replace(stability, early_intervals=found[0], recent_intervals=found[1])
    return walk, stability


def _notes(
    sweep: Sweep,
    selected: int,
    inference: SharpeInference,
    caught: tuple[str, ...],
    snooping: Snooping | None,
    intervals: BootstrapIntervals,
    policy: Policy,
    share_low: float,
) -> tuple[str, ...]:
    """The audit's warnings, in the order the reader meets them."""
    # The audit says once, at the end, that periods per year are unknown.
    notes = list(sweep.notes) + [w for w in inference.warnings if not w.startswith("periods per year unknown")]
    notes += caught
    if sweep.n_configurations == 1:
        notes.append("a single configuration: selection tests need at least two configurations and were skipped")
    if snooping is not None and selected not in snooping.gating_stepm.significant:
        notes.append(
            f"the selected configuration {sweep.configurations[selected]!r} is not among the "
            f"configurations StepM finds beating the benchmark at the {number(policy.significance)} level"
        )
    if intervals.degenerate_resamples:
        notes.append(
            f"{intervals.degenerate_resamples} resamples had a configuration with zero variance; "
            "their Sharpe ratios were left out of the intervals"
        )
    if share_low < 0.8:
        notes.append(
            f"the resamples reproduce only {percent(share_low, 2)} of the long-run variance for a tenth of the "
            "configurations: their bootstrap intervals may be too narrow (the studentized tests and the Sharpe "
            "inference use the long-run variance and are not affected); consider a longer --block-length"
        )
    if sweep.periods_per_year is None and sweep.dates is None:
        notes.append("periods per year unknown (no --periods-per-year and no dated windows): figures are per window")
    return tuple(notes)


def _curve(inference: SharpeInference) -> DeflatedCurve | None:
    """The report's deflated probability against the number of trials, around the headline DSR."""
    d = inference.deflated
    return deflated_by_trials(
        d.sharpe, observations=d.observations, skewness=d.skewness, kurtosis=d.kurtosis,
        trial_sharpe_variance=d.trial_sharpe_variance, trials=d.trials,
        effective_trials=inference.effective_trials, expected_maximum=d.expected_maximum,
        long_run_ratio=d.long_run_ratio,
    )
