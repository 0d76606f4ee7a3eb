"""Calibration by simulation: how often does the verdict say go when it should not, and when it should?

Two kinds of evidence:

* Families of synthetic sweeps with known truth (simulators below). Null families have no
  configuration with an edge, so every "go" is a false go; alternatives plant an edge of a known
  annualised Sharpe ratio, so the go rate is the power. :func:`calibrate_verdict` runs the full
  audit on many of them.
* Null sweeps shaped like the user's own (:func:`null_like`): the same windows and configurations,
  the same dependence across configurations and time, the edge removed. :func:`calibrate_sweep`
  measures this sweep's false-go rate under the active policy, and the power against an edge of a
  size the user names.

All resampling goes through :func:`sweepaudit.audit.gather_evidence` and the shared engine
(:func:`sweepaudit.resample.draw_resamples`); this module draws no bootstrap weights of its own.

References
----------
Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.
Politis, D. N. and White, H. (2004). Automatic block-length selection for the dependent bootstrap.
    Econometric Reviews 23(1), 53-70 (with the Patton, Politis and White 2009 correction).
Bollerslev, T. (1986). Generalized autoregressive conditional heteroskedasticity. Journal of
    Econometrics 31(3), 307-327.
Clopper, C. J. and Pearson, E. S. (1934). The use of confidence or fiducial limits illustrated in
    the case of the binomial. Biometrika 26(4), 404-413.
Hansen, P. R. (2005). A test for superior predictive ability. JBES 23(4), 365-380 (size and power
    of data-snooping tests judged by simulation, as here).
"""

from __future__ import annotations

import gc
import math
from collections.abc import Callable, Iterable, Iterator, Sequence
from dataclasses import dataclass, field, replace
from functools import lru_cache
from typing import Literal, get_args

import numpy as np
from scipy import stats

from .audit import gather_evidence
from .results import AuditSettings
from .verdict import decide
from .errors import InputError
from ._version import CALIBRATION_SCHEMA, __version__
from .policy import DEFAULT_POLICY, Policy
from .resample import GENERATION_GROUP, Resamples, automatic_block_length, draw_resamples
from .results import BlockSeries, CheckRate, Rate, SweepCalibration, VerdictCalibration
from .sweep import Sweep, sweep_from_array

__all__ = [
    "BlockSeries",
    "Rate",
    "CheckRate",
    "VerdictCalibration",
    "NullSweeps",
    "SweepCalibration",
    "Family",
    "FAMILIES",
    "binomial_rate",
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
    "calibrate_verdict",
    "null_like",
    "calibrate_sweep",
    "calibration_to_dict",
    "sweep_calibration_to_dict",
]

BLOCK_SERIES: tuple[str, ...] = get_args(BlockSeries)

# Typical scale of per-window excess returns over a benchmark: 1% a week is about 7% a year of
# tracking error (common practice for an active strategy; synthetic, not fitted to any market).
DEFAULT_VOLATILITY = 0.01
DEFAULT_PERIODS_PER_YEAR = 52.0


# --------------------------------------------------------------------------------------------
# Validators


def _check_shape(n_configurations: int, n_windows: int) -> tuple[int, int]:
    for name, value in (("n_configurations", n_configurations), ("n_windows", n_windows)):
        if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
            raise InputError(f"{name} must be a whole number of at least 1; got {value!r}")
    if n_windows < 2:
        raise InputError(f"n_windows must be at least 2; got {n_windows}")
    return int(n_configurations), int(n_windows)


def _check_positive(name: str, value: float) -> float:
    if not (isinstance(value, (int, float, np.floating)) and math.isfinite(value) and value > 0):
        raise InputError(f"{name} must be a positive finite number; got {value!r}")
    return float(value)


def _check_rng(rng) -> np.random.Generator:
    if not isinstance(rng, np.random.Generator):
        raise InputError(
            f"rng must be a numpy.random.Generator (numpy.random.default_rng(seed)); got {type(rng).__name__}"
        )
    return rng


