"""Tests of sweepaudit.methods.cscv (CSCV, probability of backtest overfitting).

Reference: Bailey, Borwein, Lopez de Prado and Zhu (2017), "The Probability of Backtest
Overfitting", Journal of Computational Finance 20(4) (the CSCV procedure).

Checked against something outside the code under test:

* ``cscv`` on a 4 x 3 matrix worked by hand (statistic "mean", every figure an exact fraction):
  logits, PBO, probability of loss, degradation line, dominance, selections.
* ``cscv`` against a slow literal loop over ``itertools.combinations`` written from the paper's
  algorithm, with exact rational arithmetic (``fractions.Fraction``) for the ordering, so ties
  are ties; both statistics, ties, zero-variance halves, T not a multiple of S.
* theory: under pure noise with exchangeable configurations the selected configuration's
  out-of-sample rank is uniform on 1..N, so E[PBO] is 1/2 for even N and (N + 1) / (2N) for odd
  N with the "<= 0" rule (METHODS.md); a configuration with a strong edge drives PBO to 0.
* the degradation line's least squares against ``scipy.stats.linregress`` via the oracle.

Internal consistency only: invariance to permuting configurations and to DataFrame input, the
mirror ordering of splits, the warning and error messages (our own wording). The diagnosis rule
read off a CSCV result is tested in test_overfitting.py.
"""

from __future__ import annotations

import itertools
import math
import warnings
from fractions import Fraction

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from sweepaudit.errors import DegenerateDataError, InputError, SweepAuditWarning
from sweepaudit.methods.cscv import _split_indicator, cscv
from sweepaudit.results import CscvResult


