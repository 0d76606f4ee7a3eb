"""Data-snooping tests over a sweep: White's reality check, Hansen's SPA and Romano-Wolf StepM.

All three ask whether the best of N configurations beats the benchmark by more than the luck of
picking the best would explain. The null hypothesis is "no configuration has a positive expected
excess return": ``E[returns[:, k]] <= 0`` for every k. The input is the ``T x N`` matrix of
per-window excess returns (windows in rows, configurations in columns) and the audit's shared
resamples, consumed as a precomputed :class:`~sweepaudit.resample.ResampledMoments` so the
``weights @ returns`` products are computed once per audit and shared with the confidence intervals.
When no moments are given, :func:`~sweepaudit.resample.resampled_moments` computes them from the
:class:`~sweepaudit.resample.Resamples`.

Equation, section and algorithm numbers cited below are from memory of the papers.

Conventions
-----------
Scale (``scale=``)
    ``"none"``: statistics in units of ``sqrt(n) * mean`` (White 2000, eq. 2.3 and the bootstrap
    statistic in section 2.3), ``n = T`` windows. ``"bootstrap"``: divided by ``omega_k``, the
    bootstrap standard deviation below, in the statistic and in every null draw (Hansen 2005,
    eq. 6). ``"long-run"`` (the audit's default): each null draw is standardised by ``omega_k`` as
    for ``"bootstrap"``, so the bootstrap contributes only the dependence between configurations
    and the shape of their joint distribution, while the observed statistic of configuration k is
    its t-ratio ``sqrt(n) mean_k / omega_LR,k`` against a long-run standard deviation estimated
    from the data (:func:`~sweepaudit.methods.longrun.long_run_variance`: consistent under serial
    dependence, Andrews and Monahan 1992), read against Student's t with the estimate's equivalent
    degrees of freedom and put on the standard normal scale
    (:func:`~sweepaudit.methods.longrun.normal_scores`). Hansen (2005, section 2) asks for a
    consistent estimate of each configuration's long-run standard deviation; reading the ratio
    against t instead of the normal keeps the maximum over configurations from favouring the ones
    whose estimate came out small (the fault of a studentizer held fixed), and the scale of the
    statistic no longer depends on whether the block length captured all the dependence.
omega (the standard deviation of ``sqrt(n) * mean_k``)
    The bootstrap estimate from the same resampled means: ``omega_k**2`` is the variance over the
    B resamples of ``sqrt(n) * mean*_{k,b}`` (divisor B, centred at the average resampled mean).
    Hansen (2005, section 2.5) suggests a bootstrap estimate of omega; his display centres the
    resampled means at the sample mean (from memory). For the stationary and circular bootstraps
    the resampled mean is unbiased for the sample mean, so the two centres differ by O(1/B). The
    estimate costs one pass over the resampled means the test already has, and it is exactly the
    estimate of ``arch.bootstrap.SPA(..., nested=True)`` on the same indices, which lets the tests
    compare with that reference library to rounding.
p-values
    By default ``(#{b: null_b >= observed} + 1) / (B + 1)``: the observed statistic counts as one
    of the draws, so a randomised test is exact at any B and a p-value is never zero (Davison and
    Hinkley 1997, section 4.2, eq. 4.11; North, Curtis and Sham 2002). ``counting="strict-share"``
    gives ``#{b: null_b > observed} / B``, the convention of ``arch.bootstrap.SPA``, so tests can
    compare with it exactly; StepM critical values then use ``numpy.percentile`` (linear
    interpolation) as arch's ``SPA.critical_values`` does.

Differences from ``arch.bootstrap.SPA`` / ``StepM`` (the reference in the tests)
    * arch's statistic is ``max_k mean_k`` with neither studentization nor the floor at zero; its
      ``studentize`` option only changes the variance used in the consistent threshold. Our SPA is
      studentized by default, as in Hansen (2005, eq. 6); unscaled it is arch's
      statistic floored at zero, so all three p-values coincide with arch's whenever some
      configuration has a positive sample mean (and arch's ``nested=True`` variance is used).
      (``scale="none"`` is that case.)
    * Our reality check p-value equals arch's "upper" SPA p-value (``counting="strict-share"``).
    * arch's StepM recentres with the consistent rule; Romano and Wolf (2005) recentre every
      configuration at its sample mean. ``stepwise_superior`` follows the paper by default and
      offers ``recentring="consistent"`` (the stepwise SPA of Hsu, Hsu and Kuan 2010), which with
      ``scale="none"`` reproduces arch's StepM.
    * Studentized StepM divides by ``omega_k`` held fixed across resamples (as Hansen's SPA does)
      instead of re-estimating a standard error inside every resample (Romano and Wolf 2005,
      section 4.2), which under block resampling would need a bootstrap inside each resample.

Size under serial dependence (measured, see docs/validation.md and the slow size tests)
    With ``scale="bootstrap"`` the studentizer is the bootstrap standard deviation, held fixed in
    the bootstrap: the maximum favours configurations whose omega came out small and the null does
    not reproduce that selection, and when the block length is too short for the dependence omega
    is also biased low. Both made it over-reject (8 to 10% at the 5% level under AR(1) windows
    with 30 configurations and blocks chosen on one series, ``tests/methods/test_snooping.py``).
    ``scale="long-run"`` reads each t-ratio against Student's t with the long-run estimate's
    degrees of freedom, which accounts for the studentizer's noise, and its scale does not depend
    on the block length; it held its level in every null family of the validation study.

Memory
    Every reduction is a maximum over configurations per resample (``B x N -> B``), computed one
    column block at a time and combined with ``numpy.maximum``, which is exact: blocks never change
    a figure. The internal reducers consume an iterator of ``(columns, resampled mean block)``
    pairs, so a source that computes resampled means block by block (when ``B x N`` does not fit in
    memory) can replace slicing a stored matrix without touching the statistics. The reality check
    and SPA need one pass over the blocks; StepM one pass for omega and one per step.

References
----------
White, H. (2000). A reality check for data snooping. Econometrica 68(5), 1097-1126.
Hansen, P. R. (2005). A test for superior predictive ability. Journal of Business & Economic
    Statistics 23(4), 365-380.
Romano, J. P. and Wolf, M. (2005). Stepwise multiple testing as formalized data snooping.
    Econometrica 73(4), 1237-1282.
Hsu, P.-H., Hsu, Y.-C. and Kuan, C.-M. (2010). Testing the predictive ability of technical analysis
    using a new stepwise test without data snooping bias. Journal of Empirical Finance 17(3),
    471-484.
Davison, A. C. and Hinkley, D. V. (1997). Bootstrap Methods and their Application. Cambridge
    University Press.
North, B. V., Curtis, D. and Sham, P. C. (2002). A note on the calculation of empirical P values
    from Monte Carlo procedures. American Journal of Human Genetics 71(2), 439-441.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterator
from typing import get_args

import numpy as np
from scipy import stats

from .. import validate
from ..errors import DegenerateDataError, InputError
from ..resample import ResampledMoments, Resamples, moment_chunk, resampled_moments
from ..results import (
    Counting,
    LongRunVariance,
    MaxTTest,
    NullDraws,
    RealityCheck,
    SnoopingBlock,
    SnoopingScale,
    StepRecentring,
    StepwiseResult,
    SuperiorPredictiveAbility,
)
from .longrun import long_run_variance, normal_scores

__all__ = [
    "Counting",
    "RealityCheck",
    "StepRecentring",
    "StepwiseResult",
    "SuperiorPredictiveAbility",
    "STEP_CANDIDATES",
    "block_maximum",
    "bonferroni_max_t",
    "observed_statistics",
    "snooping_block",
    "snooping_from_blocks",
    "stored_further_pass",
    "reality_check",
    "stepwise_superior",
    "superior_predictive_ability",
]

COUNTINGS: tuple[str, ...] = get_args(Counting)
SCALES: tuple[str, ...] = get_args(SnoopingScale)
STEP_RECENTRINGS: tuple[str, ...] = get_args(StepRecentring)

# Columns per block in the maxima: B x 256 float64 temporaries (20 MB at B = 10,000).
COLUMN_BLOCK = 256

ColumnBlocks = Iterator[tuple[slice, np.ndarray]]


# --------------------------------------------------------------------------------------------------
# validation


def _obtain_moments(
    x: np.ndarray, moments: ResampledMoments | None, resamples: Resamples | None
) -> ResampledMoments:
    t, n = x.shape
    if moments is None:
        if resamples is None:
            raise InputError(
                "give either moments (ResampledMoments) or resamples (Resamples); got neither"
            )
        if not isinstance(resamples, Resamples):
            raise InputError(f"resamples must be a Resamples; got {type(resamples).__name__}")
        if resamples.windows != t:
            raise InputError(
                f"resamples must be drawn for the T = {t} windows of returns; "
                f"got resamples of {resamples.windows} windows"
            )
        return resampled_moments(x, resamples, chunk=moment_chunk(t))
    if not isinstance(moments, ResampledMoments):
        raise InputError(f"moments must be a ResampledMoments; got {type(moments).__name__}")
    mean = np.asarray(moments.mean)
    if mean.ndim != 2 or mean.shape[1] != n or mean.shape[0] < 1:
        raise InputError(
            f"moments.mean must be B x N with N = {n} configurations and B >= 1; "
            f"got shape {mean.shape}"
        )
    if moments.windows != t:
        raise InputError(
            f"moments must come from the T = {t} windows of returns; got moments of "
            f"{moments.windows} windows"
        )
    if resamples is not None and resamples.count != mean.shape[0]:
        raise InputError(
            f"moments and resamples disagree: moments hold {mean.shape[0]} resamples, "
            f"resamples has {resamples.count}"
        )
    return moments


def _prepare(returns, counting, column_block, moments, resamples):
    """The checked returns, column block and resampled moments every public test starts from."""
    x = validate.returns_matrix(returns)
    validate.choice(counting, "counting", COUNTINGS)
    block = validate.whole_number(column_block, "column_block", minimum=1)
    return x, block, _obtain_moments(x, moments, resamples)


# --------------------------------------------------------------------------------------------------
# shared reductions (exact over column blocks)


def _stored_blocks(resampled_mean: np.ndarray, column_block: int) -> Callable[[], ColumnBlocks]:
    """A re-iterable source of ``(columns, B x block)`` pieces of a stored resampled-mean matrix."""
    n = resampled_mean.shape[1]

    def source() -> ColumnBlocks:
        for start in range(0, n, column_block):
            cols = slice(start, min(start + column_block, n))
            yield cols, resampled_mean[:, cols]

    return source


def _pvalue(null: np.ndarray, observed: float, counting: Counting) -> float:
    if counting == "include-observed":
        # Davison and Hinkley (1997), eq. 4.11: the observed statistic is one of B + 1 draws.
        return (int(np.count_nonzero(null >= observed)) + 1) / (null.size + 1)
    return int(np.count_nonzero(null > observed)) / null.size


def _consistent_factor(t: int) -> float:
    # Hansen (2005), eq. 9: the threshold is -sqrt(omega^2 / n * 2 ln ln n). Below n = e the
    # factor would be negative; flooring it at 0 makes the consistent rule the lower one there.
    return 2.0 * max(math.log(math.log(t)), 0.0)


def _check_constant(x: np.ndarray) -> None:
    constant = np.flatnonzero(np.ptp(x, axis=0) == 0)
    if constant.size:
        raise DegenerateDataError(
            "a studentized test cannot scale configurations whose excess return is constant over "
            f"all windows; got constant columns {constant[:10].tolist()} (0-based); drop them or "
            "use scale='none'"
        )


def _long_run(x: np.ndarray, long_run: LongRunVariance | None) -> LongRunVariance:
    if long_run is None:
        return long_run_variance(x)
    if not isinstance(long_run, LongRunVariance):
        raise InputError(f"long_run must be a LongRunVariance; got {type(long_run).__name__}")
    if long_run.variance.shape != (x.shape[1],) or long_run.windows != x.shape[0]:
        raise InputError(
            f"long_run must come from the same {x.shape[0]} x {x.shape[1]} returns; got one of "
            f"{long_run.windows} windows and {long_run.variance.shape[0]} configurations"
        )
    return long_run


def observed_statistics(
    mean: np.ndarray, windows: int, scale: SnoopingScale, omega: np.ndarray, long_run: LongRunVariance | None
) -> np.ndarray:
    """Each configuration's observed statistic on the test's scale (see the module notes)."""
    root_n = math.sqrt(windows)
    if scale == "none":
        return root_n * mean
    if scale == "bootstrap":
        return root_n * mean / omega
    ratio = root_n * mean / np.sqrt(long_run.variance)
    return normal_scores(ratio, long_run.degrees_of_freedom)


def _check_omega(omega: np.ndarray, first_column: int = 0) -> None:
    flat = np.flatnonzero(~(omega > 0))
    if flat.size:
        raise DegenerateDataError(
            "a studentized test needs a positive bootstrap standard deviation for every "
            f"configuration; got zero for columns {(flat[:10] + first_column).tolist()} (0-based); "
            "use more resamples"
        )


def _variance_of_means(source: Callable[[], ColumnBlocks], n: int) -> np.ndarray:
    """Bootstrap variance of mean*_k (divisor B), one pass over the blocks; omega^2 = n times it.

    Fortran-ordered copies sum each column the same way whatever the block width.
    """
    variance = np.empty(n)
    for cols, block in source():
        variance[cols] = np.var(np.asfortranarray(block), axis=0)
    return variance


def _maximum_over_blocks(
    source: Callable[[], ColumnBlocks],
    centre: np.ndarray,
    scale: np.ndarray | None,
    keep: np.ndarray | None,
    resamples: int,
) -> np.ndarray:
    """``max_k (mean*_{k,b} - centre_k) * scale_k`` over the kept columns, per resample b."""
    out = np.full(resamples, -np.inf)
    for cols, block in source():
        c = centre[cols]
        s = None if scale is None else scale[cols]
        if keep is not None and not keep[cols].all():
            # only the kept columns are recentred: StepM's later steps touch fewer columns
            kept = np.flatnonzero(keep[cols])
            if not kept.size:
                continue
            block, c = block[:, kept], c[kept]
            s = None if s is None else s[kept]
        z = block - c
        if s is not None:
            z *= s
        np.maximum(out, z.max(axis=1), out=out)
    return out


def _critical_value(null: np.ndarray, level: float, counting: Counting) -> float:
    """The ``1 - level`` quantile of a bootstrap null, read off to match the p-value rule."""
    if counting == "strict-share":
        return float(np.percentile(null, 100.0 * (1.0 - level)))
    # "stat > c" must equal "(#{null >= stat} + 1) / (B + 1) <= level", i.e. at most
    # allowed - 1 null values at or above stat, with allowed the largest k: k / (B + 1) <= level.
    b = null.size
    allowed = int(math.floor(level * (b + 1)))
    while (allowed + 1) / (b + 1) <= level:
        allowed += 1
    while allowed > 0 and allowed / (b + 1) > level:
        allowed -= 1
    if allowed == 0:
        return math.inf
    return float(np.sort(null)[b - allowed])


# --------------------------------------------------------------------------------------------------
# public tests


def reality_check(
    returns: np.ndarray,
    *,
    moments: ResampledMoments | None = None,
    resamples: Resamples | None = None,
    counting: Counting = "include-observed",
    column_block: int = COLUMN_BLOCK,
) -> RealityCheck:
    """White's (2000) reality check: is the best configuration's mean excess return luck?

    Parameters
    ----------
    returns : ndarray, shape (T, N)
        Per-window excess returns, windows in rows, configurations in columns.
    moments : ResampledMoments, optional
        Resampled means of ``returns`` (shared with the rest of the audit).
    resamples : Resamples, optional
        Used to compute the moments when ``moments`` is not given.
    counting : {"include-observed", "strict-share"}
        p-value rule: ``(count(>=) + 1) / (B + 1)`` (default) or arch's ``count(>) / B``.
    column_block : int
        Columns per reduction block (memory knob only; never changes a figure).

    Returns
    -------
    RealityCheck

    Notes
    -----
    ``V = max_k sqrt(n) mean_k`` and ``V*_b = max_k sqrt(n) (mean*_{k,b} - mean_k)`` (White 2000,
    section 2.3); the p-value compares ``V`` with the ``V*_b``. Recentring every configuration at
    its own mean makes this the least favourable null, which is why it loses power when many
    configurations are poor (Hansen 2005, section 2).
    """
    x, block, m = _prepare(returns, counting, column_block, moments, resamples)
    t, _ = x.shape
    mean = x.mean(axis=0)
    root_n = math.sqrt(t)
    source = _stored_blocks(np.asarray(m.mean), block)
    # The max commutes with the positive factor sqrt(n): scale after reducing.
    null = root_n * _maximum_over_blocks(source, mean, None, None, m.mean.shape[0])
    statistic = root_n * float(mean.max())
    return RealityCheck(
        statistic=statistic,
        pvalue=_pvalue(null, statistic, counting),
        null_distribution=null,
        best=int(np.argmax(mean)),
        counting=counting,
    )


def superior_predictive_ability(
    returns: np.ndarray,
    *,
    moments: ResampledMoments | None = None,
    resamples: Resamples | None = None,
    scale: SnoopingScale = "long-run",
    long_run: LongRunVariance | None = None,
    counting: Counting = "include-observed",
    column_block: int = COLUMN_BLOCK,
) -> SuperiorPredictiveAbility:
    """Hansen's (2005) SPA test with the lower, consistent and upper p-values.

    Parameters
    ----------
    returns : ndarray, shape (T, N)
        Per-window excess returns, windows in rows, configurations in columns.
    moments : ResampledMoments, optional
        Resampled means of ``returns`` (shared with the rest of the audit).
    resamples : Resamples, optional
        Used to compute the moments when ``moments`` is not given.
    scale : {"long-run", "bootstrap", "none"}
        How configurations are put on one scale (module notes): the long-run t-ratio against
        standardised bootstrap draws (default), the bootstrap-studentized statistic of Hansen
        (2005, eq. 6), or none (arch's statistic floored at zero; ``omega`` is still estimated for
        the consistent threshold).
    long_run : LongRunVariance, optional
        Precomputed :func:`~sweepaudit.methods.longrun.long_run_variance` of ``returns`` for
        ``scale="long-run"`` (computed when absent).
    counting : {"include-observed", "strict-share"}
        p-value rule: ``(count(>=) + 1) / (B + 1)`` (default) or arch's ``count(>) / B``.
    column_block : int
        Columns per reduction block (memory knob only; never changes a figure).

    Returns
    -------
    SuperiorPredictiveAbility

    Raises
    ------
    DegenerateDataError
        When scaled and some configuration is constant (``omega_k = 0``).

    Notes
    -----
    ``T = max(max_k sqrt(n) mean_k / omega_k, 0)`` (eq. 6). Each null draw is
    ``T*_b = max(max_k sqrt(n) (mean*_{k,b} - g(mean_k)) / omega_k, 0)`` with the recentring
    ``g`` of eq. 9: lower ``max(x, 0)``, consistent ``x 1{x >= -sqrt(omega^2 / n 2 ln ln n)}``,
    upper ``x``. Since ``g_lower >= g_consistent >= g_upper`` elementwise, every null draw is
    ordered the same way and ``pvalue_lower <= pvalue <= pvalue_upper`` holds exactly.
    For ``T < 3`` (``ln ln n < 0``) the threshold is taken as 0.
    """
    validate.choice(scale, "scale", SCALES)
    x, block, m = _prepare(returns, counting, column_block, moments, resamples)
    t, n = x.shape
    mean = x.mean(axis=0)
    scaled = scale != "none"
    if scaled:
        _check_constant(x)
    estimate = _long_run(x, long_run) if scale == "long-run" else None
    blocks = [snooping_block(piece, mean[cols], t, start=cols.start, top=0, studentize=scaled)
              for cols, piece in _stored_blocks(np.asarray(m.mean), block)()]
    omega = np.sqrt(t * np.concatenate([b.variance_of_mean for b in blocks]))
    relevant = np.concatenate([b.relevant for b in blocks])
    draws = _merged([b.studentized if scaled else b.unscaled for b in blocks], 0)
    statistics = observed_statistics(mean, t, scale, omega, estimate)
    return _spa_result(statistics, draws, omega, relevant, scale, counting)


def stepwise_superior(
    returns: np.ndarray,
    *,
    level: float = 0.05,
    moments: ResampledMoments | None = None,
    resamples: Resamples | None = None,
    scale: SnoopingScale = "long-run",
    long_run: LongRunVariance | None = None,
    recentring: StepRecentring = "upper",
    counting: Counting = "include-observed",
    column_block: int = COLUMN_BLOCK,
) -> StepwiseResult:
    """Romano and Wolf's (2005) StepM: every configuration that beats the benchmark, FWER <= level.

    Parameters
    ----------
    returns : ndarray, shape (T, N)
        Per-window excess returns, windows in rows, configurations in columns.
    level : float
        Familywise error rate alpha, strictly between 0 and 1.
    moments : ResampledMoments, optional
        Resampled means of ``returns`` (shared with the rest of the audit).
    resamples : Resamples, optional
        Used to compute the moments when ``moments`` is not given.
    scale : {"long-run", "bootstrap", "none"}
        As for :func:`superior_predictive_ability` (default ``"long-run"``).
    long_run : LongRunVariance, optional
        Precomputed long-run variance for ``scale="long-run"``.
    recentring : {"upper", "consistent"}
        ``"upper"`` recentres every configuration at its sample mean (Romano and Wolf 2005,
        Algorithm 3.1); ``"consistent"`` uses Hansen's (2005) threshold, as arch's StepM does
        (Hsu, Hsu and Kuan 2010).
    counting : {"include-observed", "strict-share"}
        ``"include-observed"``: reject exactly when ``(count(null >= stat) + 1) / (B + 1) <=
        level``; ``"strict-share"``: arch's ``stat > numpy.percentile(null, 100 (1 - level))``.
    column_block : int
        Columns per reduction block (memory knob only; never changes a figure).

    Returns
    -------
    StepwiseResult

    Notes
    -----
    Romano and Wolf (2005), Algorithm 3.1: with ``stat_k = sqrt(n) mean_k`` (or divided by
    ``omega_k``), step j computes the ``1 - level`` quantile ``c_j`` of
    ``max_{k not yet rejected} sqrt(n) (mean*_{k,b} - g(mean_k))`` (same scaling) and rejects
    every remaining k with ``stat_k > c_j``; it stops when a step rejects nothing new or nothing
    remains.
    """
    level = validate.probability(level, "level")
    validate.choice(recentring, "recentring", STEP_RECENTRINGS)
    validate.choice(scale, "scale", SCALES)
    x, block, m = _prepare(returns, counting, column_block, moments, resamples)
    t, n = x.shape
    mean = x.mean(axis=0)
    root_n = math.sqrt(t)
    source = _stored_blocks(np.asarray(m.mean), block)
    scaled = scale != "none"
    if scaled:
        _check_constant(x)
    estimate = _long_run(x, long_run) if scale == "long-run" else None
    variance_of_mean = _variance_of_means(source, n)
    omega = np.sqrt(t * variance_of_mean)
    if scaled:
        _check_omega(omega)
    draw_scale = root_n / omega if scaled else np.full(n, root_n)
    # "consistent": the same threshold expression as superior_predictive_ability (Hansen 2005)
    threshold = -np.sqrt(variance_of_mean * _consistent_factor(t))
    centre = mean if recentring == "upper" else np.where(mean >= threshold, mean, 0.0)
    statistics = observed_statistics(mean, t, scale, omega, estimate)
    rejected_at, critical_values, null_maxima = _step_down(
        source, centre, draw_scale, statistics, level, counting, m.mean.shape[0]
    )
    return StepwiseResult(
        significant=tuple(int(k) for k in np.flatnonzero(rejected_at)), level=level,
        scale=scale, steps=len(critical_values), critical_values=tuple(critical_values),
        statistics=statistics, omega=omega, rejected_at_step=rejected_at, null_maxima=tuple(null_maxima),
        recentring=recentring, counting=counting,
    )


def _step_down(source, centre, scale, statistics, level, counting, count):
    """Romano and Wolf (2005), Algorithm 3.1: reject, recompute the critical value without the
    rejected configurations, until a step rejects nothing new or nothing remains."""
    rejected_at = np.zeros(statistics.size, dtype=np.int64)
    critical_values: list[float] = []
    null_maxima: list[np.ndarray] = []
    while True:
        remaining = rejected_at == 0
        if not remaining.any():
            break
        null = _maximum_over_blocks(source, centre, scale, remaining, count)
        critical = _critical_value(null, level, counting)
        critical_values.append(critical)
        null_maxima.append(null)
        new = remaining & (statistics > critical)
        if not new.any():
            break
        rejected_at[new] = len(critical_values)
    return rejected_at, critical_values, null_maxima


def bonferroni_max_t(returns: np.ndarray, *, level: float = 0.05) -> MaxTTest:
    """The yardstick every selection-aware test is measured against: a Bonferroni max-t test.

    Rejects "no configuration beats the benchmark" when the best iid t-ratio
    ``sqrt(T) mean_k / sd_k`` exceeds ``Phi^-1(1 - level / N)`` (one-sided). By Bonferroni's
    inequality it controls the familywise error rate at ``level`` for any correlation between the
    configurations when the windows are independent and the t-ratios near normal; it ignores serial
    dependence, so under autocorrelated windows it over-rejects. A test that exploits the
    correlation between configurations should be at least as powerful at the same level.

    Parameters
    ----------
    returns : ndarray, shape (T, N)
    level : float

    Returns
    -------
    MaxTTest
    """
    x = validate.returns_matrix(returns)
    alpha = validate.probability(level, "level")
    t, n = x.shape
    _check_constant(x)
    ratios = math.sqrt(t) * x.mean(axis=0) / x.std(axis=0, ddof=1)
    best = int(np.argmax(ratios))
    critical = float(stats.norm.isf(alpha / n))
    return MaxTTest(float(ratios[best]), best, critical, alpha, bool(ratios[best] > critical))


# --------------------------------------------------------------------------------------------------
# the audit's fused pass: every test from one pass over column blocks


#: Largest consistent draws kept per resample and block for StepM's later steps. A further pass over
#: the blocks is needed only for resamples whose kept draws all belong to rejected configurations.
STEP_CANDIDATES = 8

#: ``further(keep, centre, scale) -> (B,)``: the exact maxima of the consistent draws over the
#: columns still in play (``keep``), from one more pass over the blocks (StepM's later steps).
FurtherPass = Callable[[np.ndarray, np.ndarray, np.ndarray], np.ndarray]


def snooping_block(
    resampled_mean: np.ndarray, mean: np.ndarray, windows: int, *, start: int = 0, top: int = STEP_CANDIDATES,
    studentize: bool = True,
) -> SnoopingBlock:
    """One column block's share of the reality check, the SPA and StepM under every scale.

    Parameters
    ----------
    resampled_mean : ndarray, shape (B, n)
        The block's resampled means (the audit's shared resamples).
    mean : ndarray, shape (n,)
        The block's sample means.
    windows : int
        T.
    start : int
        The block's first column in the sweep (for messages and the kept columns).
    top : int
        Consistent draws kept per resample for StepM's later steps (0: none).
    studentize : bool
        Also the draws divided by the bootstrap standard deviation (which must then be positive for
        every column); without, ``studentized`` is None.

    Returns
    -------
    SnoopingBlock

    Notes
    -----
    Hansen (2005), eqs. 6 and 9; Romano and Wolf (2005), Algorithm 3.1. The block's columns are
    ordered [mean >= 0 | threshold <= mean < 0 | mean < threshold]: the recentred draws are then
    ``A = (mean* - mean) * scale`` or ``B = mean* * scale`` on contiguous column ranges, and the three
    maxima need two passes instead of three. The Fortran-ordered copy sums each column's variance the
    same way whatever the block width, so column blocks never change a figure (not even the last
    bit), and the per-resample maxima combine over blocks with ``numpy.maximum`` exactly
    (:func:`snooping_from_blocks`). :func:`superior_predictive_ability` reads the same draws.
    """
    t = int(windows)
    mu = np.asarray(mean, dtype=np.float64)
    order = np.argsort(mu < 0, kind="stable")
    sorted_piece = np.asfortranarray(resampled_mean[:, order])
    variance_of_mean = np.var(sorted_piece, axis=0)
    omega = np.sqrt(t * variance_of_mean)
    mu_sorted = mu[order]
    keep = mu_sorted >= -np.sqrt(variance_of_mean * _consistent_factor(t))
    first_negative = mu.size - int(np.count_nonzero(mu_sorted < 0))
    tail = np.argsort(~keep[first_negative:], kind="stable")
    order[first_negative:] = order[first_negative:][tail]
    sorted_piece[:, first_negative:] = sorted_piece[:, first_negative:][:, tail]
    for values in (variance_of_mean, omega, mu_sorted, keep):
        values[first_negative:] = values[first_negative:][tail]
    cut = first_negative + int(np.count_nonzero(keep[first_negative:]))
    back = np.argsort(order)
    root_n = math.sqrt(t)
    draws = {"studentized": None}
    scales = [("unscaled", np.full(mu.size, root_n))]
    if studentize:
        _check_omega(omega[back], start)
        scales.insert(0, ("studentized", root_n / omega))
    for name, scale in scales:
        draws[name] = _null_draws(sorted_piece, mu_sorted, scale, first_negative, cut, order + start, top)
    return SnoopingBlock(start, variance_of_mean[back], keep[back], draws["studentized"], draws["unscaled"])


def _null_draws(sorted_piece, mu_sorted, scale, start: int, cut: int, columns: np.ndarray, top: int) -> NullDraws:
    """Maxima of the three recentrings and the largest consistent draws of one ordered block."""
    count, width = sorted_piece.shape
    none = np.full(count, -np.inf)
    draws = sorted_piece - mu_sorted  # A = (mean* - mean) * scale: the upper recentring
    draws *= scale
    upper = draws.max(axis=1)
    positive_part = draws[:, :start].max(axis=1) if start else none
    near_part = draws[:, start:cut].max(axis=1) if cut > start else none
    negative = sorted_piece[:, start:] * scale[start:]  # B = mean* * scale: recentred at zero
    near_zero = negative[:, : cut - start].max(axis=1) if cut > start else none
    far_zero = negative[:, cut - start:].max(axis=1) if width > cut else none
    lower = np.maximum(positive_part, np.maximum(near_zero, far_zero))
    consistent = np.maximum(np.maximum(positive_part, near_part), far_zero)
    draws[:, cut:] = negative[:, cut - start:]  # now the consistent draws of every column
    del negative
    if top == 0:
        values, kept = np.empty((count, 0)), np.empty((count, 0), dtype=np.int64)
    elif width > top:
        position = np.argpartition(draws, width - top, axis=1)[:, width - top:]
        values = np.take_along_axis(draws, position, axis=1)
        kept = columns[position]
    else:
        values = np.full((count, top), -np.inf)
        kept = np.full((count, top), -1, dtype=np.int64)
        values[:, :width] = draws
        kept[:, :width] = columns
    return NullDraws(lower, consistent, upper, values, kept)


def _merged(parts: list[NullDraws], top: int) -> NullDraws:
    """The blocks' draws combined: maxima by ``numpy.maximum``, the K largest draws over all blocks."""
    first = parts[0]
    lower, consistent, upper = (first.lower.copy(), first.consistent.copy(), first.upper.copy())
    values, columns = first.top_values, first.top_columns
    for part in parts[1:]:
        np.maximum(lower, part.lower, out=lower)
        np.maximum(consistent, part.consistent, out=consistent)
        np.maximum(upper, part.upper, out=upper)
        values = np.concatenate([values, part.top_values], axis=1)
        columns = np.concatenate([columns, part.top_columns], axis=1)
        if values.shape[1] > 4 * top:
            values, columns = _largest(values, columns, top)
    values, columns = _largest(values, columns, top)
    return NullDraws(lower, consistent, upper, values, columns)


