"""The audit as a CI gate: verdict logic, JUnit output, baseline comparison, trial ledger, examples.

Outside references:
- ``sweep_fingerprint`` against a literal re-implementation of its documented definition with
  ``struct`` and ``hashlib`` (a slow oracle built from the definition, not from our output).
- JUnit XML structure against the attributes CI test-report readers expect of the JUnit XML
  format written by the Ant JUnit task (testsuites / testsuite with tests, failures, errors,
  skipped, time; testcase with classname, name; failure with message) -- from memory of that
  format, parsed with ``xml.etree``.
- Concurrent ledger appends against the invariant that an exclusive lock serialises the
  read-count-append cycle (every count seen exactly once).
- Baseline margins against figures computed by hand in the test.
Everything else (verdict table, reasons, CLI wiring, examples' options) is internal consistency.
"""

from __future__ import annotations

import hashlib
import json
import multiprocessing
import shlex
import struct
import time
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import typer
from typer.testing import CliRunner

from sweepaudit import verdict
from sweepaudit import AuditSettings, audit
from sweepaudit.baseline import GATED_FIGURES, compare_with_baseline, numeric_leaves, read_baseline
from sweepaudit.cli import app
from sweepaudit.errors import InputError
from sweepaudit.document import audit_document, ledger_block
from sweepaudit.gate import trials_to_count
from sweepaudit.ledger import (
    LedgerEntry,
    ledger_record,
    open_ledger,
    parse_ledger,
    read_ledger,
    sweep_fingerprint,
    tally_trials,
)
from sweepaudit.read import load_sweep
from sweepaudit.policy import DEFAULT_POLICY, policy_from_mapping
from sweepaudit.render.junit import audit_to_junit
from sweepaudit.sweep import sweep_from_array
from sweepaudit.verdict import Check

runner = CliRunner()
ROOT = Path(__file__).resolve().parents[1]


def synthetic_returns(windows=60, edges=(0.012, 0.0, 0.0), seed=3):
    """SYNTHETIC excess returns: Gaussian noise (sd 1%) plus a fixed edge per configuration."""
    rng = np.random.default_rng(seed)
    return rng.normal(0.0, 0.01, size=(windows, len(edges))) + np.asarray(edges)


def write_wide(path, returns, names=None):
    names = names or [f"lookback={10 * (k + 1)}" for k in range(returns.shape[1])]
    frame = pd.DataFrame(returns, columns=names)
    frame.insert(0, "week_ending", pd.date_range("2020-01-03", periods=len(frame), freq="W-FRI").strftime("%Y-%m-%d"))
    frame.to_csv(path, index=False)
    return path


def run(args):
    result = runner.invoke(app, args)
    return result


@pytest.fixture(scope="module")
def small_results():
    sweep = sweep_from_array(synthetic_returns(), periods_per_year=52)
    return audit(sweep, settings=AuditSettings(resamples=200, seed=1))


# --- verdict logic table --------------------------------------------------------------------------

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
    assert reason.startswith("mean_interval: ") and "at or below zero" in reason
    assert f"{check.value:.4g}" in reason


def test_baseline_drift_is_absent_without_a_baseline(small_results):
    assert "baseline_drift" not in [c.id for c in small_results.verdict.checks]


# --- JUnit ----------------------------------------------------------------------------------------


def _junit_doc(small_results):
    doc = json.loads(json.dumps(small_results.document))
    doc["selected"]["configuration"] = 'band<1.5 & "wide"'  # characters XML must escape
    doc["checks"] = [
        {"id": "enough_windows", "passed": True, "required": True, "value": 60.0, "threshold": 36.0, "reason": "long enough"},
        {"id": "mean_interval", "passed": False, "required": True, "value": -0.001, "threshold": 0.0,
         "reason": "interval <reaches> zero & below"},
        {"id": "baseline_drift", "passed": False, "required": False, "value": 0.2, "threshold": 0.1, "reason": "drifted"},
    ]
    doc["verdict"] = "no-go"
    return doc


