"""Tests of the shared resampling engine (sweepaudit.resample).

External / theory checks:
- stationary bootstrap block lengths are geometric with mean 1/p (Politis and Romano 1994, sec. 2);
- the automatic block length on a long AR(1) series is close to the Politis and White (2004)
  optimum b = (2 G^2 / D_SB)^(1/3) n^(1/3) with G = sum |k| R(k), D_SB = 2 g(0)^2 (their eq. 6 and
  the stationary-bootstrap constants of their section 3; D_SB unchanged by the Patton, Politis and
  White 2009 correction). For AR(1) with coefficient phi this is (2 phi / (1 - phi^2))^(2/3) n^(1/3).
- resampled means equal arch's own means on the very same indices (arch.bootstrap, reference library);
- the Politis-White lengths equal arch.bootstrap.optimal_block_length's to the last bit (reference
  library, on the S&P 500 returns of arch.data and simulated AR(1) columns).
Internal consistency: chunking never changes the draws; weights sum to T; replayed indices; the
weights built from the blocks count the indices drawn from the same random numbers.
"""

import numpy as np
import pytest

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.resample import (
    moment_chunk,
    Resamples,
    automatic_block_length,
    draw_resamples,
    indices_to_weights,
    resampled_moments,
    indices_to_counts,
    politis_white_lengths,
)


def _runs(indices: np.ndarray, windows: int) -> np.ndarray:
    """Block lengths of each resample: a block continues while idx[t] = idx[t-1] + 1 (mod T)."""
    lengths = []
    for row in indices:
        cont = (row[1:] == (row[:-1] + 1) % windows)
        breaks = np.flatnonzero(~cont) + 1
        edges = np.concatenate([[0], breaks, [len(row)]])
        lengths.append(np.diff(edges)[:-1])  # the last block is cut by the end of the series
    return np.concatenate(lengths)


def test_stationary_block_lengths_are_geometric_with_requested_mean():
    # Politis and Romano (1994): block lengths L ~ Geometric(p), P(L = l) = p (1 - p)^(l - 1).
    windows, mean_block = 2000, 5.0
    r = draw_resamples(windows, count=200, kind="stationary", block_length=mean_block, seed=11)
    lengths = _runs(r.indices(), windows)
    p = 1 / mean_block
    # A new block that happens to start right after the previous one merges with it (chance 1/T),
    # which lengthens blocks by a negligible amount at T = 2000.
    assert lengths.mean() == pytest.approx(mean_block, rel=0.03)
    for l in (1, 2, 3, 5, 8):
        expected = p * (1 - p) ** (l - 1)
        assert np.mean(lengths == l) == pytest.approx(expected, abs=0.01)


@pytest.mark.parametrize("kind,block", [("circular", 7), ("moving-block", 7)])
def test_fixed_block_bootstraps_use_whole_blocks(kind, block):
    windows = 100
    idx = draw_resamples(windows, count=50, kind=kind, block_length=block, seed=3).indices()
    assert idx.shape == (50, windows)
    # every block of 7 positions is a run of consecutive windows
    for row in idx:
        for start in range(0, windows - block + 1, block):
            seg = row[start : start + block]
            step = np.diff(seg) % windows if kind == "circular" else np.diff(seg)
            assert (step == 1).all()
    if kind == "moving-block":
        assert idx.max() <= windows - 1 and idx.min() >= 0


@pytest.mark.parametrize("kind", ["stationary", "circular", "moving-block"])
def test_weights_count_draws_and_sum_to_windows(kind):
    r = draw_resamples(37, count=300, kind=kind, block_length=4, seed=5)
    idx = r.indices()
    w = np.concatenate(list(r.weight_chunks(64)))
    assert w.shape == (300, 37)
    np.testing.assert_array_equal(w.sum(axis=1), 37)
    for b in (0, 17, 299):
        np.testing.assert_array_equal(w[b], np.bincount(idx[b], minlength=37))


def test_chunk_size_never_changes_the_draws():
    r = draw_resamples(50, count=1000, block_length=3.0, seed=9)
    a = np.concatenate(list(r.index_chunks(1000)))
    b = np.concatenate(list(r.index_chunks(7)))
    np.testing.assert_array_equal(a, b)
    x = np.random.default_rng(0).standard_normal((50, 4))
    m1 = resampled_moments(x, r, chunk=1000)
    m2 = resampled_moments(x, r, chunk=33)
    np.testing.assert_allclose(m1.mean, m2.mean, rtol=0, atol=1e-15)


def test_same_seed_same_resamples_other_seed_other():
    a = draw_resamples(40, count=20, block_length=2.0, seed=1).indices()
    b = draw_resamples(40, count=20, block_length=2.0, seed=1).indices()
    c = draw_resamples(40, count=20, block_length=2.0, seed=2).indices()
    np.testing.assert_array_equal(a, b)
    assert (a != c).any()


def test_moments_equal_arch_means_on_the_same_indices():
    # Reference library: arch's StationaryBootstrap; replay its indices through our weights.
    from arch.bootstrap import StationaryBootstrap

    rng = np.random.default_rng(4)
    x = rng.standard_normal((120, 3))
    bs = StationaryBootstrap(6.0, x, seed=123)
    arch_means, idx = [], []
    for pos, _ in bs.bootstrap(200):
        idx.append(np.asarray(bs.index).copy())
        arch_means.append(pos[0].mean(axis=0))
    replay = Resamples.from_indices(np.array(idx))
    m = resampled_moments(x, replay)
    np.testing.assert_allclose(m.mean, np.array(arch_means), rtol=0, atol=1e-12)
    np.testing.assert_allclose(m.second, np.array([(x[i] ** 2).mean(axis=0) for i in idx]), atol=1e-12)
    var = m.variance()
    np.testing.assert_allclose(var[5], x[idx[5]].var(axis=0, ddof=1), rtol=1e-10)


