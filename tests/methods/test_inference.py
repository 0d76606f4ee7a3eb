"""Tests of sweepaudit.methods.inference.

Verified against an outside reference:
- sharpe_inference: theory, size under the null: on sweeps with no edge, the default DSR exceeds
  0.95 in at most about 5 % of sweeps (binomial standard error tolerance).

Internal consistency only: the headline DSR equals deflated_sharpe called directly with the chosen
inputs; the variants grid; None fields and their warnings.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from sweepaudit.errors import InputError
from sweepaudit.methods.deflation import deflated_sharpe
from sweepaudit.methods.inference import sharpe_inference

from .sweeps import neighbour_sweep


def test_sharpe_inference_headline_matches_direct_call():
    rng = np.random.default_rng(9)
    x = neighbour_sweep(rng, 300, 15, 4, means=np.linspace(0, 0.12, 15)) * 0.01
    best = int(np.argmax(x.mean(axis=0) / x.std(axis=0, ddof=1)))
    result = sharpe_inference(x, selected=best, trials=40, periods_per_year=52, sharpe_variance="iid")
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
    assert result.deflated_iid.probability == pytest.approx(direct.probability, rel=1e-12)


def test_long_run_inference_scales_the_leading_term():
    # Internal: with sharpe_variance="long-run" the selected q replaces Mertens' leading 1 and the
    # family's median q scales the null trial variance; the iid figures are kept beside.
    from sweepaudit.methods.longrun import long_run_variance
    from sweepaudit.methods.sharpe import probabilistic_sharpe

    rng = np.random.default_rng(19)
    x = neighbour_sweep(rng, 260, 12, 4, means=np.linspace(0, 0.15, 12)) * 0.01
    best = int(np.argmax(x.mean(axis=0) / x.std(axis=0, ddof=1)))
    estimate = long_run_variance(x)
    robust = sharpe_inference(x, selected=best, periods_per_year=52, long_run=estimate)
    iid = sharpe_inference(x, selected=best, periods_per_year=52, sharpe_variance="iid")
    q = float(estimate.ratio[best])
    assert robust.long_run_ratio == pytest.approx(q)
    assert robust.long_run_ratio_trial == pytest.approx(float(np.median(estimate.ratio)))
    assert robust.trial_sharpe_variance_null == pytest.approx(robust.long_run_ratio_trial / 259)
    direct = probabilistic_sharpe(robust.observed, benchmark=0.0, observations=260, skewness=robust.skewness,
                                  kurtosis=robust.kurtosis, long_run_ratio=q)
    assert robust.probabilistic.probability == pytest.approx(direct.probability, rel=1e-12)
    assert robust.probabilistic_iid.probability == pytest.approx(iid.probabilistic.probability, rel=1e-12)
    assert robust.deflated_iid.probability == pytest.approx(iid.deflated.probability, rel=1e-12)
    assert robust.min_track_record_iid_observations == pytest.approx(iid.min_track_record_observations, rel=1e-12)


def test_sharpe_inference_none_fields_carry_warnings():
    rng = np.random.default_rng(10)
    x = rng.standard_normal((60, 4)) - 0.5  # every configuration loses money
    result = sharpe_inference(x, selected=0)
    assert result.observed_annualized is None and result.square_root_factor is None
    assert result.min_track_record_observations is None and result.min_track_record_years is None
    assert any("periods per year unknown" in w for w in result.warnings)
    assert any("minimum track record undefined" in w for w in result.warnings)


def test_sharpe_inference_serial_correlation_annualization():
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
        match=r"trials must be at least the sweep's 6 configurations \(every configuration of the sweep is a trial\); got 4",
    ):
        sharpe_inference(x, selected=0, trials=4)
    with pytest.raises(InputError, match=r"selected must be a column index from 0 to 5; got 6"):
        sharpe_inference(x, selected=6)
    with pytest.raises(InputError, match=r"trials must be a whole number of configurations tried; got 7.5"):
        sharpe_inference(x, selected=0, trials=7.5)
    with pytest.raises(InputError, match=r"variance_mode must be one of null, empirical; got 'cross'"):
        sharpe_inference(x, selected=0, variance_mode="cross")
    with pytest.raises(InputError, match=r"trials_for_deflation must be one of declared, effective; got 'all'"):
        sharpe_inference(x, selected=0, trials_for_deflation="all")
    with pytest.raises(InputError, match=r"periods_per_year must be positive and finite; got 0"):
        sharpe_inference(x, selected=0, periods_per_year=0)
    with pytest.raises(InputError, match=r"annualization='serial_correlation' needs a whole number of periods per year"):
        sharpe_inference(x, selected=0, periods_per_year=252, annualization="serial_correlation")
    with pytest.raises(InputError, match=r"variance_mode='empirical' needs at least 2 configurations; got 1"):
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
