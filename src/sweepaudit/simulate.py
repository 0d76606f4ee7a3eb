"""Synthetic sweeps with known truth: null families (no configuration has an edge) and alternatives
(an edge of a known annualised Sharpe ratio planted in chosen configurations).

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
    """Per-window mean of an edge: annualised Sharpe / sqrt(periods per year) * per-window sd.

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

    ``annual_sharpe`` is the planted edge (annualised Sharpe ratio, with ``periods_per_year``);
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
        "neighbour grid; the centre configuration earns annualised Sharpe 1.0",
        planted=lambda n: [_centre(n)],
    ),
    Family(
        "edge_plateau", "alternative", simulate_edge_plateau,
        "neighbour grid; 5 neighbouring configurations share annualised Sharpe 1.0",
        planted=lambda n: plateau_columns(n, 5),
    ),
    Family(
        "several_edges", "alternative", simulate_several_edges,
        "neighbour grid; 3 configurations far apart each earn annualised Sharpe 1.0",
        planted=lambda n: spread_columns(n, 3),
    ),
    Family(
        "short_record", "alternative", simulate_short_record,
        "neighbour grid, at most two years of windows; one configuration earns annualised Sharpe 2.0",
        planted=lambda n: [_centre(n)],
    ),
)
