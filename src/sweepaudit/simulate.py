"""Synthetic sweeps with known truth: null families (no configuration has an edge) and alternatives
(an edge of a known annualized Sharpe ratio planted in chosen configurations).

Each simulator is ``simulate(rng, n_configurations, n_windows, **options) -> T x N`` fractional excess
returns drawn from the ``numpy.random.Generator`` it is given (never the global random state). The
calibration runner (:mod:`sweepaudit.calibration`) audits many of them.

References
----------
Bollerslev, T. (1986). Generalized autoregressive conditional heteroskedasticity. Journal of
    Econometrics 31(3), 307-327.
Hamilton, J. D. (1994). Time Series Analysis. Princeton University Press, section 3.4.
Lo, A. W. (2002). The statistics of Sharpe ratios. Financial Analysts Journal 58(4), 36-52.
Rasmussen, C. E. and Williams, C. K. I. (2006). Gaussian Processes for Machine Learning. MIT Press,
    section 4.2.
Hamilton, J. D. (1989). A new approach to the economic analysis of nonstationary time series and the
    business cycle. Econometrica 57(2), 357-384 (Markov regime switching).
Krasker, W. S. (1980). The 'peso problem' in testing the efficiency of forward exchange markets.
    Journal of Monetary Economics 6(2), 269-276.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal

import numpy as np

from . import validate
from .errors import InputError

__all__ = [
    "DEFAULT_VOLATILITY",
    "DEFAULT_PERIODS_PER_YEAR",
    "GRID_EDGE_OPTIONS",
    "Family",
    "FAMILIES",
    "neighbour_correlation",
    "simulate_normal",
    "simulate_student_t",
    "simulate_autoregressive",
    "simulate_volatility_clustering",
    "simulate_neighbour_grid",
    "simulate_one_edge",
    "simulate_edge_plateau",
    "simulate_several_edges",
    "simulate_short_record",
    "plant_edge",
    "per_window_edge",
    "plateau_columns",
    "spread_columns",
    "square_grid",
    "simulate_dependent_grid",
    "simulate_leveraged",
    "simulate_regime",
    "simulate_crashes",
    "simulate_grid_plateau",
    "simulate_hill",
    "simulate_quiet_edge",
    "grid_block_columns",
    "hill_columns",
    "simulate_late_edge",
    "simulate_dead_edge",
]

# Typical scale of per-window excess returns over a benchmark: 1% a week is about 7% a year of
# tracking error (common practice for an active strategy; synthetic, not fitted to any market).
DEFAULT_VOLATILITY = 0.01
DEFAULT_PERIODS_PER_YEAR = 52.0



def _shape(n_configurations: int, n_windows: int) -> tuple[int, int]:
    return (
        validate.whole_number(n_configurations, "n_configurations", minimum=1),
        validate.whole_number(n_windows, "n_windows", minimum=2),
    )


def _prologue(rng, n_configurations: int, n_windows: int, volatility: float):
    """The checked generator, shape and volatility every simulator starts from."""
    rng = validate.generator(rng)
    n, t = _shape(n_configurations, n_windows)
    return rng, n, t, validate.positive_number(volatility, "volatility")


# --------------------------------------------------------------------------------------------
# Simulators: each (rng, n_configurations, n_windows, ...) -> T x N fractional excess returns


def simulate_normal(
    rng: np.random.Generator, n_configurations: int, n_windows: int, *, volatility: float = DEFAULT_VOLATILITY
) -> np.ndarray:
    """Null: independent normal excess returns, mean zero, standard deviation ``volatility``."""
    rng, n, t, vol = _prologue(rng, n_configurations, n_windows, volatility)
    return vol * rng.standard_normal((t, n))


def simulate_student_t(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    degrees_of_freedom: float = 4.0,
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Null: independent Student-t excess returns scaled to standard deviation ``volatility``.

    A t variable with nu > 2 degrees of freedom has variance nu / (nu - 2), so it is multiplied by
    sqrt((nu - 2) / nu); its raw kurtosis is 3 + 6 / (nu - 4) for nu > 4 and infinite for nu <= 4.
    Degrees of freedom 3 to 5 give the fat tails of weekly and daily returns (common practice).
    """
    rng, n, t, vol = _prologue(rng, n_configurations, n_windows, volatility)
    nu = validate.positive_number(degrees_of_freedom, "degrees_of_freedom")
    if nu <= 2:
        raise InputError(f"degrees_of_freedom must exceed 2 for a finite variance; got {degrees_of_freedom}")
    return vol * math.sqrt((nu - 2) / nu) * rng.standard_t(nu, size=(t, n))


