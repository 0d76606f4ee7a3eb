"""The policy: defaults, TOML files, pyproject discovery, validation messages, ``sweepaudit policy``.

Outside references: the printed policy is parsed back with the standard library's TOML parser
(``tomllib``, TOML 1.0), which is independent of the code that writes it. The rest (discovery
rule, validation messages, CLI overrides) is verified for internal consistency against the rules
documented in ``sweepaudit.policy`` and the CLI's module docstring.
"""

from __future__ import annotations

import json
import tomllib
from dataclasses import fields

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from sweepaudit.cli import app
from sweepaudit.errors import PolicyError
from sweepaudit.policy import (
    DEFAULT_POLICY,
    Policy,
    discover_policy,
    load_policy_file,
    CHECK_IDS,
    policy_from_mapping,
    policy_to_toml,
    resolve_policy,
)
from sweepaudit.verdict import CHECKS

runner = CliRunner()


def write_sweep(path, *, windows=60, configurations=4, edge=0.0, seed=1):
    """A small SYNTHETIC wide sweep: weekly windows, Gaussian excess returns plus ``edge``."""
    rng = np.random.default_rng(seed)
    dates = pd.date_range("2020-01-03", periods=windows, freq="W-FRI")
    data = rng.normal(edge, 0.01, size=(windows, configurations))
    frame = pd.DataFrame(data, columns=[f"lookback={10 * (k + 1)}" for k in range(configurations)])
    frame.insert(0, "week_ending", dates.strftime("%Y-%m-%d"))
    frame.to_csv(path, index=False)
    return path


# --- defaults and the printed policy -------------------------------------------------------------


def test_the_static_check_ids_are_the_verdict_checks_in_display_order():
    # The policy validates check ids without importing the verdict: its list must stay in step.
    assert tuple(CHECKS) == CHECK_IDS


def test_defaults_are_the_dataclass_defaults_and_name_registered_checks():
    assert DEFAULT_POLICY == Policy()
    assert set(DEFAULT_POLICY.required) <= set(CHECKS)
    assert "baseline_drift" in DEFAULT_POLICY.required
    assert DEFAULT_POLICY.disabled == ()


def test_printed_policy_parses_back_to_exactly_the_defaults():
    # Reference: tomllib, the standard library's TOML 1.0 parser.
    table = tomllib.loads(policy_to_toml())
    # TOML has no null: keys whose default is None are printed commented out.
    assert set(table) == {f.name for f in fields(Policy) if getattr(DEFAULT_POLICY, f.name) is not None}
    for f in fields(Policy):
        expected = getattr(DEFAULT_POLICY, f.name)
        if expected is None:
            continue
        got = table[f.name]
        assert (tuple(got) if isinstance(got, list) else got) == expected, f.name
        assert type(got) is (list if isinstance(expected, tuple) else type(expected)), f.name
    assert policy_from_mapping(table) == DEFAULT_POLICY


def test_printed_policy_comments_every_key_with_its_help_and_source():
    text = policy_to_toml()
    flat = " ".join(line.lstrip("# ").strip() for line in text.splitlines() if line.startswith("#"))
    for f in fields(Policy):
        assert f"\n{f.name} = " in text or f"\n# {f.name} = " in text
        assert " ".join(f.metadata["help"].split()) in flat, f.name
        if f.metadata.get("source"):
            assert f"source: {' '.join(f.metadata['source'].split())}" in flat
    for check_id in CHECKS:
        assert check_id in text


def test_printed_non_default_policy_round_trips():
    changed = DEFAULT_POLICY.replace(confidence=0.9, resamples=2_000, required=["mean_interval"],
                                     disabled=["enough_windows"], baseline_pvalue_margin=1e-05)
    assert policy_from_mapping(tomllib.loads(policy_to_toml(changed))) == changed


def test_cli_policy_prints_the_defaults():
    result = runner.invoke(app, ["policy"])
    assert result.exit_code == 0
    assert policy_from_mapping(tomllib.loads(result.stdout)) == DEFAULT_POLICY


