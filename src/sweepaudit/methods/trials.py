"""How many trials a sweep really ran, and the sweep-level Sharpe inference built on that.

A sweep of N configurations is rarely N independent trials: neighbouring parameter values trade
almost the same way. This module estimates the effective number of independent trials, the
variance of the trials' Sharpe ratios, and assembles the selection-adjusted Sharpe inference
(probabilistic and deflated Sharpe ratios, minimum track record) for the configuration the audit
judges.

References
----------
Bailey, D. H. and Lopez de Prado, M. (2014). The deflated Sharpe ratio: correcting for selection
bias, backtest overfitting and non-normality. *Journal of Portfolio Management* 40(5), 94-107.

Nyholt, D. R. (2004). A simple correction for multiple testing for single-nucleotide polymorphisms
in linkage disequilibrium with each other. *American Journal of Human Genetics* 74(4), 765-769.

Li, J. and Ji, L. (2005). Adjusting multiple testing in multilocus analyses using the eigenvalues
of a correlation matrix. *Heredity* 95(3), 221-227.

Lo, A. W. (2002). The statistics of Sharpe ratios. *Financial Analysts Journal* 58(4), 36-52.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.results import (
    Annualization,
    DeflatedVariant,
    EffectiveTrials,
    EffectiveTrialsMethod,
    ExpectedMaximum,
    SharpeInference,
    TrialCount,
    VarianceMode,
)
from sweepaudit.methods.sharpe import (
    annualization_factor,
    autocorrelations,
    deflated_sharpe,
    minimum_track_record,
    probabilistic_sharpe,
    return_moments,
    serial_correlation_standard_error,
)

__all__ = [
    "EffectiveTrials",
    "DeflatedVariant",
    "SharpeInference",
    "effective_trials",
    "trials_from_average_correlation",
    "nyholt_effective_trials",
    "li_ji_effective_trials",
    "trial_sharpe_variance",
    "sharpe_inference",
]


_EFFECTIVE_METHODS = ("average_correlation", "nyholt", "li_ji")


# ---------------------------------------------------------------------------------------------
# validators
# ---------------------------------------------------------------------------------------------


def _matrix(returns: object) -> np.ndarray:
    try:
        array = np.asarray(returns, dtype=float)
    except (TypeError, ValueError):
        raise InputError(
            f"returns must be a numeric windows x configurations matrix; received {type(returns).__name__}"
        ) from None
    if array.ndim != 2:
        raise InputError(f"returns must be 2-D (windows x configurations); received {array.ndim}-D")
    windows, configurations = array.shape
    if windows < 2:
        raise InputError(f"returns must hold at least 2 windows (observations); received {windows}")
    if configurations < 1:
        raise InputError("returns must hold at least 1 configuration; received 0 columns")
    if not np.all(np.isfinite(array)):
        raise InputError("returns must be finite (no NaN or infinity); received non-finite values")
    return array


def _standardised(array: np.ndarray) -> np.ndarray:
    """Columns centred and scaled to unit sample variance; clear error on constant columns."""
    centred = array - array.mean(axis=0)
    std = np.sqrt(np.sum(centred**2, axis=0) / (array.shape[0] - 1))
    scale = np.max(np.abs(array), axis=0)
    flat = std <= 1e-14 * np.maximum(scale, 1e-300)
    if np.any(flat):
        where = np.flatnonzero(flat)
        shown = ", ".join(str(i) for i in where[:10]) + (", ..." if where.size > 10 else "")
        raise DegenerateDataError(
            f"returns has constant columns (0-based indices {shown}); their correlation and Sharpe ratio are "
            "undefined: drop them before the audit"
        )
    return centred / std


def _option(value: object, name: str, allowed: tuple[str, ...]) -> str:
    if value not in allowed:
        choices = ", ".join(repr(a) for a in allowed)
        raise InputError(f"{name} must be one of {choices}; received {value!r}")
    return value  # type: ignore[return-value]


# ---------------------------------------------------------------------------------------------
# effective number of trials
# ---------------------------------------------------------------------------------------------


def trials_from_average_correlation(average_correlation: float, *, configurations: int) -> float:
    """Effective trials from the average pairwise correlation: ``rho + (1 - rho) * N``, in [1, N].

    Attributed to Bailey and Lopez de Prado (form from memory). Equals N for uncorrelated trials,
    1 for perfectly correlated ones; a negative average correlation would give more than N and is
    clipped to N.
    """
    rho = float(average_correlation)
    if not math.isfinite(rho) or not -1.0 <= rho <= 1.0 + 1e-12:
        raise InputError(f"average_correlation must lie in [-1, 1]; received {average_correlation!r}")
    if isinstance(configurations, bool) or not isinstance(configurations, (int, np.integer)) or configurations < 1:
        raise InputError(f"configurations must be a positive integer; received {configurations!r}")
    return float(np.clip(rho + (1.0 - rho) * configurations, 1.0, configurations))


def _eigenvalues(eigenvalues: object) -> np.ndarray:
    values = np.asarray(eigenvalues, dtype=float)
    if values.ndim != 1 or values.size < 1 or not np.all(np.isfinite(values)):
        raise InputError("eigenvalues must be a non-empty 1-D array of finite numbers")
    return values


def nyholt_effective_trials(eigenvalues: object) -> float:
    """Nyholt (2004): ``M_eff = 1 + (M - 1) * (1 - Var(lambda) / M)``, clipped to [1, M].

    ``lambda`` are the M eigenvalues of the correlation matrix and ``Var`` their sample variance
    (divisor M - 1), so perfectly correlated trials (eigenvalues M, 0, ..., 0) give exactly 1.

    Notes
    -----
    For k independent groups of m identical trials (M = k m) this gives ``M - m + 1``, not k:
    the estimator over-counts block structures, the weakness Li and Ji (2005) address.
    """
    values = _eigenvalues(eigenvalues)
    m = values.size
    if m == 1:
        return 1.0
    spread = float(np.var(values, ddof=1))
    return float(np.clip(1.0 + (m - 1) * (1.0 - spread / m), 1.0, m))


def li_ji_effective_trials(eigenvalues: object) -> float:
    """Li and Ji (2005): ``M_eff = sum_i f(|lambda_i|)``, ``f(x) = I(x >= 1) + (x - floor(x))``.

    Each eigenvalue of at least 1 counts one trial and its fractional part adds the rest.
    Eigenvalues within ``1e-9 * M`` of a whole number are treated as that whole number, because
    ``f`` jumps at whole numbers and an eigenvalue solver returns, e.g., 4.9999999999 for 5.
    """
    values = np.abs(_eigenvalues(eigenvalues))
    tolerance = 1e-9 * values.size
    nearest = np.round(values)
    values = np.where(np.abs(values - nearest) <= tolerance, nearest, values)
    counted = (values >= 1.0).astype(float) + (values - np.floor(values))
    return float(np.clip(np.sum(counted), 1.0, values.size))


def effective_trials(returns: object) -> EffectiveTrials:
    """Effective number of independent trials of a T x N returns matrix.

    Parameters
    ----------
    returns : array_like, shape (T, N)
        Per-window returns, one column per configuration.

    Returns
    -------
    EffectiveTrials
        All three estimates and the eigenvalues they come from.

    Notes
    -----
    The correlation matrix's eigenvalues come from the smaller Gram matrix: ``Z'Z / (T - 1)``
    (N x N) when N <= T, else ``Z Z' / (T - 1)`` (T x T), whose non-zero eigenvalues are the same;
    the remaining N - T eigenvalues are 0. Rank-deficient sweeps (N > T) are therefore handled,
    and N = 1000, T = 2000 takes well under a second.

    Raises
    ------
    InputError
        Not 2-D, fewer than 2 windows, non-finite values.
    DegenerateDataError
        Constant columns (their correlation is undefined).
    """
    array = _matrix(returns)
    windows, n = array.shape
    z = _standardised(array) / math.sqrt(windows - 1)
    if n == 1:
        return EffectiveTrials(1, 1.0, 1.0, 1.0, 1.0, np.array([1.0]))
    # Off-diagonal sum of the correlation matrix = ||row sums of Z||^2 - N, without forming it.
    total = float(np.sum(z.sum(axis=1) ** 2))
    average = (total - n) / (n * (n - 1))
    average = float(np.clip(average, -1.0, 1.0))
    if n <= windows:
        eigenvalues = np.linalg.eigvalsh(z.T @ z)
    else:
        eigenvalues = np.concatenate([np.linalg.eigvalsh(z @ z.T), np.zeros(n - windows)])
    eigenvalues = np.sort(np.clip(eigenvalues, 0.0, None))[::-1]
    return EffectiveTrials(
        configurations=n,
        average_correlation=average,
        from_average_correlation=trials_from_average_correlation(average, configurations=n),
        nyholt=nyholt_effective_trials(eigenvalues),
        li_ji=li_ji_effective_trials(eigenvalues),
        eigenvalues=eigenvalues,
    )


# ---------------------------------------------------------------------------------------------
# trial Sharpe variance
# ---------------------------------------------------------------------------------------------


def trial_sharpe_variance(returns: object, *, mode: VarianceMode = "null") -> float:
    """Variance ``V`` of the trials' per-window Sharpe ratios, the DSR's scale.

    Parameters
    ----------
    returns : array_like, shape (T, N)
    mode : {"null", "empirical"}
        "empirical": the sample variance (``ddof=1``) of the N configurations' Sharpe ratios, the
        choice of Bailey and Lopez de Prado (2014). Needs N >= 2.
        "null": the sampling variance one Sharpe estimate has when there is no edge, from the
        Mertens (2002) formula at SR = 0 with the PSR's ``n - 1``: ``[1 - g3*0 + (g4-1)/4*0] / (T-1)
        = 1 / (T - 1)``. Skewness and kurtosis drop out at SR = 0, so this is exactly
        ``1 / (T - 1)`` for every sweep of T windows.

    Returns
    -------
    float

    Notes
    -----
    The empirical variance also contains the spread of the configurations' TRUE Sharpe ratios.
    When a neighbourhood of configurations shares a real edge that spread is large, the benchmark
    ``SR0`` rises with it and deflates the real edge away; the null variance describes the luck of
    the draw alone. ``docs/sharpe_variance.md`` measures both.
    """
    array = _matrix(returns)
    chosen = _option(mode, "mode", ("null", "empirical"))
    windows, n = array.shape
    if chosen == "null":
        _standardised(array)  # constant columns are an error in both modes
        return 1.0 / (windows - 1)
    if n < 2:
        raise InputError(
            f"mode='empirical' needs at least 2 configurations to estimate a variance; received {n}"
        )
    _standardised(array)
    sharpes = array.mean(axis=0) / np.std(array, axis=0, ddof=1)
    return float(np.var(sharpes, ddof=1))


# ---------------------------------------------------------------------------------------------
# sweep-level inference
# ---------------------------------------------------------------------------------------------


def _declared_trials(trials: object, configurations: int) -> int:
    if trials is None:
        return configurations
    whole = isinstance(trials, (int, np.integer)) or (isinstance(trials, (float, np.floating)) and float(trials).is_integer())
    if isinstance(trials, bool) or not whole:
        raise InputError(f"trials must be a whole number of configurations tried; received {trials!r}")
    if trials < configurations:
        raise InputError(
            f"trials must be at least the number of configurations in the sweep ({configurations}): every "
            f"configuration supplied is a trial; received trials={trials}"
        )
    return int(trials)


def _periods(periods_per_year: object) -> float | None:
    if periods_per_year is None:
        return None
    try:
        value = float(periods_per_year)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise InputError(f"periods_per_year must be a positive number or None; received {periods_per_year!r}") from None
    if not math.isfinite(value) or value <= 0:
        raise InputError(f"periods_per_year must be a positive number or None; received {periods_per_year!r}")
    return value


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
) -> SharpeInference:
    """Probabilistic and deflated Sharpe ratios of the selected configuration of a sweep.

    Parameters
    ----------
    returns : array_like, shape (T, N)
        Per-window excess returns, one column per configuration.
    selected : int
        0-based column of the configuration the audit judges (typically the best in-sample).
    trials : int, optional
        Configurations actually tried, including any not in the file. Defaults to N; fewer than N
        is an error.
    periods_per_year : float, optional
        Windows per year, for annualised figures and the track record in years.
    benchmark : float
        Per-window Sharpe ratio the PSR and minimum track record test against (default 0).
    confidence : float
        Level of the minimum track record (default 0.95).
    variance_mode : {"null", "empirical"}
        V of the headline DSR; see :func:`trial_sharpe_variance`. Default "null".
    expected_maximum : {"approximate", "exact"}
        E[max] of the headline DSR: the paper's approximation (default) or the exact integral.
    trials_for_deflation : {"declared", "effective"}
        Trial count of the headline DSR. Default "declared".
    effective_trials_method : {"average_correlation", "nyholt", "li_ji"}
        Estimator behind ``effective_trials`` (default "li_ji").
    annualization : {"square_root", "serial_correlation"}
        Factor for ``observed_annualized``: ``sqrt(q)`` (default) or Lo's ``eta(q)``.

    Returns
    -------
    SharpeInference

    Notes
    -----
    *Variance mode "null" by default.* The DSR asks whether the best of N luck-only trials could
    have reached the observed Sharpe ratio; its scale is the sampling variance of one Sharpe
    estimate under "no edge", ``1/(T - 1)``. The empirical cross-sectional variance also carries
    the spread of the configurations' true Sharpe ratios, so a genuine edge shared by a
    neighbourhood of configurations inflates the benchmark and deflates itself away. The
    simulation in ``benchmarks/sharpe_variance_study.py`` (``docs/sharpe_variance.md``) measures
    this: on pure-noise sweeps the null mode's false-positive rate stays below 5 % (at most 2 %),
    while on sweeps with a real edge shared by a neighbourhood of configurations the empirical mode
    passes 6 % of sweeps against 52 % to 86 % for the null mode; with a strong common factor the
    empirical mode's false-positive rate rises above 5 % (5.6 % to 8 %).

    *Declared trials by default.* ``E[max]`` of N correlated trials is at most that of N
    independent ones, so the declared count gives a benchmark that is conservative whatever the
    correlation; the effective count relies on an estimate from the same data and is only
    defined for the configurations in the file, whereas declared trials can include
    configurations the user tried and dropped. The effective count (with undeclared trials added
    as independent) is reported beside it, and every variant is kept in ``variants``.

    *Annualisation.* All inference is per window; ``observed_annualized`` uses ``sqrt(q)`` by
    default, the convention the rest of the report's annualised figures use, and Lo's ``eta(q)``
    is reported in ``serial_correlation_factor`` (it needs q - 1 sample autocorrelations, which
    are noisy for daily data).
    """
    array = _matrix(returns)
    windows, n = array.shape
    if isinstance(selected, bool) or not isinstance(selected, (int, np.integer)) or not 0 <= selected < n:
        raise InputError(f"selected must be a column index between 0 and {n - 1}; received {selected!r}")
    declared = _declared_trials(trials, n)
    periods = _periods(periods_per_year)
    chosen_variance = _option(variance_mode, "variance_mode", ("null", "empirical"))
    chosen_maximum = _option(expected_maximum, "expected_maximum", ("approximate", "exact"))
    chosen_count = _option(trials_for_deflation, "trials_for_deflation", ("declared", "effective"))
    chosen_method = _option(effective_trials_method, "effective_trials_method", _EFFECTIVE_METHODS)
    chosen_annualization = _option(annualization, "annualization", ("square_root", "serial_correlation"))
    if chosen_variance == "empirical" and n < 2:
        raise InputError("variance_mode='empirical' needs at least 2 configurations; received 1")
    moments = return_moments(array)
    sharpes = np.asarray(moments.sharpe, dtype=float)
    observed = float(sharpes[selected])
    skewness = float(np.asarray(moments.skewness)[selected])
    kurtosis = float(np.asarray(moments.kurtosis)[selected])
    notes: list[str] = []

    square_root_factor = None if periods is None else math.sqrt(periods)
    serial_factor = None
    if periods is None:
        notes.append("periods per year unknown: annualised Sharpe ratio and track record in years not shown")
    elif not float(periods).is_integer():
        notes.append(f"periods per year ({periods:g}) is not a whole number: Lo's serial-correlation factor not computed")
    elif windows <= int(periods):
        notes.append(
            f"only {windows} windows for {int(periods)} periods per year: Lo's serial-correlation factor not computed"
        )
    else:
        q = int(periods)
        try:
            serial_factor = annualization_factor(q, autocorrelations=autocorrelations(array[:, selected], max_lag=q - 1))
        except DegenerateDataError as error:
            notes.append(f"Lo's serial-correlation factor not computed: {error}")
    if chosen_annualization == "serial_correlation" and periods is not None and serial_factor is None:
        raise InputError(
            "annualization='serial_correlation' needs a whole number of periods per year and more windows than "
            f"periods per year; received periods_per_year={periods_per_year!r} with {windows} windows"
        )
    factor = square_root_factor if chosen_annualization == "square_root" else serial_factor
    observed_annualized = None if factor is None else observed * factor

    detail = effective_trials(array)
    effective = detail.value(chosen_method) + (declared - n)
    variances: dict[str, float] = {"null": trial_sharpe_variance(array, mode="null")}
    if n >= 2:
        variances["empirical"] = float(np.var(sharpes, ddof=1))
    counts = {"declared": float(declared), "effective": effective}

    variants = []
    for mode_name, variance in variances.items():
        for maximum_name in ("approximate", "exact"):
            for count_name, count in counts.items():
                result = deflated_sharpe(
                    observed,
                    observations=windows,
                    trials=count,
                    trial_sharpe_variance=variance,
                    skewness=skewness,
                    kurtosis=kurtosis,
                    expected_maximum=maximum_name,  # type: ignore[arg-type]
                )
                variants.append(DeflatedVariant(mode_name, maximum_name, count_name, result))  # type: ignore[arg-type]
    variants_tuple = tuple(variants)
    headline = next(
        v.result
        for v in variants_tuple
        if (v.variance_mode, v.expected_maximum, v.trial_count) == (chosen_variance, chosen_maximum, chosen_count)
    )

    psr = probabilistic_sharpe(observed, benchmark=benchmark, observations=windows, skewness=skewness, kurtosis=kurtosis)
    track = minimum_track_record(observed, benchmark=psr.benchmark, skewness=skewness, kurtosis=kurtosis, confidence=confidence)
    if math.isinf(track):
        notes.append(
            "minimum track record undefined: the observed Sharpe ratio does not exceed the benchmark, so no track "
            "record length would make it significant"
        )
        track_observations = None
    else:
        track_observations = track
    track_years = None if track_observations is None or periods is None else track_observations / periods

    return SharpeInference(
        selected=int(selected),
        observed=observed,
        observed_annualized=observed_annualized,
        annualization=chosen_annualization,  # type: ignore[arg-type]
        annualization_factor=factor,
        square_root_factor=square_root_factor,
        serial_correlation_factor=serial_factor,
        observations=windows,
        periods_per_year=periods,
        skewness=skewness,
        kurtosis=kurtosis,
        standard_error=psr.standard_error,
        standard_error_serial_correlation=serial_correlation_standard_error(array[:, selected]),
        probabilistic=psr,
        deflated=headline,
        trials=declared,
        effective_trials=effective,
        effective_trials_detail=detail,
        trial_sharpe_variance=variances[chosen_variance],
        trial_sharpe_variance_null=variances["null"],
        trial_sharpe_variance_empirical=variances.get("empirical"),
        variance_mode=chosen_variance,  # type: ignore[arg-type]
        expected_maximum=chosen_maximum,  # type: ignore[arg-type]
        trials_for_deflation=chosen_count,  # type: ignore[arg-type]
        effective_trials_method=chosen_method,  # type: ignore[arg-type]
        variants=variants_tuple,
        min_track_record_observations=track_observations,
        min_track_record_years=track_years,
        benchmark=psr.benchmark,
        confidence=float(confidence),
        configuration_sharpes=sharpes,
        warnings=tuple(notes),
    )
