"""Long-run variance of each configuration's mean, and a block length adequate for the whole family.

Serial dependence makes the variance of a mean of T windows differ from sigma^2 / T: for an AR(1)
series with coefficient phi it is sigma^2 (1 + phi) / (1 - phi) / T (a textbook fact). Every
figure that divides by a standard error (studentized data-snooping tests, the probabilistic and
deflated Sharpe ratios, the minimum track record) needs the long-run variance
``omega^2 = lim T Var(mean)``, estimated here per configuration in one vectorised pass.

The estimator is the AR(1)-prewhitened Bartlett kernel estimator of Andrews and Monahan (1992):
fit an AR(1) coefficient rho to the demeaned series (with the first-order bias correction of
Kendall 1954 for an estimated mean), filter ``u_t = e_t - rho e_{t-1}``, estimate the long-run
variance of ``u`` with the Bartlett kernel at the Andrews (1991) AR(1) plug-in bandwidth, and
recolour: ``omega^2 = lrv(u) / (1 - rho)^2``. Prewhitening removes most of the downward bias that a
plain Newey-West estimator with a short bandwidth has under persistent dependence.

An estimated long-run variance is noisy, so a ratio ``mean / (omega / sqrt(T))`` has heavier tails
than a standard normal. :func:`long_run_variance` reports the equivalent degrees of freedom ``nu``
of each estimate (the scaled chi-square with the same variance of the log estimate, Satterthwaite
1946) so that callers can read such ratios against Student's t with ``nu`` degrees of freedom.

References
----------
Andrews, D. W. K. (1991). Heteroskedasticity and autocorrelation consistent covariance matrix
    estimation. Econometrica 59(3), 817-858 (Bartlett kernel, AR(1) plug-in bandwidth, eq. 6.4).
Andrews, D. W. K. and Monahan, J. C. (1992). An improved heteroskedasticity and autocorrelation
    consistent covariance matrix estimator. Econometrica 60(4), 953-966 (prewhitening).
Newey, W. K. and West, K. D. (1987). A simple, positive semi-definite, heteroskedasticity and
    autocorrelation consistent covariance matrix. Econometrica 55(3), 703-708.
Kendall, M. G. (1954). Note on bias in the estimation of autocorrelation. Biometrika 41, 403-404
    (E[rho_hat] - rho ~ -(1 + 3 rho) / T with an estimated mean; form from memory).
Priestley, M. B. (1981). Spectral Analysis and Time Series. Academic Press, section 6.2.3
    (variance of lag-window estimators: 2 f(0)^2 sum_j w_j^2 / T at frequency zero).
Satterthwaite, F. E. (1946). An approximate distribution of estimates of variance components.
    Biometrics Bulletin 2(6), 110-114.
Politis, D. N. and White, H. (2004). Automatic block-length selection for the dependent bootstrap.
    Econometric Reviews 23(1), 53-70; correction: Patton, Politis and White (2009).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special

from ..errors import DegenerateDataError, InputError
from ..resample import politis_white_lengths
from ..results import BlockLengthChoice, LongRunVariance

__all__ = [
    "LongRunVariance",
    "BlockLengthChoice",
    "long_run_variance",
    "normal_scores",
    "bootstrap_variance_ratio",
    "family_block_length",
    "family_sample",
    "block_length_of_sample",
]

#: Largest absolute AR(1) coefficient used to prewhiten (Andrews and Monahan 1992 bound it away
#: from one so that the recolouring factor 1 / (1 - rho)^2 stays finite).
MAX_AR_COEFFICIENT = 0.97

#: Lowest share of the long-run variance a block bootstrap may reproduce before the family rule
#: lengthens its blocks (our choice: a 10% shortfall widens a 95% interval's miss rate to about 6.5%).
MIN_BOOTSTRAP_SHARE = 0.9


def _matrix(returns) -> np.ndarray:
    x = np.asarray(returns, dtype=np.float64)
    if x.ndim == 1:
        x = x[:, None]
    if x.ndim != 2:
        raise InputError(f"returns must be a T x N matrix; got {x.ndim} dimensions")
    if x.shape[0] < 8:
        raise DegenerateDataError(f"a long-run variance needs at least 8 windows; got {x.shape[0]}")
    if not np.isfinite(x).all():
        raise InputError("returns must be finite (no NaN or infinity)")
    return x


def _lag_one(e: np.ndarray) -> np.ndarray:
    denominator = np.einsum("ij,ij->j", e[:-1], e[:-1])
    with np.errstate(invalid="ignore", divide="ignore"):
        rho = np.einsum("ij,ij->j", e[1:], e[:-1]) / denominator
    return np.where(denominator > 0, rho, 0.0)


def _andrews_bandwidth(u: np.ndarray) -> np.ndarray:
    # Andrews (1991), eq. 6.4 with the univariate AR(1) plug-in: alpha(1) = 4 r^2 / ((1-r)^2 (1+r)^2)
    # and S = 1.1447 (alpha(1) T)^(1/3) for the Bartlett kernel.
    r = np.clip(_lag_one(u), -MAX_AR_COEFFICIENT, MAX_AR_COEFFICIENT)
    alpha = 4.0 * r * r / ((1.0 - r) ** 2 * (1.0 + r) ** 2)
    return np.minimum(1.1447 * (alpha * u.shape[0]) ** (1.0 / 3.0), u.shape[0] / 4.0)


def long_run_variance(
    returns,
    *,
    prewhiten: bool = True,
    bias_correction: bool = True,
    bandwidth: float | None = None,
) -> LongRunVariance:
    """Prewhitened Bartlett estimate of each column's long-run variance (Andrews and Monahan 1992).

    Parameters
    ----------
    returns : array_like, shape (T,) or (T, N)
        Per-window returns, windows in rows.
    prewhiten : bool
        Filter each column by its AR(1) coefficient first and recolour after (default). False gives
        the plain Bartlett (Newey-West) estimator on the demeaned series.
    bias_correction : bool
        Add Kendall's (1954) first-order correction ``(1 + 3 rho) / T`` to the AR(1) coefficient.
    bandwidth : float, optional
        Bartlett bandwidth ``S`` (weights ``1 - j / S`` for ``j < S``); default: Andrews' (1991)
        AR(1) plug-in per column, on the (prewhitened) residuals.

    Returns
    -------
    LongRunVariance

    Notes
    -----
    Equivalent degrees of freedom: the variance of the log estimate is approximated by
    ``(2 / T) sum_{|j| < S} w_j^2`` for the kernel part (Priestley 1981, section 6.2.3, at
    frequency zero) plus ``4 (1 + rho) / (T (1 - rho))`` for the recolouring factor (the delta
    method with ``Var(rho_hat) = (1 - rho^2) / T``); ``nu = 2 / Var(log omega^2)`` matches a scaled
    chi-square with ``nu`` degrees of freedom (Satterthwaite 1946). Serially uncorrelated windows
    give ``nu`` close to ``T / 3`` with prewhitening and ``T`` without. The normal-theory variance of
    a variance estimate is used: with fat tails the t-ratio of a mean is still close to Student's
    t (it is self-normalising), so no kurtosis term is added.
    """
    x = _matrix(returns)
    t = x.shape[0]
    e = x - x.mean(axis=0)
    short = np.einsum("ij,ij->j", e, e) / t
    if np.any(short <= 0):
        k = int(np.flatnonzero(short <= 0)[0])
        raise DegenerateDataError(f"column {k} (0-based) is constant; its long-run variance is zero")
    if prewhiten:
        rho = _lag_one(e)
        if bias_correction:
            rho = rho + (1.0 + 3.0 * rho) / t
        rho = np.clip(rho, -MAX_AR_COEFFICIENT, MAX_AR_COEFFICIENT)
        u = e[1:] - rho * e[:-1]
    else:
        rho = np.zeros(x.shape[1])
        u = e
    n_u = u.shape[0]
    if bandwidth is None:
        s = _andrews_bandwidth(u)
    else:
        if not (isinstance(bandwidth, (int, float)) and math.isfinite(bandwidth) and bandwidth >= 0):
            raise InputError(f"bandwidth must be a non-negative finite number; got {bandwidth!r}")
        s = np.full(x.shape[1], float(bandwidth))
    lrv = np.einsum("ij,ij->j", u, u) / n_u
    weight_squares = np.ones(x.shape[1])
    for j in range(1, int(np.floor(s.max())) + 1):
        w = np.where(j < s, 1.0 - j / np.where(s > 0, s, 1.0), 0.0)
        if not w.any():
            continue
        lrv += 2.0 * w * np.einsum("ij,ij->j", u[j:], u[:-j]) / n_u
        weight_squares += 2.0 * w * w
    lrv = np.maximum(lrv, 1e-12 * short)  # Bartlett weights keep it non-negative; guard rounding
    variance = lrv / (1.0 - rho) ** 2
    log_variance = 2.0 * weight_squares / t
    if prewhiten:
        log_variance = log_variance + 4.0 * (1.0 + rho) / (t * (1.0 - rho))
    return LongRunVariance(
        variance=variance,
        short_run_variance=short,
        ar_coefficient=rho,
        bandwidth=s,
        degrees_of_freedom=2.0 / log_variance,
        windows=t,
    )


def normal_scores(t_ratios, degrees_of_freedom) -> np.ndarray:
    """Map t-ratios read against Student's t(nu) to the standard normal scale, tail for tail.

    ``z = Phi^-1(F_nu(t))``, computed from the log tail so that large ratios stay finite. A ratio
    whose studentizer is noisy (small ``nu``) is shrunk toward zero, so a maximum over many
    configurations is not won by the one whose variance happened to come out small.
    """
    t = np.asarray(t_ratios, dtype=np.float64)
    nu = np.broadcast_to(np.asarray(degrees_of_freedom, dtype=np.float64), t.shape)
    from scipy import stats

    upper = -special.ndtri_exp(stats.t.logsf(np.abs(t), nu))
    return np.sign(t) * upper


def bootstrap_variance_ratio(ar_coefficient: float, block_length: float, kind: str = "stationary") -> float:
    """Share of an AR(1) series' long-run variance that a block bootstrap of the mean reproduces.

    For the stationary bootstrap the variance of the resampled mean weights autocovariance ``j`` by
    ``(1 - 1/L)^j`` (Politis and Romano 1994); circular and moving blocks weight it by
    ``1 - j / L`` for ``j < L`` (Kunsch 1989). With ``rho_j = phi^j`` the ratio to the long-run
    variance ``(1 + phi) / (1 - phi)`` follows in closed form (stationary) or by summation.
    """
    phi = float(ar_coefficient)
    if phi <= 0:
        return 1.0
    truth = (1.0 + phi) / (1.0 - phi)
    if kind == "stationary":
        a = phi * (1.0 - 1.0 / block_length)
        return ((1.0 + a) / (1.0 - a)) / truth
    length = int(math.ceil(block_length))
    j = np.arange(1, length)
    return (1.0 + 2.0 * float(np.sum((1.0 - j / length) * phi**j))) / truth


def _automatic_lengths(x: np.ndarray, kind: str) -> np.ndarray:
    stationary, circular = politis_white_lengths(x)
    values = stationary if kind == "stationary" else circular
    return np.where(np.isfinite(values), values, 1.0)


def family_block_length(
    returns,
    *,
    selected: int,
    kind: str = "stationary",
    sample: int = 256,
    min_share: float = MIN_BOOTSTRAP_SHARE,
) -> BlockLengthChoice:
    """A block length adequate for every configuration of a sweep, checked against the long-run variance.

    Rule (sweepaudit's, documented in the README):

    1. Automatic lengths (Politis and White 2004, with the Patton, Politis and White 2009
       correction) of the selected configuration, of the cross-sectional average series and of up to
       ``sample`` configurations spread evenly over the sweep; take the largest of the selected
       configuration's, the average series' and the 75th percentile of the others.
    2. Check it against the long-run variance: with the family's median AR(1) coefficient phi
       (prewhitened estimator, :func:`long_run_variance`), the block bootstrap of the mean keeps the
       share :func:`bootstrap_variance_ratio` of the long-run variance. Below ``min_share`` the blocks
       are lengthened to the shortest length that reaches it.
    3. Clip to ``[1, T / 4]``; circular and moving blocks are rounded up to a whole number.
    """
    x = _matrix(returns)
    t, n = x.shape
    if not 0 <= selected < n:
        raise InputError(f"selected must be a column index between 0 and {n - 1}; got {selected!r}")
    columns = family_sample(n, selected, sample)
    average = x.mean(axis=1, keepdims=True) if n > 1 else None
    return block_length_of_sample(x[:, columns], columns, selected=selected, average=average, kind=kind,
                                  min_share=min_share)


def family_sample(configurations: int, selected: int, sample: int = 256) -> np.ndarray:
    """The columns :func:`family_block_length` examines: all, or ``sample`` spread evenly plus the
    selected one."""
    n = int(configurations)
    if n <= sample:
        return np.arange(n)
    return np.unique(np.append(np.linspace(0, n - 1, sample).round().astype(int), selected))


def block_length_of_sample(
    examined: np.ndarray,
    columns: np.ndarray,
    *,
    selected: int,
    average: np.ndarray | None,
    kind: str = "stationary",
    min_share: float = MIN_BOOTSTRAP_SHARE,
) -> BlockLengthChoice:
    """:func:`family_block_length` from the examined columns (:func:`family_sample`) and the
    cross-sectional average series (``T x 1``; None for a single configuration): what the audit's
    streamed path gathers block by block."""
    examined = _matrix(examined)
    t = examined.shape[0]
    lengths = _automatic_lengths(examined, kind)
    own = float(lengths[int(np.flatnonzero(columns == selected)[0])])
    quantile = float(np.quantile(lengths, 0.75))
    average_length = float(_automatic_lengths(_matrix(average), kind)[0]) if average is not None else own
    length = max(own, quantile, average_length, 1.0)
    phi = float(np.median(long_run_variance(examined).ar_coefficient))
    share = bootstrap_variance_ratio(phi, length, kind)
    lengthened = False
    cap = max(1.0, t / 4.0)
    if share < min_share and length < cap:
        candidate = length
        while candidate < cap and bootstrap_variance_ratio(phi, candidate, kind) < min_share:
            candidate = min(cap, candidate * 1.1 + 0.5)
        lengthened = candidate > length
        length = candidate
        share = bootstrap_variance_ratio(phi, length, kind)
    length = min(max(length, 1.0), cap)
    if kind != "stationary":
        length = float(math.ceil(length))
    rule = (
        "largest of the automatic lengths (Politis and White 2004) of the selected configuration, "
        "of the average series and the 75th percentile over the family"
        + (f", lengthened so the bootstrap keeps {min_share:.0%} of the long-run variance" if lengthened else "")
    )
    return BlockLengthChoice(
        length=float(length),
        selected=own,
        family_quantile=quantile,
        average_series=average_length,
        configurations_examined=int(columns.size),
        ar_coefficient=phi,
        predicted_share=float(share),
        lengthened=lengthened,
        rule=rule,
    )
