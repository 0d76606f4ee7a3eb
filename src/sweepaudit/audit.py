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
from dataclasses import replace

import numpy as np

from . import validate
from .engine import moments_and_intervals
from .errors import SweepAuditWarning
from .methods.bootstrap_ci import bootstrap_intervals, part_columns, part_intervals
from .methods.cscv import cscv
from .methods.deflation import deflated_by_trials
from .methods.haircut import haircut_sharpe
from .methods.inference import sharpe_inference
from .methods.longrun import family_block_length, long_run_variance
from .methods.overfitting import overfitting_diagnosis
from .methods.snooping import reality_check, stepwise_superior, superior_predictive_ability
from .methods.stability import MIN_PERIOD, default_rolling_windows, edge_stability
from .methods.surface import isolated_peak
from .methods.tails import family_stress, tail_test
from .methods.walkforward import MIN_RECORD, default_warmup, walk_forward
from .policy import DEFAULT_POLICY, Policy
from .resample import ResampledMoments, Resamples, draw_resamples, moment_chunk, resampled_moments
from .results import (
    AuditSettings,
    BlockLengthChoice,
    BootstrapIntervals,
    CscvResult,
    DeflatedCurve,
    EdgeStability,
    Evidence,
    LongRunVariance,
    OverfittingDiagnosis,
    SharpeInference,
    Snooping,
    TailTest,
    WalkForward,
)
from .sweep import Sweep

__all__ = ["gather_evidence"]


