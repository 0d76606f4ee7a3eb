"""Tests of sweepaudit.methods.deflation.

Verified against an outside reference:
- deflated_sharpe, expected_max_sharpe, max_trials_for_deflated_sharpe, deflated_by_trials: the
  numerical example of Bailey and Lopez de Prado (2014), values from memory (see METHODS.md);
- expected_max_standard_normal: normal order statistics tables (Harter 1961), the closed form
  1/sqrt(pi) for N = 2, and exact sampling of the maximum (max = Phi^-1(U^(1/N)));
- effective_trials: eigenvalues and average correlation against numpy (np.corrcoef +
  np.linalg.eigvalsh); the limiting cases stated by Nyholt (2004) and Li and Ji (2005)
  (perfect correlation -> 1, independence -> N); for k independent blocks of m identical columns,
  Li and Ji (2005) give k, and Nyholt (2004) and the average-correlation formula give N - m + 1
  (our derivation: eigenvalues m (k times) and 0, written out below);
- trial_sharpe_variance "null": the Mertens (2002) variance at SR = 0 with the PSR's n - 1.

Internal consistency only: the curve against deflated_sharpe called at each count; it falls as the
number of trials grows (theory: the expected maximum grows with N).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.methods.deflation import (
    EULER_MASCHERONI,
    correlation_gram_block,
    deflated_by_trials,
    deflated_sharpe,
    effective_trials,
    effective_trials_from_gram,
    expected_max_sharpe,
    expected_max_standard_normal,
    li_ji_effective_trials,
    max_trials_for_deflated_sharpe,
    nyholt_effective_trials,
    trial_sharpe_variance,
    trials_from_average_correlation,
)
from sweepaudit.methods.sharpe import sharpe_standard_error

from .sweeps import PAPER, neighbour_sweep


def orthogonal_blocks(rng, windows, groups, size):
    """k groups of m identical columns whose group series are exactly uncorrelated in the sample."""
    raw = rng.standard_normal((windows, groups))
    raw -= raw.mean(axis=0)
    q, _ = np.linalg.qr(raw)  # orthonormal, and still centred (columns span centred vectors)
    return np.repeat(q, size, axis=1) * 0.01 + 0.001


# --------------------------------------------------------------------------------------------
# Deflated Sharpe ratio: the paper's example
# --------------------------------------------------------------------------------------------


def test_deflated_sharpe_paper_example():
    """Bailey and Lopez de Prado (2014), numerical example (from memory): SR0 = 0.1132, DSR = 0.9004."""
    result = deflated_sharpe(**PAPER)
    assert round(result.benchmark_sharpe, 4) == 0.1132
    assert round(result.probability, 4) == 0.9004
    assert result.expected_maximum == "approximate"
    assert result.trials == 100 and result.observations == 1250


def test_max_trials_paper_example():
    """Bailey and Lopez de Prado (2014) (from memory): about 46 trials is the most keeping DSR > 0.95."""
    arguments = {k: v for k, v in PAPER.items() if k != "trials"}
    most = max_trials_for_deflated_sharpe(**arguments, level=0.95)
    assert most == 46
    # The bracket itself, from the definition: 46 passes, 47 fails.
    assert deflated_sharpe(**{**PAPER, "trials": 46}).probability > 0.95
    assert deflated_sharpe(**{**PAPER, "trials": 47}).probability <= 0.95


def test_max_trials_edges():
    arguments = {k: v for k, v in PAPER.items() if k not in ("trials",)}
    # A Sharpe ratio of 0 never beats PSR(0) = 0.5 > 0.95: zero trials suffice to fail.
    assert max_trials_for_deflated_sharpe(**{**arguments, "sharpe": 0.0}) == 0.0
    # With no spread among trials the benchmark stays 0: the level holds for every count.
    assert max_trials_for_deflated_sharpe(**{**arguments, "trial_sharpe_variance": 0.0}, search_limit=1000) == math.inf


def test_expected_max_sharpe_paper_formula():
    """Bailey and Lopez de Prado (2014) expected-maximum approximation written out with scipy's normal quantile."""
    n, v = 100, 0.5 / 250
    by_hand = math.sqrt(v) * (
        (1 - EULER_MASCHERONI) * stats.norm.ppf(1 - 1 / n) + EULER_MASCHERONI * stats.norm.ppf(1 - 1 / (n * math.e))
    )
    assert expected_max_sharpe(n, trial_sharpe_variance=v) == pytest.approx(by_hand, rel=1e-12)
    assert round(expected_max_sharpe(n, trial_sharpe_variance=v), 4) == 0.1132