def _largest(values: np.ndarray, columns: np.ndarray, top: int) -> tuple[np.ndarray, np.ndarray]:
    """The ``top`` largest values of each row (any order) with their columns."""
    if values.shape[1] <= top:
        return values, columns
    position = np.argpartition(values, values.shape[1] - top, axis=1)[:, values.shape[1] - top:]
    return np.take_along_axis(values, position, axis=1), np.take_along_axis(columns, position, axis=1)


def snooping_from_blocks(
    mean: np.ndarray,
    windows: int,
    blocks: list[SnoopingBlock],
    *,
    long_run: LongRunVariance,
    level: float,
    further: FurtherPass,
    counting: Counting = "include-observed",
    top: int = STEP_CANDIDATES,
) -> tuple[RealityCheck, dict[str, SuperiorPredictiveAbility], dict[str, StepwiseResult]]:
    """The reality check, SPA under every scale and StepM (consistent recentring) under every scale.

    The same figures as :func:`reality_check`, :func:`superior_predictive_ability` and
    :func:`stepwise_superior` (``recentring="consistent"``) on the same resampled means, from the
    blocks of :func:`snooping_block` (one pass). StepM's later steps read the kept largest draws;
    ``further`` is called only for resamples whose kept draws are all rejected.

    Parameters
    ----------
    mean : ndarray, shape (N,)
        Sample means of every configuration.
    windows : int
        T.
    blocks : list of SnoopingBlock
        In column order, covering every configuration once.
    long_run : LongRunVariance
        The audit's long-run variance (the "long-run" scale's statistics).
    level : float
        StepM's familywise error rate.
    further : callable
        The exact maxima over the kept columns, from a further pass (see :data:`FurtherPass`).
    counting : {"include-observed", "strict-share"}
    top : int
        Consistent draws kept per resample (the value the blocks were built with).
    """
    t = int(windows)
    root_n = math.sqrt(t)
    variance_of_mean = np.concatenate([b.variance_of_mean for b in blocks])
    relevant = np.concatenate([b.relevant for b in blocks])
    omega = np.sqrt(t * variance_of_mean)
    nulls = {name: _merged([getattr(b, name) for b in blocks], top) for name in ("studentized", "unscaled")}
    unscaled = nulls["unscaled"]
    check = RealityCheck(
        statistic=root_n * float(mean.max()), pvalue=_pvalue(unscaled.upper, root_n * float(mean.max()), counting),
        null_distribution=unscaled.upper, best=int(np.argmax(mean)), counting=counting,
    )
    threshold = -np.sqrt(variance_of_mean * _consistent_factor(t))
    centre = np.where(mean >= threshold, mean, 0.0)
    spa, stepm = {}, {}
    for scale in SCALES:
        draws = nulls["unscaled" if scale == "none" else "studentized"]
        statistics = observed_statistics(mean, t, scale, omega, long_run if scale == "long-run" else None)
        spa[scale] = _spa_result(statistics, draws, omega, relevant, scale, counting)
        draw_scale = np.full(mean.size, root_n) if scale == "none" else root_n / omega
        rejected_at, critical_values, null_maxima = _step_down_kept(
            draws, statistics, level, counting, lambda keep, s=draw_scale: further(keep, centre, s)
        )
        stepm[scale] = StepwiseResult(
            significant=tuple(int(k) for k in np.flatnonzero(rejected_at)), level=level, scale=scale,
            steps=len(critical_values), critical_values=tuple(critical_values), statistics=statistics, omega=omega,
            rejected_at_step=rejected_at, null_maxima=tuple(null_maxima), recentring="consistent", counting=counting,
        )
    return check, spa, stepm