def test_automatic_block_length_on_long_ar1_is_near_theory():
    # Politis and White (2004): AR(1), phi = 0.5, n = 50,000 -> (2*0.5/0.75)^(2/3) * n^(1/3) = 44.6.
    rng = np.random.default_rng(2024)
    n, phi = 50_000, 0.5
    e = rng.standard_normal(n)
    x = np.empty(n)
    x[0] = e[0]
    for t in range(1, n):
        x[t] = phi * x[t - 1] + e[t]
    theory = (2 * phi / (1 - phi**2)) ** (2 / 3) * n ** (1 / 3)
    assert automatic_block_length(x) == pytest.approx(theory, rel=0.25)
    # On white noise the optimum is short.
    assert automatic_block_length(rng.standard_normal(5000)) < 5


def test_automatic_block_length_rounds_up_for_fixed_blocks():
    x = np.random.default_rng(1).standard_normal(500)
    b = automatic_block_length(x, "circular")
    assert b == int(b) and b >= 1


def test_errors_name_the_rule_and_value():
    with pytest.raises(InputError, match="kind must be one of stationary, circular, moving-block; got 'iid'"):
        draw_resamples(10, count=5, kind="iid", block_length=1.0, seed=0)
    with pytest.raises(DegenerateDataError, match="at least 2 windows; got 1"):
        draw_resamples(1, count=5, block_length=1.0, seed=0)
    with pytest.raises(InputError, match="at least 1; got 0"):
        draw_resamples(10, count=0, block_length=1.0, seed=0)
    with pytest.raises(InputError, match=r"block_length must lie in \[1, 10\] windows; got 11"):
        draw_resamples(10, count=5, block_length=11, seed=0)
    with pytest.raises(InputError, match="whole block length; got 2.5"):
        draw_resamples(10, count=5, kind="circular", block_length=2.5, seed=0)
    with pytest.raises(InputError, match="seed must be a whole number of at least 0; got -1"):
        draw_resamples(10, count=5, block_length=1.0, seed=-1)
    with pytest.raises(InputError, match="2-D integer array"):
        Resamples.from_indices(np.zeros(5, dtype=int))
    with pytest.raises(InputError, match=r"lie in \[0, T\)"):
        Resamples.from_indices(np.array([[0, 3]]))
    with pytest.raises(DegenerateDataError, match="at least 8 windows; got 5"):
        automatic_block_length(np.arange(5.0))
    with pytest.raises(DegenerateDataError, match="non-constant"):
        automatic_block_length(np.ones(50))
    r = draw_resamples(10, count=5, block_length=1.0, seed=0)
    with pytest.raises(InputError, match="T = 10"):
        resampled_moments(np.zeros((9, 2)), r)


def test_indices_to_weights_small_case():
    w = indices_to_weights(np.array([[0, 0, 2], [1, 2, 2]]), 3)
    np.testing.assert_array_equal(w, [[2, 0, 1], [0, 1, 2]])


def test_moment_chunk_bounds():
    assert moment_chunk(2000) == 2048
    assert moment_chunk(10) == 4096
    assert moment_chunk(10**6) == 256


def test_politis_white_lengths_equal_arch():
    """Reference library: ``arch.bootstrap.optimal_block_length`` (Politis and White 2004 with the
    Patton et al. 2009 correction) on the S&P 500 returns shipped in ``arch.data`` (an open data
    set), their absolute values (strong dependence), simulated AR(1) columns and a short series.
    Within 1e-12 relative: the same tuning rules and order of additions over lags, but the lag
    products are summed over all columns at once, not as one BLAS dot product per column."""
    from arch.bootstrap import optimal_block_length
    from arch.data import sp500

    returns = sp500.load()["Adj Close"].pct_change().dropna().to_numpy()
    rng = np.random.default_rng(11)
    ar = np.zeros((1500, 6))
    noise = rng.standard_normal((1500, 6))
    for t in range(1, 1500):
        ar[t] = np.array([0.0, 0.2, 0.4, 0.6, 0.8, 0.95]) * ar[t - 1] + noise[t]
    for data in (returns[:, None], np.abs(returns)[:, None], ar, ar[:30]):
        table = optimal_block_length(data)
        stationary, circular = politis_white_lengths(data)
        np.testing.assert_allclose(stationary, table["stationary"].to_numpy(), rtol=1e-12)
        np.testing.assert_allclose(circular, table["circular"].to_numpy(), rtol=1e-12)


def test_drawn_counts_equal_the_counts_of_the_drawn_indices():
    """Internal consistency: the weights built from the blocks (a difference array) count the
    indices drawn from the same random numbers, for every bootstrap, wrapping blocks included."""
    for kind, block in (("stationary", 10.3), ("stationary", 1.0), ("stationary", 150.0), ("circular", 7),
                        ("moving-block", 7), ("circular", 40)):
        resamples = draw_resamples(200, count=300, kind=kind, block_length=block, seed=4)
        counted = np.concatenate([indices_to_counts(i, 200) for i in resamples.index_chunks(128)])
        np.testing.assert_array_equal(np.concatenate(list(resamples.count_chunks(128))), counted)


def test_no_seed_draws_fresh_entropy_once():
    """Without a seed the resamples still regenerate identically (every block of a streamed audit
    must see the same ones), and two definitions differ."""
    a = draw_resamples(50, count=20, block_length=3.0, seed=None)
    b = draw_resamples(50, count=20, block_length=3.0, seed=None)
    np.testing.assert_array_equal(a.indices(), a.indices())
    assert a.seed is not None and a.seed != b.seed
