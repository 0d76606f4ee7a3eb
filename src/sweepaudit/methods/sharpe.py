"""Sharpe ratio estimates: moments, standard errors, autocorrelations, annualization, PSR, minimum track record.

The deflated Sharpe ratio and the expected maximum of N trials live in
:mod:`sweepaudit.methods.deflation`; the assembly for an audit in :mod:`sweepaudit.methods.inference`.

Every Sharpe ratio here is **per window** (mean over sample standard deviation of the windows the
sweep holds, e.g. per day or per month). Annualization happens only for display, through
:func:`annualization_factor`; no formula below takes an annualized input.

Kurtosis is always the **raw** fourth standardised moment (3 for a normal distribution). Note that
``scipy.stats.kurtosis`` and ``pandas.Series.kurt`` return *excess* kurtosis by default.

References
----------
Mertens, E. (2002). Comments on the variance of the IID estimator in Lo (2002). Working paper,
University of Basel.

Lo, A. W. (2002). The statistics of Sharpe ratios. *Financial Analysts Journal* 58(4), 36-52.

Bailey, D. H. and Lopez de Prado, M. (2012). The Sharpe ratio efficient frontier. *Journal of
Risk* 15(2), 3-44.

Newey, W. K. and West, K. D. (1987). A simple, positive semi-definite, heteroskedasticity and
autocorrelation consistent covariance matrix. *Econometrica* 55(3), 703-708.

Lopez de Prado, M. (2018). *Advances in Financial Machine Learning*. Wiley. Section 14.7.
"""

from __future__ import annotations

import math
from typing import Literal

import numpy as np

from .. import validate
from ..errors import DegenerateDataError, InputError
from ..results import ProbabilisticSharpe, ReturnMoments
from .distributions import normal_cdf, normal_ppf

__all__ = [
    "sharpe_ratio",
    "return_moments",
    "sharpe_standard_error",
    "serial_correlation_standard_error",
    "autocorrelations",
    "annualization_factor",
    "annualized_sharpe",
    "probabilistic_sharpe",
    "minimum_track_record",
    "variance_numerator",
]

Divisor = Literal["n-1", "n"]


def _observations(value: object) -> float:
    return validate.at_least(value, "observations", 2, what="2 to estimate a Sharpe ratio")