def _check_count(name: str, value: int, low: int = 1) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < low:
        raise InputError(f"{name} must be a whole number of at least {low}; got {value!r}")
    return int(value)


# --------------------------------------------------------------------------------------------
# Binomial rates with Monte Carlo error


def binomial_rate(events: int, trials: int) -> Rate:
    """Rate, Monte Carlo standard error and exact one-sided 95% bounds of a binomial count.

    Clopper and Pearson (1934): the upper bound is the 0.95 quantile of Beta(events + 1,
    trials - events), the lower bound the 0.05 quantile of Beta(events, trials - events + 1).
    """
    events = _check_count("events", events, 0)
    trials = _check_count("trials", trials, 0)
    if events > trials:
        raise InputError(f"events must not exceed trials; got {events} of {trials}")
    if trials == 0:
        nan = float("nan")
        return Rate(0, 0, nan, nan, nan, nan)
    p = events / trials
    upper = 1.0 if events == trials else float(stats.beta.ppf(0.95, events + 1, trials - events))
    lower = 0.0 if events == 0 else float(stats.beta.ppf(0.05, events, trials - events + 1))
    return Rate(events, trials, p, math.sqrt(p * (1 - p) / trials), upper, lower)


# --------------------------------------------------------------------------------------------
# Simulators: each (rng, n_configurations, n_windows, ...) -> T x N fractional excess returns


def simulate_normal(
    rng: np.random.Generator, n_configurations: int, n_windows: int, *, volatility: float = DEFAULT_VOLATILITY
) -> np.ndarray:
    """Null: independent normal excess returns, mean zero, standard deviation ``volatility``."""
    rng = _check_rng(rng)
    n, t = _check_shape(n_configurations, n_windows)
    vol = _check_positive("volatility", volatility)
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
    rng = _check_rng(rng)
    n, t = _check_shape(n_configurations, n_windows)
    vol = _check_positive("volatility", volatility)
    nu = _check_positive("degrees_of_freedom", degrees_of_freedom)
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
    rng = _check_rng(rng)
    n, t = _check_shape(n_configurations, n_windows)
    vol = _check_positive("volatility", volatility)
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
    rng = _check_rng(rng)
    n, t = _check_shape(n_configurations, n_windows)
    vol = _check_positive("volatility", volatility)
    if not (alpha >= 0 and beta >= 0 and alpha + beta < 1):
        raise InputError(
            f"alpha and beta must be non-negative with alpha + beta < 1; got alpha={alpha!r}, beta={beta!r}"
        )
    burn = _check_count("burn_in", burn_in, 0)
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
    n = _check_count("n_configurations", n_configurations)
    scale = _check_positive("length_scale", length_scale)
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
    rng = _check_rng(rng)
    n, t = _check_shape(n_configurations, n_windows)
    vol = _check_positive("volatility", volatility)
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
    ppy = _check_positive("periods_per_year", periods_per_year)
    vol = _check_positive("volatility", volatility)
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


def simulate_one_edge(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    annual_sharpe: float = 1.0,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    volatility: float = DEFAULT_VOLATILITY,
    length_scale: float = 3.0,
    common_share: float = 0.3,
) -> np.ndarray:
    """Alternative: the neighbour-grid null with one configuration (the grid centre) given an edge."""
    x = simulate_neighbour_grid(
        rng, n_configurations, n_windows, length_scale=length_scale, common_share=common_share, volatility=volatility
    )
    return plant_edge(
        x, [_centre(n_configurations)], annual_sharpe=annual_sharpe, periods_per_year=periods_per_year,
        volatility=volatility,
    )


