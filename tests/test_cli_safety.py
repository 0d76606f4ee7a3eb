"""Command-line safety: outputs never overwrite inputs or each other, a failure writes nothing,
options cannot weaken the policy's ranges, and a policy must require something.

Internal consistency tests of sweepaudit.cli and sweepaudit.verdict (no outside reference applies).
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

from typer.testing import CliRunner

from sweepaudit.cli import app

ROOT = Path(__file__).resolve().parents[1]
EDGE = ROOT / "fixtures" / "demo_edge_long.csv"
NOISE = ROOT / "fixtures" / "demo_noise_long.csv"
runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_an_output_that_would_overwrite_the_input_is_refused(tmp_path):
    sweep = tmp_path / "in.csv"
    shutil.copy(EDGE, sweep)
    before = sweep.read_bytes()
    result = run("audit", sweep, "--quick", "-q", "--json", sweep)
    assert result.exit_code == 2
    assert "would overwrite the input sweep" in result.stderr
    assert sweep.read_bytes() == before


def test_outputs_that_would_overwrite_the_ledger_or_each_other_are_refused(tmp_path):
    ledger = tmp_path / "trials.jsonl"
    result = run("audit", EDGE, "--quick", "-q", "--ledger", ledger, "--json", ledger)
    assert result.exit_code == 2 and "would overwrite the trial ledger" in result.stderr
    result = run("audit", EDGE, "--quick", "-q", "--json", tmp_path / "x.html", "--report", tmp_path / "x.html")
    assert result.exit_code == 2 and "would overwrite the JSON file" in result.stderr
    assert not (tmp_path / "x.html").exists()


def test_a_device_is_not_replaced_by_an_output():
    result = run("audit", EDGE, "--quick", "-q", "--json", "/dev/null")
    assert result.exit_code == 2 and "not a regular file" in result.stderr
    assert Path("/dev/null").is_char_device()


def test_a_failing_report_leaves_no_json_or_junit(tmp_path, monkeypatch):
    import sweepaudit.cli as cli

    def broken(*args, **kwargs):
        raise cli.SweepAuditError("the report could not be written")

    monkeypatch.setattr(cli, "render_report", broken)
    result = run("audit", EDGE, "--quick", "-q", "--json", tmp_path / "a.json", "--junit", tmp_path / "a.xml",
                 "--report", tmp_path / "a.html")
    assert result.exit_code == 2
    assert list(tmp_path.iterdir()) == []


def test_options_obey_the_policy_ranges():
    result = run("audit", NOISE, "--quick", "--confidence", "0.1")
    assert result.exit_code == 2 and "confidence must be >= 0.5; got 0.1" in result.stderr
    result = run("audit", NOISE, "--resamples", "5")
    assert result.exit_code == 2 and "resamples must be >= 100; got 5" in result.stderr


def test_a_policy_that_requires_nothing_cannot_say_go(tmp_path):
    policy = tmp_path / "p.toml"
    policy.write_text("required = []\n")
    out = tmp_path / "a.json"
    result = run("audit", NOISE, "--quick", "-q", "--policy", policy, "--json", out)
    assert result.exit_code == 1
    doc = json.loads(out.read_text())
    assert doc["verdict"] == "no-go" and "no required check ran" in doc["reasons"][0]


def test_an_unusable_baseline_fails_the_drift_check(tmp_path):
    base = tmp_path / "base.json"
    base.write_text(json.dumps({"schema": "sweepaudit.audit/1", "verdict": "go", "checks": [],
                                "selected": {"configuration": "x"}, "results": {"bootstrap": 5}}))
    out = tmp_path / "a.json"
    result = run("audit", EDGE, "--quick", "-q", "--baseline", base, "--json", out)
    assert result.exit_code == 1  # the edge demo passes every other check
    doc = json.loads(out.read_text())
    drift = next(c for c in doc["checks"] if c["id"] == "baseline_drift")
    assert drift["passed"] is False and "cannot compare" in drift["reason"]
    assert [c["id"] for c in doc["checks"] if c["required"] and not c["passed"]] == ["baseline_drift"]


def test_the_reproduce_command_names_the_policy_file(tmp_path):
    policy = tmp_path / "p.toml"
    policy.write_text("partitions = 8\n")
    out = tmp_path / "a.json"
    run("audit", EDGE, "--quick", "-q", "--policy", policy, "--json", out)
    command = json.loads(out.read_text())["reproduce"]["command"]
    assert f"--policy {policy}" in command