def test_annualized_inputs_change_the_answer():
    """Feeding annualized SR and V (2.5 and 0.5) instead of per-window values gives another DSR."""
    wrong = deflated_sharpe(
        2.5, observations=1250, trials=100, trial_sharpe_variance=0.5, skewness=-3.0, kurtosis=10.0
    )
    assert abs(wrong.probability - 0.9004) > 0.05


# --------------------------------------------------------------------------------------------
# Expected maximum of N standard normals
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("trials", "table"),
    [(2, 0.564190), (10, 1.538753), (100, 2.507594), (1000, 3.241436)],
)
def test_exact_expected_maximum_matches_order_statistics_table(trials, table):
    """Harter (1961), Biometrika 48: expected largest of N standard normals, 6 decimals."""
    assert round(expected_max_standard_normal(trials, exact=True), 6) == table


def test_exact_expected_maximum_two_is_one_over_root_pi():
    """Closed form: E[max(Z1, Z2)] = 1/sqrt(pi)."""
    assert expected_max_standard_normal(2, exact=True) == pytest.approx(1 / math.sqrt(math.pi), abs=1e-10)


@pytest.mark.parametrize(("trials", "printed"), [(10, 1.574598), (100, 2.530603), (1000, 3.255122)])
def test_approximate_expected_maximum_values(trials, printed):
    """METHODS.md values of the Bailey and Lopez de Prado (2014) approximation, 6 decimals."""
    assert round(expected_max_standard_normal(trials), 6) == printed


def test_one_trial_has_zero_expected_maximum():
    assert expected_max_standard_normal(1) == 0.0
    assert expected_max_standard_normal(1, exact=True) == 0.0
    assert expected_max_sharpe(1, trial_sharpe_variance=0.01, exact=True) == 0.0


@pytest.mark.parametrize("trials", [3, 50, 10**6, 10**9])
def test_exact_expected_maximum_against_exact_sampling(trials):
    """The maximum of N iid normals is Phi^-1(U^(1/N)) (probability integral transform): sample it."""
    rng = np.random.default_rng(20260101 + trials)
    u = rng.random(200_000)
    # 1 - U^(1/N) computed without cancellation, then the upper quantile.
    maxima = stats.norm.isf(-np.expm1(np.log(u) / trials))
    standard_error = maxima.std(ddof=1) / math.sqrt(maxima.size)
    assert expected_max_standard_normal(trials, exact=True) == pytest.approx(maxima.mean(), abs=4 * standard_error)


def test_expected_maximum_of_fractional_trial_counts_is_never_negative():
    """Effective trial counts can be fractional: E[max] for N in [1, 2] lies between 0 and 1/sqrt(pi)
    (Phi^N dominates Phi for N >= 1); the paper's approximation alone goes negative below ~1.28."""
    for exact in (False, True):
        values = [expected_max_standard_normal(n, exact=exact) for n in np.linspace(1.0, 2.0, 11)]
        assert all(0.0 <= v <= 1 / math.sqrt(math.pi) + 1e-9 for v in values)
        assert all(b >= a for a, b in zip(values, values[1:]))


def test_exact_expected_maximum_is_fast_and_increasing_for_huge_counts():
    values = [expected_max_standard_normal(n, exact=True) for n in (1e3, 1e6, 1e9, 1e12, 1e15)]
    assert all(b > a for a, b in zip(values, values[1:]))
    # Known asymptotics: E[max] ~ sqrt(2 ln N) from below (extreme value theory).
    assert values[-1] < math.sqrt(2 * math.log(1e15))


