"""Tests of block-bootstrap confidence intervals (sweepaudit.methods.bootstrap_ci).

External / theory checks:
- coverage of the 95% percentile interval for the mean on iid normal data is close to nominal
  (Efron and Tibshirani 1993, ch. 13: first-order accurate);
- on AR(1) data the block bootstrap covers where the iid bootstrap under-covers (Politis and Romano
  1994; Kunsch 1989): the iid bootstrap ignores the long-run variance factor (1 + phi)/(1 - phi);
- the interval for the mean agrees with arch's StationaryBootstrap.conf_int (reference library) on the
  same data within Monte Carlo error, and exactly on the very same indices.
Internal consistency: basic = reflected percentile; re-levelling from kept distributions; the
intervals of a part of a series (``part_intervals``) against a literal loop over the replayed indices
and the whole-series intervals; theory: a part of n iid windows has a mean of standard deviation
sigma / sqrt(n).
"""

from dataclasses import replace

import numpy as np
import pytest

from sweepaudit.errors import InputError
from sweepaudit.methods.bootstrap_ci import at_level, bootstrap_intervals, interval, part_columns, part_intervals
from sweepaudit.resample import Resamples, automatic_block_length, draw_resamples, resampled_moments


def _ar1(rng, n, phi, cols=1):
    e = rng.standard_normal((n, cols))
    x = np.empty_like(e)
    x[0] = e[0] / np.sqrt(1 - phi**2)
    for t in range(1, n):
        x[t] = phi * x[t - 1] + e[t]
    return x


def _covers(x, block, seed, kind="stationary", B=499, method="percentile"):
    r = draw_resamples(len(x), count=B, kind=kind, block_length=block, seed=seed)
    iv = bootstrap_intervals(x, resampled_moments(x, r), confidence=0.95, method=method).mean[0]
    return iv.low <= 0.0 <= iv.high


def test_coverage_iid_normal_close_to_nominal():
    rng = np.random.default_rng(100)
    reps = 300
    hits = sum(_covers(rng.standard_normal((100, 1)), 1.0, seed=s) for s in range(reps))
    se = np.sqrt(0.95 * 0.05 / reps)
    # percentile intervals under-cover slightly at n = 100 (first-order accuracy): allow 1 point
    assert 0.95 - 3 * se - 0.01 <= hits / reps <= 0.95 + 3 * se


def test_block_bootstrap_covers_where_iid_bootstrap_undercovers_on_ar1():
    rng = np.random.default_rng(7)
    reps, phi, n = 200, 0.6, 300
    block_hits = iid_hits = 0
    for s in range(reps):
        x = _ar1(rng, n, phi)
        block = automatic_block_length(x[:, 0])
        block_hits += _covers(x, block, seed=s)
        iid_hits += _covers(x, 1.0, seed=s)
    # iid bootstrap: SE too small by sqrt((1 - phi)/(1 + phi)) = 0.5 -> coverage near P(|Z| < 0.98) = 0.67
    assert iid_hits / reps < 0.78
    # finite-sample block bootstraps under-cover somewhat (Lahiri 2003, ch. 3); far less than iid
    assert block_hits / reps > 0.80
    assert block_hits - iid_hits > 0.12 * reps


@pytest.mark.parametrize("phi", [0.0, 0.6, 0.8])
def test_studentized_interval_covers_under_persistent_dependence(phi):
    # Theory: the bootstrap-t with a consistent long-run studentizer (Hall 1988; Gotze and Kunsch 1996)
    # covers at about its nominal level whatever the block length, because its width comes from the
    # long-run variance, not from how much dependence the blocks keep. Even iid resamples (block 1)
    # give about 95% on AR(1) windows, where the percentile interval of the same resamples gives 67%
    # or less (test above).
    rng = np.random.default_rng(int(10 * phi) + 20)
    reps, n = 200, 300
    hits = sum(_covers(_ar1(rng, n, phi), 1.0, seed=s, method="studentized") for s in range(reps))
    se = np.sqrt(0.95 * 0.05 / reps)
    assert 0.95 - 3 * se - 0.015 <= hits / reps <= 0.95 + 3 * se + 0.01


def test_studentized_interval_uses_the_long_run_scale():
    # Internal: the bounds are the estimate minus the t-scaled quantiles of the standardised draws
    # times the long-run standard error; re-levelling keeps the scale.
    from scipy import stats

    from sweepaudit.methods.bootstrap_ci import long_run_standard_errors

    x = np.random.default_rng(30).standard_normal((150, 3)) + 0.1
    m = resampled_moments(x, draw_resamples(150, count=999, block_length=3.0, seed=2))
    iv = bootstrap_intervals(x, m, confidence=0.9)
    assert iv.method == "studentized"
    se, sharpe_se, nu = long_run_standard_errors(x)
    z = (m.mean[:, 1] - x[:, 1].mean()) / m.mean[:, 1].std()
    lo, hi = np.quantile(z, [0.05, 0.95])
    t_lo, t_hi = stats.t.ppf(stats.norm.cdf([lo, hi]), nu[1])
    assert iv.mean[1].low == pytest.approx(x[:, 1].mean() - t_hi * se[1], rel=1e-10)
    assert iv.mean[1].high == pytest.approx(x[:, 1].mean() - t_lo * se[1], rel=1e-10)
    wider = at_level(iv, 0.99)
    assert wider.method == "studentized" and wider.mean[1].low < iv.mean[1].low
    percentile = at_level(iv, 0.9, "percentile")
    assert percentile.mean[1].low == pytest.approx(np.quantile(m.mean[:, 1], 0.05))