def simulate_autoregressive(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    phi: float = 0.3,
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Null: independent AR(1) series x_t = phi * x_(t-1) + e_t, stationary from the first window.

    The innovations have standard deviation ``volatility * sqrt(1 - phi^2)`` so that the series'
    stationary standard deviation is ``volatility`` and its lag-k autocorrelation is phi^k
    (Hamilton 1994, Time Series Analysis, section 3.4). phi of 0.2 to 0.5 mimics overlapping or
    slowly adjusting positions.
    """
    rng, n, t, vol = _prologue(rng, n_configurations, n_windows, volatility)
    if not (isinstance(phi, (int, float)) and -1 < phi < 1):
        raise InputError(f"phi must lie strictly between -1 and 1 for a stationary AR(1); got {phi!r}")
    shocks = rng.standard_normal((t, n))
    x = np.empty((t, n))
    x[0] = vol * shocks[0]  # the stationary distribution, so there is no burn-in
    scale = vol * math.sqrt(1 - phi * phi)
    for s in range(1, t):
        x[s] = phi * x[s - 1] + scale * shocks[s]
    return x


def simulate_volatility_clustering(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    alpha: float = 0.10,
    beta: float = 0.85,
    volatility: float = DEFAULT_VOLATILITY,
    burn_in: int = 200,
) -> np.ndarray:
    """Null: independent GARCH(1,1) series with normal innovations (Bollerslev 1986).

    sigma2_t = omega + alpha * x_(t-1)^2 + beta * sigma2_(t-1), with omega = volatility^2 *
    (1 - alpha - beta) so the unconditional standard deviation is ``volatility``. alpha = 0.10,
    beta = 0.85 are typical of weekly return fits (common practice). The first ``burn_in`` steps are
    discarded so the series starts near its stationary distribution.
    """
    rng, n, t, vol = _prologue(rng, n_configurations, n_windows, volatility)
    if not (alpha >= 0 and beta >= 0 and alpha + beta < 1):
        raise InputError(
            f"alpha and beta must be non-negative with alpha + beta < 1; got alpha={alpha!r}, beta={beta!r}"
        )
    burn = validate.whole_number(burn_in, "burn_in", minimum=0)
    omega = vol * vol * (1 - alpha - beta)
    shocks = rng.standard_normal((t + burn, n))
    sigma2 = np.full(n, vol * vol)
    out = np.empty((t + burn, n))
    for s in range(t + burn):
        out[s] = np.sqrt(sigma2) * shocks[s]
        sigma2 = omega + alpha * out[s] ** 2 + beta * sigma2
    return out[burn:]


def _grid_positions(n: int, grid: tuple[int, int] | None) -> np.ndarray:
    if grid is None:
        return np.arange(n, dtype=np.float64)[:, None]
    if len(grid) != 2 or int(grid[0]) * int(grid[1]) != n or min(grid) < 1:
        raise InputError(f"grid must be (rows, columns) with rows * columns = n_configurations = {n}; got {grid!r}")
    rows, cols = np.indices((int(grid[0]), int(grid[1])))
    return np.column_stack([rows.ravel(), cols.ravel()]).astype(np.float64)


def neighbour_correlation(
    n_configurations: int,
    *,
    grid: tuple[int, int] | None = None,
    length_scale: float = 3.0,
    common_share: float = 0.3,
) -> np.ndarray:
    """Correlation of configurations laid out on a parameter grid.

    ``C_ij = common_share + (1 - common_share) * exp(-d_ij / length_scale)`` with d_ij the
    Euclidean distance between grid positions (a 1-D line when ``grid`` is None, else a rows x
    columns grid in row-major order). The exponential kernel is positive definite in any dimension
    (it is the Matern covariance with smoothness 1/2; Rasmussen and Williams 2006, Gaussian
    Processes for Machine Learning, section 4.2), and the constant common factor adds a positive
    semidefinite rank-one term, so C is a valid correlation matrix.
    """
    n = validate.whole_number(n_configurations, "n_configurations", minimum=1)
    scale = validate.positive_number(length_scale, "length_scale")
    if not (isinstance(common_share, (int, float)) and 0 <= common_share < 1):
        raise InputError(f"common_share must lie in [0, 1); got {common_share!r}")
    pos = _grid_positions(n, grid)
    d = np.sqrt(((pos[:, None, :] - pos[None, :, :]) ** 2).sum(axis=-1))
    return common_share + (1 - common_share) * np.exp(-d / scale)


@lru_cache(maxsize=16)
def _correlation_root(n: int, grid: tuple[int, int] | None, length_scale: float, common_share: float) -> np.ndarray:
    # Cached: a study draws hundreds of sweeps from the same grid; the factor is read-only.
    root = np.linalg.cholesky(
        neighbour_correlation(n, grid=grid, length_scale=length_scale, common_share=common_share)
    )
    root.setflags(write=False)
    return root


def simulate_neighbour_grid(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    grid: tuple[int, int] | None = None,
    length_scale: float = 3.0,
    common_share: float = 0.3,
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Null: normal excess returns correlated the way neighbouring parameter values are.

    Each window is an independent draw from N(0, volatility^2 * C) with C from
    :func:`neighbour_correlation`: a common factor shared by every configuration plus a part whose
    correlation decays with distance on the parameter grid.
    """
    rng, n, t, vol = _prologue(rng, n_configurations, n_windows, volatility)
    neighbour_correlation(1, length_scale=length_scale, common_share=common_share)  # validates both
    key = None if grid is None else (int(grid[0]), int(grid[1]))
    root = _correlation_root(n, key, float(length_scale), float(common_share))
    return vol * (rng.standard_normal((t, n)) @ root.T)


def per_window_edge(annual_sharpe: float, periods_per_year: float, volatility: float) -> float:
    """Per-window mean of an edge: annualized Sharpe / sqrt(periods per year) * per-window sd.

    The square-root-of-time rule for iid windows (Lo 2002, eq. 9 for the iid case).
    """
    if not (isinstance(annual_sharpe, (int, float)) and math.isfinite(annual_sharpe)):
        raise InputError(f"annual_sharpe must be a finite number; got {annual_sharpe!r}")
    ppy = validate.positive_number(periods_per_year, "periods_per_year")
    vol = validate.positive_number(volatility, "volatility")
    return float(annual_sharpe) / math.sqrt(ppy) * vol


def plant_edge(
    returns: np.ndarray,
    columns: Sequence[int],
    *,
    annual_sharpe: float,
    periods_per_year: float,
    volatility: float | Sequence[float] | None = None,
) -> np.ndarray:
    """A copy of ``returns`` with an edge of ``annual_sharpe`` added to the given columns.

    The per-window mean added to column k is ``annual_sharpe / sqrt(periods_per_year) * sd_k``,
    with sd_k the given volatility (the simulator's true one) or, when None, the column's sample
    standard deviation (ddof = 1).
    """
    x = np.array(returns, dtype=np.float64)
    if x.ndim != 2:
        raise InputError(f"returns must be a T x N matrix; got {x.ndim} dimensions")
    cols = [int(c) for c in columns]
    for c in cols:
        if not 0 <= c < x.shape[1]:
            raise InputError(f"columns must lie in [0, {x.shape[1]}); got {c}")
    if volatility is None:
        sd = x[:, cols].std(axis=0, ddof=1)
    else:
        sd = np.broadcast_to(np.asarray(volatility, dtype=np.float64), (len(cols),))
    for c, s in zip(cols, sd):
        if s > 0:
            x[:, c] += per_window_edge(annual_sharpe, periods_per_year, float(s))
    return x


def _centre(n: int) -> int:
    return (n - 1) // 2


#: The options every alternative shares (the neighbour grid and the edge), with their defaults.
GRID_EDGE_OPTIONS = ("annual_sharpe", "periods_per_year", "volatility", "length_scale", "common_share")


def _edged_grid(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    columns: Callable[[int], list[int]],
    *,
    annual_sharpe: float = 1.0,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    volatility: float = DEFAULT_VOLATILITY,
    length_scale: float = 3.0,
    common_share: float = 0.3,
) -> np.ndarray:
    """The body every alternative shares: the neighbour-grid null, an edge planted in ``columns(N)``.

    ``annual_sharpe`` is the planted edge (annualized Sharpe ratio, with ``periods_per_year``);
    ``volatility``, ``length_scale`` and ``common_share`` shape the grid as in
    :func:`simulate_neighbour_grid`.
    """
    x = simulate_neighbour_grid(
        rng, n_configurations, n_windows, length_scale=length_scale, common_share=common_share, volatility=volatility
    )
    return plant_edge(
        x, columns(n_configurations), annual_sharpe=annual_sharpe, periods_per_year=periods_per_year,
        volatility=volatility,
    )


def simulate_one_edge(rng: np.random.Generator, n_configurations: int, n_windows: int, **grid: float) -> np.ndarray:
    """Alternative: the neighbour-grid null with one configuration (the grid centre) given an edge.

    Keyword options (:data:`GRID_EDGE_OPTIONS`): ``annual_sharpe`` (1.0), ``periods_per_year`` (52),
    ``volatility`` (0.01), ``length_scale`` (3.0), ``common_share`` (0.3).
    """
    return _edged_grid(rng, n_configurations, n_windows, lambda n: [_centre(n)], **grid)


def plateau_columns(n_configurations: int, width: int) -> list[int]:
    """The ``width`` neighbouring configurations centred on the middle of a 1-D grid."""
    width = min(validate.whole_number(width, "width", minimum=1), n_configurations)
    start = max(0, _centre(n_configurations) - (width - 1) // 2)
    start = min(start, n_configurations - width)
    return list(range(start, start + width))


def spread_columns(n_configurations: int, count: int) -> list[int]:
    """``count`` configurations evenly spread over a 1-D grid (far apart, so nearly independent)."""
    count = min(validate.whole_number(count, "count", minimum=1), n_configurations)
    return [int(round((i + 0.5) * n_configurations / count - 0.5)) for i in range(count)]


def simulate_edge_plateau(
    rng: np.random.Generator, n_configurations: int, n_windows: int, *, width: int = 5, **grid: float
) -> np.ndarray:
    """Alternative: a plateau of ``width`` neighbouring configurations sharing the same edge.

    Keyword options as for :func:`simulate_one_edge`.
    """
    return _edged_grid(rng, n_configurations, n_windows, lambda n: plateau_columns(n, width), **grid)


def simulate_several_edges(
    rng: np.random.Generator, n_configurations: int, n_windows: int, *, count: int = 3, **grid: float
) -> np.ndarray:
    """Alternative: ``count`` interchangeable profitable configurations, spread over the grid.

    They share the same edge, so which one a researcher picks is luck; any of them is a right pick.
    Keyword options as for :func:`simulate_one_edge`.
    """
    return _edged_grid(rng, n_configurations, n_windows, lambda n: spread_columns(n, count), **grid)


def simulate_short_record(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    annual_sharpe: float = 2.0,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    **grid: float,
) -> np.ndarray:
    """Alternative: a short track record (at most two years of windows) with a strong edge.

    One configuration of the neighbour grid earns ``annual_sharpe`` (default 2.0: over one year of
    weekly windows its t-statistic is about 2). The verdict should be cautious here. Other keyword
    options as for :func:`simulate_one_edge`.
    """
    _, t = _shape(n_configurations, n_windows)
    ppy = validate.positive_number(periods_per_year, "periods_per_year")
    if t > 2 * ppy:
        raise InputError(
            f"n_windows must be at most two years ({2 * ppy:g} windows) for a short record; got {t}"
        )
    return simulate_one_edge(rng, n_configurations, n_windows, annual_sharpe=annual_sharpe, periods_per_year=ppy, **grid)


# --------------------------------------------------------------------------------------------
# Two-parameter grids with dependence, leverage, regimes and crashes


def square_grid(n_configurations: int) -> tuple[int, int]:
    """The most nearly square (rows, columns) grid of exactly ``n_configurations`` cells."""
    n = validate.whole_number(n_configurations, "n_configurations", minimum=1)
    rows = math.isqrt(n)
    while n % rows:
        rows -= 1
    return rows, n // rows


def _ar_filter(rng: np.random.Generator, shocks: np.ndarray, phi: float, burn_in: int = 200) -> np.ndarray:
    """AR(1) with unit stationary variance driven by ``shocks`` (Hamilton 1994, section 3.4).

    ``burn_in`` windows of fresh shocks come first and are discarded, so the series is stationary
    from the first window kept whatever the shocks' own distribution.
    """
    if not (isinstance(phi, (int, float)) and -1 < phi < 1):
        raise InputError(f"phi must lie strictly between -1 and 1 for a stationary AR(1); got {phi!r}")
    if phi == 0:
        return shocks
    t, n = shocks.shape
    e = np.concatenate([rng.standard_normal((burn_in, n)), shocks])
    out = np.empty_like(e)
    out[0] = e[0]
    scale = math.sqrt(1.0 - phi * phi)
    for s in range(1, len(e)):
        out[s] = phi * out[s - 1] + scale * e[s]
    return out[burn_in:]


def _garch_scale(rng: np.random.Generator, t: int, *, alpha: float = 0.10, beta: float = 0.85, burn_in: int = 300) -> np.ndarray:
    """A shared GARCH(1,1) volatility path with unit unconditional variance (Bollerslev 1986), (T, 1)."""
    omega = 1.0 - alpha - beta
    eps = rng.standard_normal(t + burn_in)
    sigma2 = np.empty(t + burn_in)
    sigma2[0] = 1.0
    for s in range(1, t + burn_in):
        sigma2[s] = omega + alpha * sigma2[s - 1] * eps[s - 1] ** 2 + beta * sigma2[s - 1]
    return np.sqrt(sigma2[burn_in:])[:, None]


def simulate_dependent_grid(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    phi: float = 0.0,
    shocks: Literal["normal", "student_t"] = "normal",
    degrees_of_freedom: float = 4.0,
    clustering: bool = False,
    grid: tuple[int, int] | None = None,
    length_scale: float = 2.0,
    common_share: float = 0.3,
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Null: a two-parameter grid of correlated configurations with serial dependence and fat tails.

    Each window draws grid-correlated shocks (:func:`neighbour_correlation` on ``grid``, by default
    :func:`square_grid`); with ``shocks="student_t"`` every window's shocks share one chi-square
    draw (a multivariate t: a stressed window stresses the whole family), scaled to unit variance.
    ``clustering`` multiplies them by a shared GARCH(1,1) volatility path (alpha 0.10, beta 0.85;
    heteroskedastic windows), and ``phi`` passes every configuration through an AR(1) with unit
    stationary variance. The result is scaled to ``volatility``; no configuration has an edge.
    """
    rng, n, t, vol = _prologue(rng, n_configurations, n_windows, volatility)
    validate.choice(shocks, "shocks", ("normal", "student_t"))
    neighbour_correlation(1, length_scale=length_scale, common_share=common_share)  # validates both
    key = square_grid(n) if grid is None else (int(grid[0]), int(grid[1]))
    root = _correlation_root(n, key, float(length_scale), float(common_share))
    z = rng.standard_normal((t, n)) @ root.T
    if shocks == "student_t":
        nu = validate.positive_number(degrees_of_freedom, "degrees_of_freedom")
        if nu <= 2:
            raise InputError(f"degrees_of_freedom must exceed 2 for a finite variance; got {degrees_of_freedom}")
        z *= math.sqrt((nu - 2) / nu) / np.sqrt(rng.chisquare(nu, size=(t, 1)) / nu)
    if clustering:
        z *= _garch_scale(rng, t)
    return vol * _ar_filter(rng, z, float(phi))


def simulate_leveraged(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    bases: int = 5,
    leverage: tuple[float, float] = (0.25, 4.0),
    own_noise: float = 0.3,
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Null: a few base strategies, each run at leverages from ``leverage[0]`` to ``leverage[1]``.

    ``n_configurations`` must be a multiple of ``bases``; configuration ``b * per + j`` is base ``b``
    at the j-th leverage (geometrically spaced), plus its own noise (``own_noise`` of the base's
    scale). The bases are correlated 0.3 and share a GARCH(1,1) volatility path, so the family
    mixes loud and quiet, heteroskedastic, highly correlated configurations; none has an edge.
    """
    rng, n, t, vol = _prologue(rng, n_configurations, n_windows, volatility)
    count = validate.whole_number(bases, "bases", minimum=1)
    if n % count:
        raise InputError(f"n_configurations must be a multiple of bases = {count}; got {n}")
    low, high = (validate.positive_number(v, "leverage") for v in leverage)
    per = n // count
    base = rng.standard_normal((t, count)) @ np.linalg.cholesky(0.3 + 0.7 * np.eye(count)).T
    base *= _garch_scale(rng, t)
    levels = np.geomspace(low, high, per) if per > 1 else np.array([1.0])
    columns = np.repeat(np.arange(count), per)
    x = base[:, columns] + validate.non_negative_number(own_noise, "own_noise") * rng.standard_normal((t, n))
    return vol * x * np.tile(levels, count)


def simulate_regime(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    duration: float = 104.0,
    annual_sharpe: float = 1.0,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Null over the long run: a shared mean that switches sign, zero on average.

    A two-state Markov chain (Hamilton 1989) with symmetric switching probability 1 / ``duration``
    per window (mean stay of ``duration`` windows; 104 is two years of weeks) sets a mean of
    +-``annual_sharpe`` (annualized, per unit of ``volatility``) that every configuration of a
    grid-correlated family carries with its own loading between 0.2 and 1. Over a sample shorter
    than a few regimes one sign dominates: no test can tell it from an edge within the sample.
    """
    rng, n, t, vol = _prologue(rng, n_configurations, n_windows, volatility)
    stay = validate.positive_number(duration, "duration")
    switches = rng.random(t) < 1.0 / stay
    state = np.where(rng.random() < 0.5, 1.0, -1.0) * np.where(np.cumsum(switches) % 2, -1.0, 1.0)
    load = rng.permutation(np.linspace(0.2, 1.0, n))
    mean = per_window_edge(annual_sharpe, periods_per_year, vol)
    return simulate_dependent_grid(rng, n, t, volatility=vol) + mean * state[:, None] * load[None, :]


def simulate_crashes(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    annual_sharpe: float = 1.5,
    frequency: float = 1 / 60,
    participation: float = 0.6,
    shortfall: float = 0.05,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Null: short-volatility configurations, a steady premium and rare shared crashes.

    Every configuration earns a premium of ``annual_sharpe`` (per unit of ``volatility``); a crash
    strikes the family in a window with probability ``frequency``, and each configuration takes it
    independently with probability ``participation``, losing a size drawn uniformly within 30% of
    its mean. The mean crash loss is set so that the expected loss per window is
    ``1 + shortfall`` times the premium: the true mean excess return is slightly negative
    (``-shortfall`` times the premium), while a configuration that happened to miss the crashes
    shows the premium alone (the peso problem; Krasker 1980).
    """
    rng, n, t, vol = _prologue(rng, n_configurations, n_windows, volatility)
    p = validate.probability(frequency, "frequency")
    share = validate.probability(participation, "participation")
    premium = per_window_edge(annual_sharpe, periods_per_year, vol)
    loss = premium * (1.0 + validate.non_negative_number(shortfall, "shortfall")) / (p * share)
    crash = rng.random(t) < p
    hit = (rng.random((t, n)) < share) & crash[:, None]
    size = loss * rng.uniform(0.7, 1.3, size=(t, n))
    return simulate_dependent_grid(rng, n, t, volatility=vol) + premium - hit * size


def grid_block_columns(n_configurations: int, width: int, grid: tuple[int, int] | None = None) -> list[int]:
    """The cells of a ``width`` x ``width`` block at the centre of the grid (row-major indices)."""
    rows, cols = square_grid(n_configurations) if grid is None else grid
    w = min(validate.whole_number(width, "width", minimum=1), rows, cols)
    r0, c0 = (rows - w) // 2, (cols - w) // 2
    return [r * cols + c for r in range(r0, r0 + w) for c in range(c0, c0 + w)]


def _hill(n_configurations: int, spread: float, grid: tuple[int, int] | None) -> np.ndarray:
    rows, cols = square_grid(n_configurations) if grid is None else grid
    r, c = np.indices((rows, cols))
    d2 = (r - (rows - 1) / 2) ** 2 + (c - (cols - 1) / 2) ** 2
    return np.exp(-d2.ravel() / (2.0 * validate.positive_number(spread, "spread") ** 2))


def hill_columns(n_configurations: int, spread: float = 1.5, grid: tuple[int, int] | None = None) -> list[int]:
    """The cells of a smooth hill that carry at least half its peak edge."""
    return [int(k) for k in np.flatnonzero(_hill(n_configurations, spread, grid) >= 0.5)]


def simulate_grid_plateau(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    width: int = 3,
    annual_sharpe: float = 2.0,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    phi: float = 0.0,
    shocks: Literal["normal", "student_t"] = "normal",
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Alternative: a ``width`` x ``width`` plateau at the centre of a correlated grid shares an edge.

    The null part is :func:`simulate_dependent_grid` (with ``phi`` for serially dependent windows and
    ``shocks`` for fat tails); each plateau cell earns ``annual_sharpe``.
    """
    x = simulate_dependent_grid(rng, n_configurations, n_windows, phi=phi, shocks=shocks, volatility=volatility)
    return plant_edge(x, grid_block_columns(x.shape[1], width), annual_sharpe=annual_sharpe,
                      periods_per_year=periods_per_year, volatility=volatility)


def simulate_hill(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    annual_sharpe: float = 2.0,
    spread: float = 1.5,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Alternative: a smooth hill of edges on a correlated grid, peaking at ``annual_sharpe``.

    Cell k earns ``annual_sharpe * exp(-d_k^2 / (2 spread^2))`` with d_k its distance (in grid
    steps) from the grid's centre: a good setting surrounded by gradually worse ones.
    """
    x = simulate_dependent_grid(rng, n_configurations, n_windows, volatility=volatility)
    edge = per_window_edge(annual_sharpe, periods_per_year, validate.positive_number(volatility, "volatility"))
    return x + edge * _hill(x.shape[1], spread, None)[None, :]


def simulate_quiet_edge(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    annual_sharpe: float = 2.0,
    quiet: float = 0.01,
    loud: float = 0.03,
    common_share: float = 0.3,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
) -> np.ndarray:
    """Alternative: one quiet configuration with an edge among loud configurations without one.

    Configuration 0 has standard deviation ``quiet`` and earns ``annual_sharpe``; the others have
    standard deviation ``loud`` and no edge; all share a common factor (``common_share``). A test
    that ranks configurations by their raw mean sees only the loud noise.
    """
    rng, n, t, _ = _prologue(rng, n_configurations, n_windows, quiet)
    validate.positive_number(loud, "loud")
    root = np.linalg.cholesky(common_share + (1.0 - common_share) * np.eye(n))
    scale = np.full(n, float(loud))
    scale[0] = quiet
    x = (rng.standard_normal((t, n)) @ root.T) * scale
    x[:, 0] += per_window_edge(annual_sharpe, periods_per_year, quiet)
    return x


def simulate_late_edge(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    annual_sharpe: float = 3.0,
    start: float = 0.5,
    width: int = 3,
    phi: float = 0.0,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    volatility: float = DEFAULT_VOLATILITY,
) -> np.ndarray:
    """Alternative: an edge that came alive. A ``width`` x ``width`` plateau at the centre of a
    correlated grid earns ``annual_sharpe`` from window ``round(start * n_windows)`` on, nothing before.

    The null part is :func:`simulate_dependent_grid` (``phi`` for AR(1) windows). Over the whole
    sample the plateau earns ``annual_sharpe * (1 - start)``: with the defaults, the full-sample
    figures of a constant edge of annualized Sharpe 1.5.
    """
    if not (isinstance(start, (int, float)) and 0 <= start < 1):
        raise InputError(f"start must lie in [0, 1); got {start!r}")
    x = simulate_dependent_grid(rng, n_configurations, n_windows, phi=phi, volatility=volatility)
    first = int(round(start * x.shape[0]))
    x[first:] = plant_edge(x[first:], grid_block_columns(x.shape[1], width), annual_sharpe=annual_sharpe,
                           periods_per_year=periods_per_year, volatility=volatility)
    return x


def simulate_dead_edge(rng: np.random.Generator, n_configurations: int, n_windows: int, **options) -> np.ndarray:
    """Alternative: an edge that has died. :func:`simulate_late_edge` reversed in time, so with the same
    generator state it is the very same sweep read backwards: the plateau earned its edge in the first
    windows and nothing since. Every full-sample figure is the same as the late edge's.
    """
    return np.ascontiguousarray(simulate_late_edge(rng, n_configurations, n_windows, **options)[::-1])


@dataclass(frozen=True)
class Family:
    """A family of synthetic sweeps with known truth.

    Attributes
    ----------
    name : str
    kind : {"null", "alternative"}
        Null: no configuration has an edge, every go is false. Alternative: a planted edge.
    simulate : callable
        ``simulate(rng, n_configurations, n_windows, **options) -> T x N array``.
    description : str
    planted : callable or None
        ``planted(n_configurations) -> list of columns`` with the edge (alternatives only).
    """

    name: str
    kind: Literal["null", "alternative"]
    simulate: Callable[..., np.ndarray]
    description: str
    planted: Callable[[int], list[int]] | None = None


FAMILIES: tuple[Family, ...] = (
    Family("iid_normal", "null", simulate_normal, "independent normal windows and configurations"),
    Family("student_t", "null", simulate_student_t, "independent Student-t windows, 4 degrees of freedom"),
    Family("autoregressive", "null", simulate_autoregressive, "independent AR(1) windows, phi = 0.3"),
    Family(
        "volatility_clustering", "null", simulate_volatility_clustering,
        "independent GARCH(1,1) windows, alpha = 0.10, beta = 0.85",
    ),
    Family(
        "neighbour_grid", "null", simulate_neighbour_grid,
        "1-D parameter grid: common factor 0.3 plus correlation exp(-distance / 3)",
    ),
    Family(
        "one_edge", "alternative", simulate_one_edge,
        "neighbour grid; the centre configuration earns annualized Sharpe 1.0",
        planted=lambda n: [_centre(n)],
    ),
    Family(
        "edge_plateau", "alternative", simulate_edge_plateau,
        "neighbour grid; 5 neighbouring configurations share annualized Sharpe 1.0",
        planted=lambda n: plateau_columns(n, 5),
    ),
    Family(
        "several_edges", "alternative", simulate_several_edges,
        "neighbour grid; 3 configurations far apart each earn annualized Sharpe 1.0",
        planted=lambda n: spread_columns(n, 3),
    ),
    Family(
        "short_record", "alternative", simulate_short_record,
        "neighbour grid, at most two years of windows; one configuration earns annualized Sharpe 2.0",
        planted=lambda n: [_centre(n)],
    ),
    Family(
        "grid", "null", simulate_dependent_grid,
        "2-D grid of correlated configurations (common factor 0.3, exp(-distance / 2)), independent windows",
    ),
    Family(
        "autoregressive_grid", "null", lambda rng, n, t: simulate_dependent_grid(rng, n, t, phi=0.5),
        "2-D grid of correlated configurations, AR(1) windows, phi = 0.5",
    ),
    Family(
        "persistent_grid", "null", lambda rng, n, t: simulate_dependent_grid(rng, n, t, phi=0.7),
        "2-D grid of correlated configurations, AR(1) windows, phi = 0.7",
    ),
    Family(
        "fat_tailed_grid", "null", lambda rng, n, t: simulate_dependent_grid(rng, n, t, shocks="student_t"),
        "2-D grid, multivariate Student-t windows (4 degrees of freedom, shared stress)",
    ),
    Family(
        "clustered_grid", "null", lambda rng, n, t: simulate_dependent_grid(rng, n, t, clustering=True, phi=0.3),
        "2-D grid, shared GARCH(1,1) volatility and AR(1) windows, phi = 0.3",
    ),
    Family(
        "leveraged", "null", simulate_leveraged,
        "5 base strategies, each at leverages from 0.25x to 4x, shared GARCH(1,1) volatility",
    ),
    Family(
        "regime", "null", simulate_regime,
        "2-D grid with a shared mean that switches sign, two-year mean duration, zero on average",
    ),
    Family(
        "crashes", "null", simulate_crashes,
        "short-volatility grid: premium of annualized Sharpe 1.5, rare shared crashes, slightly negative mean",
    ),
    Family(
        "grid_plateau", "alternative", simulate_grid_plateau,
        "2-D grid; a 3 x 3 plateau at the centre shares annualized Sharpe 2.0",
        planted=lambda n: grid_block_columns(n, 3),
    ),
    Family(
        "grid_plateau_weaker", "alternative",
        lambda rng, n, t: simulate_grid_plateau(rng, n, t, annual_sharpe=1.5),
        "2-D grid; a 3 x 3 plateau at the centre shares annualized Sharpe 1.5",
        planted=lambda n: grid_block_columns(n, 3),
    ),
    Family(
        "grid_plateau_dependent", "alternative",
        lambda rng, n, t: simulate_grid_plateau(rng, n, t, phi=0.3),
        "2-D grid, AR(1) windows (phi = 0.3); a 3 x 3 plateau shares annualized Sharpe 2.0",
        planted=lambda n: grid_block_columns(n, 3),
    ),
    Family(
        "grid_plateau_fat_tailed", "alternative",
        lambda rng, n, t: simulate_grid_plateau(rng, n, t, shocks="student_t"),
        "2-D grid, multivariate Student-t windows; a 3 x 3 plateau shares annualized Sharpe 2.0",
        planted=lambda n: grid_block_columns(n, 3),
    ),
    Family(
        "hill", "alternative", simulate_hill,
        "2-D grid; a smooth hill of edges peaking at annualized Sharpe 2.0 (spread 1.5 grid steps)",
        planted=lambda n: hill_columns(n, 1.5),
    ),
    Family(
        "grid_plateau_persistent", "alternative",
        lambda rng, n, t: simulate_grid_plateau(rng, n, t, phi=0.5),
        "2-D grid, AR(1) windows (phi = 0.5); a 3 x 3 plateau shares annualized Sharpe 2.0, constant in time",
        planted=lambda n: grid_block_columns(n, 3),
    ),
    Family(
        "late_edge", "alternative", simulate_late_edge,
        "2-D grid; a 3 x 3 plateau earns annualized Sharpe 3.0 in the second half only (an edge that came alive)",
        planted=lambda n: grid_block_columns(n, 3),
    ),
    Family(
        "dead_edge", "alternative", simulate_dead_edge,
        "the late_edge sweeps reversed in time: the plateau earned annualized Sharpe 3.0 in the first half "
        "only (an edge that has died)",
        planted=lambda n: grid_block_columns(n, 3),
    ),
    Family(
        "dead_edge_dependent", "alternative", lambda rng, n, t: simulate_dead_edge(rng, n, t, phi=0.3),
        "dead_edge with AR(1) windows, phi = 0.3",
        planted=lambda n: grid_block_columns(n, 3),
    ),
    Family(
        "quiet_edge", "alternative", simulate_quiet_edge,
        "one configuration at 1% volatility earns annualized Sharpe 2.0 among configurations at 3% with none",
        planted=lambda n: [0],
    ),
)