# --------------------------------------------------------------------------------------------
# The deflated probability against the number of trials (the report's curve)
# --------------------------------------------------------------------------------------------


def test_curve_reproduces_the_paper_example_at_the_trials_counted():
    # Bailey and Lopez de Prado (2014), section 4, from memory: DSR = 0.9004 at N = 100.
    arguments = {k: v for k, v in PAPER.items() if k != "trials"}
    curve = deflated_by_trials(**arguments, trials=100, effective_trials=37.5)
    assert curve.trials_counted == 100 and curve.at_trials_counted == pytest.approx(0.9004, abs=5e-4)
    assert curve.at_effective_trials == deflated_sharpe(**{**PAPER, "trials": 37.5}).probability
    assert curve.trials[0] == 1 and curve.trials[-1] == 1_000 and np.all(np.diff(curve.trials) > 0)
    assert np.all(curve.trials == np.round(curve.trials))
    for count, p in zip(curve.trials[::20], curve.probability[::20]):
        assert p == deflated_sharpe(**{**PAPER, "trials": count}).probability


def test_curve_falls_with_trials_and_reaches_ten_times_the_count():
    arguments = {k: v for k, v in PAPER.items() if k != "trials"}
    curve = deflated_by_trials(**arguments, trials=400)
    assert np.all(np.diff(curve.probability) < 0)
    assert curve.trials[-1] == 4_000
    assert curve.effective_trials is None and curve.at_effective_trials is None
    # Effective trials equal to the count (to rounding) are not marked twice.
    assert deflated_by_trials(**arguments, trials=400, effective_trials=400 + 1e-12).effective_trials is None
    # No spread among the trials: no selection premium, no curve.
    assert deflated_by_trials(**{**arguments, "trial_sharpe_variance": 0.0}, trials=10) is None


# --------------------------------------------------------------------------------------------
# effective trials
# --------------------------------------------------------------------------------------------


def test_perfectly_correlated_columns_count_once():
    """Nyholt (2004), Li and Ji (2005), rho + (1 - rho) N: perfect correlation gives 1."""
    rng = np.random.default_rng(1)
    base = rng.standard_normal(300)
    x = np.column_stack([a * base + b for a, b in [(1, 0), (2, 1), (0.5, -3), (7, 0.2), (3, 3)]])
    result = effective_trials(x)
    assert result.average_correlation == pytest.approx(1.0)
    assert result.from_average_correlation == pytest.approx(1.0)
    assert result.nyholt == pytest.approx(1.0)
    assert result.li_ji == 1.0


def test_independent_columns_count_about_n():
    """Independence gives N for all three (sample eigenvalues near 1 when T >> N)."""
    rng = np.random.default_rng(2)
    x = rng.standard_normal((20_000, 12))
    result = effective_trials(x)
    assert result.from_average_correlation == pytest.approx(12, abs=0.2)
    assert result.nyholt == pytest.approx(12, abs=0.2)
    assert result.li_ji == pytest.approx(12, abs=0.5)


def test_block_structure():
    """k = 4 independent groups of m = 5 identical columns (N = 20).

    Correlation eigenvalues are m = 5 (k times) and 0 (N - k times), mean 1.
    Li and Ji (2005): f(5) = 1 + 0 four times, f(0) = 0: M_eff = k = 4.
    Nyholt (2004): Var = [k (m - 1)^2 + (N - k)] / (N - 1) = (64 + 16)/19, so
    M_eff = 1 + 19 (1 - 80/(19 * 20)) = 16 = N - m + 1 (our derivation).
    Average correlation: rho = k m (m - 1) / (N (N - 1)) = 80/380; rho + (1 - rho) 20 = 16.
    """
    rng = np.random.default_rng(3)
    result = effective_trials(orthogonal_blocks(rng, 500, 4, 5))
    assert result.li_ji == 4.0
    assert result.nyholt == pytest.approx(16.0, abs=1e-9)
    assert result.from_average_correlation == pytest.approx(16.0, abs=1e-9)
    np.testing.assert_allclose(result.eigenvalues[:4], 5.0, atol=1e-9)
    np.testing.assert_allclose(result.eigenvalues[4:], 0.0, atol=1e-9)


