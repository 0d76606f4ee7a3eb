"""Tests of the edge over time and the decay test (sweepaudit.methods.stability).

Checked against outside references:

* the rolling means and Sharpe ratios against pandas' ``Series.rolling(L).mean()`` and ``.std()``;
* the sub-periods' means and Sharpe ratios against numpy on the slices;
* on serially uncorrelated windows the decay statistic against scipy's two-sample t-test
  (``scipy.stats.ttest_ind``, pooled variance): the two differ only in the variance estimate
  (prewhitened long-run variance against the pooled sample variance), so they agree to a few percent
  on a long record;
* theory: the test's size under a constant mean, for serially uncorrelated and AR(1) windows
  (phi = 0.5), also after picking the best of many configurations by full-sample Sharpe ratio (the
  difference of the two periods' means is uncorrelated with the full-sample mean), against binomial
  bounds; its power against an edge that stopped halfway.

Internal consistency only: the thirds rule (as CSCV's blocks), the split's bounds, the default rolling
length, and every error message.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.methods.stability import (
    MIN_PERIOD,
    default_rolling_windows,
    edge_stability,
    sub_period,
    thirds,
)
from sweepaudit.simulate import simulate_dependent_grid, simulate_late_edge


def _ar1(rng, t, phi):
    e = rng.standard_normal(t + 200)
    x = np.empty_like(e)
    x[0] = e[0]
    for i in range(1, len(e)):
        x[i] = phi * x[i - 1] + math.sqrt(1 - phi * phi) * e[i]
    return 0.01 * x[200:]


def test_rolling_figures_match_pandas():
    x = np.random.default_rng(1).normal(0.001, 0.01, 300) + 5.0  # a level far from zero
    st = edge_stability(x, rolling_windows=52)
    rolling = pd.Series(x).rolling(52)
    assert np.allclose(st.rolling_mean, rolling.mean().to_numpy()[51:], rtol=0, atol=1e-12)
    expected = (rolling.mean() / rolling.std()).to_numpy()[51:]
    assert np.allclose(st.rolling_sharpe, expected, rtol=1e-8)
    assert st.rolling_lowest == pytest.approx(expected.min())
    assert st.rolling_highest == pytest.approx(expected.max())
    assert st.rolling_share_positive == pytest.approx(np.mean(expected > 0))


def test_thirds_and_periods_match_numpy():
    x = np.random.default_rng(2).normal(0.002, 0.01, 100)
    assert thirds(100) == ((0, 34), (34, 67), (67, 100))
    st = edge_stability(x, recent_share=0.3)
    for (a, b), part in zip(thirds(100), st.thirds):
        assert (part.start, part.stop, part.windows) == (a, b, b - a)
        assert part.mean == pytest.approx(x[a:b].mean())
        assert part.sharpe == pytest.approx(x[a:b].mean() / x[a:b].std(ddof=1))
    assert (st.early.start, st.early.stop, st.recent.start, st.recent.stop) == (0, 70, 70, 100)
    assert st.difference == pytest.approx(x[70:].mean() - x[:70].mean())
    # Each period keeps at least MIN_PERIOD windows whatever the share.
    assert edge_stability(x, recent_share=0.01).recent.windows == MIN_PERIOD
    assert edge_stability(x, recent_share=0.99).early.windows == MIN_PERIOD


def test_statistic_agrees_with_scipy_two_sample_t_on_uncorrelated_windows():
    rng = np.random.default_rng(3)
    for shift in (0.0, -0.001, -0.002):
        x = rng.normal(0.001, 0.01, 2000)
        x[1000:] += shift
        st = edge_stability(x)
        reference = stats.ttest_ind(x[1000:], x[:1000], equal_var=True)
        assert st.statistic == pytest.approx(reference.statistic, rel=0.08, abs=0.08)
        assert st.pvalue == pytest.approx(stats.t.cdf(st.statistic, st.degrees_of_freedom))


def test_sub_period_t_ratio_is_the_long_run_one():
    x = _ar1(np.random.default_rng(4), 400, 0.5)
    part = sub_period(x, 100, 300)
    from sweepaudit.methods.longrun import long_run_variance

    lr = long_run_variance(x[100:300])
    assert part.t_ratio == pytest.approx(x[100:300].mean() / math.sqrt(lr.variance[0] / 200))
    assert part.degrees_of_freedom == pytest.approx(lr.degrees_of_freedom[0])


def _flag_rate(draw, sweeps):
    return sum(edge_stability(draw(np.random.default_rng(seed))).pvalue <= 0.05 for seed in range(sweeps))


@pytest.mark.parametrize("phi", [0.0, 0.5])
def test_size_under_a_constant_mean_short(phi):
    sweeps = 300
    flagged = _flag_rate(lambda rng: _ar1(rng, 208, phi) + 0.002, sweeps)
    assert flagged <= stats.binom.ppf(0.999, sweeps, 0.05)


def _best_of(rng, n, t, phi):
    x = simulate_dependent_grid(rng, n, t, phi=phi)
    return x[:, np.argmax(x.mean(axis=0) / x.std(axis=0, ddof=1))]


def test_picking_the_best_does_not_tilt_the_test_short():
    sweeps = 300
    flagged = _flag_rate(lambda rng: _best_of(rng, 50, 208, 0.0), sweeps)
    assert flagged <= stats.binom.ppf(0.999, sweeps, 0.05)


@pytest.mark.slow
@pytest.mark.parametrize("phi", [0.0, 0.3, 0.5])
def test_size_after_picking_the_best_of_a_hundred(phi):
    sweeps = 1000
    flagged = _flag_rate(lambda rng: _best_of(rng, 100, 208, phi), sweeps)
    assert flagged / sweeps <= 0.05 + 2 * math.sqrt(0.05 * 0.95 / sweeps)


def test_an_edge_that_stopped_halfway_is_flagged_and_one_that_started_is_not():
    sweeps = 60
    dead = live = 0
    for seed in range(sweeps):
        x = simulate_late_edge(np.random.default_rng(seed), 36, 208)[:, 14]  # a plateau cell of the 6 x 6 grid
        live += edge_stability(x).pvalue <= 0.05
        dead += edge_stability(x[::-1]).pvalue <= 0.05
    assert live == 0
    assert dead >= 0.75 * sweeps  # the test's power at annualized Sharpe 3 over two years: about 0.9


def test_default_rolling_windows():
    assert default_rolling_windows(208, 52) == 52  # one year
    assert default_rolling_windows(120, 52) == 20  # a year is more than a third: a sixth of the windows
    assert default_rolling_windows(40, 4) == MIN_PERIOD
    assert default_rolling_windows(600, None) == 100


def test_flat_record_and_errors():
    flat = np.zeros(60)
    st = edge_stability(flat)
    assert math.isnan(st.statistic) and st.pvalue == 1.0
    assert np.isnan(st.rolling_sharpe).all() and math.isnan(st.rolling_lowest)
    with pytest.raises(DegenerateDataError, match="series must hold at least 24 windows; got 23"):
        edge_stability(np.ones(23))
    with pytest.raises(InputError, match="recent_share must lie strictly between 0 and 1; got 1.5"):
        edge_stability(np.arange(30.0), recent_share=1.5)
    with pytest.raises(InputError, match="rolling_windows must be a whole number from 2 to 30; got 31"):
        edge_stability(np.arange(30.0), rolling_windows=31)
    with pytest.raises(InputError, match=r"a sub-period must be at least 8 windows inside 0\.\.30; got 25\.\.30"):
        sub_period(np.arange(30.0), 25, 30)
