"""Tests of sweepaudit.methods.sharpe.

Verified against an outside reference (the deflated Sharpe ratio and the expected maximum are
tested in test_deflation.py):
- probabilistic_sharpe, minimum_track_record: hand computation from Bailey and Lopez de Prado (2012),
  worked out in the docstrings below;
- annualization_factor: Lo (2002) AR(1) example, eta(12) = 2.1213 for rho = 0.5;
- autocorrelations: statsmodels.tsa.stattools.acf;
- return_moments: scipy.stats.skew / scipy.stats.kurtosis(fisher=False);
- serial_correlation_standard_error: its long-run covariance against statsmodels'
  sandwich_covariance.S_hac_simple (Newey and West 1987), lags=0 against the Mertens formula, and a
  Monte Carlo of the Sharpe estimator on AR(1) returns (theory: Lo 2002);
- sharpe_standard_error: Monte Carlo of the Sharpe estimator on skewed, fat-tailed iid data
  (theory: Mertens 2002).

Internal consistency only: the minimum track record inverts the PSR; the "convention error" tests
show that the wrong conventions change the answer.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import signal, stats
from statsmodels.tsa.stattools import acf

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.methods.deflation import deflated_sharpe
from sweepaudit.methods.sharpe import (
    annualization_factor,
    annualized_sharpe,
    autocorrelations,
    minimum_track_record,
    probabilistic_sharpe,
    return_moments,
    serial_correlation_standard_error,
    sharpe_ratio,
    sharpe_standard_error,
)

from .sweeps import PAPER


# --------------------------------------------------------------------------------------------
# Convention errors change the answer
# --------------------------------------------------------------------------------------------


def test_excess_kurtosis_is_rejected_or_changes_the_answer():
    """Excess kurtosis 7 for the paper's raw 10 breaks kurtosis >= 1 + skew^2 (Pearson): an error."""
    with pytest.raises(InputError, match=r"kurtosis must be raw kurtosis .* at least 1 \+ skewness\*\*2 = 10; got kurtosis=7.0"):
        deflated_sharpe(**{**PAPER, "kurtosis": 7.0})
    # Where the bound does not catch it (no skew, raw 8 passed as excess 5) the PSR moves by
    # 0.0075 for a large per-window Sharpe ratio (kurtosis enters through SR^2, so small per-window
    # Sharpe ratios are less sensitive).
    raw = probabilistic_sharpe(0.4, benchmark=0.0, observations=24, skewness=0.0, kurtosis=8.0)
    excess = probabilistic_sharpe(0.4, benchmark=0.0, observations=24, skewness=0.0, kurtosis=5.0)
    assert raw.probability < 0.958 < excess.probability


def test_sqrt_n_instead_of_sqrt_n_minus_one_changes_the_answer():
    """PSR hand check (Bailey and Lopez de Prado 2012) with sqrt(36) instead of sqrt(35): 0.9552, not 0.952868."""
    sr = 1 / math.sqrt(12)
    se_n = sharpe_standard_error(sr, observations=36, divisor="n")
    by_hand_n = stats.norm.cdf(sr * math.sqrt(36) / math.sqrt(1 + sr**2 / 2))
    assert stats.norm.cdf(sr / se_n) == pytest.approx(by_hand_n, rel=1e-12)
    assert round(by_hand_n, 4) == 0.9552
    psr = probabilistic_sharpe(sr, benchmark=0.0, observations=36, skewness=0.0, kurtosis=3.0)
    assert abs(psr.probability - by_hand_n) > 0.002


# --------------------------------------------------------------------------------------------
# PSR and minimum track record
# --------------------------------------------------------------------------------------------


def test_probabilistic_sharpe_hand_check():
    """Bailey and Lopez de Prado (2012) PSR, by hand (METHODS.md).

    Annual SR 1.0 from monthly normal data: SR = 1/sqrt(12) = 0.2886751, n = 36, g3 = 0, g4 = 3.
    Numerator 1 - 0 + (3 - 1)/4 * SR^2 = 1 + 1/24 = 1.0416667.
    z = 0.2886751 * sqrt(35) / sqrt(1.0416667) = 1.7078251 / 1.0206207 = 1.6733201.
    Phi(1.6733201) = 0.952868.
    """
    result = probabilistic_sharpe(1 / math.sqrt(12), benchmark=0.0, observations=36, skewness=0.0, kurtosis=3.0)
    assert round(result.statistic, 6) == 1.673320
    assert round(result.probability, 6) == 0.952868
    assert result.benchmark == 0.0 and result.observations == 36