def test_eigenvalues_and_average_correlation_against_numpy():
    """np.corrcoef and np.linalg.eigvalsh, both when N <= T and when N > T (rank deficient)."""
    rng = np.random.default_rng(4)
    for windows, n in [(200, 30), (40, 90)]:
        x = neighbour_sweep(rng, windows, n, 6)
        corr = np.corrcoef(x, rowvar=False)
        result = effective_trials(x)
        reference = np.clip(np.sort(np.linalg.eigvalsh(corr))[::-1], 0, None)
        np.testing.assert_allclose(result.eigenvalues, reference, atol=1e-9)
        off_diagonal = corr[~np.eye(n, dtype=bool)].mean()
        assert result.average_correlation == pytest.approx(off_diagonal, abs=1e-12)
        assert result.eigenvalues.sum() == pytest.approx(n)
        for value in (result.from_average_correlation, result.nyholt, result.li_ji):
            assert 1.0 <= value <= n
        assert result.value("li_ji") == result.li_ji
        assert result.value("nyholt") == result.nyholt
        assert result.value("average_correlation") == result.from_average_correlation


def test_effective_trials_from_gram_blocks_equal_the_whole_matrix():
    """Internal consistency: the T x T Gram matrix summed over column blocks (the streamed audit's
    route) gives the eigenvalues of the N x N correlation matrix (N < T) and of the whole T x T one
    (N > T), within rounding."""
    rng = np.random.default_rng(5)
    for windows, n in ((60, 25), (30, 70)):
        x = rng.standard_normal((windows, n)) + 0.5 * rng.standard_normal((windows, 1))
        whole = effective_trials(x)
        pieces = [correlation_gram_block(x[:, a:a + 9]) for a in range(0, n, 9)]
        blocked = effective_trials_from_gram(sum(p[0] for p in pieces), sum(p[1] for p in pieces), n)
        np.testing.assert_allclose(blocked.eigenvalues, whole.eigenvalues, rtol=1e-9, atol=1e-9)
        assert blocked.eigenvalues.shape == (n,)
        assert blocked.average_correlation == pytest.approx(whole.average_correlation, rel=1e-9)
        assert blocked.li_ji == pytest.approx(whole.li_ji, rel=1e-9)
        assert blocked.nyholt == pytest.approx(whole.nyholt, rel=1e-9)


def test_effective_trials_handles_large_sweeps():
    """N = 1000 configurations, T = 2000 windows: the eigenvalues of a correlation matrix sum to N
    (its trace); independent columns give nearly N effective trials. (Speed is measured in
    benchmarks/, never in a timed test.)"""
    rng = np.random.default_rng(5)
    x = rng.standard_normal((2000, 1000))
    result = effective_trials(x)
    assert result.eigenvalues.shape == (1000,)
    assert result.eigenvalues.sum() == pytest.approx(1000.0, rel=1e-9)
    assert result.li_ji > 500


def test_formula_helpers_by_hand():
    """rho + (1 - rho) N by hand; clipping to [1, N]; Nyholt and Li-Ji on small eigenvalue sets by hand."""
    assert trials_from_average_correlation(0.25, configurations=9) == pytest.approx(0.25 + 0.75 * 9)
    assert trials_from_average_correlation(-0.1, configurations=9) == 9.0
    # Li and Ji (2005): eigenvalues (2.5, 0.3, 0.2): f = (1 + 0.5) + 0.3 + 0.2 = 2.0.
    assert li_ji_effective_trials([2.5, 0.3, 0.2]) == pytest.approx(2.0)
    # Nyholt (2004): Var(2.5, 0.3, 0.2) (ddof 1) = 1.69; 1 + 2 (1 - 1.69/3) = 1.873333.
    assert nyholt_effective_trials([2.5, 0.3, 0.2]) == pytest.approx(1 + 2 * (1 - 1.69 / 3))


