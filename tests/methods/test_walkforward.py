"""Tests of the walk-forward record of re-picking the winner (sweepaudit.methods.walkforward).

Checked against outside references:

* every pick against a slow literal loop whose training Sharpe ratios come from numpy's ``mean`` and
  ``std(ddof=1)`` on the windows before each window (the definition, not our cumulative sums);
* theory (Hamilton 1994, section 3.4): under an AR(1) with coefficient phi and no edge anywhere,
  ``E[x_t | past] = phi x_(t-1)``, so the raw record of chasing the best past Sharpe ratio earns on
  average phi times its picks' last returns, and the record with that prediction taken out has mean
  zero; the test's size under such nulls (binomial bounds, scipy);
* the test's t-ratio and p-value against scipy's Student t with the long-run estimate's degrees of
  freedom.

Internal consistency only: chunking over configurations (a tiny memory budget gives the same picks),
the stress charge against :func:`sweepaudit.methods.tails.family_stress`, the shortfall charge, and
every error message.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from sweepaudit.errors import InputError
from sweepaudit.methods import walkforward
from sweepaudit.methods.longrun import long_run_variance
from sweepaudit.methods.tails import family_stress
from sweepaudit.methods.walkforward import default_warmup, walk_forward, walk_forward_picks
from sweepaudit.simulate import simulate_crashes, simulate_dependent_grid


def _slow_picks(x, warmup, lookback=None):
    picks = []
    for t in range(warmup, x.shape[0]):
        train = x[(0 if lookback is None else max(0, t - lookback)):t]
        sd = train.std(axis=0, ddof=1)
        sharpe = np.where(sd > 0, train.mean(axis=0) / np.where(sd > 0, sd, 1.0), -np.inf)
        picks.append(int(np.argmax(sharpe)))
    return np.array(picks)


@pytest.mark.parametrize("lookback", [None, 2, 13, 500])
def test_picks_match_a_literal_loop(lookback):
    rng = np.random.default_rng(1)
    x = rng.normal(0.0005, 0.01, (150, 23)) + rng.normal(0, 0.0004, 23)
    got = walk_forward_picks(x, warmup=10, lookback=lookback)
    assert np.array_equal(got, _slow_picks(x, 10, lookback))


def test_flat_configurations_ties_and_a_large_level_are_handled():
    rng = np.random.default_rng(2)
    x = rng.normal(0, 0.01, (80, 5)) + 100.0  # a large level: the sums must not lose the variance
    x[:40, 1] = 100.0  # flat (not invested) for the first 40 windows: no Sharpe ratio there
    x[:, 3] = x[:, 2]  # an exact copy: the tie goes to the lower column
    got = walk_forward_picks(x, warmup=5)
    assert np.array_equal(got, _slow_picks(x, 5))
    assert 3 not in got
    assert not np.any(got[:35] == 1)
    flat = np.zeros((30, 3))
    assert np.array_equal(walk_forward_picks(flat, warmup=4), np.zeros(26, dtype=int))  # all flat: the first


def test_blocks_of_configurations_give_the_same_picks(monkeypatch):
    x = np.random.default_rng(3).normal(0, 0.01, (120, 57))
    whole = walk_forward_picks(x, warmup=30, lookback=40)
    monkeypatch.setattr(walkforward, "PICK_BUDGET", 8 * 8 * 121 * 4)  # four configurations per block
    assert np.array_equal(walk_forward_picks(x, warmup=30, lookback=40), whole)


def test_record_and_its_figures():
    rng = np.random.default_rng(4)
    x = rng.normal(0, 0.01, (200, 12))
    x[:, 7] += 0.004
    w = walk_forward(x, selected=7, warmup=50)
    t = np.arange(50, 200)
    assert np.array_equal(w.record, x[t, w.picks])
    assert np.array_equal(w.selected_record, x[t, 7])
    assert w.windows == 150 and w.warmup == 50 and w.lookback is None
    assert w.mean == pytest.approx(w.record.mean())
    assert w.sharpe == pytest.approx(w.record.mean() / w.record.std(ddof=1))
    assert w.pick_changes == np.count_nonzero(np.diff(w.picks))
    assert w.pick_change_rate == pytest.approx(w.pick_changes / 149)
    assert w.distinct_picks == np.unique(w.picks).size
    assert w.selected_share == pytest.approx(np.mean(w.picks == 7))
    assert w.most_picked == np.bincount(w.picks).argmax()
    assert w.selected_share > 0.8  # the edge is found early and kept
    # No persistence and no stress: the tested series is the record.
    assert np.array_equal(w.tested, w.record)
    estimate = long_run_variance(w.record)
    ratio = w.record.mean() / math.sqrt(estimate.variance[0] / 150)
    assert w.statistic == pytest.approx(ratio)
    assert w.pvalue == pytest.approx(stats.t.sf(ratio, estimate.degrees_of_freedom[0]))
    assert w.pvalue < 0.01


def test_persistence_prediction_is_taken_out():
    x = simulate_dependent_grid(np.random.default_rng(5), 36, 300, phi=0.5)
    w = walk_forward(x, selected=0, warmup=75, persistence=0.5)
    t = np.arange(75, 300)
    assert np.allclose(w.tested, w.record - 0.5 * x[t - 1, w.picks])
    assert w.persistence_gain == pytest.approx(np.mean(0.5 * x[t - 1, w.picks]))
    assert w.tested_mean == pytest.approx(w.tested.mean())


def test_chasing_persistence_earns_what_theory_predicts_and_the_test_removes_it():
    # AR(1) windows, phi = 0.5, no edge anywhere (Hamilton 1994: E[x_t | past] = phi x_(t-1)).
    phi, sweeps = 0.5, 60
    raw, gain, tested = [], [], []
    for seed in range(sweeps):
        x = simulate_dependent_grid(np.random.default_rng(100 + seed), 25, 208, phi=phi)
        w = walk_forward(x, selected=0, warmup=52, persistence=phi)
        raw.append(w.mean)
        gain.append(w.persistence_gain)
        tested.append(w.tested_mean)
    raw, gain, tested = map(np.array, (raw, gain, tested))
    se = lambda v: v.std(ddof=1) / math.sqrt(sweeps)  # noqa: E731
    assert raw.mean() > 4 * se(raw)  # the record of chasing the best past Sharpe ratio earns by persistence
    assert raw.mean() == pytest.approx(gain.mean(), abs=3 * se(raw - gain))  # ... what phi x_(t-1) foretold
    assert abs(tested.mean()) < 3 * se(tested)  # and nothing beyond it


def _passes(simulate, sweeps):
    """How many simulated null sweeps the test passes, set up as the audit sets it up."""
    passes = 0
    for seed in range(sweeps):
        x = simulate(np.random.default_rng(seed))
        phi = float(np.median(long_run_variance(x).ar_coefficient))
        w = walk_forward(x, selected=0, warmup=default_warmup(x.shape[0]), persistence=phi,
                         stress=family_stress(x, selected=0))
        passes += w.pvalue <= 0.05
    return passes


def test_size_under_an_autoregressive_null_short():
    sweeps = 120
    passes = _passes(lambda rng: simulate_dependent_grid(rng, 25, 208, phi=0.5), sweeps)
    assert passes <= stats.binom.ppf(0.999, sweeps, 0.05)  # a 5% test exceeds this with probability 0.1%


@pytest.mark.slow
@pytest.mark.parametrize("simulate", [
    pytest.param(lambda rng: simulate_dependent_grid(rng, 100, 208), id="grid"),
    pytest.param(lambda rng: simulate_dependent_grid(rng, 100, 208, phi=0.5), id="ar0.5"),
    pytest.param(lambda rng: simulate_dependent_grid(rng, 100, 520, phi=0.7), id="ar0.7"),
    pytest.param(lambda rng: simulate_dependent_grid(rng, 100, 208, shocks="student_t"), id="student-t"),
    pytest.param(lambda rng: simulate_crashes(rng, 100, 260), id="crashes"),
])
def test_size_under_null_families(simulate):
    sweeps = 600
    assert _passes(simulate, sweeps) / sweeps <= 0.05 + 2 * math.sqrt(0.05 * 0.95 / sweeps)


def _crash_family(seed=6, t=200, n=30):
    rng = np.random.default_rng(seed)
    x = 0.01 * (0.5 * rng.standard_normal((t, 1)) + math.sqrt(0.75) * rng.standard_normal((t, n)))
    x[:, 4] += 0.003
    return x


def test_the_pick_is_charged_the_family_loss_in_a_stress_window_it_escaped():
    x = _crash_family()
    crash = 150
    x[crash] -= 0.2
    x[crash, 4] = 0.002  # the configuration the record holds escapes the family's crash
    stress = family_stress(x, selected=4)
    assert stress.windows.tolist() == [crash]
    w = walk_forward(x, selected=4, warmup=50, stress=stress)
    assert w.picks[crash - 50] == 4
    charged = family_stress(x, selected=4).charged_return[0]  # the selected configuration's own charge
    assert w.tested[crash - 50] == pytest.approx(charged)
    assert w.stress_windows == 1 and w.stress_windows_expected == pytest.approx(150 / 200)
    assert w.stress_charge == pytest.approx((0.002 - charged) / 150)


def test_stress_windows_missing_from_the_record_are_charged_at_the_sample_rate():
    x = _crash_family(7)
    x[[10, 20, 30]] -= 0.2  # three crashes, all in the warm-up
    stress = family_stress(x, selected=4)
    assert stress.windows.tolist() == [10, 20, 30]
    w = walk_forward(x, selected=4, warmup=50, stress=stress)
    plain = walk_forward(x, selected=4, warmup=50)
    assert w.stress_windows == 0 and w.stress_windows_expected == pytest.approx(3 * 150 / 200)
    typical = np.bincount(w.picks).argmax()
    loss = -np.mean(np.median(x[:, typical]) + _robust_sd(x[:, typical]) * stress.family_loss)
    shortfall = 3 * 150 / 200 * loss / 150
    assert w.stress_charge == pytest.approx(shortfall)
    assert np.allclose(w.tested, plain.tested - shortfall)
    assert w.pvalue > plain.pvalue


def _robust_sd(column):
    return 1.4826 * np.median(np.abs(column - np.median(column)))


def test_default_warmup_is_a_quarter():
    assert default_warmup(208) == 52
    assert default_warmup(5) == 2


def test_errors_name_the_argument_and_the_rule():
    x = np.random.default_rng(8).normal(0, 0.01, (40, 4))
    with pytest.raises(InputError, match=r"warmup must be a whole number from 2 to 32 \(a record of at least 8"):
        walk_forward(x, selected=0, warmup=35)
    with pytest.raises(InputError, match="warmup must be a whole number from 2 to 32"):
        walk_forward(x, selected=0, warmup=1)
    with pytest.raises(InputError, match="lookback must be a whole number of at least 2; got 1"):
        walk_forward(x, selected=0, warmup=10, lookback=1)
    with pytest.raises(InputError, match="persistence must lie strictly between -1 and 1; got 1.0"):
        walk_forward(x, selected=0, warmup=10, persistence=1.0)
    with pytest.raises(InputError, match="selected must be a column index from 0 to 3; got 4"):
        walk_forward(x, selected=4, warmup=10)
    with pytest.raises(InputError, match="returns must be finite"):
        walk_forward_picks(np.where(np.eye(40, 4) > 0, np.nan, x), warmup=10)