def run_quietly(*args, **kwargs) -> CscvResult:
    """cscv with its (tested elsewhere) warnings silenced."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SweepAuditWarning)
        return cscv(*args, **kwargs)


# --------------------------------------------------------------------------- hand-worked example

HAND = np.array(
    [
        [2.0, 1.0, 0.0],
        [-2.0, 1.0, 2.0],
        [-1.0, 0.0, 2.0],
        [1.0, -2.0, 0.0],
    ]
)


def test_hand_worked_example():
    """T = 4 windows, S = 4 blocks of one window, N = 3 configurations A, B, C, statistic "mean".

    Columns: A = (2, -2, -1, 1), B = (1, 1, 0, -2), C = (0, 2, 2, 0). Half-sample sums (2 windows,
    mean = sum / 2) for block pairs {0,1} {0,2} {0,3} {1,2} {1,3} {2,3}:
    A: 0, 1, 3, -3, -1, 0;  B: 2, 1, -1, 1, -1, -2;  C: 2, 2, 0, 4, 2, 2.

    split IS  IS sums (A,B,C) winner   OOS  OOS sums   rank of winner      logit
    {0,1}     0, 2, 2   B (tie->low)  {2,3} 0,-2, 2   1                   ln(1/3)
    {0,2}     1, 1, 2   C             {1,3} -1,-1, 2  3                   ln 3
    {0,3}     3,-1, 0   A             {1,2} -3, 1, 4  1                   ln(1/3)
    {1,2}    -3, 1, 4   C             {0,3} 3,-1, 0   2                   0
    {1,3}    -1,-1, 2   C             {0,2} 1, 1, 2   3                   ln 3
    {2,3}     0,-2, 2   C             {0,1} 0, 2, 2   2.5 (ties B: mid)   ln(5/3)

    w = rank / 4. PBO = #{logit <= 0} / 6 = 3/6 (the zero logit counts). Winner's means:
    in-sample x = (1, 1, 1.5, 2, 1, 1), out-of-sample y = (-1, 1, -1.5, 0, 1, 1); probability of
    loss = #{y < 0} / 6 = 2/6 (y = 0 is no loss). Least squares: mean x = 5/4, mean y = 1/12,
    Sxx = 7/8, Sxy = -7/8, Syy = 149/24, so slope -1, intercept 1/12 + 5/4 = 4/3 and
    R^2 = Sxy^2 / (Sxx Syy) = 21/149.

    Dominance: pooled out-of-sample means (all 18 half means) are -1.5 (1), -1 (1), -0.5 (3),
    0 (3), 0.5 (3), 1 (5), 1.5 (1), 2 (1). At the selected values -1.5, -1, 0, 1:
    F_selected = 3/18, 6/18, 9/18, 18/18 and F_pooled = 1/18, 2/18, 8/18, 16/18, so the largest
    first-order violation is 4/18 = 2/9. Integrated: E[(x - X)^+] selected minus pooled at
    -1.5, -1, 0, 1 is 0, 1/18, 7/36, 1/6, and in the limit the pooled mean 1/3 minus the
    selected mean 1/12 = 1/4, the largest second-order violation.
    """
    result = cscv(HAND, partitions=4, statistic="mean")
    order = {tuple(row): k for k, row in enumerate(result.in_sample_blocks.tolist())}
    splits = [(0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3)]
    index = [order[s] for s in splits]
    third = math.log(1 / 3)
    np.testing.assert_allclose(
        result.logits[index], [third, math.log(3), third, 0.0, math.log(3), math.log(5 / 3)],
        rtol=0, atol=1e-15,
    )
    np.testing.assert_array_equal(result.out_of_sample_rank[index], [1, 3, 1, 2, 3, 2.5])
    np.testing.assert_array_equal(result.selected[index], [1, 2, 0, 2, 2, 2])
    np.testing.assert_array_equal(result.in_sample[index], [1, 1, 1.5, 2, 1, 1])
    np.testing.assert_array_equal(result.out_of_sample[index], [-1, 1, -1.5, 0, 1, 1])
    assert result.probability_of_overfitting == 0.5
    assert result.probability_of_loss == pytest.approx(1 / 3, abs=1e-15)
    assert result.degradation_slope == pytest.approx(-1.0, abs=1e-12)
    assert result.degradation_intercept == pytest.approx(4 / 3, abs=1e-12)
    assert result.degradation_r_squared == pytest.approx(21 / 149, abs=1e-12)
    assert result.first_order_violation == pytest.approx(2 / 9, abs=1e-15)
    assert result.first_order_dominance is False
    assert result.second_order_violation == pytest.approx(1 / 4, abs=1e-12)
    assert result.second_order_dominance is False
    assert result.pooled_out_of_sample_mean == pytest.approx(1 / 3, abs=1e-15)
    assert result.median_out_of_sample == 0.5
    assert result.logit_quantiles[0.5] == pytest.approx(math.log(5 / 3) / 2, abs=1e-15)
    assert (result.partitions, result.partitions_requested, result.combinations) == (4, 4, 6)
    np.testing.assert_array_equal(result.block_bounds, [[0, 1], [1, 2], [2, 3], [3, 4]])
    assert result.null_probability_of_overfitting == pytest.approx(2 / 3)
    assert result.warnings == ()


# ------------------------------------------------------------------------- slow literal oracle


def _blocks(windows: int, partitions: int) -> list[np.ndarray]:
    """The documented cut, written independently: first T mod S blocks one window longer."""
    base, extra = divmod(windows, partitions)
    edges = [0]
    for b in range(partitions):
        edges.append(edges[-1] + base + (1 if b < extra else 0))
    return [np.arange(edges[b], edges[b + 1]) for b in range(partitions)]


def _exact_key(values: np.ndarray, statistic: str) -> tuple:
    """A key that orders half-samples exactly like the statistic (Fraction arithmetic)."""
    xs = [Fraction(float(v)) for v in values]
    n = len(xs)
    mean = sum(xs) / n
    if statistic == "mean":
        return (0, mean)
    variance = sum((x - mean) ** 2 for x in xs) / (n - 1)
    if variance == 0:  # documented convention: sign(v) * inf, 0 for v = 0
        return (int(np.sign(mean)), Fraction(0)) if mean != 0 else (0, Fraction(0))
    # sign(s) * s^2 is increasing in the Sharpe ratio s = mean / sd.
    return (0, (1 if mean > 0 else -1) * mean * mean / variance)


def _float_stat(values: np.ndarray, statistic: str) -> float:
    if statistic == "mean":
        return float(np.mean(values))
    if np.all(values == values[0]):  # documented convention: sign(v) * inf, 0 for v = 0
        return 0.0 if values[0] == 0 else math.copysign(math.inf, values[0])
    return float(np.mean(values)) / float(np.std(values, ddof=1))


def slow_cscv(returns: np.ndarray, partitions: int, statistic: str) -> dict:
    """Bailey et al. (2017), the CSCV procedure literally: one Python iteration per split."""
    windows, configurations = returns.shape
    blocks = _blocks(windows, partitions)
    out = {}
    for chosen in itertools.combinations(range(partitions), partitions // 2):
        rest = [b for b in range(partitions) if b not in chosen]
        inside = np.concatenate([blocks[b] for b in chosen])
        outside = np.concatenate([blocks[b] for b in rest])
        in_keys = [_exact_key(returns[inside, j], statistic) for j in range(configurations)]
        out_keys = [_exact_key(returns[outside, j], statistic) for j in range(configurations)]
        best = max(in_keys)
        winner = in_keys.index(best)  # lowest index among ties
        below = sum(k < out_keys[winner] for k in out_keys)
        equal = sum(k == out_keys[winner] for k in out_keys)
        rank = below + (equal + 1) / 2
        w = rank / (configurations + 1)
        out[chosen] = {
            "winner": winner,
            "rank": rank,
            "logit": math.log(w / (1 - w)),
            "in": _float_stat(returns[inside, winner], statistic),
            "out": _float_stat(returns[outside, winner], statistic),
            "pooled": [_float_stat(returns[outside, j], statistic) for j in range(configurations)],
        }
    return out


def _check_against_oracle(returns, partitions, statistic, *, dominance=True, quiet=True):
    result = (run_quietly if quiet else cscv)(returns, partitions=partitions, statistic=statistic)
    oracle = slow_cscv(returns, result.partitions, statistic)
    half = result.partitions // 2
    assert result.combinations == len(oracle) == math.comb(result.partitions, half)
    keys = [tuple(row) for row in result.in_sample_blocks.tolist()]
    assert sorted(keys) == sorted(oracle)
    expect = [oracle[k] for k in keys]
    np.testing.assert_array_equal(result.selected, [e["winner"] for e in expect])
    np.testing.assert_array_equal(result.out_of_sample_rank, [e["rank"] for e in expect])
    np.testing.assert_allclose(result.logits, [e["logit"] for e in expect], rtol=1e-13, atol=1e-13)
    np.testing.assert_allclose(result.in_sample, [e["in"] for e in expect], rtol=1e-10)
    np.testing.assert_allclose(result.out_of_sample, [e["out"] for e in expect], rtol=1e-10,
                               atol=1e-12)
    logits = np.array([e["logit"] for e in expect])
    outs = np.array([e["out"] for e in expect])
    ins = np.array([e["in"] for e in expect])
    assert result.probability_of_overfitting == np.mean(logits <= 1e-15)
    assert result.probability_of_loss == np.mean(outs < 0)
    if np.all(np.isfinite(ins)) and np.all(np.isfinite(outs)):
        fit = stats.linregress(ins, outs)
        assert result.degradation_slope == pytest.approx(fit.slope, rel=1e-8, abs=1e-10)
        assert result.degradation_intercept == pytest.approx(fit.intercept, rel=1e-8, abs=1e-10)
        assert result.degradation_r_squared == pytest.approx(fit.rvalue**2, rel=1e-8, abs=1e-10)
    if dominance:
        pooled = np.concatenate([e["pooled"] for e in expect])
        grid = np.unique(outs)
        f_sel = np.array([np.mean(outs <= x) for x in grid])
        f_all = np.array([np.mean(pooled <= x) for x in grid])
        assert result.first_order_violation == pytest.approx(max(0.0, np.max(f_sel - f_all)),
                                                             abs=1e-12)
        lpm_sel = np.array([np.mean(np.maximum(x - outs, 0)) for x in grid])
        lpm_all = np.array([np.mean(np.maximum(x - pooled, 0)) for x in grid])
        gaps = np.append(lpm_sel - lpm_all, pooled.mean() - outs.mean())
        assert result.second_order_violation == pytest.approx(max(0.0, np.max(gaps)), abs=1e-9)
        assert result.pooled_out_of_sample_mean == pytest.approx(pooled.mean(), abs=1e-12)
    return result


@pytest.mark.parametrize("statistic", ["sharpe", "mean"])
@pytest.mark.parametrize(
    ("windows", "configurations", "partitions"),
    [(48, 5, 6), (37, 4, 4), (42, 5, 8)],  # 37 and 42 are not multiples of S
)
def test_fast_path_equals_literal_loop_on_random_sweeps(statistic, windows, configurations,
                                                        partitions):
    rng = np.random.default_rng([windows, configurations, partitions])
    returns = rng.standard_normal((windows, configurations)) * 0.01 + 0.001
    _check_against_oracle(returns, partitions, statistic)


@pytest.mark.parametrize("statistic", ["sharpe", "mean"])
def test_fast_path_equals_literal_loop_with_ties(statistic):
    """Small integers tie often; a duplicate and a doubled column tie exactly in every half."""
    rng = np.random.default_rng(11)
    returns = rng.integers(-2, 3, size=(30, 4)).astype(float)
    returns = np.column_stack([returns, returns[:, 1], 2.0 * returns[:, 2]])
    result = _check_against_oracle(returns, 6, statistic, dominance=False)
    # the duplicate (column 4) and the doubled column (5, for the Sharpe ratio) never win.
    assert 4 not in result.selected
    if statistic == "sharpe":
        assert 5 not in result.selected


def test_fast_path_equals_literal_loop_with_constant_halves():
    """Zero-variance halves: a constant positive, a zero and a half-constant column."""
    rng = np.random.default_rng(5)
    returns = rng.standard_normal((40, 5))
    returns[:, 1] = 0.0
    returns[:20, 2] = 0.5  # blocks 0 and 1 (of 4 blocks of 10 windows) constant
    returns[:, 3] = -0.25
    with pytest.warns(SweepAuditWarning) as record:
        result = _check_against_oracle(returns, 4, "sharpe", dominance=False, quiet=False)
    assert any("zero variance" in str(w.message) for w in record)
    assert np.isinf(result.in_sample).any()
    # The half of column 2 made of its first two blocks (windows 0-19) is constant positive: +inf.
    k = [tuple(r) for r in result.in_sample_blocks.tolist()].index((0, 1))
    assert result.selected[k] == 2 and result.in_sample[k] == np.inf


def test_mirror_order_of_splits():
    """Row C - 1 - i of the split indicator is the complement of row i (internal invariant)."""
    for partitions in (2, 4, 8, 16):
        indicator = _split_indicator(partitions)
        assert indicator.shape == (math.comb(partitions, partitions // 2), partitions)
        np.testing.assert_array_equal(indicator[::-1], ~indicator)


@pytest.mark.parametrize("statistic", ["sharpe", "mean"])
def test_permuting_configurations_changes_nothing(statistic):
    rng = np.random.default_rng(3)
    returns = rng.standard_normal((160, 9))
    permutation = rng.permutation(9)
    base = cscv(returns, partitions=8, statistic=statistic)
    moved = cscv(returns[:, permutation], partitions=8, statistic=statistic)
    assert moved.probability_of_overfitting == base.probability_of_overfitting
    assert moved.probability_of_loss == base.probability_of_loss
    np.testing.assert_array_equal(moved.logits, base.logits)
    np.testing.assert_array_equal(moved.out_of_sample, base.out_of_sample)
    np.testing.assert_array_equal(permutation[moved.selected], base.selected)
    assert moved.first_order_violation == base.first_order_violation


def test_dataframe_input_equals_array_input():
    rng = np.random.default_rng(4)
    returns = rng.standard_normal((64, 4))
    frame = pd.DataFrame(returns, columns=["fast", "slow", "wide", "narrow"])
    a, b = cscv(returns, partitions=8), cscv(frame, partitions=8)
    np.testing.assert_array_equal(a.logits, b.logits)
    assert a.probability_of_overfitting == b.probability_of_overfitting


def test_chunked_splits_equal_single_chunk(monkeypatch):
    """Bounded-memory chunking (tiny chunks, no cache) and the matrix-product path give the same
    result as the default path."""
    import sweepaudit.methods.cscv as module

    rng = np.random.default_rng(8)
    returns = rng.standard_normal((120, 30))
    whole = cscv(returns, partitions=10)
    monkeypatch.setattr(module, "_CHUNK_BYTES", 8 * 30 * 7)
    monkeypatch.setattr(module, "_CACHE_BYTES", 0)
    pieces = cscv(returns, partitions=10)
    np.testing.assert_array_equal(pieces.logits, whole.logits)
    np.testing.assert_array_equal(pieces.selected, whole.selected)
    # and the matrix-product path (no subset-sum tables) agrees with the table path
    monkeypatch.setattr(module, "_TABLE_BYTES", 0)
    product = cscv(returns, partitions=10)
    np.testing.assert_array_equal(product.selected, whole.selected)
    np.testing.assert_allclose(product.out_of_sample, whole.out_of_sample, rtol=1e-12)
    np.testing.assert_allclose(product.logits, whole.logits, rtol=0, atol=1e-12)
    assert pieces.first_order_violation == whole.first_order_violation
    assert pieces.second_order_violation == pytest.approx(whole.second_order_violation, abs=1e-12)


# ----------------------------------------------------------------------------------- theory


def _mean_pbo_under_noise(configurations, sweeps, windows, partitions, seed):
    rng = np.random.default_rng(seed)
    values = [
        cscv(rng.standard_normal((windows, configurations)), partitions=partitions)
        .probability_of_overfitting
        for _ in range(sweeps)
    ]
    return float(np.mean(values)), float(np.std(values, ddof=1) / math.sqrt(sweeps))


@pytest.mark.parametrize(("configurations", "null"), [(4, 0.5), (3, 2 / 3)])
def test_pbo_under_pure_noise_averages_its_null_value(configurations, null):
    """Bailey et al. (2017): with no skill the out-of-sample rank is uniform on 1..N, so E[PBO]
    is floor((N + 1) / 2) / N: 1/2 for even N, (N + 1) / (2N) for odd N (METHODS.md). Within 4
    Monte Carlo standard errors."""
    mean, error = _mean_pbo_under_noise(configurations, 100, 48, 8, seed=configurations)
    assert abs(mean - null) < 4 * error + 1e-3


@pytest.mark.slow
@pytest.mark.parametrize(("configurations", "null"), [(10, 0.5), (5, 0.6)])
def test_pbo_under_pure_noise_averages_its_null_value_long(configurations, null):
    mean, error = _mean_pbo_under_noise(configurations, 600, 320, 16, seed=100 + configurations)
    assert abs(mean - null) < 4 * error + 1e-3


def test_strong_edge_drives_pbo_to_zero():
    """Bailey et al. (2017): a configuration with real, dominant skill is picked in-sample and stays
    on top out of sample, so PBO -> 0 (and the probability of loss -> 0)."""
    rng = np.random.default_rng(21)
    returns = rng.standard_normal((400, 10))
    returns[:, 6] += 0.6
    result = cscv(returns)
    assert result.probability_of_overfitting == 0.0
    assert result.probability_of_loss == 0.0
    assert np.all(result.selected == 6)
    assert result.first_order_dominance and result.second_order_dominance


# ------------------------------------------------------------------------ errors and warnings


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"statistic": "sortino"}, "statistic must be one of sharpe, mean; got 'sortino'"),
        ({"partitions": 7}, "partitions must be an even whole number of at least 2; got 7"),
        ({"partitions": 0}, "partitions must be an even whole number of at least 2; got 0"),
        ({"partitions": 8.0}, "partitions must be an even whole number of at least 2; got 8.0"),
        ({"partitions": True}, "partitions must be an even whole number of at least 2; got True"),
        ({"partitions": 22}, "partitions must be at most 20 (C(20, 10) = 184,756 splits); got 22"),
    ],
)
def test_option_errors(kwargs, message):
    with pytest.raises(InputError) as info:
        cscv(np.zeros((64, 3)), **kwargs)
    assert str(info.value) == message


def test_data_errors():
    def message_of(returns):
        with pytest.raises(InputError) as info:
            cscv(returns)
        return str(info.value)

    assert message_of(np.zeros(10)) == ("returns must be a 2-D T x N matrix (windows x configurations); "
                                        "got shape (10,) (reshape a single configuration to (T, 1))")
    assert message_of(np.zeros((64, 1))) == "returns must hold at least 2 configuration(s); got 1"
    bad = np.zeros((64, 3))
    bad[5, 2] = np.nan
    bad[9, 0] = np.inf
    assert message_of(bad) == ("returns must be finite; got 2 NaN or infinite value(s), the "
                               "first at window 5, configuration 2 (0-based)")
    with pytest.raises(InputError, match="returns must be a numeric T x N matrix"):
        cscv([["a", "b"], ["c", "d"]])


def test_too_few_windows_is_refused():
    with pytest.raises(DegenerateDataError) as info:
        cscv(np.ones((3, 2)))
    assert str(info.value) == ("returns has 3 window(s); CSCV with statistic 'sharpe' needs at "
                               "least 4 windows (2 blocks of at least 2 window(s) each)")
    with pytest.raises(DegenerateDataError, match=r"needs at least 2 windows \(2 blocks of at "
                                                  r"least 1 window\(s\) each\)"):
        cscv(np.ones((1, 2)), statistic="mean")


def test_partitions_reduced_with_a_warning():
    rng = np.random.default_rng(2)
    with pytest.warns(SweepAuditWarning) as record:
        result = cscv(rng.standard_normal((40, 3)))
    message = ("returns has 40 windows, too few for partitions=16 with at least 4 windows per "
               "block (statistic 'sharpe'); using partitions=10 (4 or more windows per block, "
               "252 splits)")
    assert [str(w.message) for w in record] == [message]
    assert result.warnings == (message,)
    assert (result.partitions, result.partitions_requested, result.combinations) == (10, 16, 252)
    # Below the comfortable minimum everywhere: fall back to the floor of 2 windows per block.
    with pytest.warns(SweepAuditWarning) as record:
        assert cscv(rng.standard_normal((6, 3))).partitions == 2
    assert str(record[0].message).endswith(
        "using partitions=2 (3 or more windows per block, 2 splits)"
    )
    assert "degradation line not computed" in str(record[1].message)  # 2 splits < 3 points
    # "mean" only needs one window per block.
    with pytest.warns(SweepAuditWarning, match="using partitions=6 "):
        assert cscv(rng.standard_normal((7, 3)), statistic="mean").partitions == 6


def test_smallest_mean_sweep():
    """T = 2, S = 2, "mean": each half is one window; figures by hand. Split IS {0}: winner B
    (2 > 1), out of sample B = 0 below A = 3: rank 1, logit ln(1/2). Split IS {1}: winner A
    (3 > 0), out of sample A = 1 below B = 2: rank 1. PBO 1, no loss; no degradation line."""
    with pytest.warns(SweepAuditWarning, match="degradation line not computed"):
        result = cscv(np.array([[1.0, 2.0], [3.0, 0.0]]), partitions=2, statistic="mean")
    np.testing.assert_allclose(result.logits, [math.log(0.5)] * 2, rtol=0, atol=1e-15)
    assert result.probability_of_overfitting == 1.0 and result.probability_of_loss == 0.0
    np.testing.assert_array_equal(result.in_sample_t_statistic, [0.0, 0.0])
    assert result.degradation_slope is None


def test_unequal_blocks_are_reported():
    rng = np.random.default_rng(6)
    result = cscv(rng.standard_normal((67, 3)), partitions=4)
    np.testing.assert_array_equal(result.block_bounds, [[0, 17], [17, 34], [34, 51], [51, 67]])
    assert "first T mod S blocks get one extra window" in result.block_rule


def test_zero_variance_warnings_and_undefined_figures():
    rng = np.random.default_rng(9)
    returns = rng.standard_normal((64, 4))
    returns[:, 0] = 0.01  # riskless positive excess return: Sharpe +inf in every half
    with pytest.warns(SweepAuditWarning) as record:
        result = cscv(returns, partitions=8)
    messages = [str(w.message) for w in record]
    assert messages == list(result.warnings)
    assert messages == [
        "1 configuration(s) have at least 4 blocks of identical windows; a half-sample with zero "
        "variance gets Sharpe ratio +inf, -inf or 0 by the sign of its constant value",
        "degradation line fitted on 0 of 70 splits; the rest have an infinite statistic "
        "(zero-variance half-sample)",
        "degradation line not computed: the selected configuration's in-sample statistic does not "
        "vary across splits (or fewer than 3 finite splits)",
        "second-order dominance and the pooled out-of-sample mean not computed: some "
        "out-of-sample statistics are infinite (zero-variance half-samples)",
    ]
    assert np.all(result.selected == 0) and np.all(result.in_sample == np.inf)
    assert result.probability_of_overfitting == 0.0
    assert result.degradation_slope is None and result.second_order_dominance is None
    assert result.first_order_dominance is True


def test_bin_lookup_equals_binary_search():
    """The uniform-bin shortcut in the dominance pass returns numpy.searchsorted's answer."""
    from sweepaudit.methods.cscv import _SlotFinder

    rng = np.random.default_rng(12)
    points = np.unique(np.concatenate([rng.standard_normal(300).round(2), [-np.inf, np.inf]]))
    values = np.concatenate([rng.standard_normal(20000) * 2, points, [-np.inf, np.inf, 50.0]])
    np.testing.assert_array_equal(_SlotFinder(points, 1000)(values),
                                  np.searchsorted(points, values, side="left"))
    single = np.array([0.5])
    np.testing.assert_array_equal(_SlotFinder(single, 1000)(values),
                                  np.searchsorted(single, values, side="left"))