def plateau_columns(n_configurations: int, width: int) -> list[int]:
    """The ``width`` neighbouring configurations centred on the middle of a 1-D grid."""
    width = min(_check_count("width", width), n_configurations)
    start = max(0, _centre(n_configurations) - (width - 1) // 2)
    start = min(start, n_configurations - width)
    return list(range(start, start + width))


def spread_columns(n_configurations: int, count: int) -> list[int]:
    """``count`` configurations evenly spread over a 1-D grid (far apart, so nearly independent)."""
    count = min(_check_count("count", count), n_configurations)
    return [int(round((i + 0.5) * n_configurations / count - 0.5)) for i in range(count)]


def simulate_edge_plateau(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    width: int = 5,
    annual_sharpe: float = 1.0,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    volatility: float = DEFAULT_VOLATILITY,
    length_scale: float = 3.0,
    common_share: float = 0.3,
) -> np.ndarray:
    """Alternative: a plateau of ``width`` neighbouring configurations sharing the same edge."""
    x = simulate_neighbour_grid(
        rng, n_configurations, n_windows, length_scale=length_scale, common_share=common_share, volatility=volatility
    )
    return plant_edge(
        x, plateau_columns(n_configurations, width), annual_sharpe=annual_sharpe,
        periods_per_year=periods_per_year, volatility=volatility,
    )


def simulate_several_edges(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    count: int = 3,
    annual_sharpe: float = 1.0,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    volatility: float = DEFAULT_VOLATILITY,
    length_scale: float = 3.0,
    common_share: float = 0.3,
) -> np.ndarray:
    """Alternative: ``count`` interchangeable profitable configurations, spread over the grid.

    They share the same edge, so which one a researcher picks is luck; any of them is a right pick.
    """
    x = simulate_neighbour_grid(
        rng, n_configurations, n_windows, length_scale=length_scale, common_share=common_share, volatility=volatility
    )
    return plant_edge(
        x, spread_columns(n_configurations, count), annual_sharpe=annual_sharpe,
        periods_per_year=periods_per_year, volatility=volatility,
    )


def simulate_short_record(
    rng: np.random.Generator,
    n_configurations: int,
    n_windows: int,
    *,
    annual_sharpe: float = 2.0,
    periods_per_year: float = DEFAULT_PERIODS_PER_YEAR,
    volatility: float = DEFAULT_VOLATILITY,
    length_scale: float = 3.0,
    common_share: float = 0.3,
) -> np.ndarray:
    """Alternative: a short track record (at most two years of windows) with a strong edge.

    One configuration of the neighbour grid earns ``annual_sharpe`` (default 2.0: over one year of
    weekly windows its t-statistic is about 2). The verdict should be cautious here.
    """
    _, t = _check_shape(n_configurations, n_windows)
    ppy = _check_positive("periods_per_year", periods_per_year)
    if t > 2 * ppy:
        raise InputError(
            f"n_windows must be at most two years ({2 * ppy:g} windows) for a short record; got {t}"
        )
    return simulate_one_edge(
        rng, n_configurations, n_windows, annual_sharpe=annual_sharpe, periods_per_year=ppy,
        volatility=volatility, length_scale=length_scale, common_share=common_share,
    )


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


# --------------------------------------------------------------------------------------------
# Running the audit on many sweeps


def _audit_seeds(seed: int, count: int) -> np.ndarray:
    # One independent child seed per sweep, so sweep i's audit does not depend on how many ran.
    children = np.random.SeedSequence(seed).spawn(count)
    return np.array([int(c.generate_state(1, dtype=np.uint32)[0]) for c in children], dtype=np.int64)


def _run_audits(
    sweeps: Iterable[Sweep],
    *,
    count: int,
    audit_seeds: np.ndarray,
    settings: AuditSettings,
    policy: Policy,
    planted: Sequence[int] | None,
    seed: int,
    progress: Callable[[int], None] | None,
) -> VerdictCalibration:
    decisions = np.zeros(count, dtype=bool)
    selected = np.zeros(count, dtype=np.int64)
    outcomes: list[dict[str, bool]] = []
    required: dict[str, bool] = {}
    done = 0
    # statsmodels' Holm adjustment (used by the haircut) runs a full gc.collect() on every call,
    # which costs a third of a small audit when the heap holds pandas and scipy; freezing the
    # objects alive now takes them out of those collections. Undone afterwards.
    gc.freeze()
    try:
        for i, sweep in enumerate(sweeps):
            if i >= count:
                break
            evidence = gather_evidence(sweep, settings=replace(settings, seed=int(audit_seeds[i])), policy=policy)
            verdict = decide(evidence, policy)
            decisions[i] = verdict.decision == "go"
            selected[i] = evidence.selected_index
            row: dict[str, bool] = {}
            for c in verdict.checks:
                row[c.id] = not c.passed
                required.setdefault(c.id, c.required)
            outcomes.append(row)
            done += 1
            if progress is not None:
                progress(done)
    finally:
        gc.unfreeze()
    if done != count:
        raise InputError(f"the simulation yielded {done} sweeps; {count} were asked for")
    ids = tuple(required)
    failed = np.full((count, len(ids)), np.nan)
    for i, row in enumerate(outcomes):
        for j, cid in enumerate(ids):
            if cid in row:
                failed[i, j] = float(row[cid])
    checks = tuple(
        CheckRate(
            cid,
            required[cid],
            binomial_rate(int(np.nansum(failed[:, j])), int(np.isfinite(failed[:, j]).sum())),
        )
        for j, cid in enumerate(ids)
    )
    planted_rate = None
    if planted is not None:
        planted_rate = binomial_rate(int(np.isin(selected, list(planted)).sum()), count)
    return VerdictCalibration(
        sweeps=count,
        go=binomial_rate(int(decisions.sum()), count),
        checks=checks,
        decisions=decisions,
        check_ids=ids,
        check_failed=failed,
        selected=selected,
        planted_selected=planted_rate,
        audit_seeds=audit_seeds,
        resamples=settings.resamples if settings.resamples is not None else policy.resamples,
        policy=policy,
        seed=seed,
    )


def _check_settings(settings: AuditSettings | None, resamples: int | None) -> AuditSettings:
    settings = settings or AuditSettings()
    if not isinstance(settings, AuditSettings):
        raise InputError(f"settings must be an AuditSettings; got {type(settings).__name__}")
    if resamples is not None:
        settings = replace(settings, resamples=_check_count("resamples", resamples))
    return settings


def calibrate_verdict(
    simulate: Callable[[np.random.Generator], np.ndarray],
    *,
    sweeps: int = 200,
    periods_per_year: float | None = DEFAULT_PERIODS_PER_YEAR,
    settings: AuditSettings | None = None,
    resamples: int | None = None,
    policy: Policy | None = None,
    seed: int = 0,
    planted: Sequence[int] | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> VerdictCalibration:
    """Run the full audit on ``sweeps`` simulated sweeps and count its verdicts.

    Parameters
    ----------
    simulate : callable
        ``simulate(rng) -> T x N array`` of fractional excess returns, e.g.
        ``lambda rng: simulate_normal(rng, 50, 260)``. Called once per sweep with its own generator.
    sweeps : int
        Number of simulated sweeps (Monte Carlo standard error of a 5% rate: 1.5% at 200).
    periods_per_year : float or None
        Passed to :func:`sweepaudit.sweep.sweep_from_array` (weekly windows by default).
    settings : AuditSettings, optional
        Audit knobs; each audit's ``seed`` is replaced by its own child seed.
    resamples : int, optional
        Bootstrap resamples per audit (overrides ``settings.resamples``; None keeps it, and then
        the policy's).
    policy : Policy, optional
        The active policy (default policy when None).
    seed : int
        Master seed: simulation and resample seeds of every sweep derive from it.
    planted : sequence of int, optional
        Columns carrying a planted edge; reports how often the audit judged one of them.
    progress : callable, optional
        ``progress(done, total)`` after each audit.

    Returns
    -------
    VerdictCalibration

    Notes
    -----
    Under a null family the go rate estimates the verdict's size, which should not exceed the
    policy's significance level; under an alternative it estimates power (Hansen 2005, section 4,
    judges data-snooping tests the same way).
    """
    if not callable(simulate):
        raise InputError(f"simulate must be a callable rng -> T x N array; got {type(simulate).__name__}")
    count = _check_count("sweeps", sweeps)
    if seed is None or isinstance(seed, bool) or int(seed) < 0:
        raise InputError(f"seed must be a non-negative integer; got {seed!r}")
    settings = _check_settings(settings, resamples)
    policy = policy or DEFAULT_POLICY
    children = np.random.SeedSequence([int(seed), 0]).spawn(count)

    def generate() -> Iterator[Sweep]:
        for child in children:
            x = simulate(np.random.default_rng(child))
            yield sweep_from_array(x, periods_per_year=periods_per_year)

    return _run_audits(
        generate(),
        count=count,
        audit_seeds=_audit_seeds(int(seed), count),
        settings=settings,
        policy=policy,
        planted=planted,
        seed=int(seed),
        progress=(lambda done: progress(done, count)) if progress else None,
    )


# --------------------------------------------------------------------------------------------
# Null sweeps shaped like the user's own


@dataclass(frozen=True, eq=False)
class NullSweeps:
    """Null sweeps shaped like a real one: the same dependence, the edge removed.

    Attributes
    ----------
    sweep : Sweep
        The real sweep.
    centred : ndarray, shape (T, N)
        Its returns with every configuration's full-sample mean subtracted (no edge anywhere).
    resamples : Resamples
        Stationary-bootstrap resamples of the windows from the shared engine; resample b is null
        sweep b, the same window indices for every configuration.
    block_series : {"average", "selected"}
        The series the automatic block length was computed on.
    selected_index : int or None
        The configuration used when ``block_series`` is "selected".
    """

    sweep: Sweep
    centred: np.ndarray
    resamples: Resamples
    block_series: BlockSeries
    selected_index: int | None = None

    @property
    def count(self) -> int:
        return self.resamples.count

    @property
    def block_length(self) -> float:
        return self.resamples.block_length

    def arrays(self, chunk: int = GENERATION_GROUP) -> Iterator[np.ndarray]:
        """Yield the null sweeps as T x N arrays, in order (the same ones for any chunk size)."""
        for idx in self.resamples.index_chunks(chunk):
            for row in idx:
                # Whole rows are taken: every configuration sees the same windows, so the
                # cross-sectional dependence of the real sweep is kept (Politis and Romano 1994).
                yield self.centred[row]

    def sweeps(self, chunk: int = GENERATION_GROUP) -> Iterator[Sweep]:
        """Yield the null sweeps as Sweeps with the real sweep's labels, parameters and periods."""
        for x in self.arrays(chunk):
            yield replace(self.sweep, returns=x, sha256=None, notes=(), path=f"null-like {self.sweep.path}")


def null_like(
    sweep: Sweep,
    *,
    count: int = 200,
    seed: int = 0,
    block_series: BlockSeries = "average",
    selected: int | str | None = None,
    block_length: float | None = None,
) -> NullSweeps:
    """Null sweeps shaped like ``sweep``: same windows, configurations and dependence, no edge.

    Each configuration is demeaned (its full-sample mean subtracted), then whole windows are
    resampled jointly across all configurations with the stationary bootstrap (Politis and Romano
    1994) of the shared engine, so serial dependence survives inside blocks and cross-sectional
    dependence survives because every configuration gets the same window indices.

    Parameters
    ----------
    sweep : Sweep
    count : int
        Number of null sweeps.
    seed : int
        Seed of the resamples.
    block_series : {"average", "selected"}
        Where the automatic block length (Politis and White 2004, via
        :func:`sweepaudit.resample.automatic_block_length`) is computed: on the cross-sectional
        average of the demeaned configurations (default: it carries the dependence the
        configurations share, and the null sweeps resample them all together), or on the
        ``selected`` configuration (the series the audit itself uses).
    selected : int or str, optional
        Column index or name of the configuration for ``block_series="selected"``.
    block_length : float, optional
        Fix the mean block length instead of choosing it automatically.
    """
    if not isinstance(sweep, Sweep):
        raise InputError(f"sweep must be a Sweep (see sweep_from_array); got {type(sweep).__name__}")
    count = _check_count("count", count)
    if seed is None or isinstance(seed, bool) or int(seed) < 0:
        raise InputError(f"seed must be a non-negative integer; got {seed!r}")
    if block_series not in BLOCK_SERIES:
        raise InputError(f"block_series must be one of {', '.join(BLOCK_SERIES)}; got {block_series!r}")
    index = None
    if selected is not None:
        if isinstance(selected, str):
            index = sweep.index_of(selected)
        else:
            index = int(selected)
            if not 0 <= index < sweep.n_configurations:
                raise InputError(f"selected must lie in [0, {sweep.n_configurations}); got {selected}")
    if block_series == "selected" and index is None:
        raise InputError('block_series="selected" needs the selected configuration (selected=...)')
    centred = sweep.returns - sweep.returns.mean(axis=0)
    centred.setflags(write=False)
    if block_length is None:
        series = centred[:, index] if block_series == "selected" else centred.mean(axis=1)
        block = automatic_block_length(series, "stationary")
    else:
        block = float(block_length)
    resamples = draw_resamples(sweep.n_windows, count=count, kind="stationary", block_length=block, seed=int(seed))
    return NullSweeps(sweep, centred, resamples, block_series, index)


def calibrate_sweep(
    sweep: Sweep,
    *,
    sweeps: int = 200,
    edge: float = 1.0,
    settings: AuditSettings | None = None,
    resamples: int | None = 1_000,
    policy: Policy | None = None,
    seed: int = 0,
    block_series: BlockSeries = "average",
    progress: Callable[[int, int], None] | None = None,
) -> SweepCalibration:
    """False-go rate of the verdict on null sweeps shaped like ``sweep``, and power against ``edge``.

    Parameters
    ----------
    sweep : Sweep
    sweeps : int
        Number of null sweeps (and as many power sweeps when ``edge`` > 0).
    edge : float
        Annualised Sharpe ratio of the edge planted in the configuration the audit selected in the
        real sweep; 0 skips the power estimate. Needs ``sweep.periods_per_year``.
    settings : AuditSettings, optional
        As for the real audit (``selected``, bootstrap, block length...); seeds are replaced.
    resamples : int or None
        Bootstrap resamples per audit; 1,000 by default (see Notes); None takes the settings' or
        policy's.
    policy : Policy, optional
    seed : int
        Master seed of the null sweeps and of every audit.
    block_series : {"average", "selected"}
        Series for the null sweeps' automatic block length (see :func:`null_like`).
    progress : callable, optional
        ``progress(done, total)`` after each audit (total = sweeps, or 2 * sweeps with an edge).

    Notes
    -----
    1,000 resamples per audit: the calibration's Monte Carlo error is dominated by the number of
    sweeps (standard error of a 5% rate: 1.5% at 200 sweeps), while a bootstrap p-value near 5%
    from 1,000 resamples has standard error sqrt(0.05 * 0.95 / 1000) = 0.7%, which only moves the
    rare borderline decision. 10,000 would cost ten times as long for little change.

    The power sweeps are the null sweeps plus the edge (common random numbers), so the difference
    between false-go rate and power is not blurred by different noise.
    """
    if not isinstance(sweep, Sweep):
        raise InputError(f"sweep must be a Sweep (see sweep_from_array); got {type(sweep).__name__}")
    count = _check_count("sweeps", sweeps)
    if not (isinstance(edge, (int, float)) and math.isfinite(edge) and edge >= 0):
        raise InputError(f"edge must be a non-negative annualised Sharpe ratio; got {edge!r}")
    if edge > 0 and not sweep.periods_per_year:
        raise InputError(
            "the power estimate needs the periods per year to turn the annualised edge into a per-window "
            "mean; give --periods-per-year (or dated windows), or --edge 0 to skip power"
        )
    if seed is None or isinstance(seed, bool) or int(seed) < 0:
        raise InputError(f"seed must be a non-negative integer; got {seed!r}")
    settings = _check_settings(settings, resamples)
    policy = policy or DEFAULT_POLICY
    real = gather_evidence(sweep, settings=replace(settings, seed=int(seed)), policy=policy)
    k = real.selected_index
    null_seed, audit_seed = (int(c.generate_state(1, dtype=np.uint32)[0]) for c in np.random.SeedSequence(int(seed)).spawn(2))
    nulls = null_like(sweep, count=count, seed=null_seed, block_series=block_series, selected=k)
    seeds = _audit_seeds(audit_seed, count)
    total = count * (2 if edge > 0 else 1)
    null = _run_audits(
        nulls.sweeps(), count=count, audit_seeds=seeds, settings=settings, policy=policy, planted=None,
        seed=int(seed), progress=(lambda done: progress(done, total)) if progress else None,
    )
    power = None
    per_window = None
    if edge > 0:
        sd = float(nulls.centred[:, k].std(ddof=1))
        per_window = per_window_edge(float(edge), float(sweep.periods_per_year), sd) if sd > 0 else 0.0

        def edged() -> Iterator[Sweep]:
            for s in nulls.sweeps():
                x = np.array(s.returns)
                x[:, k] += per_window
                yield replace(s, returns=x)

        power = _run_audits(
            edged(), count=count, audit_seeds=seeds, settings=settings, policy=policy, planted=[k],
            seed=int(seed), progress=(lambda done: progress(count + done, total)) if progress else None,
        )
    return SweepCalibration(
        sweep=sweep,
        observed=decide(real, policy).decision,
        selected_index=k,
        configuration=sweep.configurations[k],
        null=null,
        power=power,
        edge_annual_sharpe=float(edge),
        edge_per_window=per_window,
        null_block_length=nulls.block_length,
        block_series=block_series,
        sweeps=count,
        resamples=null.resamples,
        seed=int(seed),
    )


def calibration_to_dict(calibration: VerdictCalibration) -> dict:
    """The JSON form of a :class:`VerdictCalibration` (rates, their errors and the check table)."""

    def rate(r: Rate) -> dict:
        def num(v: float):
            return None if not math.isfinite(v) else float(v)

        return {
            "rate": num(r.rate),
            "standard_error": num(r.standard_error),
            "upper_95": num(r.upper_95),
            "lower_95": num(r.lower_95),
            "events": r.events,
            "sweeps": r.trials,
        }

    return {
        "sweeps": calibration.sweeps,
        "resamples": calibration.resamples,
        "go": rate(calibration.go),
        "checks": [
            {"id": c.id, "required": c.required, "failure": rate(c.failures)} for c in calibration.checks
        ],
        "planted_selected": None if calibration.planted_selected is None else rate(calibration.planted_selected),
    }


def sweep_calibration_to_dict(result: SweepCalibration, *, command: str | None = None) -> dict:
    """The ``sweepaudit calibrate --json`` document (schema ``sweepaudit.calibration/1``).

    Every figure the terminal shows is a field here; rates are probabilities in [0, 1].
    """
    null = calibration_to_dict(result.null)
    power = None
    if result.power is not None:
        power = calibration_to_dict(result.power)
        power["edge_annualized_sharpe"] = result.edge_annual_sharpe
        power["edge_per_window"] = result.edge_per_window
    policy = result.null.policy
    return {
        "schema": CALIBRATION_SCHEMA,
        "tool": {"name": "sweepaudit", "version": __version__},
        "input": {
            "path": result.sweep.path,
            "sha256": result.sweep.sha256,
            "configurations": result.sweep.n_configurations,
            "windows": result.sweep.n_windows,
            "periods_per_year": result.sweep.periods_per_year,
        },
        "settings": {
            "seed": result.seed,
            "sweeps": result.sweeps,
            "resamples": result.resamples,
            "edge_annualized_sharpe": result.edge_annual_sharpe,
            "null_bootstrap": "stationary",
            "null_block_length": result.null_block_length,
            "null_block_series": result.block_series,
        },
        "policy": {"significance": policy.significance, "required": list(policy.required)},
        "selected": {"configuration": result.configuration, "index": result.selected_index},
        "observed_verdict": result.observed,
        "false_go": null["go"],
        "power": power,
        "null": null,
        "command": command,
    }