def gather_evidence(
    sweep: Sweep,
    *,
    settings: AuditSettings | None = None,
    policy: Policy | None = None,
    progress: Callable[[int, int], None] | None = None,
    memory_budget: int | None = None,
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
        Bytes the ``B x N`` resampled moments may take before the engine streams over blocks of
        configurations (:mod:`sweepaudit.engine`).

    Returns
    -------
    Evidence
    """
    settings = settings or AuditSettings()
    policy = policy or DEFAULT_POLICY
    count = validate.whole_number(
        settings.resamples if settings.resamples is not None else policy.resamples, "resamples", minimum=1
    )
    confidence = settings.confidence if settings.confidence is not None else policy.confidence
    x = sweep.returns
    sharpe = x.mean(axis=0) / x.std(axis=0, ddof=1)
    selected, rule = _select(sweep, settings, sharpe)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", SweepAuditWarning)
        long_run = long_run_variance(x)
        resamples, block_source, choice = _resamples(sweep, settings, count, selected)
        moments, intervals = moments_and_intervals(
            x, resamples, memory_budget=memory_budget, progress=progress,
            intervals=functools.partial(bootstrap_intervals, confidence=confidence, method=settings.interval_method),
        )
        inference = _inference(sweep, settings, policy, selected, long_run)
        haircut = haircut_sharpe(
            inference.configuration_sharpes, observations=sweep.n_windows, selected=selected,
            tests=inference.trials, periods_per_year=sweep.periods_per_year,
        )
        snooping = overfit = diagnosis = tails = None
        if sweep.n_configurations >= 2:
            snooping, overfit, diagnosis = _selection_tests(x, moments, policy, long_run)
            tails = _tails(x, selected, snooping, policy)
        walk, stability, time_notes = _time_structure(sweep, selected, policy, long_run, tails)
        walk, stability = _time_intervals(sweep.returns[:, selected], walk, stability, resamples, confidence,
                                          settings.interval_method)
    caught_notes = tuple(str(w.message) for w in caught if issubclass(w.category, SweepAuditWarning)) + time_notes
    share, share_low = _bootstrap_share(intervals, long_run)
    return Evidence(
        sweep=sweep, settings=settings, policy=policy, selected_index=selected, selection_rule=rule,
        resamples=resamples, block_length_source=block_source, intervals=intervals, sharpe_ratios=sharpe,
        warnings=_notes(sweep, selected, inference, caught_notes, snooping, intervals, policy, share_low),
        sharpe=inference, haircut=haircut, overfitting=overfit, overfitting_diagnosis=diagnosis, snooping=snooping,
        surface=isolated_peak(sweep.parameters, sharpe, selected=selected,
                              sharpe_distribution=intervals.sharpe_distribution[:, selected]),
        deflation_curve=_curve(inference), long_run=long_run, block_choice=choice,
        bootstrap_share=share, bootstrap_share_low=share_low, tails=tails, walk_forward=walk, stability=stability,
    )


def _select(sweep: Sweep, settings: AuditSettings, sharpe: np.ndarray) -> tuple[int, str]:
    if settings.selected is not None:
        return sweep.index_of(settings.selected), "named by the user"
    return int(np.argmax(sharpe)), "highest full-sample Sharpe ratio (the configuration a researcher would pick)"


def _resamples(
    sweep: Sweep, settings: AuditSettings, count: int, selected: int
) -> tuple[Resamples, str, BlockLengthChoice | None]:
    """The audit's one set of resamples, where its block length came from, and how it was chosen."""
    choice = None
    if settings.block_length is None:
        choice = family_block_length(sweep.returns, selected=selected, kind=settings.bootstrap)
        block, source = choice.length, "automatic: " + choice.rule
    else:
        block, source = float(settings.block_length), "given"
    resamples = draw_resamples(
        sweep.n_windows, count=count, kind=settings.bootstrap, block_length=block, seed=settings.seed
    )
    return resamples, source, choice


def _inference(
    sweep: Sweep, settings: AuditSettings, policy: Policy, selected: int, long_run: LongRunVariance
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
    )


def _bootstrap_share(intervals: BootstrapIntervals, long_run: LongRunVariance) -> tuple[float, float]:
    """How much of each configuration's long-run variance the resamples reproduce: median, 10th percentile."""
    t = long_run.windows
    share = t * np.var(intervals.mean_distribution, axis=0) / long_run.variance
    return float(np.median(share)), float(np.quantile(share, 0.1))


def _selection_tests(
    x: np.ndarray, moments: ResampledMoments, policy: Policy, long_run: LongRunVariance
) -> tuple[Snooping, CscvResult, OverfittingDiagnosis]:
    """The data-snooping tests on the shared moments under each scale, and CSCV with its diagnosis."""
    level = policy.significance
    shared = dict(moments=moments, long_run=long_run)
    spa = {scale: superior_predictive_ability(x, scale=scale, **shared) for scale in ("long-run", "bootstrap", "none")}
    stepm = {
        scale: stepwise_superior(x, level=level, scale=scale, recentring="consistent", **shared)
        for scale in ("long-run", "bootstrap", "none")
    }
    snooping = Snooping(
        reality_check=reality_check(x, moments=moments),
        spa_long_run=spa["long-run"], spa_bootstrap=spa["bootstrap"], spa_unstudentized=spa["none"],
        stepm_long_run=stepm["long-run"], stepm_bootstrap=stepm["bootstrap"], stepm_unstudentized=stepm["none"],
        gating=policy.snooping_test, scale=policy.snooping_scale,
    )
    overfit = cscv(x, partitions=policy.partitions, statistic=policy.overfitting_statistic)
    diagnosis = overfitting_diagnosis(
        overfit,
        max_probability_of_overfitting=policy.max_probability_of_overfitting,
        max_probability_of_loss=policy.max_probability_of_loss,
        min_strength_share=policy.min_strength_share,
    )
    return snooping, overfit, diagnosis


def _tails(x: np.ndarray, selected: int, snooping: Snooping, policy: Policy) -> TailTest:
    """The family-stress test, held to the critical value the gating StepM held the selected one to."""
    stress = family_stress(x, selected=selected, threshold=policy.stress_threshold, share=policy.stress_share)
    return tail_test(stress, critical_value=snooping.gating_stepm.critical_value_for(selected))


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
    confidence: float, method: str,
) -> tuple[WalkForward | None, EdgeStability | None]:
    """Intervals of the walk-forward record and of the two periods, from the audit's own resamples.

    Each part enters as two columns (its returns where it holds, zero elsewhere, and its indicator);
    their moments come from the same resamples as every other figure (replayed from the seed).
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
    moments = resampled_moments(part_columns(parts), resamples, chunk=moment_chunk(t))
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
            f"configurations StepM finds beating the benchmark at the {policy.significance:g} level"
        )
    if intervals.degenerate_resamples:
        notes.append(
            f"{intervals.degenerate_resamples} resamples had a configuration with zero variance; "
            "their Sharpe ratios were left out of the intervals"
        )
    if share_low < 0.8:
        notes.append(
            f"the resamples reproduce only {share_low:.0%} of the long-run variance for a tenth of the "
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
