"""The audit as a CI gate (sweepaudit.gate): trials from a declaration and the ledger, the gate's terminal
sections, and the documentation's example files.

Internal consistency only: the counting rules, the CLI wiring, the examples' options against the
command's own.
"""

from __future__ import annotations

import json
import shlex
from pathlib import Path

import pytest
import typer

from sweepaudit import AuditSettings, audit
from sweepaudit.cli import app
from sweepaudit.document import audit_document, ledger_block
from sweepaudit.errors import InputError
from sweepaudit.gate import trials_to_count
from sweepaudit.ledger import LedgerEntry, read_ledger, tally_trials
from sweepaudit.policy import DEFAULT_POLICY
from sweepaudit import sweep_from_array

from .helpers import run, synthetic_returns, write_wide

ROOT = Path(__file__).resolve().parents[1]


def _entry(line, fp, n):
    return LedgerEntry(line, fp, n, {})

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
    doc = audit_with_ledger(b)  # other data, the grid widened from lookback 10-30 to 10-50: two new trials
    assert doc["ledger"]["trials_counted"] == 5 and doc["ledger"]["sweeps_recorded"] == 2
    assert doc["ledger"]["trials_added"] == 2 and doc["ledger"]["trials_before"] == 3
    doc = audit_with_ledger(b, "--trials", "20")
    assert doc["ledger"]["trials_used"] == 20 and doc["settings"]["trials"] == 20
    assert "--trials 20" in doc["reproduce"]["command"]
    records = [json.loads(line) for line in ledger.read_text().splitlines()]
    assert [r["configurations"] for r in records] == [3, 3, 5, 5]
    assert [r["trials"] for r in records] == [3, 3, 5, 20]
    assert [r["trials_added"] for r in records] == [3, 0, 2, 0]
    first = records[0]
    assert set(first) >= {"fingerprint", "configurations", "windows", "date", "selected", "verdict", "version", "input"}
    assert first["windows"] == 60 and first["input"] == str(a) and first["date"].endswith("Z")
    assert first["fingerprint"] == records[1]["fingerprint"] != records[2]["fingerprint"]

def test_cli_trials_below_configurations_is_exit_2(tmp_path):
    sweep = write_wide(tmp_path / "a.csv", synthetic_returns())
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--trials", "2"])
    assert result.exit_code == 2 and "--trials must be at least the sweep's 3 configurations" in result.stderr

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


def test_trial_counts_have_a_ceiling_and_accept_scientific_notation(tmp_path):
    from sweepaudit.ledger import MAX_TRIALS

    with pytest.raises(InputError, match=r"^--trials must be at most 1,000,000,000,000,000 trials"):
        trials_to_count(10, declared=MAX_TRIALS + 1, name="--trials")
    big = tally_trials((_entry(1, "a" * 64, MAX_TRIALS),), fingerprint="a" * 64, configurations=10)
    assert big.trials == MAX_TRIALS
    with pytest.raises(InputError, match="more than the 1,000,000,000,000,000 sweepaudit can count"):
        tally_trials((_entry(1, "a" * 64, MAX_TRIALS),), fingerprint="b" * 64, configurations=10)
    sweep = write_wide(tmp_path / "sweep.csv", synthetic_returns())
    for text, message in (("1e30", "--trials must be a whole number from 1 to 1,000,000,000,000,000; got 1e+30"),
                          ("2.5", "--trials must be a whole number from 1 to"), ("many", "--trials must be a finite")):
        result = run(["audit", str(sweep), "--quick", "--trials", text])
        assert result.exit_code == 2 and result.stderr.count("\n") == 1 and message in result.stderr
    out = tmp_path / "a.json"
    result = run(["audit", str(sweep), "--quick", "-q", "--trials", "6e8", "--json", str(out)])
    assert result.exit_code in (0, 1)
    assert json.loads(out.read_text())["results"]["sharpe"]["deflated"]["trials"] == 600_000_000
