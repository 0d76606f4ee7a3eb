"""The selection-adjusted Sharpe inference an audit reports for the configuration it judges.

:func:`sharpe_inference` assembles the estimates of :mod:`sweepaudit.methods.sharpe` (moments,
standard errors, annualization, probabilistic Sharpe ratio, minimum track record) and the deflation
of :mod:`sweepaudit.methods.deflation` (the deflated Sharpe ratio under every combination of
choices, effective trials) into one :class:`~sweepaudit.results.SharpeInference`.

Why the defaults
----------------
*Variance mode "null".* The DSR asks whether the best of N luck-only trials could have reached the
observed Sharpe ratio; its scale is the sampling variance of one Sharpe estimate under "no edge",
``1/(T - 1)``. The empirical cross-sectional variance also carries the spread of the
configurations' true Sharpe ratios, so a genuine edge shared by a neighbourhood of configurations
inflates the benchmark and deflates itself away. The simulation in
``benchmarks/sharpe_variance_study.py`` (``docs/sharpe_variance.md``) measures this: on pure-noise
sweeps the null mode's false-positive rate stays below 5 % (at most 2 %), while on sweeps with a
real edge shared by a neighbourhood of configurations the empirical mode passes 6 % of sweeps
against 52 % to 86 % for the null mode; with a strong common factor the empirical mode's
false-positive rate rises above 5 % (5.6 % to 8 %).

*Declared trials.* ``E[max]`` of N correlated trials is at most that of N independent ones, so the
declared count gives a benchmark that is conservative whatever the correlation; the effective count
relies on an estimate from the same data and is only defined for the configurations in the file,
whereas declared trials can include configurations the user tried and dropped. The effective count
(with undeclared trials added as independent) is reported beside it, and every variant is kept.

*Annualization.* All inference is per window; ``observed_annualized`` uses ``sqrt(q)`` by default,
the convention the rest of the report's annualized figures use, and Lo's ``eta(q)`` is reported in
``serial_correlation_factor`` (it needs q - 1 sample autocorrelations, which are noisy for daily
data).

References
----------
Bailey, D. H. and Lopez de Prado, M. (2012). The Sharpe ratio efficient frontier. *Journal of
Risk* 15(2), 3-44.

Bailey, D. H. and Lopez de Prado, M. (2014). The deflated Sharpe ratio: correcting for selection
bias, backtest overfitting and non-normality. *Journal of Portfolio Management* 40(5), 94-107.

Lo, A. W. (2002). The statistics of Sharpe ratios. *Financial Analysts Journal* 58(4), 36-52.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .. import validate
from ..errors import DegenerateDataError, InputError
from ..results import (
    Annualization,
    DeflatedVariant,
    EffectiveTrials,
    EffectiveTrialsMethod,
    ExpectedMaximum,
    LongRunVariance,
    ProbabilisticSharpe,
    SharpeInference,
    SharpeVariance,
    TrialCount,
    VarianceMode,
)
from .deflation import calibrated_level, deflated_sharpe, effective_trials, trial_sharpe_variance
from .longrun import long_run_variance
from .sharpe import (
    annualization_factor,
    autocorrelations,
    minimum_track_record,
    probabilistic_sharpe,
    return_moments,
    serial_correlation_standard_error,
)

__all__ = ["sharpe_inference", "sharpe_inference_of_family", "declared_trials", "Family", "family_of"]


@dataclass(frozen=True)
class _Choices:
    """The validated options behind the headline figures."""

    variance_mode: VarianceMode
    expected_maximum: ExpectedMaximum
    trials_for_deflation: TrialCount
    effective_trials_method: EffectiveTrialsMethod
    annualization: Annualization
    sharpe_variance: SharpeVariance


@dataclass(frozen=True)
class _Scale:
    """The serial-dependence scale of the inference: the selected series' and a typical trial's."""

    selected: float  # q of the selected configuration
    trial: float  # q of a typical configuration (the family median): the null trial variance's scale


def declared_trials(trials: object, configurations: int, *, name: str = "trials") -> int:
    """The trials a deflation counts: ``trials`` (at least the sweep's configurations), default N.

    Every configuration of the sweep is a trial, so fewer trials than configurations is an error;
    ``name`` is the argument (or option) the count came from, for the message.
    """
    if trials is None:
        return configurations
    validate.whole_number(trials, name, accept_float=True, what="a whole number of configurations tried")
    validate.at_least(
        trials, name, configurations,
        what=f"the sweep's {configurations} configurations (every configuration of the sweep is a trial)",
    )
    return int(trials)


def _choices(
    variance_mode, expected_maximum, trials_for_deflation, effective_trials_method, annualization, sharpe_variance
) -> _Choices:
    return _Choices(
        validate.choice(variance_mode, "variance_mode", ("null", "empirical")),  # type: ignore[arg-type]
        validate.choice(expected_maximum, "expected_maximum", ("approximate", "exact")),  # type: ignore[arg-type]
        validate.choice(trials_for_deflation, "trials_for_deflation", ("declared", "effective")),  # type: ignore[arg-type]
        validate.choice(  # type: ignore[arg-type]
            effective_trials_method, "effective_trials_method", ("average_correlation", "nyholt", "li_ji")
        ),
        validate.choice(annualization, "annualization", ("square_root", "serial_correlation")),  # type: ignore[arg-type]
        validate.choice(sharpe_variance, "sharpe_variance", ("long-run", "iid")),  # type: ignore[arg-type]
    )


def _serial_factor(series: np.ndarray, periods: float | None, notes: list[str]) -> float | None:
    """Lo's (2002) eta(q) for the selected series, or None with a note saying why it is absent."""
    windows = series.shape[0]
    if periods is None:
        notes.append("periods per year unknown: annualized Sharpe ratio and track record in years not shown")
    elif not float(periods).is_integer():
        notes.append(f"periods per year ({periods:g}) is not a whole number: Lo's serial-correlation factor not computed")
    elif windows <= int(periods):
        notes.append(
            f"only {windows} windows for {int(periods)} periods per year: Lo's serial-correlation factor not computed"
        )
    else:
        q = int(periods)
        try:
            return annualization_factor(q, autocorrelations=autocorrelations(series, max_lag=q - 1))
        except DegenerateDataError as error:
            notes.append(f"Lo's serial-correlation factor not computed: {error}")
    return None


def _variants(
    observed: float, windows: int, skewness: float, kurtosis: float,
    variances: dict[str, float], counts: dict[str, float], long_run_ratio: float,
) -> tuple[DeflatedVariant, ...]:
    """The DSR under every combination of variance mode, expected maximum and trial count."""
    variants = []
    for mode_name, variance in variances.items():
        for maximum_name in ("approximate", "exact"):
            for count_name, count in counts.items():
                result = deflated_sharpe(
                    observed, observations=windows, trials=count, trial_sharpe_variance=variance,
                    skewness=skewness, kurtosis=kurtosis, expected_maximum=maximum_name,  # type: ignore[arg-type]
                    long_run_ratio=long_run_ratio,
                )
                variants.append(DeflatedVariant(mode_name, maximum_name, count_name, result))  # type: ignore[arg-type]
    return tuple(variants)


def _track_record(
    psr: ProbabilisticSharpe, confidence: float, periods: float | None, notes: list[str]
) -> tuple[float | None, float | None]:
    """Minimum track record in windows and years; None (with a note) when no length suffices."""
    track = minimum_track_record(
        psr.sharpe, benchmark=psr.benchmark, skewness=psr.skewness, kurtosis=psr.kurtosis, confidence=confidence,
        long_run_ratio=psr.long_run_ratio,
    )
    if math.isinf(track):
        notes.append(
            "minimum track record undefined: the observed Sharpe ratio does not exceed the benchmark, so no track "
            "record length would make it significant"
        )
        return None, None
    return track, None if periods is None else track / periods


def _deflation(family: Family, declared: int, method: EffectiveTrialsMethod, trial_ratio: float):
    """Effective trials, the trial Sharpe variance of each mode and the trial count of each choice."""
    n = family.sharpes.size
    detail: EffectiveTrials = family.effective
    effective = detail.value(method) + (declared - n)
    q = validate.positive_number(trial_ratio, "long_run_ratio")
    # trial_sharpe_variance(mode="null"): q / (T - 1) (constant columns were refused with the family)
    variances: dict[str, float] = {"null": q / (family.windows - 1)}
    if n >= 2:
        variances["empirical"] = float(np.var(family.sharpes, ddof=1))
    return detail, effective, variances, {"declared": float(declared), "effective": effective}


@dataclass(frozen=True, eq=False)
class Family:
    """What the inference needs of the whole sweep: every configuration's Sharpe ratio, the selected
    configuration's series and higher moments, and the effective trials (from the full matrix by
    :func:`sharpe_inference`, or from column blocks by the audit's streamed path)."""

    windows: int
    sharpes: np.ndarray
    series: np.ndarray
    skewness: float
    kurtosis: float
    effective: EffectiveTrials


def family_of(array: np.ndarray, index: int, effective: EffectiveTrials | None = None) -> Family:
    """The :class:`Family` of a full T x N matrix (``effective``: its effective trials, when already known)."""
    moments = return_moments(array)
    trial_sharpe_variance(array, mode="null")  # refuses constant columns with its message
    if effective is not None and effective.configurations != array.shape[1]:
        raise InputError(f"effective must come from the same {array.shape[1]} configurations; got "
                         f"{effective.configurations}")
    return Family(array.shape[0], np.asarray(moments.sharpe, dtype=float), array[:, index],
                  float(np.asarray(moments.skewness)[index]), float(np.asarray(moments.kurtosis)[index]),
                  effective_trials(array) if effective is None else effective)


def sharpe_inference(
    returns: object,
    *,
    selected: int,
    trials: int | None = None,
    periods_per_year: float | None = None,
    benchmark: float = 0.0,
    confidence: float = 0.95,
    variance_mode: VarianceMode = "null",
    expected_maximum: ExpectedMaximum = "approximate",
    trials_for_deflation: TrialCount = "declared",
    effective_trials_method: EffectiveTrialsMethod = "li_ji",
    annualization: Annualization = "square_root",
    sharpe_variance: SharpeVariance = "long-run",
    long_run: LongRunVariance | None = None,
    significance: float = 0.05,
    effective: EffectiveTrials | None = None,
) -> SharpeInference:
    """Probabilistic and deflated Sharpe ratios of the selected configuration of a sweep.

    Parameters
    ----------
    returns : array_like, shape (T, N)
        Per-window excess returns, one column per configuration.
    selected : int
        0-based column of the configuration the audit judges (typically the best in-sample).
    trials : int, optional
        Configurations actually tried, including any not in the file; default N, fewer is an error.
    periods_per_year : float, optional
        Windows per year, for annualized figures and the track record in years.
    benchmark, confidence : float
        Per-window Sharpe ratio the PSR and minimum track record test against (default 0), and the
        level of the minimum track record (default 0.95).
    variance_mode, expected_maximum, trials_for_deflation : str
        The choices of the headline DSR: ``"null"`` or ``"empirical"`` trial Sharpe variance
        (:func:`~sweepaudit.methods.deflation.trial_sharpe_variance`), the paper's
        ``"approximate"`` or the ``"exact"`` expected maximum, ``"declared"`` or ``"effective"``
        trials. The defaults and why are in the module docstring.
    effective_trials_method : {"average_correlation", "nyholt", "li_ji"}
        Estimator behind ``effective_trials`` (default "li_ji").
    annualization : {"square_root", "serial_correlation"}
        Factor for ``observed_annualized``: ``sqrt(q)`` (default) or Lo's ``eta(q)``.
    sharpe_variance : {"long-run", "iid"}
        The standard error behind the PSR, the DSR and the minimum track record: ``"long-run"``
        (default) replaces the leading 1 of Mertens' variance by the selected configuration's
        long-run variance ratio ``omega^2 / sigma^2``, and scales the null trial variance by the
        family's median ratio; ``"iid"`` is the published formula. The iid figures are always
        reported beside the headline ones.
    long_run : LongRunVariance, optional
        Precomputed :func:`~sweepaudit.methods.longrun.long_run_variance` of ``returns`` (the audit
        shares one); computed here when absent.
    significance : float
        alpha of :func:`~sweepaudit.methods.deflation.calibrated_level`, the deflated probability
        that makes "DSR >= level" a familywise test of size alpha for the trials counted.
    effective : EffectiveTrials, optional
        Precomputed :func:`~sweepaudit.methods.deflation.effective_trials` of ``returns`` (the
        eigenvalues of an N x N correlation matrix: the costly part, shared when the same audit is
        read under other choices); computed here when absent.

    Returns
    -------
    SharpeInference
    """
    array = validate.returns_matrix(returns)
    windows, n = array.shape
    index = validate.column_index(selected, "selected", n)
    declared = declared_trials(trials, n)
    periods = validate.periods_per_year(periods_per_year)
    chosen = _choices(
        variance_mode, expected_maximum, trials_for_deflation, effective_trials_method, annualization, sharpe_variance
    )
    if chosen.variance_mode == "empirical" and n < 2:
        raise InputError("variance_mode='empirical' needs at least 2 configurations; got 1")
    alpha = validate.probability(significance, "significance")
    scale = _scale(array, long_run, chosen.sharpe_variance, index)
    family = family_of(array, index, effective)
    return _infer(family, index, declared, periods, chosen, scale, benchmark=benchmark, confidence=confidence, alpha=alpha)


def sharpe_inference_of_family(
    family: Family,
    *,
    selected: int,
    long_run: LongRunVariance,
    trials: int | None = None,
    periods_per_year: float | None = None,
    confidence: float = 0.95,
    variance_mode: VarianceMode = "null",
    trials_for_deflation: TrialCount = "declared",
    sharpe_variance: SharpeVariance = "long-run",
    significance: float = 0.05,
) -> SharpeInference:
    """:func:`sharpe_inference` from a :class:`Family` gathered block by block (the same figures;
    the options not named here keep their defaults)."""
    n = family.sharpes.size
    index = validate.column_index(selected, "selected", n)
    declared = declared_trials(trials, n)
    periods = validate.periods_per_year(periods_per_year)
    chosen = _choices(variance_mode, "approximate", trials_for_deflation, "li_ji", "square_root", sharpe_variance)
    ratio = long_run.ratio
    scale = _Scale(float(ratio[index]), float(np.median(ratio))) if chosen.sharpe_variance == "long-run" else _Scale(1.0, 1.0)
    alpha = validate.probability(significance, "significance")
    return _infer(family, index, declared, periods, chosen, scale, benchmark=0.0, confidence=confidence, alpha=alpha)


def _scale(array: np.ndarray, long_run: LongRunVariance | None, mode: SharpeVariance, index: int) -> _Scale:
    """The long-run variance ratios the inference uses: the selected series' and the family median."""
    if long_run is None:
        long_run = long_run_variance(array)
    elif long_run.variance.shape != (array.shape[1],) or long_run.windows != array.shape[0]:
        raise InputError(
            f"long_run must come from the same {array.shape[0]} x {array.shape[1]} returns; "
            f"got one of {long_run.windows} windows and {long_run.variance.shape[0]} configurations"
        )
    ratio = long_run.ratio
    return _Scale(float(ratio[index]), float(np.median(ratio))) if mode == "long-run" else _Scale(1.0, 1.0)


def _infer(family: Family, index, declared, periods, chosen: _Choices, scale: _Scale, *, benchmark, confidence, alpha) -> SharpeInference:
    """The inference on validated inputs (see :func:`sharpe_inference`)."""
    windows = family.windows
    sharpes = family.sharpes
    observed = float(sharpes[index])
    skewness = family.skewness
    kurtosis = family.kurtosis
    notes: list[str] = []
    square_root_factor = None if periods is None else math.sqrt(periods)
    serial_factor = _serial_factor(family.series, periods, notes)
    if chosen.annualization == "serial_correlation" and periods is not None and serial_factor is None:
        raise InputError(
            "annualization='serial_correlation' needs a whole number of periods per year and more windows than "
            f"periods per year; got periods_per_year={periods:g} with {windows} windows"
        )
    factor = square_root_factor if chosen.annualization == "square_root" else serial_factor
    detail, effective, variances, counts = _deflation(family, declared, chosen.effective_trials_method, scale.trial)
    variants = _variants(observed, windows, skewness, kurtosis, variances, counts, scale.selected)
    headline = next(v.result for v in variants if (v.variance_mode, v.expected_maximum, v.trial_count)
                    == (chosen.variance_mode, chosen.expected_maximum, chosen.trials_for_deflation))
    moments = dict(observations=windows, skewness=skewness, kurtosis=kurtosis)
    psr = probabilistic_sharpe(observed, benchmark=benchmark, long_run_ratio=scale.selected, **moments)
    track_observations, track_years = _track_record(psr, confidence, periods, notes)
    psr_iid = probabilistic_sharpe(observed, benchmark=benchmark, **moments)
    track_iid, track_iid_years = _track_record(psr_iid, confidence, periods, [])
    iid_variance = variances["null"] / scale.trial if chosen.variance_mode == "null" else variances["empirical"]
    deflated_iid = deflated_sharpe(
        observed, trials=headline.trials, trial_sharpe_variance=iid_variance,
        expected_maximum=chosen.expected_maximum, **moments,
    )
    return SharpeInference(
        selected=index, observed=observed, observed_annualized=None if factor is None else observed * factor,
        annualization=chosen.annualization, annualization_factor=factor, square_root_factor=square_root_factor,
        serial_correlation_factor=serial_factor, observations=windows, periods_per_year=periods,
        skewness=skewness, kurtosis=kurtosis, standard_error=psr.standard_error,
        standard_error_serial_correlation=serial_correlation_standard_error(family.series),
        probabilistic=psr, deflated=headline, trials=declared, effective_trials=effective,
        effective_trials_detail=detail, trial_sharpe_variance=variances[chosen.variance_mode],
        trial_sharpe_variance_null=variances["null"], trial_sharpe_variance_empirical=variances.get("empirical"),
        variance_mode=chosen.variance_mode, expected_maximum=chosen.expected_maximum,
        trials_for_deflation=chosen.trials_for_deflation, effective_trials_method=chosen.effective_trials_method,
        variants=variants, min_track_record_observations=track_observations, min_track_record_years=track_years,
        benchmark=psr.benchmark, confidence=float(confidence), configuration_sharpes=sharpes, warnings=tuple(notes),
        sharpe_variance=chosen.sharpe_variance, long_run_ratio=scale.selected, long_run_ratio_trial=scale.trial,
        standard_error_iid=psr_iid.standard_error, probabilistic_iid=psr_iid, deflated_iid=deflated_iid,
        min_track_record_iid_observations=track_iid, min_track_record_iid_years=track_iid_years,
        deflated_level=calibrated_level(headline.trials, significance=alpha, expected_maximum=chosen.expected_maximum),
        significance=alpha,
    )
