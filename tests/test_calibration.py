"""Tests for calibration by simulation (sweepaudit.calibration) and the ``calibrate`` command.

Verified against an outside reference:
- ``binomial_rate``: exact Clopper and Pearson (1934) bounds against scipy.stats.binomtest; the
  Monte Carlo standard error against the binomial formula sqrt(p (1 - p) / n).
- (the simulators are tested in test_simulate.py)
- ``calibrate_verdict``: under the null with one configuration and only the mean-interval check
  required, the go rate is the size of a one-sided 2.5% test (theory); with a huge edge the power
  is near 1 (theory: normal approximation of the t-statistic). Binomial tolerances are stated.

Internal consistency only:
- ``null_like``: shape, exact demeaning, rows are the shared engine's resample indices, kept
  cross-sectional correlation and serial dependence (compared with the user's own data).
- ``calibrate_verdict`` against a literal loop of ``audit()`` calls with the same seeds.
- CLI exit codes and JSON keys.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats
from typer.testing import CliRunner

from sweepaudit import AuditSettings, audit
from sweepaudit.calibration import (
    binomial_rate,
    calibrate_sweep,
    calibrate_verdict,
    null_like,
    simulate_neighbour_grid,
    simulate_normal,
    simulate_one_edge,
)
from sweepaudit.cli import app
from sweepaudit.errors import InputError
from sweepaudit.policy import Policy
from sweepaudit import sweep_from_array

from .helpers import lag_correlation, rng


# ---------------------------------------------------------------------------------------------
# Binomial rates


@pytest.mark.parametrize("events, trials", [(0, 20), (3, 20), (10, 200), (200, 200), (1, 1)])
def test_binomial_rate_matches_clopper_pearson_from_scipy(events, trials):
    r = binomial_rate(events, trials)
    # A two-sided 90% Clopper-Pearson interval has the one-sided 95% bounds at its ends.
    ci = stats.binomtest(events, trials).proportion_ci(confidence_level=0.90, method="exact")
    assert r.lower_95 == pytest.approx(ci.low, abs=1e-10)
    assert r.upper_95 == pytest.approx(ci.high, abs=1e-10)
    p = events / trials
    assert r.rate == p
    assert r.standard_error == pytest.approx(math.sqrt(p * (1 - p) / trials))


def test_binomial_rate_errors():
    with pytest.raises(InputError, match="events must not exceed trials; got 5 of 4"):
        binomial_rate(5, 4)
    with pytest.raises(InputError, match="trials must be a whole number"):
        binomial_rate(0, -1)


# ---------------------------------------------------------------------------------------------
# Null sweeps shaped like the user's


def correlated_sweep(t: int = 400, n: int = 12, phi: float = 0.0, seed: int = 11):
    x = simulate_neighbour_grid(rng(seed), n, t, length_scale=2.0, common_share=0.4)
    if phi:
        y = np.empty_like(x)
        y[0] = x[0]
        for s in range(1, t):
            y[s] = phi * y[s - 1] + math.sqrt(1 - phi * phi) * x[s]
        x = y
    x = x + np.linspace(0.0, 0.004, n)  # edges of different sizes that null_like must remove
    return sweep_from_array(x, periods_per_year=52)


def test_null_like_removes_the_edge_and_keeps_the_shape():
    sweep = correlated_sweep()
    nulls = null_like(sweep, count=300, seed=3)
    assert nulls.count == 300
    np.testing.assert_allclose(nulls.centred.mean(axis=0), 0.0, atol=1e-15)
    arrays = list(nulls.arrays(chunk=64))
    assert len(arrays) == 300 and all(a.shape == sweep.returns.shape for a in arrays)
    means = np.array([a.mean(axis=0) for a in arrays])
    # Each null sweep's column mean has expectation 0; averaged over 300 sweeps it is near 0,
    # far below the planted edges (up to 0.004 per window).
    se = means.std(axis=0, ddof=1) / math.sqrt(300)
    assert np.all(np.abs(means.mean(axis=0)) < 4 * se)
    assert np.abs(means.mean(axis=0)).max() < 0.0004
    # Rows are the shared engine's resample indices: the same windows for every configuration.
    idx = nulls.resamples.indices()
    np.testing.assert_array_equal(arrays[7], nulls.centred[idx[7]])
    s = next(nulls.sweeps())
    assert s.configurations == sweep.configurations and s.periods_per_year == 52


def test_null_like_keeps_cross_sectional_correlation():
    sweep = correlated_sweep(t=500)
    real = np.corrcoef(sweep.returns, rowvar=False)
    nulls = null_like(sweep, count=20, seed=4)
    for a in list(nulls.arrays())[:5]:
        # Whole windows are resampled, so each null sweep's correlation matrix is a resampled
        # estimate of the same matrix: close to the real one (sampling error about 0.05 at T = 500).
        assert np.abs(np.corrcoef(a, rowvar=False) - real).max() < 0.2
    # Contrast: shuffling each column on its own would destroy it (the check can fail).
    shuffled = np.column_stack([rng(c).permutation(sweep.returns[:, c]) for c in range(sweep.n_configurations)])
    assert np.abs(np.corrcoef(shuffled, rowvar=False) - real).max() > 0.4


def test_null_like_keeps_serial_dependence():
    sweep = correlated_sweep(t=600, phi=0.5, seed=12)
    original = lag_correlation(sweep.returns - sweep.returns.mean(axis=0), 1)
    assert original == pytest.approx(0.5, abs=0.08)
    blocks = null_like(sweep, count=50, seed=5)
    kept = np.mean([lag_correlation(a, 1) for a in blocks.arrays()])
    # Stationary bootstrap with mean block length L keeps about (1 - 1/L) of the lag-1 correlation.
    assert blocks.block_length > 2
    assert kept > 0.25
    single = null_like(sweep, count=50, seed=5, block_length=1.0)  # iid resampling: none kept
    assert abs(np.mean([lag_correlation(a, 1) for a in single.arrays()])) < 0.05


def test_null_like_block_series_and_errors():
    sweep = correlated_sweep()
    by_selected = null_like(sweep, count=5, block_series="selected", selected=3)
    assert by_selected.selected_index == 3 and by_selected.block_series == "selected"
    assert null_like(sweep, count=5, block_series="selected", selected="config 4").selected_index == 3
    with pytest.raises(InputError, match='block_series="selected" needs the selected configuration'):
        null_like(sweep, count=5, block_series="selected")
    with pytest.raises(InputError, match="block_series must be one of average, selected; got 'first'"):
        null_like(sweep, count=5, block_series="first")
    with pytest.raises(InputError, match="count must be a whole number of at least 1; got 0"):
        null_like(sweep, count=0)
    with pytest.raises(InputError, match="sweep must be a Sweep"):
        null_like(sweep.returns)


# ---------------------------------------------------------------------------------------------
# calibrate_verdict


INTERVAL_ONLY = Policy().replace(required=("enough_windows", "mean_interval"))


def test_calibrate_verdict_matches_a_literal_loop_of_audits():
    cal = calibrate_verdict(lambda g: simulate_normal(g, 4, 60), sweeps=6, resamples=199, seed=21)
    children = np.random.SeedSequence([21, 0]).spawn(6)
    for i, child in enumerate(children):
        x = simulate_normal(np.random.default_rng(child), 4, 60)
        res = audit(
            sweep_from_array(x, periods_per_year=52),
            settings=AuditSettings(seed=int(cal.audit_seeds[i]), resamples=199),
        )
        assert cal.decisions[i] == (res.verdict.decision == "go")
        assert cal.selected[i] == res.selected_index
        for j, c in enumerate(res.verdict.checks):
            assert cal.check_ids[cal.check_ids.index(c.id)] == c.id
            assert cal.check_failed[i, cal.check_ids.index(c.id)] == float(not c.passed)
    assert 0 <= cal.go.rate <= 1
    assert cal.go.standard_error == pytest.approx(math.sqrt(cal.go.rate * (1 - cal.go.rate) / 6))
    assert {"enough_windows", "mean_interval"} <= set(cal.check_ids)
    assert cal.check("mean_interval").failures.trials == 6
    with pytest.raises(InputError, match="no check 'nonexistent'"):
        cal.check("nonexistent")


def test_calibrate_verdict_null_low_and_huge_edge_high():
    # One configuration, 156 weekly windows; only the mean interval required: under the null the
    # go rate is the size of a one-sided 2.5% test. With p <= 0.05, 5 or more goes out of 20 has
    # probability at most 0.016 (binomial), so "at most 4" is an honest bound.
    null = calibrate_verdict(
        lambda g: simulate_normal(g, 1, 156), sweeps=20, resamples=199, policy=INTERVAL_ONLY, seed=1
    )
    assert null.go.events <= 4
    # Annualized Sharpe 6 over three years: t = 6 * sqrt(3) = 10.4, power is 1 to many decimals;
    # 18 of 20 leaves room for resampling noise only. Default policy, five configurations.
    edge = calibrate_verdict(
        lambda g: simulate_one_edge(g, 5, 156, annual_sharpe=6.0), sweeps=20, resamples=199, seed=2, planted=[2]
    )
    assert edge.go.events >= 18
    assert edge.planted_selected.rate >= 0.9


def test_calibrate_verdict_errors():
    with pytest.raises(InputError, match="simulate must be a callable"):
        calibrate_verdict(np.zeros((10, 2)), sweeps=2)
    with pytest.raises(InputError, match="sweeps must be a whole number of at least 1; got 0"):
        calibrate_verdict(lambda g: simulate_normal(g, 2, 40), sweeps=0)
    with pytest.raises(InputError, match="seed must be a whole number of at least 0; got -3"):
        calibrate_verdict(lambda g: simulate_normal(g, 2, 40), sweeps=1, seed=-3)


def test_calibrate_sweep_null_and_power():
    sweep = correlated_sweep(t=156, n=6)
    result = calibrate_sweep(sweep, sweeps=8, edge=8.0, resamples=199, seed=3)
    assert result.null.sweeps == result.power.sweeps == 8
    sd = sweep.returns[:, result.selected_index].std(ddof=1)  # demeaning leaves the sd unchanged
    assert result.edge_per_window == pytest.approx(8.0 / math.sqrt(52) * sd)
    # A planted Sharpe of 8 over three years (t about 14) is found in every power sweep.
    assert result.power.go.events >= 7
    assert result.null.go.rate <= result.power.go.rate
    with pytest.raises(InputError, match="needs the periods per year"):
        calibrate_sweep(sweep_from_array(sweep.returns), sweeps=2, edge=1.0)
    assert calibrate_sweep(sweep_from_array(sweep.returns), sweeps=2, edge=0.0, resamples=199).power is None


@pytest.mark.slow
def test_size_and_power_of_the_mean_interval_against_theory():
    # Size: one configuration, iid normal, only the mean interval required: one-sided 2.5% test.
    # 400 sweeps: a 99% binomial band around 2.5% reaches 4.5%; the percentile bootstrap
    # under-covers slightly at T = 260, so the bound is 5%.
    null = calibrate_verdict(
        lambda g: simulate_normal(g, 1, 260), sweeps=400, resamples=999, policy=INTERVAL_ONLY, seed=7
    )
    assert null.go.rate <= 0.05
    # Power: annualized Sharpe 1.5 over five weekly years, t = 1.5 * sqrt(5) = 3.35;
    # normal approximation P(t > 1.96) = Phi(3.35 - 1.96) = 0.92. Band: 3 binomial SE.
    alt = calibrate_verdict(
        lambda g: simulate_one_edge(g, 1, 260, annual_sharpe=1.5), sweeps=400, resamples=999,
        policy=INTERVAL_ONLY, seed=8,
    )
    theory = stats.norm.cdf(1.5 * math.sqrt(5) - 1.96)
    assert alt.go.rate == pytest.approx(theory, abs=3 * math.sqrt(theory * (1 - theory) / 400) + 0.02)


# ---------------------------------------------------------------------------------------------
# CLI


@pytest.fixture()
def sweep_csv(tmp_path):
    x = simulate_neighbour_grid(rng(30), 6, 120) + np.linspace(0, 0.003, 6)
    frame = pd.DataFrame(
        x,
        index=pd.date_range("2020-01-03", periods=120, freq="W-FRI").strftime("%Y-%m-%d"),
        columns=[f"lookback={k}" for k in range(6)],
    )
    frame.index.name = "week"
    path = tmp_path / "synthetic_sweep.csv"
    frame.to_csv(path)
    return path


def test_cli_calibrate_runs_and_writes_json(sweep_csv, tmp_path):
    out = tmp_path / "calibration.json"
    result = CliRunner().invoke(
        app, ["calibrate", str(sweep_csv), "--sweeps", "4", "--resamples", "199", "--seed", "2", "--json", str(out)]
    )
    assert result.exit_code == 0, result.output
    doc = json.loads(out.read_text())
    assert doc["schema"] == "sweepaudit.calibration/1"
    for key in ("input", "settings", "policy", "selected", "observed_verdict", "false_go", "power", "null", "command"):
        assert key in doc
    assert 0 <= doc["false_go"]["rate"] <= 1 and doc["false_go"]["sweeps"] == 4
    assert doc["power"]["edge_annualized_sharpe"] == 1.0
    assert {c["id"] for c in doc["null"]["checks"]} >= {"enough_windows", "mean_interval"}
    assert doc["settings"]["resamples"] == 199
    assert "--sweeps 4" in doc["command"] and "False-go rate" in result.output
    assert "auditing simulated sweeps" not in result.output  # no progress bar off a terminal


def test_cli_calibrate_bad_input_exits_2(sweep_csv, tmp_path):
    runner = CliRunner()
    assert runner.invoke(app, ["calibrate", str(tmp_path / "missing.csv")]).exit_code == 2
    assert runner.invoke(app, ["calibrate", str(sweep_csv), "--sweeps", "0"]).exit_code == 2
    assert runner.invoke(app, ["calibrate", str(sweep_csv), "--edge", "-1"]).exit_code == 2
    undated = tmp_path / "undated.csv"
    pd.read_csv(sweep_csv).assign(week=range(120)).to_csv(undated, index=False)
    # An edge needs periods per year; undated windows have none.
    assert runner.invoke(app, ["calibrate", str(undated), "--sweeps", "2"]).exit_code == 2
    ok = runner.invoke(app, ["calibrate", str(undated), "--sweeps", "2", "--resamples", "199", "--edge", "0", "-q"])
    assert ok.exit_code == 0, ok.output