def test_mean_interval_agrees_with_arch_conf_int_within_monte_carlo_error():
    from arch.bootstrap import StationaryBootstrap

    rng = np.random.default_rng(3)
    x = _ar1(rng, 400, 0.3)[:, 0] * 0.01 + 0.001
    block, B = 5.0, 4000
    ours = bootstrap_intervals(
        x[:, None], resampled_moments(x[:, None], draw_resamples(400, count=B, block_length=block, seed=1)),
        method="percentile",
    ).mean[0]
    theirs = StationaryBootstrap(block, x, seed=2).conf_int(np.mean, reps=B, method="percentile", size=0.95)
    width = ours.high - ours.low
    # Monte Carlo error of a 2.5% quantile with B = 4000 is a few percent of the interval width.
    assert ours.low == pytest.approx(theirs[0, 0], abs=0.06 * width)
    assert ours.high == pytest.approx(theirs[1, 0], abs=0.06 * width)


def test_mean_interval_equals_arch_on_the_same_indices():
    from arch.bootstrap import StationaryBootstrap

    rng = np.random.default_rng(8)
    x = rng.standard_normal(150)
    bs = StationaryBootstrap(4.0, x, seed=77)
    stats, idx = [], []
    for pos, _ in bs.bootstrap(999):
        idx.append(np.asarray(bs.index).copy())
        stats.append(pos[0].mean())
    moments = resampled_moments(x[:, None], Resamples.from_indices(np.array(idx)))
    ours = bootstrap_intervals(x[:, None], moments, method="percentile").mean[0]
    lo, hi = np.percentile(np.array(stats), [2.5, 97.5])
    assert ours.low == pytest.approx(lo, abs=1e-12)
    assert ours.high == pytest.approx(hi, abs=1e-12)


def test_sharpe_interval_matches_a_slow_loop():
    rng = np.random.default_rng(5)
    x = rng.standard_normal((60, 3)) + 0.2
    r = draw_resamples(60, count=300, block_length=3.0, seed=4)
    got = bootstrap_intervals(x, resampled_moments(x, r), method="percentile")
    loop = np.array([[x[i, k].mean() / x[i, k].std(ddof=1) for k in range(3)] for i in r.indices()])
    np.testing.assert_allclose(got.sharpe_distribution, loop, rtol=1e-9)
    lo, hi = np.quantile(loop[:, 2], [0.025, 0.975])
    assert got.sharpe[2].low == pytest.approx(lo) and got.sharpe[2].high == pytest.approx(hi)
    assert got.sharpe[2].estimate == pytest.approx(x[:, 2].mean() / x[:, 2].std(ddof=1))


def test_basic_interval_reflects_percentile_and_relevels():
    rng = np.random.default_rng(6)
    x = rng.standard_normal((80, 2))
    m = resampled_moments(x, draw_resamples(80, count=500, block_length=2.0, seed=1))
    pct = bootstrap_intervals(x, m, confidence=0.9, method="percentile")
    basic = bootstrap_intervals(x, m, confidence=0.9, method="basic")
    for a, b in zip(pct.mean, basic.mean):
        assert b.low == pytest.approx(2 * a.estimate - a.high)
        assert b.high == pytest.approx(2 * a.estimate - a.low)
    again = at_level(pct, 0.5)
    assert again.mean[0].high - again.mean[0].low < pct.mean[0].high - pct.mean[0].low
    assert again.mean[0] == bootstrap_intervals(x, m, confidence=0.5, method="percentile").mean[0]


def test_interval_helper_drops_non_finite_and_validates():
    iv = interval(0.5, np.array([0.0, 1.0, np.nan, np.inf]), confidence=0.5)
    assert iv.low == pytest.approx(0.25) and iv.high == pytest.approx(0.75)
    m = resampled_moments(np.ones((10, 1)) + np.arange(10)[:, None], draw_resamples(10, count=5, block_length=1.0, seed=0))
    with pytest.raises(InputError, match="strictly between 0 and 1; got 1.5"):
        bootstrap_intervals(np.ones((10, 1)) + np.arange(10)[:, None], m, confidence=1.5)
    with pytest.raises(InputError, match="studentized, percentile, basic; got 'bca'"):
        bootstrap_intervals(np.ones((10, 1)) + np.arange(10)[:, None], m, method="bca")
    with pytest.raises(InputError, match="disagree in shape"):
        bootstrap_intervals(np.ones((10, 2)), m)