def _whole_periods(periods_per_year: object) -> int:
    # Lo's (2002) factor sums q - 1 autocorrelations: q must be a whole number of windows.
    return validate.whole_number(
        periods_per_year, "periods_per_year", minimum=1, accept_float=True,
        what="a positive whole number for the serial-correlation adjustment",
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
    array = validate.returns_series(returns, matrix=True)
    n = array.shape[0]
    mean = array.mean(axis=0)
    centred = array - mean
    squared = centred * centred
    m2 = np.mean(squared, axis=0)
    std = np.sqrt(m2 * n / (n - 1))
    validate.nonconstant(array, std, "returns", undefined="Sharpe ratio is undefined")
    # Products, not powers: x**3 and x**4 go through pow(), several times slower on a T x N matrix.
    m3 = np.mean(squared * centred, axis=0)
    m4 = np.mean(squared * squared, axis=0)
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
        A float for 1-D input, one value per column for 2-D input. Not annualized.

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
    array = validate.returns_series(series, "series")
    validate.whole_number(max_lag, "max_lag", minimum=0, maximum=array.shape[0] - 1)
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
        return math.sqrt(validate.positive_number(periods_per_year, "periods_per_year"))
    q = _whole_periods(periods_per_year)
    rho = np.atleast_1d(np.asarray(autocorrelations, dtype=float))
    if rho.ndim != 1 or rho.size < q - 1:
        raise InputError(
            f"autocorrelations must hold at least periods_per_year - 1 = {q - 1} values (lags 1..{q - 1}); "
            f"got {rho.size}"
        )
    if not np.all(np.isfinite(rho[: q - 1])):
        raise InputError("autocorrelations must be finite; got non-finite values")
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
    """Annualized Sharpe ratio of one series: per-window Sharpe times :func:`annualization_factor`.

    Parameters
    ----------
    returns : array_like, shape (T,)
    periods_per_year : int
        Windows per year ``q``.
    serial_correlation : {"adjusted", "ignored"}
        "adjusted" uses Lo's (2002) ``eta(q)`` from the series' own sample autocorrelations at lags
        1..q-1 (needs ``T > q``); "ignored" uses ``sqrt(q)``.
    """
    validate.choice(serial_correlation, "serial_correlation", ("adjusted", "ignored"))
    array = validate.returns_series(returns)
    sharpe = float(sharpe_ratio(array))
    if serial_correlation == "ignored":
        return sharpe * annualization_factor(periods_per_year)
    q = _whole_periods(periods_per_year)
    if array.shape[0] <= q:
        raise InputError(
            f"returns must hold more than periods_per_year = {q} windows for the serial-correlation "
            f"adjustment; got {array.shape[0]}"
        )
    rho = autocorrelations(array, max_lag=q - 1)
    return sharpe * annualization_factor(q, autocorrelations=rho)


# ---------------------------------------------------------------------------------------------
# standard error, PSR, MinTRL
# ---------------------------------------------------------------------------------------------


def variance_numerator(sharpe: float, skewness: float, kurtosis: float, long_run_ratio: float = 1.0) -> float:
    """``n Var(SR)`` of a per-window Sharpe ratio: ``q - g3 SR + (g4 - 1) / 4 SR^2`` (Mertens 2002).

    ``g4`` is raw kurtosis; the probabilistic Sharpe ratio divides it by ``n - 1``. ``q`` is the
    long-run variance ratio ``omega^2 / sigma^2`` (1 for serially uncorrelated windows, Mertens'
    case). Under serial dependence the leading term, the variance of the mean in units of
    ``sigma^2 / n``, becomes ``q`` (Lo 2002, section on non-iid returns; the long-run variance of a
    mean is a textbook fact); the skewness and kurtosis terms keep their iid form, which is second
    order for the small per-window Sharpe ratios of a sweep (SR^2 of 0.01 to 0.1).
    """
    return long_run_ratio - skewness * sharpe + (kurtosis - 1.0) / 4.0 * sharpe * sharpe


def sharpe_standard_error(
    sharpe: float,
    *,
    observations: float,
    skewness: float = 0.0,
    kurtosis: float = 3.0,
    divisor: Divisor = "n-1",
    long_run_ratio: float = 1.0,
) -> float:
    """Standard error of a per-window Sharpe ratio estimate for non-normal returns.

    ``SE = sqrt( [1 - g3*SR + (g4 - 1)/4 * SR^2] / (n - 1) )``

    Mertens (2002) derives the asymptotic variance ``[...]/n``; the probabilistic Sharpe ratio of
    Bailey and Lopez de Prado (2012) scales by ``sqrt(n - 1)``. The default divisor ``"n-1"``
    matches the PSR, so ``PSR = Phi((SR - SR*) / SE)`` with this SE. With ``g3 = 0``, ``g4 = 3``
    the numerator is Lo's (2002) ``1 + SR^2 / 2``.

    Parameters
    ----------
    sharpe : float
        Per-window Sharpe ratio (not annualized).
    observations : float
        Number of windows ``n`` (at least 2).
    skewness : float
        Skewness ``g3`` of the returns.
    kurtosis : float
        RAW kurtosis ``g4`` (3 for normal; not excess kurtosis). Must satisfy
        ``g4 >= 1 + g3**2``, which every distribution does.
    divisor : {"n-1", "n"}
        ``n - 1`` (PSR convention, default) or ``n`` (Mertens' asymptotic formula).
    long_run_ratio : float
        ``q = omega^2 / sigma^2`` of the series (:func:`sweepaudit.methods.longrun.long_run_variance`);
        1 (default) is the iid formula.

    Returns
    -------
    float
    """
    sr = validate.finite_number(sharpe, "sharpe")
    n = _observations(observations)
    g3, g4 = validate.raw_moments(skewness, kurtosis)
    validate.choice(divisor, "divisor", ("n-1", "n"))
    q = validate.positive_number(long_run_ratio, "long_run_ratio")
    denominator = n - 1.0 if divisor == "n-1" else n
    # With q = 1 the numerator is >= 0 whenever g4 >= 1 + g3^2 (its discriminant is
    # g3^2 - (g4 - 1) <= 0); a q below 1 can push it under zero for large |SR|, hence the floor.
    return math.sqrt(max(variance_numerator(sr, g3, g4, q), 0.0) / denominator)


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
    array = validate.returns_series(returns)
    n = array.shape[0]
    if lags is None:
        lags = int(math.floor(4 * (n / 100.0) ** (2.0 / 9.0)))
    validate.whole_number(lags, "lags", minimum=0, maximum=n - 1)
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
    long_run_ratio: float = 1.0,
) -> ProbabilisticSharpe:
    """Probabilistic Sharpe ratio (PSR) against a benchmark Sharpe ratio.

    ``PSR(SR*) = Phi( (SR - SR*) * sqrt(n - 1) / sqrt(1 - g3*SR + (g4 - 1)/4 * SR^2) )``

    Bailey and Lopez de Prado (2012); as printed in Lopez de Prado (2018), section 14.7.2.

    Parameters
    ----------
    sharpe, benchmark : float
        Observed and benchmark Sharpe ratios, both PER WINDOW (not annualized).
    observations : float
        Windows ``n`` behind the estimate (at least 2).
    skewness : float
        Skewness of the returns.
    kurtosis : float
        RAW kurtosis (3 for normal).
    long_run_ratio : float
        ``q = omega^2 / sigma^2``: the leading 1 of the numerator becomes ``q`` under serial
        dependence (see :func:`variance_numerator`); 1 (default) is the published iid formula.

    Returns
    -------
    ProbabilisticSharpe

    Examples
    --------
    Hand check (annual SR 1.0 from 36 normal monthly returns, so SR = 1/sqrt(12) = 0.288675):
    numerator 1 + SR^2/2 = 1.041667, z = 0.288675 * sqrt(35) / sqrt(1.041667) = 1.673320, and
    Phi(1.673320) = 0.952868.
    """
    sr = validate.finite_number(sharpe, "sharpe")
    sr_star = validate.finite_number(benchmark, "benchmark")
    n = _observations(observations)
    g3, g4 = validate.raw_moments(skewness, kurtosis)
    se = sharpe_standard_error(sr, observations=n, skewness=g3, kurtosis=g4, long_run_ratio=long_run_ratio)
    if se == 0.0:
        raise DegenerateDataError(
            "the Sharpe ratio's standard error is 0 (kurtosis = 1 + skewness**2 at this Sharpe ratio); "
            "PSR is undefined"
        )
    z = (sr - sr_star) / se
    return ProbabilisticSharpe(sr, sr_star, n, g3, g4, se, z, float(normal_cdf(z)), float(long_run_ratio))


def minimum_track_record(
    sharpe: float,
    *,
    benchmark: float,
    skewness: float,
    kurtosis: float,
    confidence: float = 0.95,
    long_run_ratio: float = 1.0,
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
    long_run_ratio : float
        ``q = omega^2 / sigma^2`` (see :func:`probabilistic_sharpe`); 1 (default) is the iid formula.

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
    sr = validate.finite_number(sharpe, "sharpe")
    sr_star = validate.finite_number(benchmark, "benchmark")
    g3, g4 = validate.raw_moments(skewness, kurtosis)
    level = validate.probability(confidence, "confidence")
    q = validate.positive_number(long_run_ratio, "long_run_ratio")
    if sr <= sr_star:
        return math.inf
    z = float(normal_ppf(level))
    return 1.0 + max(variance_numerator(sr, g3, g4, q), 0.0) * (z / (sr - sr_star)) ** 2