def test_junit_structure_counts_and_messages(small_results):
    doc = _junit_doc(small_results)
    root = ET.fromstring(audit_to_junit(doc, elapsed=1.25))
    assert root.tag == "testsuites"
    suites = root.findall("testsuite")
    assert len(suites) == 1
    suite = suites[0]
    for element in (root, suite):
        assert {"tests", "failures", "errors", "skipped", "time"} <= set(element.attrib)
        assert (element.get("tests"), element.get("failures"), element.get("errors"), element.get("skipped")) == \
            ("3", "1", "0", "1")
        assert float(element.get("time")) == pytest.approx(1.25)
    assert suite.get("name") == "sweepaudit"
    assert "T" in suite.get("timestamp") and not suite.get("timestamp").endswith("Z")
    cases = suite.findall("testcase")
    assert [c.get("name") for c in cases] == ["enough_windows", "mean_interval", "baseline_drift"]
    assert {c.get("classname") for c in cases} == {"sweepaudit.checks"}
    assert all(float(c.get("time")) >= 0 for c in cases)
    assert cases[0].find("failure") is None and cases[0].find("system-out").text.startswith("long enough")
    failure = cases[1].find("failure")
    assert failure.get("message") == "interval <reaches> zero & below"
    skipped = cases[2].find("skipped")
    assert cases[2].find("failure") is None and skipped.get("message") == "advisory: drifted"
    props = {p.get("name"): p.get("value") for p in suite.find("properties")}
    assert props["verdict"] == "no-go"
    assert props["selected_configuration"] == 'band<1.5 & "wide"'
    assert props["policy_source"] == "defaults"


def test_cli_junit_written_atomically_and_matches_the_json(tmp_path):
    sweep = write_wide(tmp_path / "sweep.csv", synthetic_returns())
    out, xml = tmp_path / "audit.json", tmp_path / "reports" / "checks.xml"
    xml.parent.mkdir()
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--json", str(out), "--junit", str(xml)])
    doc = json.loads(out.read_text())
    assert result.exit_code == (0 if doc["verdict"] == "go" else 1)
    suite = ET.parse(xml).getroot().find("testsuite")
    assert [c.get("name") for c in suite.findall("testcase")] == [c["id"] for c in doc["checks"]]
    required_failures = sum(1 for c in doc["checks"] if c["required"] and not c["passed"])
    assert int(suite.get("failures")) == required_failures
    assert sorted(p.name for p in xml.parent.iterdir()) == ["checks.xml"]  # no temporary file left


def test_cli_junit_folder_missing_is_exit_2(tmp_path):
    sweep = write_wide(tmp_path / "sweep.csv", synthetic_returns())
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--junit", str(tmp_path / "nope" / "x.xml")])
    assert result.exit_code == 2 and "JUnit file" in result.stderr


# --- baseline ---------------------------------------------------------------------------------------


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


# --- ledger: fingerprint ------------------------------------------------------------------------------


def _literal_fingerprint(matrix, names):
    # The documented definition, written out with struct, one number at a time.
    columns = sorted(range(len(names)), key=lambda k: names[k])
    h = hashlib.sha256()
    h.update(b"sweepaudit.ledger/1\n")
    h.update(f"{len(matrix)}x{len(names)}\n".encode())
    h.update(json.dumps([names[k] for k in columns], ensure_ascii=False).encode() + b"\n")
    for row in matrix:
        for k in columns:
            h.update(struct.pack("<d", 0.0 if row[k] == 0 else float(row[k])))
    return h.hexdigest()


def test_fingerprint_matches_its_definition():
    x = synthetic_returns(windows=12)
    x[0, 0] = -0.0
    names = ["b=é", "a=1", 'c="2"']
    assert sweep_fingerprint(x, names) == _literal_fingerprint(x.tolist(), names)
    assert sweep_fingerprint(x[:, [2, 0, 1]], [names[2], names[0], names[1]]) == sweep_fingerprint(x, names)
    x[0, 0] = 0.0
    assert sweep_fingerprint(x, names) == _literal_fingerprint(x.tolist(), names)


def test_fingerprint_is_the_same_across_file_formats(tmp_path):
    x = synthetic_returns(windows=40)
    names = ["lookback=10", "lookback=20", "lookback=30"]
    wide = write_wide(tmp_path / "s.csv", x, names)
    frame = pd.read_csv(wide)
    frame.to_parquet(tmp_path / "s.parquet", index=False)
    long = frame.melt(id_vars="week_ending", var_name="lookback", value_name="excess_return")
    long["lookback"] = long["lookback"].str.replace("lookback=", "").astype(int)
    long.to_csv(tmp_path / "long.csv", index=False)
    write_wide(tmp_path / "reordered.csv", x[:, ::-1], names[::-1])
    prints = set()
    for path in (wide, tmp_path / "s.parquet", tmp_path / "long.csv", tmp_path / "reordered.csv"):
        s = load_sweep(str(path))
        prints.add(sweep_fingerprint(s.returns, s.configurations))
    assert len(prints) == 1
    y = x.copy()
    y[5, 1] += 1e-9
    assert sweep_fingerprint(y, names) not in prints
    assert sweep_fingerprint(x, ["lookback=10", "lookback=20", "lookback=31"]) not in prints