def test_cli_policy_effective_names_its_source(tmp_path, monkeypatch):
    (tmp_path / ".git").mkdir()
    found = tmp_path / "pyproject.toml"
    found.write_text("[tool.sweepaudit]\nmin_windows = 60\n")
    monkeypatch.chdir(tmp_path)
    result = runner.invoke(app, ["policy", "--effective"])
    assert result.exit_code == 0
    assert result.stdout.splitlines()[0] == f"# policy in effect, from: {found}"
    assert policy_from_mapping(tomllib.loads(result.stdout)) == DEFAULT_POLICY.replace(min_windows=60)
    assert runner.invoke(app, ["policy", "--policy", str(found)]).exit_code == 2
    found.write_text("[tool.sweepaudit]\nmin_windows = 6\n")
    result = runner.invoke(app, ["policy", "--effective"])
    assert result.exit_code == 2 and "min_windows must be >= 8" in result.stderr


# --- validation: every message names the key, the rule, the value and the source ----------------

VALIDATION_CASES = [
    ({"confidance": 0.9}, ["unknown key 'confidance'", "known keys are", "confidence"]),
    ({"significance": "5%"}, ["significance must be a number", "'5%'"]),
    ({"significance": True}, ["significance must be a number", "True"]),
    ({"significance": 0.0}, ["significance must be > 0.0", "got 0.0"]),
    ({"significance": 0.6}, ["significance must be <= 0.5", "got 0.6"]),
    ({"confidence": 1.0}, ["confidence must be < 1.0", "got 1.0"]),
    ({"confidence": 0.4}, ["confidence must be >= 0.5", "got 0.4"]),
    ({"resamples": 99}, ["resamples must be >= 100", "got 99"]),
    ({"resamples": 1000.0}, ["resamples must be a whole number", "1000.0"]),
    ({"min_windows": 7}, ["min_windows must be >= 8", "got 7"]),
    ({"required": "mean_interval"}, ["required must be a list of check names", "'mean_interval'"]),
    ({"required": ["mean_interval", 3]}, ["required must be a list of check names"]),
    ({"required": ["mean_intervall"]}, ["required names an unknown check 'mean_intervall'", "known checks are",
                                         "mean_interval", "enough_windows", "baseline_drift"]),
    ({"disabled": ["nope"]}, ["disabled names an unknown check 'nope'", "known checks are"]),
    ({"required": ["mean_interval", "mean_interval"]}, ["required lists 'mean_interval' twice"]),
    ({"required": ["mean_interval"], "disabled": ["mean_interval"]},
     ["mean_interval cannot be both required and disabled"]),
    ({"baseline_probability_margin": -0.01}, ["baseline_probability_margin must be >= 0.0", "got -0.01"]),
    ({"baseline_pvalue_margin": 1.5}, ["baseline_pvalue_margin must be <= 1.0", "got 1.5"]),
    ({"walk_forward_warmup": 1}, ["walk_forward_warmup must be 0 (automatic) or at least 2", "got 1"]),
    ({"walk_forward_lookback": 1}, ["walk_forward_lookback must be 0 (all earlier windows) or at least 2", "got 1"]),
    ({"walk_forward_lookback": -3}, ["walk_forward_lookback must be >= 0", "got -3"]),
    ({"walk_forward_warmup": 52.5}, ["walk_forward_warmup must be a whole number", "52.5"]),
    ({"recent_share": 1.0}, ["recent_share must be < 1.0", "got 1.0"]),
    ({"recent_share": 0}, ["recent_share must be > 0.0", "got 0"]),
]


@pytest.mark.parametrize(("values", "fragments"), VALIDATION_CASES)
def test_validation_messages(values, fragments):
    with pytest.raises(PolicyError) as info:
        policy_from_mapping(values, source="team.toml")
    message = str(info.value)
    assert message.startswith("team.toml: ")
    for fragment in fragments:
        assert fragment in message


