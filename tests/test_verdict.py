"""Tests of the verdict (sweepaudit.verdict): each check alone, required or advisory, and the reasons.

Internal consistency only: the verdict table (a failing required check makes no-go, an advisory one
does not, a disabled one is not run) and the reasons each check gives on synthetic sweeps.
"""

from __future__ import annotations

import pytest

from sweepaudit import AuditSettings, audit, verdict
from sweepaudit.format import interval, p_is
from sweepaudit.policy import policy_from_mapping
from sweepaudit.results import Check
from sweepaudit import sweep_from_array

from .helpers import synthetic_returns


CHECK_IDS = list(verdict.CHECKS)

def _fake_checks(failing: str | None):
    def make(check_id):
        def fake(evidence, policy, baseline):
            ok = check_id != failing
            return Check(check_id, ok, 1.5 if ok else 0.5, 1.0, f"{check_id} figure {'above' if ok else 'below'} 1.0")
        return fake
    return {check_id: make(check_id) for check_id in CHECK_IDS}

@pytest.mark.parametrize("failing", CHECK_IDS)
def test_a_check_failing_alone_flips_the_verdict_only_when_required(monkeypatch, small_results, failing):
    monkeypatch.setattr(verdict, "CHECKS", _fake_checks(failing))
    everything = policy_from_mapping({"required": CHECK_IDS})
    v = verdict.decide(small_results.evidence, everything)
    assert v.decision == "no-go"
    assert v.reasons == (f"{failing}: {failing} figure below 1.0",)
    others = policy_from_mapping({"required": [c for c in CHECK_IDS if c != failing]})
    v = verdict.decide(small_results.evidence, others)
    assert v.decision == "go"
    advisory = [c for c in v.checks if c.id == failing]
    assert len(advisory) == 1 and not advisory[0].passed and not advisory[0].required
    assert all(failing not in r for r in v.reasons)
    off = policy_from_mapping({"required": [c for c in CHECK_IDS if c != failing], "disabled": [failing]})
    v = verdict.decide(small_results.evidence, off)
    assert v.decision == "go" and failing not in [c.id for c in v.checks]

def test_all_checks_passing_is_go_with_one_reason_per_required_check(monkeypatch, small_results):
    monkeypatch.setattr(verdict, "CHECKS", _fake_checks(None))
    v = verdict.decide(small_results.evidence, policy_from_mapping({"required": CHECK_IDS[:1]}))
    assert v.decision == "go" and v.reasons == (f"{CHECK_IDS[0]}: {CHECK_IDS[0]} figure above 1.0",)
    assert len(v.checks) == len(CHECK_IDS)

def test_enough_windows_fails_alone_on_a_short_record():
    sweep = sweep_from_array(synthetic_returns(windows=20, edges=(0.03, 0.0)), periods_per_year=52)
    policy = policy_from_mapping({"required": ["enough_windows"]})
    r = audit(sweep, settings=AuditSettings(resamples=200), policy=policy)
    assert r.verdict.decision == "no-go"
    (reason,) = r.verdict.reasons
    assert reason.startswith("enough_windows: ") and "only 20 windows" in reason and "minimum of 36" in reason
    assert "too short to support a decision" in reason

def test_mean_interval_fails_alone_without_an_edge():
    sweep = sweep_from_array(synthetic_returns(windows=80, edges=(0.0, 0.0), seed=5), periods_per_year=52)
    policy = policy_from_mapping({"required": ["mean_interval"]})
    r = audit(sweep, settings=AuditSettings(resamples=300), policy=policy)
    check = next(c for c in r.verdict.checks if c.id == "mean_interval")
    assert not check.passed and check.value <= 0 and check.threshold == 0
    (reason,) = r.verdict.reasons
    assert reason.startswith("mean_interval: ") and "reaches zero or below" in reason
    iv = r.evidence.intervals.mean[r.evidence.selected_index]
    assert iv.low == check.value and interval(iv.estimate, iv.low, iv.high, as_percent=True) in reason

def test_baseline_drift_is_absent_without_a_baseline(small_results):
    assert "baseline_drift" not in [c.id for c in small_results.verdict.checks]


# --------------------------------------------------------------------------- the evidence over time

def _late_edge_sweep(reverse: bool):
    from sweepaudit.simulate import simulate_late_edge

    import numpy as np

    x = simulate_late_edge(np.random.default_rng(2), 36, 208)
    return sweep_from_array(x[::-1] if reverse else x, periods_per_year=52)


def test_a_dead_edge_fails_edge_decay_and_the_live_one_passes():
    # The very same sweep read forwards (an edge that came alive) and backwards (one that has died).
    live = audit(_late_edge_sweep(False), settings=AuditSettings(resamples=300, seed=3))
    dead = audit(_late_edge_sweep(True), settings=AuditSettings(resamples=300, seed=3))
    by_id = lambda r: {c.id: c for c in r.verdict.checks}  # noqa: E731
    assert by_id(live)["edge_decay"].passed and not by_id(dead)["edge_decay"].passed
    assert not by_id(dead)["edge_decay"].required  # advisory by default: the verdict does not change
    decay = by_id(dead)["edge_decay"]
    assert decay.threshold == 0.05 and decay.value <= 0.05
    assert "significantly worse than the early evidence" in decay.reason
    assert p_is(decay.value) in decay.reason and "0.0000" not in decay.reason  # p < 0.0001, never 0.0000
    assert "not significantly worse" in by_id(live)["edge_decay"].reason
    # Full-sample figures cannot tell the two apart; required, the decay check does.
    assert dead.sharpe.observed == pytest.approx(live.sharpe.observed)
    strict = policy_from_mapping({"required": ["edge_decay"]})
    assert audit(_late_edge_sweep(True), settings=AuditSettings(resamples=300, seed=3), policy=strict).verdict.decision == "no-go"
    assert audit(_late_edge_sweep(False), settings=AuditSettings(resamples=300, seed=3), policy=strict).verdict.decision == "go"


def test_walk_forward_check_reports_the_record_and_can_be_required():
    sweep = sweep_from_array(synthetic_returns(windows=200, edges=(0.004, 0.0, 0.0, 0.0), seed=8), periods_per_year=52)
    r = audit(sweep, settings=AuditSettings(resamples=300))
    check = next(c for c in r.verdict.checks if c.id == "walk_forward")
    walk = r.evidence.walk_forward
    assert r.walk_forward is walk and r.stability is r.evidence.stability  # readable from the result too
    assert check.passed and not check.required and check.value == walk.pvalue and check.threshold == 0.05
    assert "from window '51' on (150 windows" in check.reason and "the selection procedure itself earns" in check.reason
    noise = sweep_from_array(synthetic_returns(windows=200, edges=(0.0, 0.0, 0.0, 0.0), seed=9), periods_per_year=52)
    required = policy_from_mapping({"required": ["walk_forward"]})
    r = audit(noise, settings=AuditSettings(resamples=300), policy=required)
    assert r.verdict.decision == "no-go"
    (reason,) = r.verdict.reasons
    assert reason.startswith("walk_forward: ") and "not clearly above zero" in reason