# --- ledger: counting ------------------------------------------------------------------------------


def _entry(line, fp, n):
    return LedgerEntry(line, fp, n, {})


def test_tally_counts_distinct_fingerprints():
    a, b, c = "a" * 64, "b" * 64, "c" * 64
    entries = (_entry(1, a, 10), _entry(2, b, 30), _entry(3, a, 10))
    t = tally_trials(entries, fingerprint=c, configurations=5)
    assert (t.trials, t.new_sweep, t.sweeps_before, t.sweeps_recorded, t.records) == (45, True, 2, 3, 3)
    t = tally_trials(entries, fingerprint=a, configurations=10)
    assert (t.trials, t.new_sweep, t.sweeps_recorded) == (40, False, 2)  # re-audit adds nothing
    assert tally_trials((), fingerprint=a, configurations=7).trials == 7


def test_declared_trials_rules():
    assert trials_to_count(10) == (None, None)
    assert trials_to_count(10, declared=25)[0] == 25
    with pytest.raises(InputError, match=r"^trials must be at least the sweep's 10 configurations .* got 9$"):
        trials_to_count(10, declared=9)
    t = tally_trials((_entry(1, "a" * 64, 40),), fingerprint="b" * 64, configurations=10)
    used, note = trials_to_count(10, declared=30, tally=t)
    assert used == 50 and "larger of --trials (30) and the ledger's count (50)" in note
    used, note = trials_to_count(10, declared=80, tally=t)
    assert used == 80 and "from --trials" in note


def test_cli_ledger_round_trip_and_duplicate_sweeps(tmp_path):
    ledger = tmp_path / "trials.jsonl"
    a = write_wide(tmp_path / "a.csv", synthetic_returns(edges=(0.01, 0, 0)))
    b = write_wide(tmp_path / "b.csv", synthetic_returns(edges=(0.01, 0, 0, 0, 0), seed=9))
    out = tmp_path / "audit.json"

    def audit_with_ledger(path, *extra):
        result = run(["audit", str(path), "--resamples", "200", "-q", "--ledger", str(ledger), "--json", str(out), *extra])
        assert result.exit_code in (0, 1), result.stderr
        return json.loads(out.read_text())

    doc = audit_with_ledger(a)
    assert doc["ledger"]["trials_counted"] == 3 and doc["ledger"]["new_sweep"] and doc["settings"]["trials"] == 3
    doc = audit_with_ledger(a)  # the same sweep again: recorded, no new trials
    assert doc["ledger"]["trials_counted"] == 3 and not doc["ledger"]["new_sweep"]
    assert doc["ledger"]["sweeps_recorded"] == 1 and doc["ledger"]["records_before"] == 1
    doc = audit_with_ledger(b)
    assert doc["ledger"]["trials_counted"] == 8 and doc["ledger"]["sweeps_recorded"] == 2
    doc = audit_with_ledger(b, "--trials", "20")
    assert doc["ledger"]["trials_used"] == 20 and doc["settings"]["trials"] == 20
    assert "--trials 20" in doc["reproduce"]["command"]
    records = [json.loads(line) for line in ledger.read_text().splitlines()]
    assert [r["configurations"] for r in records] == [3, 3, 5, 5]
    assert [r["trials"] for r in records] == [3, 3, 8, 20]
    first = records[0]
    assert set(first) >= {"fingerprint", "configurations", "windows", "date", "selected", "verdict", "version", "input"}
    assert first["windows"] == 60 and first["input"] == str(a) and first["date"].endswith("Z")
    assert first["fingerprint"] == records[1]["fingerprint"] != records[2]["fingerprint"]


def test_cli_trials_below_configurations_is_exit_2(tmp_path):
    sweep = write_wide(tmp_path / "a.csv", synthetic_returns())
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--trials", "2"])
    assert result.exit_code == 2 and "--trials must be at least the sweep's 3 configurations" in result.stderr


