"""Sharpe ratio inference: standard errors, PSR, DSR, minimum track record, annualisation.

Every Sharpe ratio here is **per window** (mean over sample standard deviation of the windows the
sweep holds, e.g. per day or per month). Annualisation happens only for display, through
:func:`annualization_factor`; no formula below takes an annualised input.

Kurtosis is always the **raw** fourth standardised moment (3 for a normal distribution). Note that
``scipy.stats.kurtosis`` and ``pandas.Series.kurt`` return *excess* kurtosis by default.

References
----------
Mertens, E. (2002). Comments on the variance of the IID estimator in Lo (2002). Working paper,
University of Basel.

Lo, A. W. (2002). The statistics of Sharpe ratios. *Financial Analysts Journal* 58(4), 36-52.

Bailey, D. H. and Lopez de Prado, M. (2012). The Sharpe ratio efficient frontier. *Journal of
Risk* 15(2), 3-44.

Bailey, D. H. and Lopez de Prado, M. (2014). The deflated Sharpe ratio: correcting for selection
bias, backtest overfitting and non-normality. *Journal of Portfolio Management* 40(5), 94-107.

Newey, W. K. and West, K. D. (1987). A simple, positive semi-definite, heteroskedasticity and
autocorrelation consistent covariance matrix. *Econometrica* 55(3), 703-708.

Lopez de Prado, M. (2018). *Advances in Financial Machine Learning*. Wiley. Section 14.7.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np
from scipy import integrate, special, stats

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.results import DeflatedSharpe, ExpectedMaximum, ProbabilisticSharpe, ReturnMoments

__all__ = [
    "EULER_MASCHERONI",
    "ReturnMoments",
    "ProbabilisticSharpe",
    "DeflatedSharpe",
    "sharpe_ratio",
    "return_moments",
    "sharpe_standard_error",
    "serial_correlation_standard_error",
    "autocorrelations",
    "annualization_factor",
    "annualized_sharpe",
    "probabilistic_sharpe",
    "expected_max_sharpe",
    "expected_max_standard_normal",
    "deflated_sharpe",
    "minimum_track_record",
    "max_trials_for_deflated_sharpe",
]

#: Euler-Mascheroni constant, used by the expected-maximum approximation of Bailey and Lopez de
#: Prado (2014).
EULER_MASCHERONI = 0.5772156649015329

Divisor = Literal["n-1", "n"]

# Relative tolerance on the moment bound kurtosis >= 1 + skewness**2 (Pearson 1916); lets moments
# computed from data, which satisfy it up to rounding, through.
_MOMENT_BOUND_TOLERANCE = 1e-9


# ---------------------------------------------------------------------------------------------
# validators
# ---------------------------------------------------------------------------------------------


def _finite_float(value: object, name: str) -> float:
    try:
        number = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a real number; received {value!r}") from None
    if not math.isfinite(number):
        raise InputError(f"{name} must be finite; received {value!r}")
    return number


def _observations(value: object, name: str = "observations") -> float:
    number = _finite_float(value, name)
    if number < 2:
        raise InputError(f"{name} must be at least 2 to estimate a Sharpe ratio; received {value!r}")
    return number


def _moments(skewness: object, kurtosis: object) -> tuple[float, float]:
    g3 = _finite_float(skewness, "skewness")
    g4 = _finite_float(kurtosis, "kurtosis")
    # Every distribution has raw kurtosis >= 1 + skewness^2; failing this usually means excess
    # kurtosis (0 for a normal) was passed where raw kurtosis (3 for a normal) is expected.
    if g4 < (1.0 + g3 * g3) * (1.0 - _MOMENT_BOUND_TOLERANCE):
        raise InputError(
            "kurtosis must be raw kurtosis (3 for a normal distribution) and at least "
            f"1 + skewness**2 = {1.0 + g3 * g3:g}; received kurtosis={g4!r} with skewness={g3!r}"
            " (excess kurtosis passed by mistake?)"
        )
    return g3, g4


def _probability_level(value: object, name: str) -> float:
    number = _finite_float(value, name)
    if not 0.0 < number < 1.0:
        raise InputError(f"{name} must lie strictly between 0 and 1; received {value!r}")
    return number


def _trials(value: object, name: str = "trials") -> float:
    number = _finite_float(value, name)
    if number < 1:
        raise InputError(f"{name} must be at least 1; received {value!r}")
    return number


def _variance(value: object, name: str = "trial_sharpe_variance") -> float:
    number = _finite_float(value, name)
    if number < 0:
        raise InputError(f"{name} must be non-negative; received {value!r}")
    return number


def _expected_maximum_option(value: object) -> ExpectedMaximum:
    if value not in ("approximate", "exact"):
        raise InputError(f"expected_maximum must be 'approximate' or 'exact'; received {value!r}")
    return value  # type: ignore[return-value]


def _returns_array(returns: object, name: str = "returns") -> np.ndarray:
    try:
        array = np.asarray(returns, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be numeric; received an object of type {type(returns).__name__}") from None
    if array.ndim not in (1, 2):
        raise InputError(f"{name} must be 1-D (windows) or 2-D (windows x configurations); received {array.ndim}-D")
    if array.shape[0] < 2:
        raise InputError(f"{name} must hold at least 2 windows (observations); received {array.shape[0]}")
    if array.size and not np.all(np.isfinite(array)):
        raise InputError(f"{name} must be finite (no NaN or infinity); received non-finite values")
    return array


def _nonconstant(array: np.ndarray, std: np.ndarray, name: str) -> None:
    scale = np.max(np.abs(array), axis=0) if array.size else np.zeros(0)
    flat = np.atleast_1d(std <= 1e-14 * np.maximum(np.atleast_1d(scale), 1e-300))
    if np.any(flat):
        where = np.flatnonzero(flat)
        if array.ndim == 1:
            raise DegenerateDataError(f"{name} is constant; its Sharpe ratio is undefined")
        shown = ", ".join(str(i) for i in where[:10]) + (", ..." if where.size > 10 else "")
        raise DegenerateDataError(
            f"{name} has constant columns (0-based indices {shown}); their Sharpe ratio is undefined"
        )


# ---------------------------------------------------------------------------------------------
# estimates from data
# ---------------------------------------------------------------------------------------------


def return_moments(returns: object) -> ReturnMoments:
    """Per-window mean, standard deviation, Sharpe ratio, skewness and RAW kurtosis.

    Parameters
    ----------
    returns : array_like, shape (T,) or (T, N)
        Per-window excess returns; columns are configurations.

    Returns
    -------
    ReturnMoments
        Scalars for a 1-D input, arrays of length ``N`` for a 2-D input.

    Notes
    -----
    Skewness and kurtosis use the plain (biased, divisor ``n``) moment estimators ``m3/m2^1.5`` and
    ``m4/m2^2``. They are consistent, which is all the asymptotic formulas of Mertens (2002) and
    Bailey and Lopez de Prado (2012, 2014) need; the bias-corrected versions differ by O(1/n).
    The standard deviation in the Sharpe ratio uses ``ddof=1``.

    Raises
    ------
    InputError
        Fewer than 2 windows, non-finite values or a wrong shape.
    DegenerateDataError
        A constant series (zero standard deviation).
    """
    array = _returns_array(returns)
    n = array.shape[0]
    mean = array.mean(axis=0)
    centred = array - mean
    m2 = np.mean(centred**2, axis=0)
    std = np.sqrt(m2 * n / (n - 1))
    _nonconstant(array, std, "returns")
    m3 = np.mean(centred**3, axis=0)
    m4 = np.mean(centred**4, axis=0)
    skewness = m3 / m2**1.5
    kurtosis = m4 / m2**2
    sharpe = mean / std
    if array.ndim == 1:
        return ReturnMoments(n, float(mean), float(std), float(sharpe), float(skewness), float(kurtosis))
    return ReturnMoments(n, mean, std, sharpe, skewness, kurtosis)


def sharpe_ratio(returns: object) -> float | np.ndarray:
    """Per-window Sharpe ratio ``mean / std`` with the sample standard deviation (``ddof=1``).

    Parameters
    ----------
    returns : array_like, shape (T,) or (T, N)
        Per-window excess returns (strategy minus benchmark).

    Returns
    -------
    float or ndarray
        A float for 1-D input, one value per column for 2-D input. Not annualised.

    Raises
    ------
    InputError
        Fewer than 2 windows or non-finite values.
    DegenerateDataError
        A constant series.
    """
    return return_moments(returns).sharpe


def autocorrelations(series: object, *, max_lag: int) -> np.ndarray:
    """Sample autocorrelations ``rho_1 .. rho_max_lag`` of a series.

    Uses the standard estimator ``sum_t (x_t - xbar)(x_{t+k} - xbar) / sum_t (x_t - xbar)^2``
    (Box and Jenkins), the default of ``statsmodels.tsa.stattools.acf``; it yields a positive
    semi-definite autocorrelation sequence.

    Parameters
    ----------
    series : array_like, shape (T,)
    max_lag : int
        Highest lag; must be below ``T``.

    Returns
    -------
    ndarray, shape (max_lag,)
        ``rho_1, ..., rho_max_lag``.
    """
    array = _returns_array(series, "series")
    if array.ndim != 1:
        raise InputError(f"series must be 1-D; received shape {array.shape}")
    if isinstance(max_lag, bool) or not isinstance(max_lag, (int, np.integer)) or max_lag < 0:
        raise InputError(f"max_lag must be a non-negative integer; received {max_lag!r}")
    if max_lag >= array.shape[0]:
        raise InputError(
            f"max_lag must be below the number of observations ({array.shape[0]}); received {max_lag}"
        )
    centred = array - array.mean()
    denominator = float(centred @ centred)
    if denominator <= 0:
        raise DegenerateDataError("series is constant; its autocorrelations are undefined")
    n = array.shape[0]
    return np.array([float(centred[: n - k] @ centred[k:]) / denominator for k in range(1, max_lag + 1)])


def annualization_factor(periods_per_year: int, *, autocorrelations: object | None = None) -> float:
    """Factor that turns a per-window Sharpe ratio into an annual one.

    Without autocorrelations this is the usual ``sqrt(q)``. With them it is Lo's (2002)
    serial-correlation-adjusted factor

    ``eta(q) = q / sqrt(q + 2 * sum_{k=1}^{q-1} (q - k) * rho_k)``,

    which equals ``sqrt(q)`` when every ``rho_k`` is 0.

    Parameters
    ----------
    periods_per_year : int
        ``q``, windows per year (12 for monthly, 252 for daily). Must be an integer when
        autocorrelations are given (the q-period sum of Lo's derivation).
    autocorrelations : array_like, optional
        ``rho_1, rho_2, ...``; at least ``q - 1`` values (extra ones are ignored).

    Returns
    -------
    float

    Examples
    --------
    AR(1) with rho = 0.5, q = 12 (Lo 2002): ``annualization_factor(12, autocorrelations=0.5 **
    np.arange(1, 12))`` is 2.1213 (``sqrt(12)`` would be 3.4641).
    """
    if autocorrelations is None:
        q = _finite_float(periods_per_year, "periods_per_year")
        if q <= 0:
            raise InputError(f"periods_per_year must be positive; received {periods_per_year!r}")
        return math.sqrt(q)
    if (
        isinstance(periods_per_year, bool)
        or not _finite_float(periods_per_year, "periods_per_year").is_integer()
        or periods_per_year < 1
    ):
        raise InputError(
            "periods_per_year must be a positive integer for the serial-correlation adjustment; "
            f"received {periods_per_year!r}"
        )
    q = int(periods_per_year)
    rho = np.atleast_1d(np.asarray(autocorrelations, dtype=float))
    if rho.ndim != 1 or rho.size < q - 1:
        raise InputError(
            f"autocorrelations must hold at least periods_per_year - 1 = {q - 1} values (lags 1..{q - 1}); "
            f"received {rho.size}"
        )
    if not np.all(np.isfinite(rho[: q - 1])):
        raise InputError("autocorrelations must be finite; received non-finite values")
    k = np.arange(1, q)
    variance_ratio = q + 2.0 * float(np.sum((q - k) * rho[: q - 1]))
    if variance_ratio <= 0:
        raise DegenerateDataError(
            "the autocorrelations imply a non-positive variance of the annual sum "
            f"(q + 2 * sum (q - k) rho_k = {variance_ratio:g}); Lo's factor is undefined"
        )
    return q / math.sqrt(variance_ratio)


def annualized_sharpe(
    returns: object,
    *,
    periods_per_year: int,
    serial_correlation: Literal["adjusted", "ignored"] = "adjusted",
) -> float:
    """Annualised Sharpe ratio of one series: per-window Sharpe times :func:`annualization_factor`.

    Parameters
    ----------
    returns : array_like, shape (T,)
    periods_per_year : int
        Windows per year ``q``.
    serial_correlation : {"adjusted", "ignored"}
        "adjusted" uses Lo's (2002) ``eta(q)`` from the series' own sample autocorrelations at lags
        1..q-1 (needs ``T > q``); "ignored" uses ``sqrt(q)``.
    """
    if serial_correlation not in ("adjusted", "ignored"):
        raise InputError(f"serial_correlation must be 'adjusted' or 'ignored'; received {serial_correlation!r}")
    array = _returns_array(returns)
    if array.ndim != 1:
        raise InputError(f"returns must be 1-D; received shape {array.shape}")
    sharpe = float(sharpe_ratio(array))
    if serial_correlation == "ignored":
        return sharpe * annualization_factor(periods_per_year)
    if (
        isinstance(periods_per_year, bool)
        or not _finite_float(periods_per_year, "periods_per_year").is_integer()
        or periods_per_year < 1
    ):
        raise InputError(
            "periods_per_year must be a positive integer for the serial-correlation adjustment; "
            f"received {periods_per_year!r}"
        )
    q = int(periods_per_year)
    if array.shape[0] <= q:
        raise InputError(
            f"returns must hold more than periods_per_year = {q} windows for the serial-correlation "
            f"adjustment; received {array.shape[0]}"
        )
    rho = autocorrelations(array, max_lag=q - 1)
    return sharpe * annualization_factor(q, autocorrelations=rho)


# ---------------------------------------------------------------------------------------------
# standard error, PSR, MinTRL
# ---------------------------------------------------------------------------------------------


def _variance_numerator(sharpe: float, skewness: float, kurtosis: float) -> float:
    # Mertens (2002): n * Var(SR) ~ 1 - g3*SR + (g4 - 1)/4 * SR^2, g4 raw kurtosis.
    return 1.0 - skewness * sharpe + (kurtosis - 1.0) / 4.0 * sharpe * sharpe


def sharpe_standard_error(
    sharpe: float,
    *,
    observations: float,
    skewness: float = 0.0,
    kurtosis: float = 3.0,
    divisor: Divisor = "n-1",
) -> float:
    """Standard error of a per-window Sharpe ratio estimate for iid non-normal returns.

    ``SE = sqrt( [1 - g3*SR + (g4 - 1)/4 * SR^2] / (n - 1) )``

    Mertens (2002) derives the asymptotic variance ``[...]/n``; the probabilistic Sharpe ratio of
    Bailey and Lopez de Prado (2012) scales by ``sqrt(n - 1)``. The default divisor ``"n-1"``
    matches the PSR, so ``PSR = Phi((SR - SR*) / SE)`` with this SE. With ``g3 = 0``, ``g4 = 3``
    the numerator is Lo's (2002) ``1 + SR^2 / 2``.

    Parameters
    ----------
    sharpe : float
        Per-window Sharpe ratio (not annualised).
    observations : float
        Number of windows ``n`` (at least 2).
    skewness : float
        Skewness ``g3`` of the returns.
    kurtosis : float
        RAW kurtosis ``g4`` (3 for normal; not excess kurtosis). Must satisfy
        ``g4 >= 1 + g3**2``, which every distribution does.
    divisor : {"n-1", "n"}
        ``n - 1`` (PSR convention, default) or ``n`` (Mertens' asymptotic formula).

    Returns
    -------
    float
    """
    sr = _finite_float(sharpe, "sharpe")
    n = _observations(observations)
    g3, g4 = _moments(skewness, kurtosis)
    if divisor not in ("n-1", "n"):
        raise InputError(f"divisor must be 'n-1' or 'n'; received {divisor!r}")
    denominator = n - 1.0 if divisor == "n-1" else n
    # The numerator is >= 0 whenever g4 >= 1 + g3^2 (its discriminant is g3^2 - (g4 - 1) <= 0).
    return math.sqrt(max(_variance_numerator(sr, g3, g4), 0.0) / denominator)


def serial_correlation_standard_error(returns: object, *, lags: int | None = None) -> float:
    """Standard error of a per-window Sharpe ratio when returns are serially correlated.

    Lo (2002), section "non-IID returns": the delta method on ``SR = g(mu, sigma^2) = mu / sigma``
    with the long-run covariance of the moment series ``u_t = (r_t - mu, (r_t - mu)^2 - sigma^2)``
    estimated by Newey and West (1987) with Bartlett weights ``1 - j / (lags + 1)``:

    ``Var(SR) = grad' S grad / T``, ``grad = (1/sigma, -mu / (2 sigma^3))``.

    Parameters
    ----------
    returns : array_like, shape (T,)
    lags : int, optional
        Highest lag of the Bartlett window; default ``floor(4 (T/100)^(2/9))`` (Newey and West's
        rule of thumb; common practice). ``lags=0`` reproduces the iid formula of Mertens (2002)
        with divisor ``n`` and plug-in moments.

    Returns
    -------
    float
    """
    array = _returns_array(returns)
    if array.ndim != 1:
        raise InputError(f"returns must be 1-D; received shape {array.shape}")
    n = array.shape[0]
    if lags is None:
        lags = int(math.floor(4 * (n / 100.0) ** (2.0 / 9.0)))
    if isinstance(lags, bool) or not isinstance(lags, (int, np.integer)) or not 0 <= lags < n:
        raise InputError(f"lags must be a whole number between 0 and {n - 1}; received {lags!r}")
    mean = float(array.mean())
    centred = array - mean
    variance = float(np.mean(centred**2))
    if variance <= 0 or math.sqrt(variance) <= 1e-14 * float(np.max(np.abs(array))):
        raise DegenerateDataError("returns is constant; its Sharpe ratio is undefined")
    moments = np.column_stack([centred, centred**2 - variance])
    long_run = moments.T @ moments
    for lag in range(1, lags + 1):
        cross = moments[lag:].T @ moments[:-lag]
        long_run += (1.0 - lag / (lags + 1.0)) * (cross + cross.T)
    long_run /= n
    sigma = math.sqrt(variance)
    gradient = np.array([1.0 / sigma, -mean / (2.0 * sigma**3)])
    return math.sqrt(max(float(gradient @ long_run @ gradient), 0.0) / n)


def probabilistic_sharpe(
    sharpe: float,
    *,
    benchmark: float,
    observations: float,
    skewness: float,
    kurtosis: float,
) -> ProbabilisticSharpe:
    """Probabilistic Sharpe ratio (PSR) against a benchmark Sharpe ratio.

    ``PSR(SR*) = Phi( (SR - SR*) * sqrt(n - 1) / sqrt(1 - g3*SR + (g4 - 1)/4 * SR^2) )``

    Bailey and Lopez de Prado (2012); as printed in Lopez de Prado (2018), section 14.7.2.

    Parameters
    ----------
    sharpe, benchmark : float
        Observed and benchmark Sharpe ratios, both PER WINDOW (not annualised).
    observations : float
        Windows ``n`` behind the estimate (at least 2).
    skewness : float
        Skewness of the returns.
    kurtosis : float
        RAW kurtosis (3 for normal).

    Returns
    -------
    ProbabilisticSharpe

    Examples
    --------
    Hand check (annual SR 1.0 from 36 normal monthly returns, so SR = 1/sqrt(12) = 0.288675):
    numerator 1 + SR^2/2 = 1.041667, z = 0.288675 * sqrt(35) / sqrt(1.041667) = 1.673320, and
    Phi(1.673320) = 0.952868.
    """
    sr = _finite_float(sharpe, "sharpe")
    sr_star = _finite_float(benchmark, "benchmark")
    n = _observations(observations)
    g3, g4 = _moments(skewness, kurtosis)
    se = sharpe_standard_error(sr, observations=n, skewness=g3, kurtosis=g4)
    if se == 0.0:
        raise DegenerateDataError(
            "the Sharpe ratio's standard error is 0 (kurtosis = 1 + skewness**2 at this Sharpe ratio); "
            "PSR is undefined"
        )
    z = (sr - sr_star) / se
    return ProbabilisticSharpe(sr, sr_star, n, g3, g4, se, z, float(stats.norm.cdf(z)))


def minimum_track_record(
    sharpe: float,
    *,
    benchmark: float,
    skewness: float,
    kurtosis: float,
    confidence: float = 0.95,
) -> float:
    """Minimum track record length: windows needed for PSR(benchmark) to reach ``confidence``.

    ``MinTRL = 1 + [1 - g3*SR + (g4 - 1)/4 * SR^2] * (z_confidence / (SR - SR*))^2``

    Bailey and Lopez de Prado (2012) (form from memory). It inverts
    :func:`probabilistic_sharpe`: ``PSR`` with ``observations = MinTRL`` equals ``confidence``.

    Parameters
    ----------
    sharpe, benchmark : float
        Per-window Sharpe ratios.
    skewness, kurtosis : float
        Moments of the returns; kurtosis raw.
    confidence : float
        Target PSR, strictly between 0 and 1 (default 0.95).

    Returns
    -------
    float
        Windows (not rounded). ``math.inf`` when ``sharpe <= benchmark``: no track record length
        makes the PSR reach a confidence above 1/2 then. Divide by periods per year for years.

    Examples
    --------
    Annual SR 1.0 from normal monthly data (SR = 0.288675), benchmark 0, 95 %:
    ``1 + 1.041667 * (1.644854 / 0.288675)^2 = 34.82`` months.
    """
    sr = _finite_float(sharpe, "sharpe")
    sr_star = _finite_float(benchmark, "benchmark")
    g3, g4 = _moments(skewness, kurtosis)
    level = _probability_level(confidence, "confidence")
    if sr <= sr_star:
        return math.inf
    z = float(stats.norm.ppf(level))
    return 1.0 + _variance_numerator(sr, g3, g4) * (z / (sr - sr_star)) ** 2


# ---------------------------------------------------------------------------------------------
# expected maximum and DSR
# ---------------------------------------------------------------------------------------------


def _expected_max_approximate(trials: float) -> float:
    # Bailey and Lopez de Prado (2014): (1 - gamma) Phi^-1(1 - 1/N) + gamma Phi^-1(1 - 1/(N e)).
    value = float(
        (1.0 - EULER_MASCHERONI) * stats.norm.isf(1.0 / trials)
        + EULER_MASCHERONI * stats.norm.isf(1.0 / (trials * math.e))
    )
    # The formula is built for large N and turns negative below N ~ 1.28 (fractional effective
    # trial counts); the true expectation is at least E[one normal] = 0 for every N >= 1.
    return max(value, 0.0)


def _expected_max_exact(trials: float) -> float:
    # E[max] = int_0^inf (1 - Phi(x)^N) dx - int_-inf^0 Phi(x)^N dx (expectation from the
    # distribution function). Phi^N = exp(N log Phi) via log_ndtr stays accurate for N up to 1e15.
    def upper(x: float) -> float:
        return -math.expm1(trials * special.log_ndtr(x))

    def lower(x: float) -> float:
        return math.exp(trials * special.log_ndtr(x))

    # Split the upper part where 1 - Phi^N drops from ~1 to ~0 (near Phi^-1(1 - 1/N)).
    centre = max(float(stats.norm.isf(1.0 / trials)), 0.0)
    tail_end = centre + 12.0
    upper_part = 0.0
    if centre > 0:
        upper_part += integrate.quad(upper, 0.0, centre, limit=200, epsabs=1e-13, epsrel=1e-12)[0]
    upper_part += integrate.quad(upper, centre, tail_end, limit=200, epsabs=1e-13, epsrel=1e-12)[0]
    lower_part = integrate.quad(lower, -40.0, 0.0, limit=200, epsabs=1e-13, epsrel=1e-12)[0]
    return upper_part - lower_part


def expected_max_standard_normal(trials: float, *, exact: bool = False) -> float:
    """Expected maximum of ``trials`` iid standard normal variables.

    Parameters
    ----------
    trials : float
        ``N >= 1``; non-integer values (effective trial counts) are allowed.
    exact : bool
        False: the approximation of Bailey and Lopez de Prado (2014), built on the
        Euler-Mascheroni constant. True: numerical integration of the exact expectation
        ``int x N phi(x) Phi(x)^(N-1) dx``, evaluated in the equivalent, numerically stable form
        ``int_0^inf (1 - Phi^N) dx - int_-inf^0 Phi^N dx``.

    Returns
    -------
    float
        0 for ``N = 1`` in both modes (the approximation's ``Phi^-1(0)`` is not used there). The
        approximation is floored at 0: it turns negative for fractional N below about 1.28, while
        the expectation is never below that of a single normal.

    Notes
    -----
    Exact values agree with normal order statistics tables (Harter 1961, Biometrika 48):
    N = 10 -> 1.538753, N = 1000 -> 3.241436. The approximation is slightly high for moderate N
    (1.574598 at N = 10).
    """
    n_trials = _trials(trials)
    if n_trials == 1.0:
        return 0.0
    return _expected_max_exact(n_trials) if exact else _expected_max_approximate(n_trials)


def expected_max_sharpe(trials: float, *, trial_sharpe_variance: float, exact: bool = False) -> float:
    """Expected maximum Sharpe ratio among ``trials`` trials with no skill: the DSR benchmark.

    ``SR0 = sqrt(V) * E[max of N iid standard normals]``; with ``exact=False`` the expectation is
    ``(1 - gamma) Phi^-1(1 - 1/N) + gamma Phi^-1(1 - 1/(N e))`` (Bailey and Lopez de Prado 2014,
    gamma the Euler-Mascheroni constant), with ``exact=True`` the numerical integral of
    :func:`expected_max_standard_normal`.

    Parameters
    ----------
    trials : float
        Number of (independent) trials, at least 1.
    trial_sharpe_variance : float
        Variance ``V`` of the trials' per-window Sharpe ratios (non-negative).
    exact : bool
        Use the exact expectation instead of the paper's approximation.

    Returns
    -------
    float
        Per-window Sharpe ratio; 0 for one trial.
    """
    n_trials = _trials(trials)
    variance = _variance(trial_sharpe_variance)
    return math.sqrt(variance) * expected_max_standard_normal(n_trials, exact=exact)


def deflated_sharpe(
    sharpe: float,
    *,
    observations: float,
    trials: float,
    trial_sharpe_variance: float,
    skewness: float,
    kurtosis: float,
    expected_maximum: ExpectedMaximum = "approximate",
) -> DeflatedSharpe:
    """Deflated Sharpe ratio: the PSR against the Sharpe ratio expected from the best of N trials.

    ``DSR = PSR(SR0)``, ``SR0 = sqrt(V) * [(1 - gamma) Phi^-1(1 - 1/N) + gamma Phi^-1(1 - 1/(N e))]``

    Bailey and Lopez de Prado (2014).

    Parameters
    ----------
    sharpe : float
        Observed per-window Sharpe ratio of the selected trial (not annualised).
    observations : float
        Windows ``n`` of the selected trial.
    trials : float
        Number of trials ``N`` (at least 1).
    trial_sharpe_variance : float
        Variance ``V`` of the trials' per-window Sharpe ratios. If a variance of annualised Sharpe
        ratios is at hand, divide it by periods per year first.
    skewness, kurtosis : float
        Moments of the selected trial's returns; kurtosis RAW (3 for normal).
    expected_maximum : {"approximate", "exact"}
        "approximate" (default) is the paper's Euler-Mascheroni formula; "exact" integrates the
        expectation numerically.

    Returns
    -------
    DeflatedSharpe

    Examples
    --------
    The paper's example (from memory): N = 100, V = 0.5 / 250, n = 1250, skewness -3, kurtosis 10,
    SR = 2.5 / sqrt(250) gives ``benchmark_sharpe = 0.1132`` and ``probability = 0.9004``.
    """
    sr = _finite_float(sharpe, "sharpe")
    n = _observations(observations)
    n_trials = _trials(trials)
    variance = _variance(trial_sharpe_variance)
    g3, g4 = _moments(skewness, kurtosis)
    mode = _expected_maximum_option(expected_maximum)
    sr0 = expected_max_sharpe(n_trials, trial_sharpe_variance=variance, exact=mode == "exact")
    psr = probabilistic_sharpe(sr, benchmark=sr0, observations=n, skewness=g3, kurtosis=g4)
    return DeflatedSharpe(
        sharpe=sr,
        observations=n,
        trials=n_trials,
        trial_sharpe_variance=variance,
        skewness=g3,
        kurtosis=g4,
        expected_maximum=mode,
        benchmark_sharpe=sr0,
        standard_error=psr.standard_error,
        statistic=psr.statistic,
        probability=psr.probability,
    )


def max_trials_for_deflated_sharpe(
    sharpe: float,
    *,
    observations: float,
    trial_sharpe_variance: float,
    skewness: float,
    kurtosis: float,
    level: float = 0.95,
    expected_maximum: ExpectedMaximum = "approximate",
    search_limit: int = 10**15,
) -> float:
    """Largest whole number of trials that keeps the DSR strictly above ``level``.

    The DSR falls as trials grow (the expected maximum grows), so the answer is found by doubling
    and bisection on whole numbers.

    Parameters
    ----------
    sharpe, observations, trial_sharpe_variance, skewness, kurtosis, expected_maximum
        As for :func:`deflated_sharpe`.
    level : float
        DSR threshold, strictly between 0 and 1 (default 0.95).
    search_limit : int
        Largest trial count examined.

    Returns
    -------
    float
        A whole number. 0.0 when even a single trial gives a DSR at or below ``level``;
        ``math.inf`` when the DSR is still above ``level`` at ``search_limit`` trials.

    Examples
    --------
    The deflated Sharpe paper's example (Bailey and Lopez de Prado 2014) states that about 46
    trials is the most that keeps the DSR above 0.95.
    """
    level_value = _probability_level(level, "level")
    if isinstance(search_limit, bool) or not isinstance(search_limit, (int, np.integer)) or search_limit < 1:
        raise InputError(f"search_limit must be a positive integer; received {search_limit!r}")

    def passes(count: int) -> bool:
        return (
            deflated_sharpe(
                sharpe,
                observations=observations,
                trials=count,
                trial_sharpe_variance=trial_sharpe_variance,
                skewness=skewness,
                kurtosis=kurtosis,
                expected_maximum=expected_maximum,
            ).probability
            > level_value
        )

    if not passes(1):
        return 0.0
    low, high = 1, 2
    while high <= search_limit and passes(high):
        low, high = high, high * 2
    if high > search_limit:
        if passes(search_limit):
            return math.inf
        high = search_limit
    # Invariant: passes(low) and not passes(high).
    while high - low > 1:
        middle = (low + high) // 2
        if passes(middle):
            low = middle
        else:
            high = middle
    return float(low)