def test_minimum_track_record_hand_check():
    """Bailey and Lopez de Prado (2012) MinTRL (form from memory), by hand (METHODS.md).

    MinTRL = 1 + 1.0416667 * (1.6448536 / 0.2886751)^2 = 1 + 1.0416667 * 32.4659 = 34.82 months.
    """
    months = minimum_track_record(1 / math.sqrt(12), benchmark=0.0, skewness=0.0, kurtosis=3.0, confidence=0.95)
    assert round(months, 2) == 34.82


def test_minimum_track_record_inverts_psr():
    """Internal consistency: the PSR with MinTRL observations equals the confidence."""
    length = minimum_track_record(0.12, benchmark=0.03, skewness=-0.8, kurtosis=6.5, confidence=0.9)
    psr = probabilistic_sharpe(0.12, benchmark=0.03, observations=length, skewness=-0.8, kurtosis=6.5)
    assert psr.probability == pytest.approx(0.9, abs=1e-12)


def test_minimum_track_record_is_infinite_without_an_edge_over_the_benchmark():
    assert minimum_track_record(0.1, benchmark=0.1, skewness=0.0, kurtosis=3.0) == math.inf
    assert minimum_track_record(-0.2, benchmark=0.0, skewness=0.0, kurtosis=3.0) == math.inf


def test_psr_normal_case_is_lo_standard_error():
    """With g3 = 0, g4 = 3 the Mertens variance is Lo's (2002) (1 + SR^2/2)/n."""
    se = sharpe_standard_error(0.2, observations=101, divisor="n")
    assert se == pytest.approx(math.sqrt((1 + 0.02) / 101), rel=1e-14)


# --------------------------------------------------------------------------------------------
# Moments, Sharpe ratio, autocorrelations, annualization
# --------------------------------------------------------------------------------------------


def test_return_moments_against_scipy():
    """scipy.stats.skew (bias=True) and scipy.stats.kurtosis(fisher=False): raw kurtosis."""
    rng = np.random.default_rng(7)
    x = rng.standard_t(5, size=(400, 3)) * 0.01 + 0.001
    moments = return_moments(x)
    np.testing.assert_allclose(moments.skewness, stats.skew(x, axis=0), rtol=1e-12)
    np.testing.assert_allclose(moments.kurtosis, stats.kurtosis(x, axis=0, fisher=False), rtol=1e-12)
    np.testing.assert_allclose(moments.sharpe, x.mean(axis=0) / x.std(axis=0, ddof=1), rtol=1e-12)
    np.testing.assert_allclose(sharpe_ratio(x[:, 0]), x[:, 0].mean() / x[:, 0].std(ddof=1), rtol=1e-12)


def test_autocorrelations_against_statsmodels():
    """statsmodels.tsa.stattools.acf (default estimator)."""
    rng = np.random.default_rng(11)
    x = signal.lfilter([1.0], [1.0, -0.4], rng.standard_normal(3000))
    np.testing.assert_allclose(autocorrelations(x, max_lag=15), acf(x, nlags=15, fft=False)[1:], rtol=1e-10)


def test_lo_eta_ar1_theory():
    """Lo (2002): AR(1) rho = 0.5, q = 12, rho_k = 0.5^k gives eta(12) = 2.1213 (sqrt(12) = 3.4641)."""
    eta = annualization_factor(12, autocorrelations=0.5 ** np.arange(1, 12))
    assert round(eta, 4) == 2.1213
    assert annualization_factor(12, autocorrelations=np.zeros(11)) == pytest.approx(math.sqrt(12))
    assert round(annualization_factor(12), 4) == 3.4641


def test_lo_eta_on_simulated_ar1():
    """A long simulated AR(1) with rho = 0.5 gives eta(12) close to the theoretical 2.1213."""
    rng = np.random.default_rng(3)
    x = signal.lfilter([1.0], [1.0, -0.5], rng.standard_normal(200_000)) + 0.05
    rho = autocorrelations(x, max_lag=11)
    assert annualization_factor(12, autocorrelations=rho) == pytest.approx(2.1213, abs=0.03)
    adjusted = annualized_sharpe(x, periods_per_year=12)
    ignored = annualized_sharpe(x, periods_per_year=12, serial_correlation="ignored")
    assert adjusted / ignored == pytest.approx(2.1213 / math.sqrt(12), abs=0.01)