def test_valid_values_at_the_closed_ends_are_accepted():
    p = policy_from_mapping({"significance": 0.5, "confidence": 0.5, "resamples": 100, "min_windows": 8,
                             "baseline_interval_margin": 0.0})
    assert (p.significance, p.confidence, p.resamples, p.min_windows) == (0.5, 0.5, 100, 8)
    # A TOML integer for a float field is accepted and stored as a float.
    margin = policy_from_mapping({"baseline_interval_margin": 1}).baseline_interval_margin
    assert margin == 1.0 and isinstance(margin, float)


# --- files ----------------------------------------------------------------------------------------


def test_policy_file_top_level_keys(tmp_path):
    path = tmp_path / "gate.toml"
    path.write_text('confidence = 0.9\nrequired = ["mean_interval"]\n')
    loaded = load_policy_file(path)
    assert loaded.source == str(path)
    assert loaded.policy == DEFAULT_POLICY.replace(confidence=0.9, required=("mean_interval",))


def test_policy_file_that_is_a_pyproject_uses_its_tool_table(tmp_path):
    path = tmp_path / "pyproject.toml"
    path.write_text('[project]\nname = "x"\n[tool.sweepaudit]\nmin_windows = 52\n[tool.other]\nk = 1\n')
    assert load_policy_file(path).policy.min_windows == 52


def test_policy_file_with_tool_but_no_sweepaudit_table(tmp_path):
    path = tmp_path / "pyproject.toml"
    path.write_text("[tool.other]\nk = 1\n")
    with pytest.raises(PolicyError, match=r"has a \[tool\] table but no \[tool.sweepaudit\] table"):
        load_policy_file(path)


def test_policy_file_errors_name_the_file(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("confidence = = 0.9\n")
    with pytest.raises(PolicyError, match=r"bad.toml is not valid TOML: .*line 1"):
        load_policy_file(bad)
    with pytest.raises(PolicyError, match=r"policy file .*missing.toml does not exist"):
        load_policy_file(tmp_path / "missing.toml")
    with pytest.raises(PolicyError, match="is a folder"):
        load_policy_file(tmp_path)
    unknown = tmp_path / "pyproject.toml"
    unknown.write_text("[tool.sweepaudit]\nlevel = 0.1\n")
    with pytest.raises(PolicyError) as info:
        load_policy_file(unknown)
    assert f"{unknown} [tool.sweepaudit]: unknown key 'level'" in str(info.value)


# --- discovery --------------------------------------------------------------------------------------


def _pyproject(folder, body):
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "pyproject.toml").write_text(body)
    return folder / "pyproject.toml"


def test_discovery_walks_up_to_the_nearest_table(tmp_path):
    (tmp_path / ".git").mkdir()
    found = _pyproject(tmp_path, "[tool.sweepaudit]\nmin_windows = 40\n")
    _pyproject(tmp_path / "strategies", '[project]\nname = "no table here"\n')  # skipped: no table
    start = tmp_path / "strategies" / "meanrev" / "runs"
    start.mkdir(parents=True)
    loaded = discover_policy(start)
    assert (loaded.source, loaded.policy.min_windows) == (str(found), 40)


def test_discovery_prefers_the_closest_table(tmp_path):
    (tmp_path / ".git").mkdir()
    _pyproject(tmp_path, "[tool.sweepaudit]\nmin_windows = 40\n")
    near = _pyproject(tmp_path / "sub", "[tool.sweepaudit]\nmin_windows = 44\n")
    assert discover_policy(tmp_path / "sub").source == str(near)


@pytest.mark.parametrize("git_kind", ["folder", "file"])
def test_discovery_checks_the_repository_root_then_stops(tmp_path, git_kind):
    _pyproject(tmp_path, "[tool.sweepaudit]\nmin_windows = 40\n")  # outside the repository
    repo = tmp_path / "repo"
    repo.mkdir()
    if git_kind == "folder":
        (repo / ".git").mkdir()
    else:
        (repo / ".git").write_text("gitdir: elsewhere\n")  # a worktree or submodule
    (repo / "sub").mkdir()
    assert discover_policy(repo / "sub") == discover_policy(repo)
    assert discover_policy(repo / "sub").source == "defaults"
    inside = _pyproject(repo, "[tool.sweepaudit]\nmin_windows = 41\n")  # the root itself is checked
    assert discover_policy(repo / "sub").source == str(inside)


