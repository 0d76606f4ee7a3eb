"""Tests of the synthetic sweeps (sweepaudit.simulate), the calibration study's families.

Verified against an outside reference:
- Simulators against theory: AR(1) autocorrelations phi and phi^2 (Hamilton 1994, Time Series
  Analysis, section 3.4); Student-t variance nu / (nu - 2) before scaling and raw kurtosis
  3 + 6 / (nu - 4); GARCH(1,1) kurtosis 3 (1 - (a + b)^2) / (1 - (a + b)^2 - 2 a^2) (Bollerslev
  1986) and lag-1 autocorrelation of squares a (1 - a b - b^2) / (1 - 2 a b - b^2) (Bollerslev
  1988, J. Time Series Analysis 9(2); He and Terasvirta 1999); the neighbour-grid correlation
  against its defining formula evaluated by hand; the planted edge against SR / sqrt(periods) * sd.

Internal consistency only: the error messages; the names the calibration module re-exports.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from sweepaudit import calibration
from sweepaudit.errors import InputError
from sweepaudit.simulate import (
    FAMILIES,
    grid_block_columns,
    hill_columns,
    neighbour_correlation,
    simulate_crashes,
    simulate_dead_edge,
    simulate_dependent_grid,
    simulate_late_edge,
    simulate_leveraged,
    simulate_quiet_edge,
    simulate_regime,
    square_grid,
    per_window_edge,
    plant_edge,
    plateau_columns,
    simulate_autoregressive,
    simulate_edge_plateau,
    simulate_neighbour_grid,
    simulate_normal,
    simulate_one_edge,
    simulate_several_edges,
    simulate_short_record,
    simulate_student_t,
    simulate_volatility_clustering,
    spread_columns,
)

from .helpers import lag_correlation, rng


def test_normal_scale_and_shape():
    x = simulate_normal(rng(1), 40, 5000, volatility=0.02)
    assert x.shape == (5000, 40)
    # Pooled sd of 200,000 draws: relative standard error about 0.16%.
    assert x.std() == pytest.approx(0.02, rel=0.01)
    assert abs(x.mean()) < 4 * 0.02 / math.sqrt(x.size)


def test_student_t_unit_variance_scaling_and_fat_tails():
    x = simulate_student_t(rng(2), 50, 8000, degrees_of_freedom=5.0, volatility=0.01)
    # Scaled to the stated volatility; the variance estimate of a t(5) converges slowly.
    assert x.std() == pytest.approx(0.01, rel=0.03)
    kurt = stats.kurtosis(x.ravel(), fisher=False)  # raw kurtosis (3 for normal)
    # Theory 3 + 6 / (5 - 4) = 9; the sample kurtosis of a t(5) is very noisy, so only its side of 3.
    assert kurt > 4.5
    xn = simulate_normal(rng(2), 50, 8000)
    assert abs(stats.kurtosis(xn.ravel(), fisher=False) - 3) < 0.1


@pytest.mark.parametrize("phi", [0.2, 0.5])
def test_autoregressive_autocorrelation_is_phi(phi):
    x = simulate_autoregressive(rng(3), 20, 4000, phi=phi, volatility=0.01)
    # 80,000 pooled pairs: standard error of the lag-1 estimate about sqrt((1 - phi^2) / 80000).
    assert lag_correlation(x, 1) == pytest.approx(phi, abs=0.02)
    assert lag_correlation(x, 2) == pytest.approx(phi**2, abs=0.02)
    assert x.std() == pytest.approx(0.01, rel=0.02)  # stationary sd equals the volatility


def test_volatility_clustering_matches_garch_moments():
    a, b = 0.10, 0.85
    x = simulate_volatility_clustering(rng(4), 50, 4000, alpha=a, beta=b, volatility=0.01)
    kurt_theory = 3 * (1 - (a + b) ** 2) / (1 - (a + b) ** 2 - 2 * a * a)  # 3.774
    acf2_theory = a * (1 - a * b - b * b) / (1 - 2 * a * b - b * b)  # 0.179
    assert stats.kurtosis(x.ravel(), fisher=False) == pytest.approx(kurt_theory, abs=0.4)
    assert lag_correlation(x**2, 1) == pytest.approx(acf2_theory, abs=0.04)
    assert abs(lag_correlation(x, 1)) < 0.02  # returns themselves are uncorrelated
    assert x.std() == pytest.approx(0.01, rel=0.03)


def test_neighbour_correlation_formula_by_hand():
    c = neighbour_correlation(6, length_scale=2.0, common_share=0.25)
    assert c[0, 0] == pytest.approx(1.0)
    assert c[0, 1] == pytest.approx(0.25 + 0.75 * math.exp(-0.5))
    assert c[1, 4] == pytest.approx(0.25 + 0.75 * math.exp(-1.5))
    g = neighbour_correlation(6, grid=(2, 3), length_scale=2.0, common_share=0.25)
    # Row-major grid: configuration 0 at (0, 0), configuration 4 at (1, 1): distance sqrt(2).
    assert g[0, 4] == pytest.approx(0.25 + 0.75 * math.exp(-math.sqrt(2) / 2))
    assert np.linalg.eigvalsh(neighbour_correlation(200, grid=(10, 20))).min() > 0


def test_neighbour_grid_correlation_decays_with_distance():
    x = simulate_neighbour_grid(rng(5), 40, 6000, length_scale=3.0, common_share=0.3)
    sample = np.corrcoef(x, rowvar=False)
    target = neighbour_correlation(40, length_scale=3.0, common_share=0.3)
    # Standard error of a correlation from 6,000 windows is at most 1/sqrt(6000) = 0.013.
    assert np.abs(sample - target).max() < 0.06
    by_distance = [np.mean(np.diagonal(sample, d)) for d in (1, 5, 20)]
    assert by_distance[0] > by_distance[1] > by_distance[2] > 0.25  # the common factor stays


def test_planted_edges_have_the_stated_mean():
    ppy, vol, sr = 52.0, 0.01, 1.0
    edge = sr / math.sqrt(ppy) * vol
    assert per_window_edge(sr, ppy, vol) == pytest.approx(edge)
    x = simulate_one_edge(rng(6), 21, 20000, annual_sharpe=sr, periods_per_year=ppy, volatility=vol)
    means = x.mean(axis=0)
    se = vol / math.sqrt(20000)
    assert means[10] == pytest.approx(edge, abs=4 * se)
    assert np.abs(np.delete(means, 10)).max() < 4 * se * 1.5
    p = simulate_edge_plateau(rng(7), 21, 20000, width=5)
    assert set(np.flatnonzero(p.mean(axis=0) > edge / 2)) == set(plateau_columns(21, 5)) == {8, 9, 10, 11, 12}
    s = simulate_several_edges(rng(8), 30, 20000, count=3)
    assert set(np.flatnonzero(s.mean(axis=0) > edge / 2)) == set(spread_columns(30, 3)) == {4, 14, 24}
    # Sample-sd version: the edge is sr / sqrt(ppy) times the column's own sd.
    base = simulate_normal(rng(9), 3, 500, volatility=0.02)
    planted = plant_edge(base, [1], annual_sharpe=2.0, periods_per_year=252.0)
    added = planted - base
    assert added[:, 1] == pytest.approx(np.full(500, 2.0 / math.sqrt(252) * base[:, 1].std(ddof=1)))
    assert not added[:, [0, 2]].any()


def test_short_record_family_and_registry():
    x = simulate_short_record(rng(10), 10, 52)
    assert x.shape == (52, 10)
    with pytest.raises(InputError, match="n_windows must be at most two years"):
        simulate_short_record(rng(10), 10, 260)
    names = [f.name for f in FAMILIES]
    assert len(names) == len(set(names))
    kinds = {f.kind for f in FAMILIES}
    assert kinds == {"null", "alternative"}
    for f in FAMILIES:
        assert f.simulate(rng(0), 20, 60).shape == (60, 20)
        assert (f.planted is None) == (f.kind == "null")


def test_dependent_grid_has_the_asked_dependence():
    # Theory: lag-1 autocorrelation phi (Hamilton 1994, section 3.4), unit-variance innovations scaled
    # to the volatility; the grid correlation of neighbour_correlation between configurations.
    x = simulate_dependent_grid(rng(21), 36, 4000, phi=0.6)
    e = x - x.mean(axis=0)
    rho = np.sum(e[1:] * e[:-1], axis=0) / np.sum(e * e, axis=0)
    assert np.mean(rho) == pytest.approx(0.6, abs=0.03)
    assert x.std() == pytest.approx(0.01, rel=0.05)
    corr = np.corrcoef(simulate_dependent_grid(rng(22), 36, 4000).T)
    target = neighbour_correlation(36, grid=square_grid(36), length_scale=2.0, common_share=0.3)
    assert np.abs(corr - target).max() < 0.1
    t = simulate_dependent_grid(rng(23), 16, 20000, shocks="student_t")
    assert t.std() == pytest.approx(0.01, rel=0.05)
    assert ((t - t.mean()) ** 4).mean() / t.var() ** 2 > 4.5  # fat tails (raw kurtosis above 3)


def test_crash_family_has_a_slightly_negative_mean_and_lucky_members():
    # Constructed so that the expected crash loss is 1.05 times the premium: the mean is
    # -0.05 times the premium, while a member that missed every crash shows the premium alone.
    x = simulate_crashes(rng(24), 40, 60_000)
    premium = per_window_edge(1.5, 52, 0.01)
    assert x.mean() == pytest.approx(-0.05 * premium, abs=0.05 * premium)
    short = simulate_crashes(rng(25), 100, 260)
    worst = short.min(axis=0)
    assert (worst > -0.05).any() and (worst < -0.1).any()  # some escaped, some were hit


def test_regime_leverage_quiet_edge_and_planted_cells():
    x = simulate_regime(rng(26), 20, 200_000, duration=50)
    assert abs(x.mean()) < 0.1 * per_window_edge(1.0, 52, 0.01)  # zero on average over many regimes
    lev = simulate_leveraged(rng(27), 20, 5000, bases=4)
    sd = lev.std(axis=0).reshape(4, 5)
    assert np.all(np.diff(sd, axis=1) > 0)  # leverage rises along each base strategy
    with pytest.raises(InputError, match="multiple of bases"):
        simulate_leveraged(rng(), 21, 10)
    q = simulate_quiet_edge(rng(28), 10, 20000)
    assert q[:, 0].std() == pytest.approx(0.01, rel=0.05) and q[:, 1].std() == pytest.approx(0.03, rel=0.05)
    assert q[:, 0].mean() == pytest.approx(per_window_edge(2.0, 52, 0.01), rel=0.15)
    assert grid_block_columns(100, 3) == [44 - 11 + k for k in (0, 1, 2)] + [44 - 1 + k for k in (0, 1, 2)] + [
        44 + 9 + k for k in (0, 1, 2)]
    assert {44, 45, 54, 55} <= set(hill_columns(100)) and 0 not in hill_columns(100)
    assert square_grid(100) == (10, 10) and square_grid(20) == (4, 5) and square_grid(7) == (1, 7)


def test_simulator_errors_name_the_argument():
    with pytest.raises(InputError, match="n_configurations must be a whole number of at least 1; got 0"):
        simulate_normal(rng(), 0, 10)
    with pytest.raises(InputError, match="volatility must be positive and finite; got -1"):
        simulate_normal(rng(), 2, 10, volatility=-1)
    with pytest.raises(InputError, match="phi must lie strictly between -1 and 1"):
        simulate_autoregressive(rng(), 2, 10, phi=1.0)
    with pytest.raises(InputError, match="degrees_of_freedom must exceed 2"):
        simulate_student_t(rng(), 2, 10, degrees_of_freedom=2)
    with pytest.raises(InputError, match="alpha \\+ beta < 1"):
        simulate_volatility_clustering(rng(), 2, 10, alpha=0.5, beta=0.5)
    with pytest.raises(InputError, match="grid must be \\(rows, columns\\)"):
        simulate_neighbour_grid(rng(), 10, 20, grid=(3, 3))
    with pytest.raises(InputError, match="rng must be a numpy.random.Generator"):
        simulate_normal(0, 2, 10)


def test_the_calibration_module_re_exports_the_simulators():
    # The README's examples import them from sweepaudit.calibration.
    for name in ("simulate_normal", "simulate_neighbour_grid", "simulate_one_edge", "FAMILIES", "plant_edge"):
        assert getattr(calibration, name) is globals()[name]


def test_late_edge_earns_only_from_its_start_and_the_dead_edge_is_the_same_sweep_reversed():
    x = simulate_late_edge(rng(41), 36, 20000, annual_sharpe=3.0, start=0.5)
    cells = grid_block_columns(36, 3)
    edge = 3.0 / math.sqrt(52) * 0.01
    se = 0.01 / math.sqrt(10000)
    assert np.abs(x[:10000].mean(axis=0)).max() < 4.5 * se  # nothing before the start
    late = x[10000:].mean(axis=0)
    assert np.allclose(late[cells], edge, atol=4.5 * se)
    assert np.abs(np.delete(late, cells)).max() < 4.5 * se
    assert np.array_equal(simulate_dead_edge(rng(42), 36, 300), simulate_late_edge(rng(42), 36, 300)[::-1])
    with pytest.raises(InputError, match="start must lie in \\[0, 1\\); got 1.2"):
        simulate_late_edge(rng(0), 9, 50, start=1.2)