def test_mertens_variance_against_monte_carlo():
    """Mertens (2002): Var(SR) = [1 - g3 SR + (g4 - 1)/4 SR^2]/n on iid skewed, fat-tailed returns.

    Returns 0.2 + (chi2_4 - 4)/sqrt(8): unit variance, SR = 0.2, skewness sqrt(2), raw kurtosis 6.
    The normal formula (1 + SR^2/2)/n is 33 % higher, so the check discriminates.
    """
    rng = np.random.default_rng(2002)
    n, replications = 500, 4000
    x = 0.2 + (rng.chisquare(4, size=(n, replications)) - 4) / math.sqrt(8)
    estimates = x.mean(axis=0) / x.std(axis=0, ddof=1)
    simulated = estimates.var(ddof=1)
    theory = sharpe_standard_error(0.2, observations=n, skewness=math.sqrt(2), kurtosis=6.0, divisor="n") ** 2
    relative_error = math.sqrt(2 / (replications - 1))  # sd of a variance estimate, near-normal estimates
    assert simulated == pytest.approx(theory, rel=4 * relative_error)
    normal_theory = (1 + 0.02) / n
    assert abs(simulated - normal_theory) > 4 * relative_error * normal_theory


@pytest.mark.slow
def test_mertens_variance_against_monte_carlo_long():
    """As above with Student t(6) returns shifted to SR = 0.3 (skew 0, raw kurtosis 6) and 40,000 runs."""
    rng = np.random.default_rng(2003)
    n, replications = 250, 40_000
    scale = math.sqrt(6 / 4)
    estimates = np.empty(replications)
    for start in range(0, replications, 5000):
        x = 0.3 + rng.standard_t(6, size=(n, 5000)) / scale
        estimates[start : start + 5000] = x.mean(axis=0) / x.std(axis=0, ddof=1)
    theory = sharpe_standard_error(0.3, observations=n, skewness=0.0, kurtosis=6.0, divisor="n") ** 2
    assert estimates.var(ddof=1) == pytest.approx(theory, rel=4 * math.sqrt(2 / replications) + 0.01)


def test_serial_correlation_standard_error_references():
    """lags = 0 is Mertens (2002) with plug-in moments and divisor n; lags > 0 uses the Newey and
    West (1987) long-run covariance, checked against statsmodels' S_hac_simple."""
    from statsmodels.stats.sandwich_covariance import S_hac_simple

    rng = np.random.default_rng(21)
    x = signal.lfilter([1.0], [1.0, -0.3], rng.standard_t(5, size=800)) + 0.1
    n = x.size
    centred = x - x.mean()
    m2, m3, m4 = (np.mean(centred**k) for k in (2, 3, 4))
    plug_in = x.mean() / math.sqrt(m2)
    mertens = sharpe_standard_error(plug_in, observations=n, skewness=m3 / m2**1.5, kurtosis=m4 / m2**2, divisor="n")
    assert serial_correlation_standard_error(x, lags=0) == pytest.approx(mertens, rel=1e-10)
    moments = np.column_stack([centred, centred**2 - m2])
    long_run = S_hac_simple(moments, nlags=7) / n
    gradient = np.array([1 / math.sqrt(m2), -x.mean() / (2 * m2**1.5)])
    expected = math.sqrt(gradient @ long_run @ gradient / n)
    assert serial_correlation_standard_error(x, lags=7) == pytest.approx(expected, rel=1e-10)


def test_serial_correlation_standard_error_monte_carlo():
    """Theory (Lo 2002): with AR(1) rho = 0.5 returns the Sharpe estimator's variance is about
    (1 + rho)/(1 - rho) = 3 times the iid one; the HAC standard error tracks a Monte Carlo of it."""
    rng = np.random.default_rng(2002)
    n, replications = 1000, 1500
    x = signal.lfilter([1.0], [1.0, -0.5], rng.standard_normal((replications, n)), axis=1) + 0.05
    estimates = x.mean(axis=1) / x.std(axis=1, ddof=1)
    simulated = estimates.std(ddof=1)
    average_se = np.mean([serial_correlation_standard_error(row, lags=25) for row in x[:300]])
    assert average_se == pytest.approx(simulated, rel=0.1)
    iid_se = sharpe_standard_error(0.05 * math.sqrt(0.75), observations=n, divisor="n")
    assert simulated > 1.5 * iid_se