def test_corrupted_ledger_line_is_reported_and_nothing_is_lost(tmp_path):
    ledger = tmp_path / "trials.jsonl"
    good = json.dumps(ledger_record(fingerprint="a" * 64, configurations=4, windows=60, selected="x",
                                    verdict="go", input_path="x.csv", trials=4))
    content = (good + "\n\n" + good + "\n" + '{"fingerprint": "ab", "configurations": 3}\n' + good + "\n").encode()
    ledger.write_bytes(content)
    sweep = write_wide(tmp_path / "a.csv", synthetic_returns())
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--ledger", str(ledger)])
    assert result.exit_code == 2
    assert str(ledger) in result.stderr and "line 4 of the trial ledger" in result.stderr
    assert ledger.read_bytes() == content


@pytest.mark.parametrize(
    ("line", "fragment"),
    [
        (b"{oops", "not JSON"),
        (b"[1]", "not a JSON object"),
        (b"\xff\xfe", "not UTF-8"),
        (b'{"fingerprint": "' + b"A" * 64 + b'", "configurations": 2}', "64 lowercase hex"),
        (b'{"fingerprint": "' + b"a" * 64 + b'", "configurations": 0}', "positive whole number"),
        (b'{"fingerprint": "' + b"a" * 64 + b'", "configurations": true}', "positive whole number"),
    ],
)
def test_ledger_line_messages(line, fragment):
    good = b'{"fingerprint": "' + b"b" * 64 + b'", "configurations": 2}'
    with pytest.raises(InputError) as info:
        parse_ledger(good + b"\n" + line + b"\n", path="trials.jsonl")
    assert str(info.value).startswith("trials.jsonl: line 2 of the trial ledger") and fragment in str(info.value)


def test_append_after_a_line_without_newline(tmp_path):
    ledger = tmp_path / "trials.jsonl"
    ledger.write_text('{"fingerprint": "' + "a" * 64 + '", "configurations": 2}')  # hand edited, no final newline
    with open_ledger(ledger) as book:
        assert book.tally(fingerprint="b" * 64, configurations=3).trials == 5
        book.append(ledger_record(fingerprint="b" * 64, configurations=3, windows=9, selected="s",
                                  verdict="go", input_path="p", trials=5))
    assert [e.configurations for e in read_ledger(ledger)] == [2, 3]


def test_ledger_folder_missing_is_exit_2(tmp_path):
    sweep = write_wide(tmp_path / "a.csv", synthetic_returns())
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--ledger", str(tmp_path / "no" / "t.jsonl")])
    assert result.exit_code == 2 and "folder" in result.stderr


def _append_many(path, worker, count, configurations):
    for k in range(count):
        fingerprint = hashlib.sha256(f"{worker}-{k}".encode()).hexdigest()
        with open_ledger(path) as book:
            tally = book.tally(fingerprint=fingerprint, configurations=configurations)
            time.sleep(0.001)  # widen the window between read and append
            book.append(ledger_record(fingerprint=fingerprint, configurations=configurations, windows=10,
                                      selected=f"w{worker}", verdict="go", input_path="p", trials=tally.trials))


def test_concurrent_appends_are_serialised(tmp_path):
    path = str(tmp_path / "trials.jsonl")
    workers, each, n = 4, 12, 3
    context = multiprocessing.get_context("fork")
    processes = [context.Process(target=_append_many, args=(path, w, each, n)) for w in range(workers)]
    for p in processes:
        p.start()
    for p in processes:
        p.join(60)
        assert p.exitcode == 0
    lines = Path(path).read_text().splitlines()
    assert len(lines) == workers * each
    records = [json.loads(line) for line in lines]  # every line parses
    # Under the lock each cycle saw every earlier record: the counts are n, 2n, ..., each exactly once.
    assert sorted(r["trials"] for r in records) == [n * (k + 1) for k in range(workers * each)]
    assert len(read_ledger(path)) == workers * each


# --- the documentation's example files ---------------------------------------------------------------


def _audit_options():
    command = typer.main.get_command(app).commands["audit"]
    return {opt for param in command.params for opt in param.opts if opt.startswith("-")}