# ------------------------------------------------------------------------------------- parts of a series


def test_part_covering_every_window_gives_the_whole_series_intervals():
    x = np.random.default_rng(21).normal(0.001, 0.01, 150)
    r = draw_resamples(150, count=499, block_length=4.0, seed=3)
    parts = [(x, np.ones(150, dtype=bool))]
    (part,) = part_intervals(parts, resampled_moments(part_columns(parts), r))
    whole = bootstrap_intervals(x[:, None], resampled_moments(x[:, None], r))
    assert np.allclose(part.mean_distribution, whole.mean_distribution, rtol=1e-12, atol=1e-15)
    for a, b in ((part.mean[0], whole.mean[0]), (part.sharpe[0], whole.sharpe[0])):
        assert (a.low, a.high) == pytest.approx((b.low, b.high), rel=1e-9)


def test_part_moments_are_the_drawn_windows_inside_the_part():
    # A literal loop over the replayed indices: each resample's mean over the draws that land in the part.
    x = np.random.default_rng(22).normal(0.0, 0.01, 90)
    mask = np.arange(90) >= 60
    r = draw_resamples(90, count=200, block_length=5.0, seed=4)
    parts = [(x, mask)]
    moments = resampled_moments(part_columns(parts), r)
    (part,) = part_intervals(parts, moments, method="percentile")
    literal = []
    for idx in r.indices():
        inside = idx[mask[idx]]
        if inside.size >= 2:
            literal.append(x[inside].mean())
    assert np.allclose(part.mean_distribution[:, 0], literal, rtol=1e-10, atol=1e-15)
    assert part.mean[0].estimate == pytest.approx(x[60:].mean())


def test_part_interval_width_is_the_part_length_width():
    # Theory: the part's mean over n of T iid windows has standard deviation sigma / sqrt(n).
    x = np.random.default_rng(23).normal(0.0, 0.01, 400)
    mask = np.arange(400) < 100
    moments = resampled_moments(part_columns([(x, mask)]), draw_resamples(400, count=2000, block_length=1.0, seed=5))
    (part,) = part_intervals([(x, mask)], moments, method="percentile")
    assert part.mean_distribution.std() == pytest.approx(x[:100].std() / 10, rel=0.1)


def test_part_errors():
    x = np.zeros(20)
    with pytest.raises(InputError, match=r"mask must have the series' 20 windows; got shape \(19,\)"):
        part_columns([(x, np.ones(19, dtype=bool))])
    moments = resampled_moments(part_columns([(x + np.arange(20), np.ones(20, dtype=bool))]),
                                draw_resamples(20, count=10, block_length=1.0, seed=0))
    with pytest.raises(InputError, match="part_intervals needs resampled second moments"):
        part_intervals([(x, np.ones(20, dtype=bool))], replace(moments, second=None))


def test_column_quantiles_equal_numpys():
    """Reference library: ``numpy.quantile`` (linear method), the same values to the last bit, on
    resample counts of odd and even size, levels whose interpolation weight is above and below 1/2,
    ties, and a single row."""
    from sweepaudit.methods.bootstrap_ci import column_quantiles

    rng = np.random.default_rng(5)
    levels = [0.005, 0.025, 0.1, 0.5, 0.9, 0.975, 0.995]
    for b, n in ((999, 7), (1000, 13), (10_001, 3), (1, 4), (40, 5)):
        draws = rng.standard_t(3, (b, n))
        draws[:, -1] = np.round(draws[:, -1])  # ties
        kept = draws.copy()
        np.testing.assert_array_equal(column_quantiles(draws, levels), np.quantile(draws, levels, axis=0))
        np.testing.assert_array_equal(draws, kept)  # the draws are kept as they were
        np.testing.assert_array_equal(column_quantiles(draws[:, :1], levels), np.quantile(draws[:, :1], levels, axis=0))
        np.testing.assert_array_equal(draws, kept)


def test_studentized_bounds_equal_standardising_every_draw():
    """Internal consistency: the studentized bounds read the raw draws' order statistics and standardise
    them; standardising every draw first and taking numpy's quantiles gives the same bounds."""
    from sweepaudit.methods.bootstrap_ci import _studentized
    from sweepaudit.methods.distributions import normal_cdf, t_ppf

    rng = np.random.default_rng(6)
    draws = rng.standard_normal((2000, 9)) * rng.uniform(0.5, 2, 9) + rng.uniform(-1, 1, 9)
    estimates, se, nu, q = draws.mean(axis=0) + 0.01, np.full(9, 0.3), np.full(9, 40.0), [0.025, 0.975]
    z = (draws - estimates) / np.std(draws, axis=0)
    tq = t_ppf(normal_cdf(np.quantile(z, q, axis=0)), nu)
    expected = np.stack([estimates - tq[1] * se, estimates - tq[0] * se])
    np.testing.assert_array_equal(_studentized(estimates, draws, se, nu, q), expected)
