"""Orchestration: Sweep + settings + policy -> AuditResults. Each method runs once.

The resamples are drawn once and their moments computed once; every bootstrap-based method
consumes the same :class:`~sweepaudit.resample.ResampledMoments`.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING

import numpy as np

from .errors import InputError, SweepAuditWarning
from .methods.bootstrap_ci import bootstrap_intervals
from .methods.cscv import cscv
from .methods.haircut import haircut_sharpe
from .methods.inference import sharpe_inference
from .methods.overfitting import overfitting_diagnosis
from .methods.snooping import reality_check, stepwise_superior, superior_predictive_ability
from .methods.surface import isolated_peak
from .policy import DEFAULT_POLICY, Policy
from .resample import ResampledMoments, Resamples, automatic_block_length, draw_resamples, moment_chunk, resampled_moments
from .results import (
    AuditSettings,
    BootstrapIntervals,
    CscvResult,
    HaircutSharpe,
    OverfittingDiagnosis,
    PeakShape,
    SharpeInference,
    Snooping,
)
from .sweep import Sweep
from .verdict import Verdict, decide

if TYPE_CHECKING:
    from .baseline import BaselineComparison

__all__ = ["AuditSettings", "AuditResults", "audit"]

CAUTION = (
    "Statistical evidence, not investment advice. Past performance does not guarantee future "
    "results. Defer to your firm's own risk and compliance process before committing capital."
)


@dataclass(frozen=True, eq=False)
class AuditResults:
    """Everything an audit found; renderers format this and nothing else."""

    sweep: Sweep
    settings: AuditSettings
    policy: Policy
    selected_index: int
    selection_rule: str
    resamples: Resamples
    block_length_source: str
    intervals: BootstrapIntervals
    sharpe_ratios: np.ndarray
    warnings: tuple[str, ...]
    sharpe: SharpeInference | None = None
    haircut: HaircutSharpe | None = None
    overfitting: CscvResult | None = None
    overfitting_diagnosis: OverfittingDiagnosis | None = None
    snooping: Snooping | None = None
    surface: PeakShape | None = None
    verdict: Verdict | None = field(default=None)
    # Filled by the CLI when the audit is compared with an earlier one (--baseline); read by the
    # baseline_drift check.
    baseline: BaselineComparison | None = field(default=None)

    @property
    def selected(self) -> str:
        return self.sweep.configurations[self.selected_index]

    @property
    def resample_count(self) -> int:
        return self.resamples.count

    @property
    def confidence(self) -> float:
        return self.intervals.confidence


# Above this many bytes for the B x N resampled means, second moments and Sharpe ratios held at
# once in float64, the audit streams over blocks of configurations instead.
MEMORY_BUDGET = 4 * 2**30
# Bytes of float64 B x n temporaries one block of configurations may use in the streamed path.
BLOCK_BUDGET = 1_500 * 2**20


def _resample_and_intervals(x, resamples, confidence, method, memory_budget, progress):
    """The shared resampled moments and the intervals of every configuration.

    In memory when the ``B x N`` moments fit ``memory_budget``. Otherwise the configurations are
    streamed in blocks: each block's moments (the same resamples, regenerated from the seed) give
    its intervals exactly as in memory; the resampled means are kept for every configuration in
    float64, so the data-snooping tests (which need only the means, reduced over configurations
    block by block) give exactly the figures of the in-memory path; the second moments are dropped
    and the resampled Sharpe ratios are kept in float32 (relative rounding 6e-8, far below
    bootstrap noise; they only serve re-levelling intervals and plots).
    """
    t, n = x.shape
    b = resamples.count
    chunk = moment_chunk(t)
    if 3 * b * n * 8 <= memory_budget:
        moments = resampled_moments(
            x, resamples, chunk=chunk, progress=(lambda done: progress(done, b)) if progress else None
        )
        return moments, bootstrap_intervals(x, moments, confidence=confidence, method=method)
    width = max(1, min(n, BLOCK_BUDGET // (5 * 8 * b)))
    mean = np.empty((b, n), dtype=np.float64)
    sharpe = np.empty((b, n), dtype=np.float32)
    degenerate = np.zeros(b, dtype=bool)
    mean_iv: list = []
    sharpe_iv: list = []
    for start in range(0, n, width):
        cols = slice(start, min(n, start + width))
        block = resampled_moments(x[:, cols], resamples, chunk=chunk)
        iv = bootstrap_intervals(x[:, cols], block, confidence=confidence, method=method)
        mean[:, cols] = iv.mean_distribution
        sharpe[:, cols] = iv.sharpe_distribution
        degenerate |= ~np.isfinite(iv.sharpe_distribution).all(axis=1)
        mean_iv += iv.mean
        sharpe_iv += iv.sharpe
        del block, iv
        if progress is not None:
            progress(round(b * cols.stop / n), b)
    intervals = BootstrapIntervals(
        mean=tuple(mean_iv),
        sharpe=tuple(sharpe_iv),
        mean_distribution=mean,
        sharpe_distribution=sharpe,
        confidence=float(confidence),
        method=method,
        degenerate_resamples=int(degenerate.sum()),
    )
    return ResampledMoments(mean=mean, second=None, windows=t), intervals


def _select(sweep: Sweep, settings: AuditSettings, sharpe: np.ndarray) -> tuple[int, str]:
    if settings.selected is not None:
        return sweep.index_of(settings.selected), "named by the user"
    return int(np.argmax(sharpe)), "highest full-sample Sharpe ratio (the configuration a researcher would pick)"


def audit(
    sweep: Sweep,
    *,
    settings: AuditSettings | None = None,
    policy: Policy | None = None,
    progress: Callable[[int, int], None] | None = None,
    memory_budget: int = MEMORY_BUDGET,
) -> AuditResults:
    """Audit a sweep: resample once, run every method, apply the policy.

    Parameters
    ----------
    sweep : Sweep
    settings : AuditSettings, optional
    policy : Policy, optional
    progress : callable, optional
        ``progress(done, total)`` after each chunk of resamples.
    memory_budget : int
        Bytes the full ``B x N`` resampled moments may take before the audit streams over
        configurations (see :func:`_resample_and_intervals`).
    """
    settings = settings or AuditSettings()
    policy = policy or DEFAULT_POLICY
    count = settings.resamples if settings.resamples is not None else policy.resamples
    confidence = settings.confidence if settings.confidence is not None else policy.confidence
    if count < 1:
        raise InputError(f"--resamples must be at least 1; got {count}")
    x = sweep.returns
    sharpe = x.mean(axis=0) / x.std(axis=0, ddof=1)
    selected, rule = _select(sweep, settings, sharpe)

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", SweepAuditWarning)
        if settings.block_length is None:
            block = automatic_block_length(x[:, selected], settings.bootstrap)
            block_source = (
                "automatic: Politis and White (2004) with the Patton, Politis and White (2009) "
                "correction, computed on the selected configuration's series"
            )
        else:
            block = float(settings.block_length)
            block_source = "given"
        resamples = draw_resamples(
            sweep.n_windows, count=count, kind=settings.bootstrap, block_length=block, seed=settings.seed
        )
        moments, intervals = _resample_and_intervals(
            x, resamples, confidence, settings.interval_method, memory_budget, progress
        )
        inference = sharpe_inference(
            x,
            selected=selected,
            trials=settings.trials,
            periods_per_year=sweep.periods_per_year,
            confidence=policy.track_record_confidence,
            variance_mode=policy.deflation_variance,
            trials_for_deflation=policy.deflation_trials,
        )
        haircut = haircut_sharpe(
            inference.configuration_sharpes,
            observations=sweep.n_windows,
            selected=selected,
            tests=inference.trials,
            periods_per_year=sweep.periods_per_year,
        )
        overfit = diagnosis = snooping = None
        if sweep.n_configurations >= 2:
            level = policy.significance
            snooping = Snooping(
                reality_check=reality_check(x, moments=moments),
                spa=superior_predictive_ability(x, moments=moments, studentize=True),
                spa_unstudentized=superior_predictive_ability(x, moments=moments, studentize=False),
                stepm=stepwise_superior(x, level=level, moments=moments, studentize=True),
                stepm_unstudentized=stepwise_superior(x, level=level, moments=moments, studentize=False),
                gating=policy.snooping_test,
                studentized=policy.snooping_studentize,
            )
            overfit = cscv(x, partitions=policy.partitions, statistic=policy.overfitting_statistic)
            diagnosis = overfitting_diagnosis(
                overfit,
                max_probability_of_overfitting=policy.max_probability_of_overfitting,
                max_probability_of_loss=policy.max_probability_of_loss,
                min_strength_share=policy.min_strength_share,
            )

    # The audit says once, below, that periods per year are unknown.
    notes = list(sweep.notes) + [w for w in inference.warnings if not w.startswith("periods per year unknown")]
    notes += [str(w.message) for w in caught if issubclass(w.category, SweepAuditWarning)]
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
    if sweep.periods_per_year is None and sweep.dates is None:
        notes.append("periods per year unknown (no --periods-per-year and no dated windows): figures are per window")

    results = AuditResults(
        sweep=sweep,
        settings=settings,
        policy=policy,
        selected_index=selected,
        selection_rule=rule,
        resamples=resamples,
        block_length_source=block_source,
        intervals=intervals,
        sharpe_ratios=sharpe,
        warnings=tuple(notes),
        sharpe=inference,
        haircut=haircut,
        overfitting=overfit,
        overfitting_diagnosis=diagnosis,
        snooping=snooping,
    )
    peak = isolated_peak(sweep.parameters, sharpe, selected=selected, sharpe_distribution=intervals.sharpe_distribution[:, selected])
    results = replace(results, surface=peak)
    return replace(results, verdict=decide(results, policy))