def _spa_result(statistics, draws: NullDraws, omega, relevant, scale, counting) -> SuperiorPredictiveAbility:
    floored = {name: np.maximum(getattr(draws, name), 0.0) for name in ("lower", "consistent", "upper")}
    statistic = max(float(statistics.max()), 0.0)
    return SuperiorPredictiveAbility(
        statistic=statistic,
        pvalue=_pvalue(floored["consistent"], statistic, counting),
        pvalue_lower=_pvalue(floored["lower"], statistic, counting),
        pvalue_upper=_pvalue(floored["upper"], statistic, counting),
        omega=omega, relevant=relevant, scale=scale,
        null_lower=floored["lower"], null_consistent=floored["consistent"], null_upper=floored["upper"],
        counting=counting, statistics=statistics,
    )


def _step_down_kept(draws: NullDraws, statistics, level, counting, further):
    """:func:`_step_down` on the kept largest draws: step j's null is, per resample, the largest kept
    draw of a configuration not yet rejected; resamples whose kept draws are all rejected take the
    exact maximum from ``further``."""
    n = statistics.size
    rejected_at = np.zeros(n, dtype=np.int64)
    critical_values: list[float] = []
    null_maxima: list[np.ndarray] = []
    exact = None
    while True:
        remaining = rejected_at == 0
        if not remaining.any():
            break
        if not critical_values:
            null = draws.consistent
        else:
            in_play = np.append(remaining, True)[draws.top_columns]  # column -1 pads: -inf, harmless
            null = np.where(in_play, draws.top_values, -np.inf).max(axis=1)
            lost = ~in_play.any(axis=1)
            if lost.any():
                exact = further(remaining)
                null[lost] = exact[lost]
        critical = _critical_value(null, level, counting)
        critical_values.append(critical)
        null_maxima.append(null)
        new = remaining & (statistics > critical)
        if not new.any():
            break
        rejected_at[new] = len(critical_values)
    return rejected_at, critical_values, null_maxima


def stored_further_pass(resampled_mean: np.ndarray, column_block: int = COLUMN_BLOCK) -> FurtherPass:
    """:data:`FurtherPass` over a stored ``B x N`` matrix of resampled means."""
    source = _stored_blocks(np.asarray(resampled_mean), column_block)

    def further(keep: np.ndarray, centre: np.ndarray, scale: np.ndarray) -> np.ndarray:
        return _maximum_over_blocks(source, centre, scale, keep, resampled_mean.shape[0])

    return further


def block_maximum(resampled_mean: np.ndarray, centre: np.ndarray, scale: np.ndarray, keep: np.ndarray) -> np.ndarray:
    """``max_k (mean*_{k,b} - centre_k) * scale_k`` over one block's kept columns, per resample."""
    return _maximum_over_blocks(_stored_blocks(resampled_mean, resampled_mean.shape[1] or 1),
                                centre, scale, keep, resampled_mean.shape[0])