def _sweepaudit_commands(text):
    words_list = []
    joined = text.replace("\\\n", " ")
    for line in joined.splitlines():
        line = line.strip()
        if line.startswith("sweepaudit audit"):
            words_list.append(shlex.split(line))
    return words_list


def _check_options(words):
    known = _audit_options()
    options = [w.split("=")[0] for w in words if w.startswith("-") and w != "-"]
    unknown = [o for o in options if o not in known]
    assert not unknown, f"options not in the audit command: {unknown}"
    return options


def test_ci_workflow_example_parses_and_uses_real_options():
    yaml = pytest.importorskip("yaml")
    workflow = yaml.safe_load((ROOT / "docs" / "examples" / "ci-workflow.yml").read_text())
    steps = [s for job in workflow["jobs"].values() for s in job["steps"]]
    commands = [w for s in steps if "run" in s for w in _sweepaudit_commands(s["run"])]
    assert len(commands) == 1
    options = _check_options(commands[0])
    assert {"--policy", "--junit", "--baseline", "--ledger", "--json"} <= set(options)
    uploads = [s for s in steps if str(s.get("uses", "")).startswith("actions/upload-artifact")]
    assert uploads and "if" in uploads[0]  # uploaded even when the gate fails


def test_pre_commit_example_parses_and_uses_real_options():
    yaml = pytest.importorskip("yaml")
    config = yaml.safe_load((ROOT / "docs" / "examples" / "pre-commit-config.yaml").read_text())
    hooks = [h for repo in config["repos"] if repo["repo"] == "local" for h in repo["hooks"]]
    assert len(hooks) == 1
    hook = hooks[0]
    assert {"id", "name", "entry", "language"} <= set(hook)
    words = shlex.split(hook["entry"])
    assert words[:2] == ["sweepaudit", "audit"]
    _check_options(words)


def test_policy_example_loads():
    from sweepaudit.policy import load_policy_file

    loaded = load_policy_file(ROOT / "docs" / "examples" / "pyproject-policy.toml")
    assert loaded.policy != DEFAULT_POLICY
    assert "baseline_drift" in loaded.policy.required


def test_readme_section_commands_use_real_options():
    text = (ROOT / "README.md").read_text()
    commands = _sweepaudit_commands(text)
    assert commands
    for words in commands:
        _check_options(words)
    for code in ("| 0 |", "| 1 |", "| 2 |"):
        assert code in text


def test_terminal_shows_the_ledger_and_the_baseline(small_results):
    from rich.console import Console

    from sweepaudit.render.terminal import render_terminal

    base = json.loads(json.dumps(small_results.document))
    base["results"]["bootstrap"]["selected"]["mean"]["low"] += 1.0  # the baseline was far better
    compared = audit(small_results.sweep, settings=small_results.settings, baseline=base,
                     baseline_path="audits/baseline.json")
    tally = tally_trials((), fingerprint="a" * 64, configurations=3, path="audits/trials.jsonl")
    doc = audit_document(compared.evidence, compared.verdict, baseline=compared.baseline,
                         ledger=ledger_block(tally, declared=None, used=3, note="3 trials counted"))
    console = Console(record=True, width=120)
    render_terminal(doc, console)
    text = console.export_text()
    assert "Trial ledger" in text and "audits/trials.jsonl: this sweep is new (recorded now)" in text
    assert "Against the baseline audits/baseline.json" in text and "EXCEEDED" in text
    assert "bootstrap.selected.mean.low" in text
    assert "results.bootstrap.selected.mean.low: " in text  # listed among the largest moves
    assert doc["verdict"] == "no-go" and doc["reasons"][-1].startswith("baseline_drift: ")


def test_the_audit_with_a_ledger_passes_the_counted_trials_to_the_methods(tmp_path):
    ledger = tmp_path / "trials.jsonl"
    ledger.write_text(json.dumps({"fingerprint": "c" * 64, "configurations": 40}) + "\n")
    sweep = sweep_from_array(synthetic_returns(), periods_per_year=52)
    result = audit(sweep, settings=AuditSettings(resamples=200), policy=DEFAULT_POLICY, ledger=ledger, trials=10)
    # 40 recorded + 3 new = 43 > the declared 10: the deflated Sharpe code reads settings.trials.
    assert result.settings.trials == 43 and result.sharpe.trials == 43
    assert result.document["ledger"]["trials_used"] == 43 and result.document["settings"]["trials"] == 43
    assert len(read_ledger(ledger)) == 2
