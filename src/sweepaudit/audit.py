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
from dataclasses import fields, replace

import numpy as np

from . import validate
from .engine import moments_and_intervals
from .errors import SweepAuditWarning
from .errors import InputError
from .format import number, percent
from .methods.bootstrap_ci import at_level, bootstrap_intervals
from .methods.cscv import cscv
from .methods.deflation import deflated_by_trials
from .methods.haircut import haircut_sharpe
from .methods.inference import sharpe_inference
from .methods.longrun import family_block_length, long_run_variance
from .methods.overfitting import overfitting_diagnosis
from .methods.snooping import reality_check, stepwise_superior, superior_predictive_ability
from .methods.surface import isolated_peak
from .methods.tails import family_stress, tail_test
from .policy import DEFAULT_POLICY, Policy
from .resample import ResampledMoments, Resamples, draw_resamples
from .results import (
    AuditSettings,
    BlockLengthChoice,
    BootstrapIntervals,
    CscvResult,
    DeflatedCurve,
    EffectiveTrials,
    Evidence,
    LongRunVariance,
    OverfittingDiagnosis,
    SharpeInference,
    Snooping,
    TailTest,
)
from .sweep import Sweep

__all__ = ["gather_evidence", "reassess", "RESAMPLING_SETTINGS"]


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
        resamples, block_source, choice, moments, intervals = _resampled(
            sweep, settings, count, confidence, selected, progress=progress, memory_budget=memory_budget
        )
        inference = _inference(sweep, settings, policy, selected, long_run)
        haircut = haircut_sharpe(
            inference.configuration_sharpes, observations=sweep.n_windows, selected=selected,
            tests=inference.trials, periods_per_year=sweep.periods_per_year,
        )
        snooping = overfit = diagnosis = tails = None
        if sweep.n_configurations >= 2:
            snooping = _snooping(x, moments, policy, long_run)
            overfit, diagnosis = _overfitting(x, policy)
            tails = _tails(x, selected, snooping, policy)
    caught_notes = tuple(str(w.message) for w in caught if issubclass(w.category, SweepAuditWarning))
    share, share_low = _bootstrap_share(intervals, long_run)
    return Evidence(
        sweep=sweep, settings=settings, policy=policy, selected_index=selected, selection_rule=rule,
        resamples=resamples, block_length_source=block_source, intervals=intervals, sharpe_ratios=sharpe,
        warnings=_notes(sweep, selected, inference, caught_notes, snooping, intervals, policy, share_low),
        sharpe=inference, haircut=haircut, overfitting=overfit, overfitting_diagnosis=diagnosis, snooping=snooping,
        surface=isolated_peak(sweep.parameters, sharpe, selected=selected,
                              sharpe_distribution=intervals.sharpe_distribution[:, selected]),
        deflation_curve=_curve(inference), long_run=long_run, block_choice=choice,
        bootstrap_share=share, bootstrap_share_low=share_low, tails=tails,
    )


#: The settings whose change needs new resamples (drawn again from the seed); the interval level
#: and method re-read the kept bootstrap distributions instead.
RESAMPLING_SETTINGS = ("seed", "resamples", "bootstrap", "block_length")

# The policy keys each part of the evidence depends on (the others only change what the verdict reads).
_SHARPE_KEYS = frozenset({"deflation_variance", "deflation_trials", "sharpe_variance", "track_record_confidence",
                          "significance"})
_CSCV_KEYS = frozenset({"partitions", "overfitting_statistic"})
_RULE_KEYS = frozenset({"max_probability_of_overfitting", "max_probability_of_loss", "min_strength_share"})


