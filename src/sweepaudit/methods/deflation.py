"""Deflation for the search: the expected best of N luck-only trials, the deflated Sharpe ratio,
how many trials a sweep really ran, and the variance of the trials' Sharpe ratios.

A sweep of N configurations is rarely N independent trials: neighbouring parameter values trade
almost the same way, so the effective number of independent trials is estimated as well as the
declared one. Every Sharpe ratio is per window; kurtosis is raw (3 for a normal distribution).

References
----------
Bailey, D. H. and Lopez de Prado, M. (2014). The deflated Sharpe ratio: correcting for selection
bias, backtest overfitting and non-normality. *Journal of Portfolio Management* 40(5), 94-107.

Mertens, E. (2002). Comments on the variance of the IID estimator in Lo (2002). Working paper,
University of Basel.

Nyholt, D. R. (2004). A simple correction for multiple testing for single-nucleotide polymorphisms
in linkage disequilibrium with each other. *American Journal of Human Genetics* 74(4), 765-769.

Li, J. and Ji, L. (2005). Adjusting multiple testing in multilocus analyses using the eigenvalues
of a correlation matrix. *Heredity* 95(3), 221-227.

Harter, H. L. (1961). Expected values of normal order statistics. *Biometrika* 48(1/2), 151-165.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
from scipy import integrate, special

from .. import validate
from ..errors import InputError
from ..results import DeflatedCurve, DeflatedSharpe, EffectiveTrials, ExpectedMaximum, VarianceMode
from .distributions import normal_cdf, normal_isf
from .sharpe import probabilistic_sharpe

__all__ = [
    "EULER_MASCHERONI",
    "expected_max_standard_normal",
    "expected_max_sharpe",
    "deflated_sharpe",
    "calibrated_level",
    "max_trials_for_deflated_sharpe",
    "deflated_by_trials",
    "effective_trials",
    "correlation_gram_block",
    "effective_trials_from_gram",
    "trials_from_average_correlation",
    "nyholt_effective_trials",
    "li_ji_effective_trials",
    "trial_sharpe_variance",
]

#: Euler-Mascheroni constant, used by the expected-maximum approximation of Bailey and Lopez de
#: Prado (2014).
EULER_MASCHERONI = 0.5772156649015329

_EXPECTED_MAXIMA = ("approximate", "exact")


def _trials(value: object) -> float:
    return validate.at_least(value, "trials", 1)


def _observations(value: object) -> float:
    return validate.at_least(value, "observations", 2, what="2 to estimate a Sharpe ratio")


def _matrix(returns: object) -> np.ndarray:
    return validate.returns_matrix(returns)


def _standardised(array: np.ndarray) -> np.ndarray:
    """Columns centred and scaled to unit sample variance; clear error on constant columns."""
    centred = array - array.mean(axis=0)
    std = np.sqrt(np.sum(centred**2, axis=0) / (array.shape[0] - 1))
    validate.nonconstant(array, std, "returns", undefined="correlation and Sharpe ratio are undefined")
    return centred / std


# ---------------------------------------------------------------------------------------------
# expected maximum and DSR
# ---------------------------------------------------------------------------------------------


def _expected_max_approximate(trials):
    """The approximation for a trial count or an array of counts (elementwise the same arithmetic)."""
    # Bailey and Lopez de Prado (2014): (1 - gamma) Phi^-1(1 - 1/N) + gamma Phi^-1(1 - 1/(N e)).
    value = (1.0 - EULER_MASCHERONI) * normal_isf(1.0 / trials) + EULER_MASCHERONI * normal_isf(
        1.0 / (trials * math.e)
    )
    # The formula is built for large N and turns negative below N ~ 1.28 (fractional effective
    # trial counts); the true expectation is at least E[one normal] = 0 for every N >= 1. At N = 1
    # the first quantile is -inf, so the floor also gives the exact 0 there.
    return np.maximum(value, 0.0)


def _expected_max_exact(trials: float) -> float:
    # E[max] = int_0^inf (1 - Phi(x)^N) dx - int_-inf^0 Phi(x)^N dx (expectation from the
    # distribution function). Phi^N = exp(N log Phi) via log_ndtr stays accurate for N up to 1e15.
    def upper(x: float) -> float:
        return -math.expm1(trials * special.log_ndtr(x))

    def lower(x: float) -> float:
        return math.exp(trials * special.log_ndtr(x))

    # Split the upper part where 1 - Phi^N drops from ~1 to ~0 (near Phi^-1(1 - 1/N)).
    centre = max(float(normal_isf(1.0 / trials)), 0.0)
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
    return _expected_max_exact(n_trials) if exact else float(_expected_max_approximate(n_trials))


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
    variance = validate.non_negative_number(trial_sharpe_variance, "trial_sharpe_variance")
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
    long_run_ratio: float = 1.0,
) -> DeflatedSharpe:
    """Deflated Sharpe ratio: the PSR against the Sharpe ratio expected from the best of N trials.

    ``DSR = PSR(SR0)``, ``SR0 = sqrt(V) * [(1 - gamma) Phi^-1(1 - 1/N) + gamma Phi^-1(1 - 1/(N e))]``
    (Bailey and Lopez de Prado 2014).

    Parameters
    ----------
    sharpe : float
        Observed per-window Sharpe ratio of the selected trial (not annualized).
    observations : float
        Windows ``n`` of the selected trial.
    trials : float
        Number of trials ``N`` (at least 1).
    trial_sharpe_variance : float
        Variance ``V`` of the trials' per-window Sharpe ratios. If a variance of annualized Sharpe
        ratios is at hand, divide it by periods per year first.
    skewness, kurtosis : float
        Moments of the selected trial's returns; kurtosis RAW (3 for normal).
    expected_maximum : {"approximate", "exact"}
        "approximate" (default) is the paper's Euler-Mascheroni formula; "exact" integrates the
        expectation numerically.
    long_run_ratio : float
        ``q = omega^2 / sigma^2`` of the selected trial, for its standard error under serial
        dependence (:func:`sweepaudit.methods.sharpe.variance_numerator`); 1 (default) is the
        paper's iid formula. The null trial variance ``V`` is the caller's to scale the same way.

    Returns
    -------
    DeflatedSharpe

    Examples
    --------
    The paper's example (from memory): N = 100, V = 0.5 / 250, n = 1250, skewness -3, kurtosis 10,
    SR = 2.5 / sqrt(250) gives ``benchmark_sharpe = 0.1132`` and ``probability = 0.9004``.
    """
    sr = validate.finite_number(sharpe, "sharpe")
    n = _observations(observations)
    n_trials = _trials(trials)
    variance = validate.non_negative_number(trial_sharpe_variance, "trial_sharpe_variance")
    g3, g4 = validate.raw_moments(skewness, kurtosis)
    mode = validate.choice(expected_maximum, "expected_maximum", _EXPECTED_MAXIMA)
    sr0 = expected_max_sharpe(n_trials, trial_sharpe_variance=variance, exact=mode == "exact")
    psr = probabilistic_sharpe(sr, benchmark=sr0, observations=n, skewness=g3, kurtosis=g4,
                               long_run_ratio=long_run_ratio)
    return DeflatedSharpe(
        sharpe=sr, observations=n, trials=n_trials, trial_sharpe_variance=variance, skewness=g3, kurtosis=g4,
        expected_maximum=mode, benchmark_sharpe=sr0, standard_error=psr.standard_error, statistic=psr.statistic,
        probability=psr.probability, long_run_ratio=psr.long_run_ratio,
    )


def calibrated_level(trials: float, *, significance: float = 0.05, expected_maximum: ExpectedMaximum = "approximate") -> float:
    """The deflated Sharpe probability that makes "DSR >= level" a test of size ``significance``.

    Under "no trial has an edge", with N independent trials each of Sharpe variance V, the best
    z-ratio ``max_k SR_k / sqrt(V)`` exceeds ``Phi^-1((1 - alpha)^(1/N))`` with probability alpha
    (Sidak 1967), and ``DSR = Phi(z - E[max_N])`` when the selected trial's standard error is
    ``sqrt(V)``. So ``DSR >= Phi(Phi^-1((1 - alpha)^(1/N)) - E[max_N])`` is a familywise test of
    level alpha. For one trial the level is ``1 - alpha`` (0.95: the PSR at 95%); it falls with N
    (about 0.84 for 10 trials, 0.77 for 100, 0.74 for 1,000 at alpha = 0.05), because the DSR
    measures distance from the expected maximum, not from its upper quantile.

    The 0.95 the deflated Sharpe paper uses is far stricter than a 5% test for N > 1: it needs the
    selected z-ratio near ``z_0.95 + E[max_N]`` (about 4.2 for 100 trials against Sidak's 3.28).

    Parameters
    ----------
    trials : float
        N, at least 1 (declared trials; fractional effective counts are allowed).
    significance : float
        alpha, strictly between 0 and 1.
    expected_maximum : {"approximate", "exact"}
        The expected maximum the DSR itself uses.

    Returns
    -------
    float

    References
    ----------
    Sidak, Z. (1967). Rectangular confidence regions for the means of multivariate normal
    distributions. JASA 62(318), 626-633.
    """
    n_trials = _trials(trials)
    alpha = validate.probability(significance, "significance")
    mode = validate.choice(expected_maximum, "expected_maximum", _EXPECTED_MAXIMA)
    # (1 - alpha)^(1/N) as 1 - expm1(log1p(-alpha) / N): accurate for large N.
    quantile = float(normal_isf(-math.expm1(math.log1p(-alpha) / n_trials)))
    return float(normal_cdf(quantile - expected_max_standard_normal(n_trials, exact=mode == "exact")))


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
    level_value = validate.probability(level, "level")
    limit = validate.whole_number(search_limit, "search_limit", minimum=1)

    def passes(count: int) -> bool:
        return deflated_sharpe(
            sharpe, observations=observations, trials=count, trial_sharpe_variance=trial_sharpe_variance,
            skewness=skewness, kurtosis=kurtosis, expected_maximum=expected_maximum,
        ).probability > level_value

    return _largest_passing(passes, limit)


def _largest_passing(passes: Callable[[int], bool], search_limit: int) -> float:
    """Largest whole ``n <= search_limit`` with ``passes(n)`` for a ``passes`` true up to a point.

    Doubling from 1, then bisection; 0.0 when ``passes(1)`` fails, ``math.inf`` when
    ``passes(search_limit)`` holds.
    """
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


# ---------------------------------------------------------------------------------------------
# the deflated probability as a function of the number of trials (the report's curve)
# ---------------------------------------------------------------------------------------------


def deflated_by_trials(
    sharpe: float,
    *,
    observations: float,
    skewness: float,
    kurtosis: float,
    trial_sharpe_variance: float,
    trials: float,
    effective_trials: float | None = None,
    expected_maximum: ExpectedMaximum = "approximate",
    points: int = 160,
    long_run_ratio: float = 1.0,
) -> DeflatedCurve | None:
    """The deflated Sharpe probability against the number of trials assumed, for the report's figure.

    The probability is the deflated Sharpe probability at each of about ``points`` whole trial counts spaced
    evenly on a log scale from 1 to ``max(1000, 10 * trials)``, and at the trials counted and the
    effective trials. It falls as the count grows because the expected maximum of N luck-only
    trials grows with N (Bailey and Lopez de Prado 2014, eq. 2).

    ``long_run_ratio`` is passed to :func:`deflated_sharpe` (the headline's serial-dependence scale).

    Returns
    -------
    DeflatedCurve or None
        None when ``trial_sharpe_variance`` is not positive (no selection premium to plot).
    """
    if not trial_sharpe_variance > 0:
        return None
    inputs = dict(observations=observations, trial_sharpe_variance=trial_sharpe_variance, skewness=skewness,
                  kurtosis=kurtosis, expected_maximum=expected_maximum, long_run_ratio=long_run_ratio)
    at_counted = deflated_sharpe(sharpe, trials=float(trials), **inputs)
    counts = np.unique(np.round(np.geomspace(1, max(1_000.0, 10 * float(trials)), points)))
    # DSR(N) = Phi((SR - sqrt(V) E[max_N]) / SE): only the expected maximum depends on N, so the
    # curve evaluates it on every count at once with the same functions deflated_sharpe uses.
    if expected_maximum == "approximate":
        maxima = _expected_max_approximate(counts)
    else:
        maxima = np.array([expected_max_standard_normal(c, exact=True) for c in counts])
    benchmark = math.sqrt(at_counted.trial_sharpe_variance) * maxima
    shown = effective_trials is not None and effective_trials >= 1 and abs(effective_trials - trials) > 1e-9
    return DeflatedCurve(
        trials=counts,
        probability=normal_cdf((at_counted.sharpe - benchmark) / at_counted.standard_error),
        trials_counted=float(trials),
        at_trials_counted=at_counted.probability,
        effective_trials=float(effective_trials) if shown else None,
        at_effective_trials=deflated_sharpe(sharpe, trials=float(effective_trials), **inputs).probability if shown else None,
    )


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
        raise InputError(f"average_correlation must lie in [-1, 1]; got {average_correlation!r}")
    validate.whole_number(configurations, "configurations", minimum=1)
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
    if n <= windows:
        eigenvalues = np.linalg.eigvalsh(z.T @ z)
    else:
        eigenvalues = np.concatenate([np.linalg.eigvalsh(z @ z.T), np.zeros(n - windows)])
    return _effective(total, eigenvalues, n)


def correlation_gram_block(block: object) -> tuple[np.ndarray, np.ndarray]:
    """One column block's share of the effective trials: ``Z_b Z_b'`` (T x T) and the row sums of
    ``Z_b``, with ``Z`` the standardised columns over ``sqrt(T - 1)`` (sums over blocks give the
    whole sweep's; see :func:`effective_trials_from_gram`)."""
    array = _matrix(block)
    z = _standardised(array) / math.sqrt(array.shape[0] - 1)
    return z @ z.T, z.sum(axis=1)


def effective_trials_from_gram(gram: np.ndarray, row_sums: np.ndarray, configurations: int) -> EffectiveTrials:
    """:func:`effective_trials` from the summed :func:`correlation_gram_block` of every column block.

    ``Z Z'`` (T x T) has the non-zero eigenvalues of the correlation matrix ``Z'Z`` (N x N); when
    N < T its remaining T - N eigenvalues are zero up to rounding and the N largest are kept.
    """
    n = int(configurations)
    if n == 1:
        return EffectiveTrials(1, 1.0, 1.0, 1.0, 1.0, np.array([1.0]))
    eigenvalues = np.linalg.eigvalsh(gram)
    windows = gram.shape[0]
    eigenvalues = np.sort(eigenvalues)[::-1][:n] if n <= windows else np.concatenate([eigenvalues, np.zeros(n - windows)])
    return _effective(float(np.sum(row_sums**2)), eigenvalues, n)


def _effective(total: float, eigenvalues: np.ndarray, n: int) -> EffectiveTrials:
    average = (total - n) / (n * (n - 1))
    average = float(np.clip(average, -1.0, 1.0))
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


def trial_sharpe_variance(returns: object, *, mode: VarianceMode = "null", long_run_ratio: float = 1.0) -> float:
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
        ``1 / (T - 1)`` for every sweep of T windows of serially uncorrelated returns.
    long_run_ratio : float
        Null mode only: under serial dependence a Sharpe estimate's null variance is
        ``q / (T - 1)`` with ``q = omega^2 / sigma^2`` (the long-run variance ratio of a typical
        configuration; :func:`sweepaudit.methods.sharpe.variance_numerator`). Default 1.

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
    chosen = validate.choice(mode, "mode", ("null", "empirical"))
    windows, n = array.shape
    if chosen == "null":
        q = validate.positive_number(long_run_ratio, "long_run_ratio")
        _standardised(array)  # constant columns are an error in both modes
        return q / (windows - 1)
    if n < 2:
        raise InputError(
            f"mode='empirical' needs at least 2 configurations to estimate a variance; got {n}"
        )
    _standardised(array)
    sharpes = array.mean(axis=0) / np.std(array, axis=0, ddof=1)
    return float(np.var(sharpes, ddof=1))