def test_discovery_without_any_table_gives_defaults(tmp_path):
    (tmp_path / ".git").mkdir()
    loaded = discover_policy(tmp_path)
    assert loaded.policy == DEFAULT_POLICY and loaded.source == "defaults"


def test_discovery_reports_a_broken_pyproject_on_the_way(tmp_path):
    (tmp_path / ".git").mkdir()
    _pyproject(tmp_path, "[tool.sweepaudit\n")
    with pytest.raises(PolicyError, match="pyproject.toml is not valid TOML"):
        discover_policy(tmp_path)


def test_discovery_uses_the_current_directory(tmp_path, monkeypatch):
    (tmp_path / ".git").mkdir()
    found = _pyproject(tmp_path, "[tool.sweepaudit]\nresamples = 500\n")
    monkeypatch.chdir(tmp_path)
    assert resolve_policy().source == str(found)
    explicit = tmp_path / "other.toml"
    explicit.write_text("resamples = 700\n")
    assert resolve_policy(explicit).policy.resamples == 700  # --policy wins over discovery


# --- the policy through the command line -------------------------------------------------------


def test_cli_bad_policy_exits_2_naming_key_and_file(tmp_path):
    sweep = write_sweep(tmp_path / "sweep.csv")
    policy = tmp_path / "gate.toml"
    policy.write_text("min_windows = 3\n")
    result = runner.invoke(app, ["audit", str(sweep), "--policy", str(policy), "--resamples", "200"])
    assert result.exit_code == 2
    assert f"{policy}: min_windows must be >= 8; got 3" in result.stderr


def test_cli_discovers_pyproject_and_records_the_source(tmp_path, monkeypatch):
    (tmp_path / ".git").mkdir()
    found = _pyproject(tmp_path, "[tool.sweepaudit]\nmin_windows = 100\nresamples = 300\nconfidence = 0.9\n")
    sweep = write_sweep(tmp_path / "sweep.csv", windows=60, edge=0.01)
    monkeypatch.chdir(tmp_path)
    out = tmp_path / "audit.json"
    result = runner.invoke(app, ["audit", str(sweep), "--json", str(out), "--quiet", "--confidence", "0.8"])
    doc = json.loads(out.read_text())
    # 60 windows < the file's min_windows of 100: enough_windows fails, it is required -> no-go.
    assert result.exit_code == 1
    assert doc["policy_source"] == str(found)
    assert doc["policy"]["min_windows"] == 100
    failed = {c["id"] for c in doc["checks"] if not c["passed"]}
    assert "enough_windows" in failed and "mean_interval" not in failed
    assert any(r.startswith("enough_windows: ") and "fewer than the policy's minimum of 100" in r
               for r in doc["reasons"])
    # The file's resamples apply; --confidence overrides the file's 0.9 for this run.
    assert doc["settings"]["resamples"] == 300
    assert doc["settings"]["confidence"] == 0.8 and doc["policy"]["confidence"] == 0.9


def test_cli_defaults_recorded_as_defaults(tmp_path, monkeypatch):
    (tmp_path / ".git").mkdir()
    sweep = write_sweep(tmp_path / "sweep.csv")
    monkeypatch.chdir(tmp_path)
    out = tmp_path / "audit.json"
    runner.invoke(app, ["audit", str(sweep), "--json", str(out), "--quiet", "--resamples", "200"])
    doc = json.loads(out.read_text())
    assert doc["policy_source"] == "defaults"
    assert doc["settings"]["resamples"] == 200 and doc["policy"]["resamples"] == 10_000