def test_effective_trials_errors():
    with pytest.raises(DegenerateDataError, match=r"returns has constant columns \(0-based indices 2\)"):
        effective_trials(np.column_stack([np.arange(10.0), np.arange(10.0) ** 2, np.ones(10)]))
    with pytest.raises(InputError, match=r"returns must be a 2-D T x N matrix \(windows x configurations\); got shape \(10,\)"):
        effective_trials(np.arange(10.0))
    with pytest.raises(DegenerateDataError, match=r"returns must hold at least 2 windows; got 1"):
        effective_trials(np.ones((1, 3)))
    with pytest.raises(InputError, match=r"returns must be finite"):
        effective_trials(np.array([[1.0, np.inf], [2.0, 3.0], [0.0, 1.0]]))
    with pytest.raises(InputError, match=r"average_correlation must lie in \[-1, 1\]; got 1.5"):
        trials_from_average_correlation(1.5, configurations=3)
    with pytest.raises(InputError, match=r"configurations must be a whole number of at least 1; got 0"):
        trials_from_average_correlation(0.5, configurations=0)
    with pytest.raises(InputError, match=r"method must be one of average_correlation, nyholt, li_ji; got 'pca'"):
        effective_trials(np.random.default_rng(0).standard_normal((10, 2))).value("pca")


# --------------------------------------------------------------------------------------------
# trial Sharpe variance
# --------------------------------------------------------------------------------------------


def test_null_variance_is_mertens_at_zero():
    """Mertens (2002) at SR = 0 with the PSR's n - 1: 1/(T - 1) whatever the skewness and kurtosis."""
    rng = np.random.default_rng(6)
    x = rng.standard_t(4, size=(240, 5))
    assert trial_sharpe_variance(x, mode="null") == pytest.approx(1 / 239, rel=1e-15)
    assert trial_sharpe_variance(x) == trial_sharpe_variance(x, mode="null")
    assert sharpe_standard_error(0.0, observations=240, skewness=-2.0, kurtosis=12.0) ** 2 == pytest.approx(1 / 239)


def test_empirical_variance_by_hand():
    rng = np.random.default_rng(7)
    x = rng.standard_normal((120, 8)) + np.linspace(-0.2, 0.2, 8)
    sharpes = [x[:, j].mean() / x[:, j].std(ddof=1) for j in range(8)]
    assert trial_sharpe_variance(x, mode="empirical") == pytest.approx(np.var(sharpes, ddof=1), rel=1e-12)


def test_trial_sharpe_variance_errors():
    rng = np.random.default_rng(8)
    with pytest.raises(InputError, match=r"mode='empirical' needs at least 2 configurations to estimate a variance; got 1"):
        trial_sharpe_variance(rng.standard_normal((50, 1)), mode="empirical")
    with pytest.raises(InputError, match=r"mode must be one of null, empirical; got 'bootstrap'"):
        trial_sharpe_variance(rng.standard_normal((50, 2)), mode="bootstrap")


# --------------------------------------------------------------------------------------------
# Error messages
# --------------------------------------------------------------------------------------------


def test_error_negative_variance():
    with pytest.raises(InputError, match=r"trial_sharpe_variance must be non-negative; got -0.1"):
        expected_max_sharpe(10, trial_sharpe_variance=-0.1)


def test_error_trials_below_one():
    with pytest.raises(InputError, match=r"trials must be at least 1; got 0"):
        deflated_sharpe(**{**PAPER, "trials": 0})


def test_error_level_and_search_limit():
    with pytest.raises(InputError, match=r"level must lie strictly between 0 and 1; got 0"):
        max_trials_for_deflated_sharpe(0.2, observations=100, trial_sharpe_variance=0.01, skewness=0.0, kurtosis=3.0, level=0)
    with pytest.raises(InputError, match=r"search_limit must be a whole number of at least 1; got 0"):
        max_trials_for_deflated_sharpe(
            0.2, observations=100, trial_sharpe_variance=0.01, skewness=0.0, kurtosis=3.0, search_limit=0
        )


def test_error_expected_maximum_option():
    with pytest.raises(InputError, match=r"expected_maximum must be one of approximate, exact; got 'median'"):
        deflated_sharpe(**PAPER, expected_maximum="median")