def reassess(
    evidence: Evidence,
    *,
    policy: Policy | None = None,
    settings: AuditSettings | None = None,
    memory_budget: int | None = None,
) -> Evidence:
    """The evidence of the same audit under another policy or other resampling settings, re-running
    only the methods the change reaches.

    What runs again, and what is reused:

    * new resampling settings (:data:`RESAMPLING_SETTINGS`: another bootstrap kind, block length,
      count or seed), or another significance level (StepM's stepping needs the moments): the
      resamples are drawn again from the seed and the methods that read them run again (intervals,
      reality check, SPA, StepM, the family-tails bar, the surface's standard error);
    * another interval level or method only: the kept bootstrap distributions are re-read
      (:func:`~sweepaudit.methods.bootstrap_ci.at_level`), no resampling;
    * the Sharpe inference's choices (trial variance, trial count, Sharpe variance): the inference
      runs again on the audit's long-run variance and effective trials (no eigenvalues again);
    * the CSCV statistic or partitions: CSCV runs again; only the rule's thresholds: the rule is
      read again off the same CSCV result;
    * what the verdict only reads (the snooping scale and gating test, the deflated threshold):
      the same results, relabelled.

    The long-run variance, the haircut and the warnings are the audit's own. The result equals
    :func:`gather_evidence` under the new policy and settings (``tests/test_audit.py`` checks it).

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
    parts: dict = {"policy": policy, "settings": settings}
    resampling = count != evidence.resamples.count or any(
        getattr(settings, name) != getattr(evidence.settings, name) for name in RESAMPLING_SETTINGS)
    moments = None
    if resampling or ("significance" in changed and evidence.snooping is not None):
        moments = _resampled_parts(evidence, settings, count, confidence, parts, memory_budget)
    elif (confidence, settings.interval_method) != (evidence.confidence, evidence.intervals.method):
        parts["intervals"] = at_level(evidence.intervals, confidence, settings.interval_method)
    if changed & _SHARPE_KEYS and evidence.sharpe is not None:
        parts["sharpe"] = _inference(evidence.sweep, settings, policy, evidence.selected_index, evidence.long_run,
                                     evidence.sharpe.effective_trials_detail)
        parts["deflation_curve"] = _curve(parts["sharpe"])
    if evidence.snooping is not None:
        parts.update(_selection_parts(evidence, policy, changed, moments))
    return replace(evidence, **parts)


def _resampled_parts(evidence: Evidence, settings: AuditSettings, count: int, confidence: float, parts: dict,
                     memory_budget: int | None) -> ResampledMoments:
    """New resamples and what reads them (see :func:`reassess`), into ``parts``; the moments back."""
    sweep, k = evidence.sweep, evidence.selected_index
    resamples, source, choice, moments, intervals = _resampled(
        sweep, settings, count, confidence, k, memory_budget=memory_budget)
    share, share_low = _bootstrap_share(intervals, evidence.long_run)
    parts.update(
        resamples=resamples, block_length_source=source, block_choice=choice, intervals=intervals,
        bootstrap_share=share, bootstrap_share_low=share_low,
        surface=isolated_peak(sweep.parameters, evidence.sharpe_ratios, selected=k,
                              sharpe_distribution=intervals.sharpe_distribution[:, k]),
    )
    return moments


def _selection_parts(evidence: Evidence, policy: Policy, changed: set[str], moments: ResampledMoments | None) -> dict:
    """The data-snooping tests, CSCV and the family-tails test under ``policy`` (see :func:`reassess`)."""
    x, k = evidence.sweep.returns, evidence.selected_index
    if moments is not None:
        snooping = _snooping(x, moments, policy, evidence.long_run)
    else:
        snooping = replace(evidence.snooping, gating=policy.snooping_test, scale=policy.snooping_scale)
    parts: dict = {"snooping": snooping, "tails": _tails(x, k, snooping, policy)}
    if changed & _CSCV_KEYS:
        parts["overfitting"], parts["overfitting_diagnosis"] = _overfitting(x, policy)
    elif changed & _RULE_KEYS:
        parts["overfitting_diagnosis"] = _diagnosis(evidence.overfitting, policy)
    return parts


def _select(sweep: Sweep, settings: AuditSettings, sharpe: np.ndarray) -> tuple[int, str]:
    if settings.selected is not None:
        return sweep.index_of(settings.selected), "named by the user"
    return int(np.argmax(sharpe)), "highest full-sample Sharpe ratio (the configuration a researcher would pick)"


def _resampled(sweep: Sweep, settings: AuditSettings, count: int, confidence: float, selected: int,
               *, progress=None, memory_budget: int | None = None):
    """The resamples, where their block length came from, the shared moments and the intervals."""
    resamples, block_source, choice = _resamples(sweep, settings, count, selected)
    moments, intervals = moments_and_intervals(
        sweep.returns, resamples, memory_budget=memory_budget, progress=progress,
        intervals=functools.partial(bootstrap_intervals, confidence=confidence, method=settings.interval_method),
    )
    return resamples, block_source, choice, moments, intervals


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


def _bootstrap_share(intervals: BootstrapIntervals, long_run: LongRunVariance) -> tuple[float, float]:
    """How much of each configuration's long-run variance the resamples reproduce: median, 10th percentile."""
    t = long_run.windows
    share = t * np.var(intervals.mean_distribution, axis=0) / long_run.variance
    return float(np.median(share)), float(np.quantile(share, 0.1))


def _snooping(x: np.ndarray, moments: ResampledMoments, policy: Policy, long_run: LongRunVariance) -> Snooping:
    """The data-snooping tests on the shared moments under each scale."""
    level = policy.significance
    shared = dict(moments=moments, long_run=long_run)
    spa = {scale: superior_predictive_ability(x, scale=scale, **shared) for scale in ("long-run", "bootstrap", "none")}
    stepm = {
        scale: stepwise_superior(x, level=level, scale=scale, recentring="consistent", **shared)
        for scale in ("long-run", "bootstrap", "none")
    }
    return Snooping(
        reality_check=reality_check(x, moments=moments),
        spa_long_run=spa["long-run"], spa_bootstrap=spa["bootstrap"], spa_unstudentized=spa["none"],
        stepm_long_run=stepm["long-run"], stepm_bootstrap=stepm["bootstrap"], stepm_unstudentized=stepm["none"],
        gating=policy.snooping_test, scale=policy.snooping_scale,
    )


def _overfitting(x: np.ndarray, policy: Policy) -> tuple[CscvResult, OverfittingDiagnosis]:
    """CSCV and the rule read off it."""
    overfit = cscv(x, partitions=policy.partitions, statistic=policy.overfitting_statistic)
    return overfit, _diagnosis(overfit, policy)


def _diagnosis(overfit: CscvResult, policy: Policy) -> OverfittingDiagnosis:
    return overfitting_diagnosis(
        overfit,
        max_probability_of_overfitting=policy.max_probability_of_overfitting,
        max_probability_of_loss=policy.max_probability_of_loss,
        min_strength_share=policy.min_strength_share,
    )


def _tails(x: np.ndarray, selected: int, snooping: Snooping, policy: Policy) -> TailTest:
    """The family-stress test, held to the critical value the gating StepM held the selected one to."""
    stress = family_stress(x, selected=selected, threshold=policy.stress_threshold, share=policy.stress_share)
    return tail_test(stress, critical_value=snooping.gating_stepm.critical_value_for(selected))


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