def test_cli_disabled_check_is_left_out(tmp_path):
    sweep = write_sweep(tmp_path / "sweep.csv", windows=20, edge=0.02)
    policy = tmp_path / "gate.toml"
    policy.write_text('disabled = ["enough_windows"]\nrequired = ["mean_interval"]\n')
    out = tmp_path / "audit.json"
    result = runner.invoke(app, ["audit", str(sweep), "--policy", str(policy), "--json", str(out), "-q",
                                 "--resamples", "200"])
    doc = json.loads(out.read_text())
    ids = [c["id"] for c in doc["checks"]]
    assert "enough_windows" not in ids and "mean_interval" in ids
    # 20 windows would fail enough_windows; disabled, it cannot stop the go.
    assert result.exit_code == 0 and doc["verdict"] == "go"


def test_printer_is_generic_over_unset_and_table_fields():
    # A policy shape with a field that defaults to None and a table-valued field, as later policy
    # fields may have: None is printed commented out (TOML has no null), a dict as an inline table.
    from dataclasses import dataclass

    from sweepaudit.policy import _f

    @dataclass(frozen=True)
    class Shape:
        cap: float | None = _f(None, "an optional cap")
        margins: dict = _f(None, "per-figure margins")
        label: str = _f('say "hi"', "a label", choices=('say "hi"', "other"))

    text = policy_to_toml(Shape(cap=None, margins={"deflated probability": 0.02, "pbo": 1}))
    table = tomllib.loads(text)
    assert table == {"margins": {"deflated probability": 0.02, "pbo": 1}, "label": 'say "hi"'}
    assert "# cap =" in text and 'allowed: one of "say \\"hi\\"", "other"' in text


@pytest.mark.parametrize(
    ("body", "fragment"),
    [("tool = 3\n", "'tool' must be a table"), ("[tool]\nsweepaudit = 3\n", "tool.sweepaudit must be a table")],
)
def test_policy_file_tool_shapes(tmp_path, body, fragment):
    path = tmp_path / "pyproject.toml"
    path.write_text(body)
    with pytest.raises(PolicyError) as info:
        load_policy_file(path)
    assert str(info.value) == f"{path}: {fragment}"


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("min_deflated_probability = nan\n", "min_deflated_probability must be a finite number; got nan"),
        ("significance = nan\n", "significance must be a finite number; got nan"),
        ("confidence = inf\n", "confidence must be a finite number; got inf"),
        ("baseline_interval_margin = -inf\n", "baseline_interval_margin must be a finite number; got -inf"),
        ("partitions = 15\n", "partitions must be an even whole number; got 15"),
        ("required = " + "[" * 5000 + "]" * 5000 + "\n", "nested too deeply"),
    ],
    ids=["nan", "nan-significance", "inf", "minus-inf", "odd-partitions", "deep"],
)
def test_policy_values_that_would_break_a_check_name_the_file_and_key(tmp_path, text, message):
    path = tmp_path / "p.toml"
    path.write_text(text)
    with pytest.raises(PolicyError) as info:
        load_policy_file(path)
    assert str(info.value).startswith(str(path)) and message in str(info.value)
    result = CliRunner().invoke(app, ["policy", "--effective", "--policy", str(path)])
    assert result.exit_code == 2 and result.stderr.count("\n") == 1 and message in result.stderr


def test_a_policy_that_is_not_utf8_or_not_a_file(tmp_path):
    path = tmp_path / "latin.toml"
    path.write_bytes("# r\xe9sum\xe9\nconfidence = 0.9\n".encode("latin-1"))
    with pytest.raises(PolicyError, match=r"latin.toml is not UTF-8 text \(byte 0xe9 at offset 3\)"):
        load_policy_file(path)
    with pytest.raises(PolicyError, match="character device, not a regular file"):
        load_policy_file("/dev/zero")


def test_command_line_overrides_name_the_option_and_key():
    result = CliRunner().invoke(app, ["audit", "fixtures/demo_edge_long.csv", "--confidence", "nan"])
    assert result.exit_code == 2
    assert result.stderr == "sweepaudit: error: --confidence: confidence must be a finite number; got nan\n"
