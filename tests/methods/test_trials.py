"""Tests of sweepaudit.methods.trials.

Verified against an outside reference:
- effective_trials: eigenvalues and average correlation against numpy (np.corrcoef +
  np.linalg.eigvalsh); the limiting cases stated by Nyholt (2004) and Li and Ji (2005)
  (perfect correlation -> 1, independence -> N); for k independent blocks of m identical columns,
  Li and Ji (2005) give k, and Nyholt (2004) and the average-correlation formula give N - m + 1
  (our derivation: eigenvalues m (k times) and 0, written out below);
- trial_sharpe_variance "null": the Mertens (2002) variance at SR = 0 with the PSR's n - 1;
- sharpe_inference: theory, size under the null: on sweeps with no edge, the default DSR exceeds
  0.95 in at most about 5 % of sweeps (binomial standard error tolerance).

Internal consistency only: the headline DSR equals deflated_sharpe called directly with the chosen
inputs; the variants grid; None fields and their warnings.
"""

from __future__ import annotations

import math
import time

import numpy as np
import pytest

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.methods.sharpe import deflated_sharpe, sharpe_standard_error
from sweepaudit.methods.trials import (
    effective_trials,
    li_ji_effective_trials,
    nyholt_effective_trials,
    sharpe_inference,
    trial_sharpe_variance,
    trials_from_average_correlation,
)


def neighbour_sweep(rng, windows, configurations, neighbourhood, means=None):
    """Synthetic sweep: configuration j averages noise columns j .. j + L - 1 (correlation 1 - d/L)."""
    noise = rng.standard_normal((windows, configurations + neighbourhood - 1))
    columns = np.stack(
        [noise[:, j : j + neighbourhood].sum(axis=1) / math.sqrt(neighbourhood) for j in range(configurations)],
        axis=1,
    )
    return columns if means is None else columns + means


def orthogonal_blocks(rng, windows, groups, size):
    """k groups of m identical columns whose group series are exactly uncorrelated in the sample."""
    raw = rng.standard_normal((windows, groups))
    raw -= raw.mean(axis=0)
    q, _ = np.linalg.qr(raw)  # orthonormal, and still centred (columns span centred vectors)
    return np.repeat(q, size, axis=1) * 0.01 + 0.001


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


def test_effective_trials_is_fast_for_large_sweeps():
    """N = 1000 configurations, T = 2000 windows: well under the 10 s bound on a shared machine."""
    rng = np.random.default_rng(5)
    x = rng.standard_normal((2000, 1000))
    started = time.perf_counter()
    result = effective_trials(x)
    assert time.perf_counter() - started < 10.0
    assert result.eigenvalues.shape == (1000,)


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
    with pytest.raises(InputError, match=r"returns must be 2-D \(windows x configurations\); received 1-D"):
        effective_trials(np.arange(10.0))
    with pytest.raises(InputError, match=r"returns must hold at least 2 windows \(observations\); received 1"):
        effective_trials(np.ones((1, 3)))
    with pytest.raises(InputError, match=r"returns must be finite"):
        effective_trials(np.array([[1.0, np.inf], [2.0, 3.0], [0.0, 1.0]]))
    with pytest.raises(InputError, match=r"average_correlation must lie in \[-1, 1\]; received 1.5"):
        trials_from_average_correlation(1.5, configurations=3)
    with pytest.raises(InputError, match=r"configurations must be a positive integer; received 0"):
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
    with pytest.raises(InputError, match=r"mode='empirical' needs at least 2 configurations to estimate a variance; received 1"):
        trial_sharpe_variance(rng.standard_normal((50, 1)), mode="empirical")
    with pytest.raises(InputError, match=r"mode must be one of 'null', 'empirical'; received 'bootstrap'"):
        trial_sharpe_variance(rng.standard_normal((50, 2)), mode="bootstrap")


# --------------------------------------------------------------------------------------------
# sweep-level inference
# --------------------------------------------------------------------------------------------


def test_sharpe_inference_headline_matches_direct_call():
    rng = np.random.default_rng(9)
    x = neighbour_sweep(rng, 300, 15, 4, means=np.linspace(0, 0.12, 15)) * 0.01
    best = int(np.argmax(x.mean(axis=0) / x.std(axis=0, ddof=1)))
    result = sharpe_inference(x, selected=best, trials=40, periods_per_year=52)
    column = x[:, best]
    sharpe = column.mean() / column.std(ddof=1)
    centred = column - column.mean()
    skewness = np.mean(centred**3) / np.mean(centred**2) ** 1.5
    kurtosis = np.mean(centred**4) / np.mean(centred**2) ** 2
    assert result.observed == pytest.approx(sharpe, rel=1e-12)
    assert result.kurtosis == pytest.approx(kurtosis, rel=1e-12)
    direct = deflated_sharpe(
        sharpe, observations=300, trials=40, trial_sharpe_variance=1 / 299, skewness=skewness, kurtosis=kurtosis
    )
    assert result.deflated.probability == pytest.approx(direct.probability, rel=1e-12)
    assert result.deflated.benchmark_sharpe == pytest.approx(direct.benchmark_sharpe, rel=1e-12)
    assert (result.variance_mode, result.expected_maximum, result.trials_for_deflation) == ("null", "approximate", "declared")
    assert result.trials == 40
    # Undeclared trials (40 - 15) count as independent on top of the estimate for the 15 supplied.
    assert result.effective_trials == pytest.approx(result.effective_trials_detail.li_ji + 25)
    assert len(result.variants) == 8
    exact = result.variant("empirical", "exact", "effective")
    assert exact.trials == pytest.approx(result.effective_trials)
    assert exact.trial_sharpe_variance == pytest.approx(result.trial_sharpe_variance_empirical)
    assert result.observed_annualized == pytest.approx(sharpe * math.sqrt(52))
    assert result.min_track_record_years == pytest.approx(result.min_track_record_observations / 52)
    assert result.serial_correlation_factor is not None
    assert result.probabilistic.benchmark == 0.0
    assert result.standard_error == pytest.approx(direct.standard_error, rel=1e-12)
    assert result.standard_error_serial_correlation > 0


