"""Tests of the baseline comparison (sweepaudit.baseline, ``--baseline``) and its drift check.

Outside reference: the margins against figures computed by hand in the test. The CLI wiring and
the messages are internal consistency.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from sweepaudit import verdict
from sweepaudit.baseline import GATED_FIGURES, compare_with_baseline, numeric_leaves, read_baseline
from sweepaudit.errors import InputError
from sweepaudit.policy import DEFAULT_POLICY, policy_from_mapping

from .helpers import run, synthetic_returns, write_wide


def _doc(mean_low, mean_high, deflated, pbo, spa=None, checks=()):
    results = {
        "bootstrap": {"selected": {"mean": {"estimate": (mean_low + mean_high) / 2, "low": mean_low, "high": mean_high}},
                      "configurations": []},
        "sharpe": {"deflated": {"probability": deflated}},
        "overfitting": {"probability_of_overfitting": pbo},
    }
    if spa is not None:
        results["snooping"] = {"spa": {"pvalue": spa}}
    return {"schema": "sweepaudit.audit/1", "verdict": "go", "selected": {"configuration": "a"},
            "results": results, "checks": [dict(c) for c in checks]}

def test_gated_figures_margins_by_hand():
    before = _doc(0.002, 0.006, 0.97, 0.10, spa=0.01,
                  checks=[{"id": "mean_interval", "passed": True, "value": 0.002}, {"id": "old", "passed": True}])
    after = _doc(0.0005, 0.005, 0.93, 0.20,
                 checks=[{"id": "mean_interval", "passed": True, "value": 0.0005}, {"id": "new", "passed": False}])
    comparison = compare_with_baseline(after, before, path="base.json", policy=DEFAULT_POLICY)
    gated = {g.key: g for g in comparison.gated}
    # The SPA p-value is missing now: it does not gate.
    assert set(gated) == {"results.bootstrap.selected.mean.low", "results.sharpe.deflated.probability",
                          "results.overfitting.probability_of_overfitting"}
    low = gated["results.bootstrap.selected.mean.low"]
    # fell 0.0015; allowed 0.5 x baseline width (0.006 - 0.002) = 0.002
    assert low.worsening == pytest.approx(0.0015) and low.allowed == pytest.approx(0.002) and not low.exceeded
    dsr = gated["results.sharpe.deflated.probability"]
    assert dsr.worsening == pytest.approx(0.04) and dsr.allowed == 0.05 and not dsr.exceeded
    pbo = gated["results.overfitting.probability_of_overfitting"]
    assert pbo.worsening == pytest.approx(0.10) and pbo.exceeded  # rose 0.10 > 0.05
    assert [g.key for g in comparison.exceeded] == ["results.overfitting.probability_of_overfitting"]
    assert len(comparison.worsened) == 3
    changed = {(c.id, c.before, c.after) for c in comparison.checks_changed}
    assert changed == {("old", "passed", "absent"), ("new", "absent", "failed")}
    moved = {m.key: m.change for m in comparison.moved}
    assert moved["checks.mean_interval.value"] == pytest.approx(-0.0015)
    assert moved["results.bootstrap.selected.mean.high"] == pytest.approx(-0.001)

    check = verdict.CHECKS["baseline_drift"](None, DEFAULT_POLICY, comparison)
    assert not check.passed
    assert check.value == pytest.approx(0.10) and check.threshold == 0.05
    assert "probability of backtest overfitting" in check.reason and "rose from 0.1 to 0.2" in check.reason
    assert "baseline_probability_margin" in check.reason and "base.json" in check.reason

def test_direction_matters_improvements_never_gate():
    before = _doc(0.002, 0.006, 0.90, 0.30, spa=0.04)
    after = _doc(0.004, 0.008, 0.99, 0.05, spa=0.001)
    comparison = compare_with_baseline(after, before, path="b", policy=DEFAULT_POLICY)
    assert comparison.worsened == () and comparison.exceeded == ()
    check = verdict.CHECKS["baseline_drift"](None, DEFAULT_POLICY, comparison)
    assert check.passed and "none of them got worse" in check.reason

def test_zero_margin_fails_on_any_worsening():
    policy = policy_from_mapping({"baseline_probability_margin": 0.0})
    comparison = compare_with_baseline(_doc(0.002, 0.006, 0.9499, 0.1), _doc(0.002, 0.006, 0.95, 0.1),
                                       path="b", policy=policy)
    assert [g.key for g in comparison.exceeded] == ["results.sharpe.deflated.probability"]

def test_configuration_lists_are_matched_by_name():
    base = {"results": {"bootstrap": {"configurations": [
        {"configuration": "a", "mean": {"low": 1.0}}, {"configuration": "b", "mean": {"low": 2.0}}]}}, "checks": []}
    swapped = {"results": {"bootstrap": {"configurations": [
        {"configuration": "b", "mean": {"low": 2.0}}, {"configuration": "a", "mean": {"low": 1.5}}]}}, "checks": []}
    assert numeric_leaves(base)["results.bootstrap.configurations[a].mean.low"] == 1.0
    comparison = compare_with_baseline(swapped, base, path="b", policy=DEFAULT_POLICY)
    assert [(m.key, m.change) for m in comparison.moved] == [("results.bootstrap.configurations[a].mean.low", 0.5)]

def test_every_gated_figure_names_a_policy_field():
    for figure in GATED_FIGURES:
        assert isinstance(getattr(DEFAULT_POLICY, figure.margin_field), float)
        assert figure.key.startswith("results.")

@pytest.mark.parametrize(
    ("content", "fragment"),
    [
        (None, "baseline file does not exist"),
        ("{not json", "the baseline is not JSON (line 1"),
        ("[1, 2]", "must be an audit JSON object"),
        ('{"schema": "other/2", "results": {}, "checks": []}', "schema is 'other/2'"),
        ('{"schema": "sweepaudit.audit/1"}', "no 'results' object"),
    ],
)
def test_bad_baseline_is_exit_2_naming_the_file(tmp_path, content, fragment):
    path = tmp_path / "base.json"
    if content is not None:
        path.write_text(content)
    with pytest.raises(InputError) as info:
        read_baseline(path)
    assert str(info.value).startswith(f"{path}: ") and fragment in str(info.value)
    sweep = write_wide(tmp_path / "sweep.csv", synthetic_returns())
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--baseline", str(path)])
    assert result.exit_code == 2 and str(path) in result.stderr and fragment in result.stderr

def test_baseline_round_trip_same_sweep_nothing_moves(tmp_path):
    sweep = write_wide(tmp_path / "sweep.csv", synthetic_returns())
    first, second = tmp_path / "first.json", tmp_path / "second.json"
    run(["audit", str(sweep), "--resamples", "200", "-q", "--json", str(first)])
    result = run(["audit", str(sweep), "--resamples", "200", "--json", str(second), "--baseline", str(first)])
    doc = json.loads(second.read_text())
    block = doc["baseline"]
    assert block["path"] == str(first)
    assert block["moved"] == [] and block["checks_changed"] == [] and block["worsened"] == []
    assert {"results.bootstrap.selected.mean.low", "results.bootstrap.selected.sharpe.low"} <= \
        {g["key"] for g in block["gated"]}
    drift = next(c for c in doc["checks"] if c["id"] == "baseline_drift")
    assert drift["passed"] and drift["required"]
    assert doc["verdict"] == json.loads(first.read_text())["verdict"]
    assert "Against the baseline" in result.stdout

def test_baseline_drift_fails_the_gate_while_the_other_checks_pass(tmp_path):
    strong = synthetic_returns(edges=(0.012, 0.0, 0.0))
    weaker = strong - np.array([0.005, 0.0, 0.0])  # same noise, the winner's edge cut by 0.005 per window
    base, now = tmp_path / "base.json", tmp_path / "now.json"
    run(["audit", str(write_wide(tmp_path / "a.csv", strong)), "--resamples", "300", "-q", "--json", str(base)])
    policy = tmp_path / "gate.toml"
    policy.write_text('required = ["enough_windows", "mean_interval", "baseline_drift"]\n')
    args = ["audit", str(write_wide(tmp_path / "b.csv", weaker)), "--resamples", "300", "-q", "--json", str(now),
            "--baseline", str(base), "--policy", str(policy)]
    result = run(args)
    doc = json.loads(now.read_text())
    states = {c["id"]: c["passed"] for c in doc["checks"]}
    assert states["mean_interval"] and states["enough_windows"] and not states["baseline_drift"]
    assert result.exit_code == 1 and doc["verdict"] == "no-go"
    (reason,) = doc["reasons"]
    assert reason.startswith("baseline_drift: ") and "results.bootstrap.selected.mean.low" in reason
    low = next(g for g in doc["baseline"]["worsened"] if g["key"] == "results.bootstrap.selected.mean.low")
    assert low["change"] == pytest.approx(-0.005, abs=2e-4) and low["exceeded"]
    # Advisory instead of required: the same drift is reported, the gate stays open.
    policy.write_text('required = ["enough_windows", "mean_interval"]\n')
    assert run(args).exit_code == 0


@pytest.mark.parametrize(
    ("data", "fragment"),
    [
        (b"[" * 100_000 + b"]" * 100_000, "nested too deeply"),
        (b'{"a": ' * 70 + b"1" + b"}" * 70, "nested more than 64 levels deep"),
        (b'{"schema": "sweepaudit.audit/1", "n": 1' + b"0" * 5000 + b"}", "not usable JSON"),
        ('{"schema": "sweepaudit.audit/1", "note": "caf\xe9"}'.encode("latin-1"), "not UTF-8 text"),
    ],
    ids=["deep", "deeper-than-a-document", "huge-integer", "latin-1"],
)
def test_hostile_baselines_are_one_line(tmp_path, data, fragment):
    path = tmp_path / "base.json"
    path.write_bytes(data)
    with pytest.raises(InputError) as info:
        read_baseline(path)
    assert str(info.value).startswith(f"{path}: ") and fragment in str(info.value)


def test_numbers_beyond_the_float_range_are_not_compared():
    doc = _doc(0.01, 0.02, 0.9, 0.1)
    doc["results"]["huge"] = 10**400
    doc["checks"] = [{"id": "x", "value": -(10**400), "passed": True}]
    leaves = numeric_leaves(doc)
    assert "results.huge" not in leaves and "checks.x.value" not in leaves
    assert leaves["results.bootstrap.selected.mean.low"] == 0.01
