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

import numpy as np

from . import validate
from .engine import moments_and_intervals
from .errors import SweepAuditWarning
from .methods.bootstrap_ci import bootstrap_intervals
from .methods.cscv import cscv
from .methods.deflation import deflated_by_trials
from .methods.haircut import haircut_sharpe
from .methods.inference import sharpe_inference
from .methods.overfitting import overfitting_diagnosis
from .methods.snooping import reality_check, stepwise_superior, superior_predictive_ability
from .methods.surface import isolated_peak
from .policy import DEFAULT_POLICY, Policy
from .resample import ResampledMoments, Resamples, automatic_block_length, draw_resamples
from .results import (
    AuditSettings,
    BootstrapIntervals,
    CscvResult,
    DeflatedCurve,
    Evidence,
    OverfittingDiagnosis,
    SharpeInference,
    Snooping,
)
from .sweep import Sweep

__all__ = ["gather_evidence"]

_AUTOMATIC_BLOCK = (
    "automatic: Politis and White (2004) with the Patton, Politis and White (2009) "
    "correction, computed on the selected configuration's series"
)


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
        resamples, block_source = _resamples(sweep, settings, count, selected)
        moments, intervals = moments_and_intervals(
            x, resamples, memory_budget=memory_budget, progress=progress,
            intervals=functools.partial(bootstrap_intervals, confidence=confidence, method=settings.interval_method),
        )
        inference = _inference(sweep, settings, policy, selected)
        haircut = haircut_sharpe(
            inference.configuration_sharpes, observations=sweep.n_windows, selected=selected,
            tests=inference.trials, periods_per_year=sweep.periods_per_year,
        )
        snooping, overfit, diagnosis = _selection_tests(x, moments, policy) if sweep.n_configurations >= 2 else (None,) * 3
    caught_notes = tuple(str(w.message) for w in caught if issubclass(w.category, SweepAuditWarning))
    return Evidence(
        sweep=sweep, settings=settings, policy=policy, selected_index=selected, selection_rule=rule,
        resamples=resamples, block_length_source=block_source, intervals=intervals, sharpe_ratios=sharpe,
        warnings=_notes(sweep, selected, inference, caught_notes, snooping, intervals, policy),
        sharpe=inference, haircut=haircut, overfitting=overfit, overfitting_diagnosis=diagnosis, snooping=snooping,
        surface=isolated_peak(sweep.parameters, sharpe, selected=selected,
                              sharpe_distribution=intervals.sharpe_distribution[:, selected]),
        deflation_curve=_curve(inference),
    )


def _select(sweep: Sweep, settings: AuditSettings, sharpe: np.ndarray) -> tuple[int, str]:
    if settings.selected is not None:
        return sweep.index_of(settings.selected), "named by the user"
    return int(np.argmax(sharpe)), "highest full-sample Sharpe ratio (the configuration a researcher would pick)"


def _resamples(sweep: Sweep, settings: AuditSettings, count: int, selected: int) -> tuple[Resamples, str]:
    """The audit's one set of resamples and where its block length came from."""
    if settings.block_length is None:
        block = automatic_block_length(sweep.returns[:, selected], settings.bootstrap)
        source = _AUTOMATIC_BLOCK
    else:
        block, source = float(settings.block_length), "given"
    resamples = draw_resamples(
        sweep.n_windows, count=count, kind=settings.bootstrap, block_length=block, seed=settings.seed
    )
    return resamples, source


def _inference(sweep: Sweep, settings: AuditSettings, policy: Policy, selected: int) -> SharpeInference:
    return sharpe_inference(
        sweep.returns,
        selected=selected,
        trials=settings.trials,
        periods_per_year=sweep.periods_per_year,
        confidence=policy.track_record_confidence,
        variance_mode=policy.deflation_variance,
        trials_for_deflation=policy.deflation_trials,
    )


def _selection_tests(
    x: np.ndarray, moments: ResampledMoments, policy: Policy
) -> tuple[Snooping, CscvResult, OverfittingDiagnosis]:
    """The data-snooping tests on the shared moments, and CSCV with its diagnosis."""
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
    return snooping, overfit, diagnosis


def _notes(
    sweep: Sweep,
    selected: int,
    inference: SharpeInference,
    caught: tuple[str, ...],
    snooping: Snooping | None,
    intervals: BootstrapIntervals,
    policy: Policy,
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
    )