def test_sharpe_inference_none_fields_carry_warnings():
    rng = np.random.default_rng(10)
    x = rng.standard_normal((60, 4)) - 0.5  # every configuration loses money
    result = sharpe_inference(x, selected=0)
    assert result.observed_annualized is None and result.square_root_factor is None
    assert result.min_track_record_observations is None and result.min_track_record_years is None
    assert any("periods per year unknown" in w for w in result.warnings)
    assert any("minimum track record undefined" in w for w in result.warnings)


def test_sharpe_inference_serial_correlation_annualisation():
    rng = np.random.default_rng(11)
    x = rng.standard_normal((400, 3)) + 0.1
    result = sharpe_inference(x, selected=1, periods_per_year=12, annualization="serial_correlation")
    assert result.annualization == "serial_correlation"
    assert result.observed_annualized == pytest.approx(result.observed * result.serial_correlation_factor)


def test_sharpe_inference_errors():
    rng = np.random.default_rng(12)
    x = rng.standard_normal((100, 6))
    with pytest.raises(
        InputError,
        match=r"trials must be at least the number of configurations in the sweep \(6\): .*received trials=4",
    ):
        sharpe_inference(x, selected=0, trials=4)
    with pytest.raises(InputError, match=r"selected must be a column index between 0 and 5; received 6"):
        sharpe_inference(x, selected=6)
    with pytest.raises(InputError, match=r"trials must be a whole number of configurations tried; received 7.5"):
        sharpe_inference(x, selected=0, trials=7.5)
    with pytest.raises(InputError, match=r"variance_mode must be one of 'null', 'empirical'; received 'cross'"):
        sharpe_inference(x, selected=0, variance_mode="cross")
    with pytest.raises(InputError, match=r"trials_for_deflation must be one of 'declared', 'effective'; received 'all'"):
        sharpe_inference(x, selected=0, trials_for_deflation="all")
    with pytest.raises(InputError, match=r"periods_per_year must be a positive number or None; received 0"):
        sharpe_inference(x, selected=0, periods_per_year=0)
    with pytest.raises(InputError, match=r"annualization='serial_correlation' needs a whole number of periods per year"):
        sharpe_inference(x, selected=0, periods_per_year=252, annualization="serial_correlation")
    with pytest.raises(InputError, match=r"variance_mode='empirical' needs at least 2 configurations; received 1"):
        sharpe_inference(x[:, :1], selected=0, variance_mode="empirical")
    with pytest.raises(InputError, match=r"no deflated Sharpe ratio computed"):
        sharpe_inference(x[:, :1], selected=0).variant("empirical", "exact", "declared")


def _false_positive_rates(sweeps: int, seed: int) -> tuple[float, float]:
    """Share of no-edge sweeps passing 0.95: (default DSR, undeflated PSR against 0)."""
    rng = np.random.default_rng(seed)
    deflated = undeflated = 0
    for _ in range(sweeps):
        x = neighbour_sweep(rng, 200, 20, 5)
        best = int(np.argmax(x.mean(axis=0) / x.std(axis=0, ddof=1)))
        result = sharpe_inference(x, selected=best)
        deflated += result.deflated.probability > 0.95
        undeflated += result.probabilistic.probability > 0.95
    return deflated / sweeps, undeflated / sweeps


def test_default_deflated_sharpe_size_under_the_null():
    """Theory (size): no configuration has an edge (20 correlated configurations, T = 200), so the
    default DSR should exceed 0.95 in at most about 5 % of sweeps. Tolerance: 5 % plus two binomial
    standard errors of a 5 % rate over 200 sweeps."""
    rate, undeflated = _false_positive_rates(200, seed=2014)
    assert rate <= 0.05 + 2 * math.sqrt(0.05 * 0.95 / 200)
    # Control: selecting the best of 20 without deflation passes far more often, so the check bites.
    assert undeflated > 0.2


@pytest.mark.slow
def test_default_deflated_sharpe_size_under_the_null_long():
    """As above with 3000 sweeps."""
    rate, _ = _false_positive_rates(3000, seed=2015)
    assert rate <= 0.05 + 2 * math.sqrt(0.05 * 0.95 / 3000)
