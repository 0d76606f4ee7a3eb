"""Tests of the long-run variance, the t-to-normal scores and the family block length.

Checked against outside references:

* the plain Bartlett estimator against ``arch.covariance.kernel.Bartlett`` (arch's weights are
  ``1 - j / (b + 1)``, ours ``1 - j / S``: ``S = b + 1``);
* the AR(1) coefficient against an ordinary least-squares fit by ``statsmodels.api.OLS``;
* ``normal_scores`` against scipy's Student t and normal distributions;
* theory: the long-run variance of an AR(1), ``sigma^2 (1 + phi) / (1 - phi)`` (a textbook fact), on
  simulated series; the variance of the stationary-bootstrap mean of an AR(1) (Politis and Romano
  1994) against the engine's own resamples.

Internal consistency only: the equivalent degrees of freedom against the spread of the estimates
over simulated series, and the family block-length rule.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.methods.longrun import (
    bootstrap_variance_ratio,
    family_block_length,
    long_run_variance,
    normal_scores,
)


def _ar1(rng, t, n, phi):
    e = rng.standard_normal((t + 200, n))
    x = np.empty_like(e)
    x[0] = e[0]
    for i in range(1, len(e)):
        x[i] = phi * x[i - 1] + np.sqrt(1 - phi * phi) * e[i]
    return x[200:]


def test_plain_bartlett_matches_arch():
    # Reference: arch.covariance.kernel.Bartlett, bandwidth b -> our S = b + 1.
    from arch.covariance.kernel import Bartlett

    x = np.random.default_rng(1).standard_normal((300, 3))
    ours = long_run_variance(x, prewhiten=False, bandwidth=5.0).variance
    for k in range(3):
        theirs = float(Bartlett(x[:, k], bandwidth=4).cov.long_run[0, 0])
        assert ours[k] == pytest.approx(theirs, rel=1e-12)


def test_ar_coefficient_matches_least_squares():
    # Reference: statsmodels OLS of e_t on e_{t-1} without a constant (e demeaned).
    import statsmodels.api as sm

    x = _ar1(np.random.default_rng(2), 400, 1, 0.4)[:, 0]
    e = x - x.mean()
    ols = sm.OLS(e[1:], e[:-1]).fit().params[0]
    raw = long_run_variance(x, bias_correction=False).ar_coefficient[0]
    assert raw == pytest.approx(ols, rel=1e-12)
    corrected = long_run_variance(x).ar_coefficient[0]
    assert corrected == pytest.approx(ols + (1 + 3 * ols) / 400, rel=1e-12)


@pytest.mark.parametrize("phi", [0.0, 0.5, 0.7])
def test_long_run_variance_of_ar1_is_unbiased_on_average(phi):
    # Theory: omega^2 = (1 + phi) / (1 - phi) for a unit-variance AR(1).
    rng = np.random.default_rng(3)
    x = _ar1(rng, 500, 400, phi)
    estimate = long_run_variance(x)
    truth = (1 + phi) / (1 - phi)
    assert np.mean(estimate.variance) / truth == pytest.approx(1.0, abs=0.06)
    assert np.median(estimate.ratio) == pytest.approx(truth, rel=0.1)


def test_plain_newey_west_understates_persistent_dependence():
    # Why prewhitening: a short Bartlett bandwidth misses most of an AR(0.7)'s long-run variance.
    x = _ar1(np.random.default_rng(4), 208, 300, 0.7)
    truth = 1.7 / 0.3
    plain = long_run_variance(x, prewhiten=False, bandwidth=5.0).variance.mean() / truth
    whitened = long_run_variance(x).variance.mean() / truth
    assert plain < 0.6
    assert whitened > 0.85


def test_degrees_of_freedom_match_the_spread_of_the_estimates():
    # Internal: 2 / nu approximates Var(log omega^2) across simulated iid normal series.
    x = np.random.default_rng(5).standard_normal((208, 2000))
    estimate = long_run_variance(x)
    spread = np.var(np.log(estimate.variance))
    implied = np.mean(2.0 / estimate.degrees_of_freedom)
    assert spread == pytest.approx(implied, rel=0.35)
    assert np.median(estimate.degrees_of_freedom) == pytest.approx(208 / 3, rel=0.1)


def test_normal_scores_match_scipy():
    t = np.array([-3.0, -0.5, 0.0, 1.0, 2.5, 4.0])
    nu = np.array([5.0, 10.0, 20.0, 40.0, 80.0, 15.0])
    expected = stats.norm.ppf(stats.t.cdf(t, nu))
    assert normal_scores(t, nu) == pytest.approx(expected, rel=1e-9, abs=1e-12)


def test_normal_scores_stay_finite_for_huge_ratios():
    z = normal_scores(np.array([60.0, -60.0]), np.array([10.0, 10.0]))
    assert np.all(np.isfinite(z))
    assert z[0] > 5 and z[1] == -z[0]


def test_bootstrap_variance_ratio_matches_the_engine():
    # Theory (Politis and Romano 1994): the stationary-bootstrap variance of the mean weights lag j by
    # (1 - 1/L)^j. Checked against the engine's own resamples on a long AR(0.5) series.
    from sweepaudit.resample import draw_resamples, resampled_moments

    phi, t, length = 0.5, 4000, 8.0
    x = _ar1(np.random.default_rng(6), t, 1, phi)
    resamples = draw_resamples(t, count=4000, kind="stationary", block_length=length, seed=1)
    moments = resampled_moments(x, resamples)
    measured = t * moments.mean[:, 0].var() / long_run_variance(x).variance[0]
    assert measured == pytest.approx(bootstrap_variance_ratio(phi, length), abs=0.08)


def test_bootstrap_variance_ratio_properties():
    assert bootstrap_variance_ratio(0.0, 3.0) == 1.0
    assert bootstrap_variance_ratio(-0.3, 3.0) == 1.0
    short, long = bootstrap_variance_ratio(0.7, 5.0), bootstrap_variance_ratio(0.7, 40.0)
    assert 0 < short < long < 1
    assert bootstrap_variance_ratio(0.5, 10, "circular") < 1


def test_family_block_length_lengthens_blocks_under_persistence():
    rng = np.random.default_rng(7)
    iid = rng.standard_normal((208, 40))
    persistent = _ar1(rng, 208, 40, 0.7)
    calm = family_block_length(iid, selected=3)
    slow = family_block_length(persistent, selected=3)
    assert calm.length < 5 and not calm.lengthened
    assert slow.lengthened and slow.length > 15
    assert slow.predicted_share >= 0.9 - 1e-9
    assert slow.length <= 208 / 4
    whole = family_block_length(persistent, selected=3, kind="circular")
    assert whole.length == int(whole.length)


def test_family_block_length_samples_large_families():
    x = np.random.default_rng(8).standard_normal((120, 600))
    choice = family_block_length(x, selected=599, sample=64)
    assert choice.configurations_examined in (64, 65)


def test_errors_name_the_problem():
    with pytest.raises(DegenerateDataError, match="at least 8 windows"):
        long_run_variance(np.ones((5, 2)))
    with pytest.raises(DegenerateDataError, match="constant"):
        long_run_variance(np.column_stack([np.arange(20.0), np.ones(20)]))
    with pytest.raises(InputError, match="finite"):
        long_run_variance(np.array([1.0, np.nan] * 10))
    with pytest.raises(InputError, match="bandwidth"):
        long_run_variance(np.random.default_rng(0).standard_normal(30), bandwidth=-1.0)
    with pytest.raises(InputError, match="selected"):
        family_block_length(np.random.default_rng(0).standard_normal((30, 3)), selected=3)