# --------------------------------------------------------------------------------------------
# Error messages
# --------------------------------------------------------------------------------------------


def test_error_observations_below_two():
    with pytest.raises(InputError, match=r"observations must be at least 2 .*got 1"):
        probabilistic_sharpe(0.1, benchmark=0.0, observations=1, skewness=0.0, kurtosis=3.0)
    with pytest.raises(DegenerateDataError, match=r"returns must hold at least 2 windows; got 1"):
        sharpe_ratio([0.1])


def test_error_confidence():
    with pytest.raises(InputError, match=r"confidence must lie strictly between 0 and 1; got 1.5"):
        minimum_track_record(0.2, benchmark=0.0, skewness=0.0, kurtosis=3.0, confidence=1.5)


def test_error_options():
    with pytest.raises(InputError, match=r"divisor must be one of n-1, n; got 'T'"):
        sharpe_standard_error(0.1, observations=10, divisor="T")
    with pytest.raises(InputError, match=r"serial_correlation must be one of adjusted, ignored; got 'yes'"):
        annualized_sharpe(np.arange(30.0), periods_per_year=12, serial_correlation="yes")


def test_error_non_finite_and_non_numeric():
    with pytest.raises(InputError, match=r"sharpe must be a finite number; got nan"):
        probabilistic_sharpe(float("nan"), benchmark=0.0, observations=10, skewness=0.0, kurtosis=3.0)
    with pytest.raises(InputError, match=r"benchmark must be a finite number; got 'zero'"):
        probabilistic_sharpe(0.1, benchmark="zero", observations=10, skewness=0.0, kurtosis=3.0)
    with pytest.raises(InputError, match=r"returns must be finite; got 1 NaN or infinite value\(s\), the first at window 1"):
        return_moments([0.1, float("nan"), 0.2])


def test_error_constant_returns():
    with pytest.raises(DegenerateDataError, match=r"returns is constant; its Sharpe ratio is undefined"):
        sharpe_ratio(np.full(20, 0.01))
    with pytest.raises(DegenerateDataError, match=r"returns has constant columns \(0-based indices 1\)"):
        sharpe_ratio(np.column_stack([np.arange(20.0), np.full(20, 0.01)]))
    with pytest.raises(DegenerateDataError, match=r"series is constant; its autocorrelations are undefined"):
        autocorrelations(np.ones(30), max_lag=2)


def test_error_annualization():
    with pytest.raises(InputError, match=r"periods_per_year must be a positive whole number .*got 12.5"):
        annualization_factor(12.5, autocorrelations=np.zeros(12))
    with pytest.raises(InputError, match=r"autocorrelations must hold at least periods_per_year - 1 = 11 values .*got 3"):
        annualization_factor(12, autocorrelations=np.zeros(3))
    with pytest.raises(InputError, match=r"periods_per_year must be positive and finite; got -4"):
        annualization_factor(-4)
    with pytest.raises(DegenerateDataError, match=r"non-positive variance of the annual sum"):
        annualization_factor(3, autocorrelations=[-0.9, 0.0])
    with pytest.raises(InputError, match=r"returns must hold more than periods_per_year = 12 windows .*got 10"):
        annualized_sharpe(np.arange(10.0), periods_per_year=12)
    with pytest.raises(InputError, match=r"max_lag must be a whole number from 0 to 4; got 5"):
        autocorrelations(np.arange(5.0), max_lag=5)


def test_error_serial_correlation_standard_error():
    with pytest.raises(InputError, match=r"lags must be a whole number from 0 to 9; got 10"):
        serial_correlation_standard_error(np.arange(10.0), lags=10)
    with pytest.raises(DegenerateDataError, match=r"returns is constant"):
        serial_correlation_standard_error(np.full(50, 0.02))
    with pytest.raises(InputError, match=r"returns must be 1-D \(windows\); got shape \(10, 2\)"):
        serial_correlation_standard_error(np.ones((10, 2)))


def test_error_zero_standard_error():
    """kurtosis exactly 1 + skew^2 (a two-point distribution) can make the SE vanish."""
    # Two-point law: g4 = 1 + g3^2; numerator 1 - g3 SR + g3^2 SR^2 / 4 = (1 - g3 SR / 2)^2 = 0 at SR = 2/g3.
    with pytest.raises(DegenerateDataError, match=r"standard error is 0 .*PSR is undefined"):
        probabilistic_sharpe(1.0, benchmark=0.0, observations=10, skewness=2.0, kurtosis=5.0)
