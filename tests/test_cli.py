"""Tests of the command line: ``sweepaudit.cli.app`` (command ``audit``, ``--version``) driven with
typer's ``CliRunner``, ``reproduce_command`` through the JSON it fills, and the installed
``sweepaudit`` console script (``main``).

Checked against something outside the code under test:

* the verdicts on the demo sweeps against what their generator planted (fixtures/README.md,
  ``fixtures/make_demo_sweeps.py``: a genuine edge in ``demo_edge_long.csv``, none anywhere in
  ``demo_noise_long.csv``);
* the JSON keys against the contract in the design notes (CONTRACT.md, schema ``sweepaudit.audit/1``);
* the ``input`` block and the judged configuration's mean against the fixture file itself, read here
  with pandas and hashed with hashlib (a literal oracle);
* JSON validity with the standard library's ``json`` parser, which refuses NaN/Infinity on request;
* the version against ``pyproject.toml``.

Internal consistency only: the exit-status mapping (0 go, 1 no-go, 2 bad input or usage) as the
module documents it, and the wording of messages.
"""

from __future__ import annotations

import hashlib
import json
import os
import shlex
import subprocess
import sys
import tomllib
from pathlib import Path

import pandas as pd
import pytest
from typer.testing import CliRunner

from sweepaudit.cli import app

ROOT = Path(__file__).resolve().parents[1]
EDGE = ROOT / "fixtures" / "demo_edge_long.csv"
NOISE = ROOT / "fixtures" / "demo_noise_long.csv"
FAST = ["--resamples", "200"]

runner = CliRunner()


def run(*args, input=None):
    return runner.invoke(app, [str(a) for a in args], input=input)


def _strict_json(text: str) -> dict:
    def refuse(token):
        raise AssertionError(f"non-standard JSON number {token}")

    return json.loads(text, parse_constant=refuse)


def _assert_one_line_error(result, needle: str) -> None:
    assert result.exit_code == 2, (result.stdout, result.stderr)
    assert isinstance(result.exception, SystemExit)  # not an escaped exception
    lines = result.stderr.splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("sweepaudit: error: ")
    assert needle in lines[0]
    assert "Traceback" not in result.output
    assert result.stdout == ""


# ---------------------------------------------------------------------------------------------
# verdicts and exit status


def test_edge_demo_is_go():
    result = run("audit", EDGE, "--quick", "--seed", 7)
    assert result.exit_code == 0, result.output
    assert "Verdict: GO" in result.stdout
    # The generator planted the edge on the plateau around entry_z=2.0, holding_weeks=4.
    assert "entry_z=2.0, holding_weeks=4" in result.stdout


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_noise_demo_is_no_go(seed):
    result = run("audit", NOISE, "--quick", "--seed", seed)
    assert result.exit_code == 1, result.output
    assert "Verdict: NO-GO" in result.stdout


def test_edge_demo_is_go_at_the_default_resamples(tmp_path):
    # The one full-size run: what `make demo` does (10,000 resamples).
    out = tmp_path / "a.json"
    result = run("audit", EDGE, "--seed", 7, "--json", out)
    assert result.exit_code == 0, result.output
    doc = _strict_json(out.read_text())
    assert doc["verdict"] == "go" and doc["settings"]["resamples"] == 10_000


# ---------------------------------------------------------------------------------------------
# bad input and usage


def _file(name: str, data: bytes):
    def make(folder: Path) -> Path:
        (folder / name).write_bytes(data)
        return folder / name

    return make


def _bad_csv(tmp_path) -> Path:
    frame = pd.read_csv(EDGE, nrows=60)
    frame = frame.astype({"excess_return": object})
    frame.loc[41, "excess_return"] = "oops"  # data row 42
    path = tmp_path / "bad.csv"
    frame.to_csv(path, index=False)
    return path


@pytest.mark.parametrize(
    "make, needle",
    [
        (lambda d: d / "missing.csv", "missing.csv: no such file"),
        (_file("s.xlsx", b"x"), "unreadable format '.xlsx'"),
        (_bad_csv, "column 'excess_return', row 42: not a number: 'oops'"),
        (_file("empty.csv", b""), "empty input"),
    ],
    ids=["missing", "suffix", "bad-cell", "empty"],
)
def test_bad_input_is_exit_2_with_one_line(tmp_path, make, needle):
    path = make(tmp_path)
    out = tmp_path / "audit.json"
    result = run("audit", path, "--quick", "--json", out)
    _assert_one_line_error(result, needle)
    assert not out.exists()


def test_bad_cell_row_is_the_file_row(tmp_path):
    path = _bad_csv(tmp_path)
    # Row 42 counts data rows after the header: line 43 of the file.
    assert path.read_text().splitlines()[42].endswith(",oops")


def test_json_into_a_missing_folder_is_exit_2(tmp_path):
    result = run("audit", EDGE, "--quick", "--json", tmp_path / "no" / "a.json")
    _assert_one_line_error(result, "folder")


def test_json_onto_a_folder_is_exit_2(tmp_path):
    result = run("audit", EDGE, *FAST, "--json", tmp_path)
    _assert_one_line_error(result, "it is a folder")
    assert list(tmp_path.iterdir()) == []  # no temporary file left behind


@pytest.mark.parametrize(
    "args, needle",
    [
        (["--periods-per-year", "inf"], "periods per year must be positive and finite"),
        (["--resamples", "200", "--quick"], "give either --resamples or --quick"),
    ],
)
def test_bad_option_values_are_exit_2(args, needle):
    _assert_one_line_error(run("audit", EDGE, *args), needle)


@pytest.mark.parametrize(
    "args, needle",
    [
        (["--no-such-option"], "No such option"),
        (["--units", "percentage"], "--units"),
        (["--layout", "tall"], "--layout"),
    ],
)
def test_usage_errors_are_exit_2(args, needle):
    result = run("audit", EDGE, "--quick", *args)
    assert result.exit_code == 2
    assert needle in result.stderr
    assert "Traceback" not in result.output
    assert result.stdout == ""


def test_version():
    with open(ROOT / "pyproject.toml", "rb") as handle:
        version = tomllib.load(handle)["project"]["version"]
    result = run("--version")
    assert result.exit_code == 0
    assert result.stdout == f"sweepaudit {version}\n"


def test_help_shows_examples():
    result = run("audit", "--help")
    assert result.exit_code == 0
    assert "Examples" in result.stdout
    assert "sweepaudit audit sweep.csv --seed 7" in result.stdout
    assert "--common-windows" in result.stdout and "--json" in result.stdout


# ---------------------------------------------------------------------------------------------
# JSON


CONTRACT_KEYS = {"schema", "tool", "input", "settings", "selected", "verdict", "reasons", "checks",
                 "warnings", "caution", "results"}


def test_json_follows_the_contract(tmp_path):
    out = tmp_path / "audit.json"
    result = run("audit", EDGE, "--seed", 3, *FAST, "--json", out)
    assert result.exit_code == 0
    doc = _strict_json(out.read_text())
    assert CONTRACT_KEYS <= set(doc)
    assert doc["schema"] == "sweepaudit.audit/1"
    assert doc["tool"]["name"] == "sweepaudit" and isinstance(doc["tool"]["version"], str)

    data = pd.read_csv(EDGE)
    names = {f"entry_z={z}, holding_weeks={h}" for z, h in data[["entry_z", "holding_weeks"]].drop_duplicates().itertuples(index=False)}
    inp = doc["input"]
    assert {"path", "sha256", "layout", "configurations", "windows", "periods_per_year", "units",
            "first_window", "last_window"} <= set(inp)
    assert inp["sha256"] == hashlib.sha256(EDGE.read_bytes()).hexdigest()
    assert inp["layout"] == "long" and inp["units"] == "fraction"
    assert inp["configurations"] == len(names) == 42
    assert inp["windows"] == data["week_ending"].nunique() == 208
    assert inp["first_window"] == data["week_ending"].min() and inp["last_window"] == data["week_ending"].max()
    assert inp["periods_per_year"] == 52  # weekly windows

    assert {"seed", "resamples", "bootstrap", "block_length", "confidence"} <= set(doc["settings"])
    assert doc["settings"]["seed"] == 3 and doc["settings"]["resamples"] == 200
    assert set(doc["selected"]) >= {"configuration", "rule"}
    assert doc["selected"]["configuration"] in names
    assert doc["verdict"] in ("go", "no-go")
    assert doc["reasons"] and all(isinstance(r, str) for r in doc["reasons"])
    assert doc["checks"]
    for check in doc["checks"]:
        assert {"id", "passed", "value", "threshold", "reason"} <= set(check)
    assert isinstance(doc["warnings"], list)
    assert isinstance(doc["caution"], str) and doc["caution"]

    boot = doc["results"]["bootstrap"]
    for key in ("mean", "mean_annualized", "sharpe", "sharpe_annualized"):
        assert set(boot["selected"][key]) == {"estimate", "low", "high"}
        assert boot["selected"][key]["low"] <= boot["selected"][key]["high"]
    assert {c["configuration"] for c in boot["configurations"]} == names
    for c in boot["configurations"]:
        assert {"configuration", "mean", "sharpe"} <= set(c)


def test_json_and_terminal_show_the_evidence_over_time(tmp_path):
    # The fixture file itself is the oracle: its weekly windows, read here with pandas.
    out = tmp_path / "audit.json"
    result = run("audit", EDGE, "--seed", 3, *FAST, "--json", out)
    doc = _strict_json(out.read_text())
    weeks = sorted(pd.read_csv(EDGE)["week_ending"].unique())
    walk, st = doc["results"]["walk_forward"], doc["results"]["stability"]
    assert (walk["warmup"], walk["lookback"], walk["windows"], walk["first_window"]) == (52, None, 156, weeks[52])
    assert {"mean", "mean_annualized", "sharpe", "sharpe_annualized", "pick_changes", "pick_change_rate",
            "distinct_picks", "most_picked", "selected_share", "selected_same_windows", "persistence", "stress",
            "test"} <= set(walk)
    assert walk["mean"]["low"] <= walk["mean"]["estimate"] <= walk["mean"]["high"]
    assert [(p["first_window"], p["last_window"], p["windows"]) for p in st["thirds"]] == [
        (weeks[0], weeks[69], 70), (weeks[70], weeks[138], 69), (weeks[139], weeks[207], 69)]
    assert (st["early"]["windows"], st["recent"]["first_window"], st["rolling"]["windows"]) == (104, weeks[104], 52)
    assert set(st["recent"]["mean"]) == {"estimate", "low", "high"}
    assert {"difference", "standard_error", "statistic", "degrees_of_freedom", "pvalue"} <= set(st["change"])
    checks = {c["id"]: c for c in doc["checks"]}
    assert checks["walk_forward"]["value"] == walk["test"]["pvalue"] and not checks["walk_forward"]["required"]
    assert checks["edge_decay"]["value"] == st["change"]["pvalue"] and not checks["edge_decay"]["required"]
    text = " ".join(result.stdout.split())
    assert "Is the edge still alive?" in text and "Re-picking the winner: walk-forward record" in text
    assert doc["results"]["time_meaning"].startswith("Over time, the edge") and doc["results"]["time_meaning"] in text
    assert [p["period"] for p in st["thirds"]] == ["first third", "middle third", "last third"]
    assert len(st["rolling"]["sharpe"]) == 208 - 52 + 1 and st["rolling"]["first_window"] == weeks[51]
    rows = result.stdout.splitlines()
    bars = rows[next(i for i, row in enumerate(rows) if "thirds marked |:" in row) + 1].strip()
    # 60 bars for 157 rolling values (each bar about 2.6 of them) and a | before the bar holding the first
    # stretch of the middle and of the last third (the stretches ending at windows 70 and 139, 0-based).
    assert len(bars) == 62 and bars.count("|") == 2 and set(bars) <= set("▁▂▃▄▅▆▇█|")
    assert bars.index("|") == (70 - 51) * 60 // 157 and bars.rindex("|") == (139 - 51) * 60 // 157 + 1


def test_same_seed_same_bytes_other_seed_other_bytes(tmp_path):
    paths = [tmp_path / f"{i}.json" for i in range(3)]
    for path, seed in zip(paths, (5, 5, 6)):
        assert run("audit", EDGE, "--seed", seed, *FAST, "--json", path).exit_code in (0, 1)
    a, b, c = (p.read_bytes() for p in paths)
    assert a == b
    assert a != c


def test_reproduce_command_reproduces_the_json(tmp_path):
    first, second = tmp_path / "1.json", tmp_path / "2.json"
    wide = ROOT / "fixtures" / "demo_noise_wide.csv"
    args = ["audit", wide, *FAST, "--seed", 4, "--units", "percent", "--periods-per-year", 26,
            "--common-windows", "--select", "entry_z=1.0, holding_weeks=2"]
    code = run(*args, "--json", first).exit_code
    doc = _strict_json(first.read_text())
    words = shlex.split(doc["reproduce"]["command"])
    assert words[:2] == ["sweepaudit", "audit"]
    assert run(*words[1:], "--json", second).exit_code == code
    assert first.read_bytes() == second.read_bytes()


def test_parameter_columns_option_is_passed_to_the_loader(tmp_path):
    # Naming only entry_z leaves six rows per (entry_z, week): the second is reported.
    result = run("audit", EDGE, *FAST, "--parameter-columns", "entry_z")
    _assert_one_line_error(result, "duplicate row for configuration 'entry_z=1.0' and window '2021-01-08'")
    row = int(result.stderr.split(", row ")[1].split(":")[0])
    line = EDGE.read_text().splitlines()[row]
    assert line.startswith("2021-01-08,1.0,") and not line.startswith("2021-01-08,1.0,1,")


def test_select_judges_the_named_configuration(tmp_path):
    name = "entry_z=1.0, holding_weeks=8"
    out = tmp_path / "audit.json"
    result = run("audit", EDGE, *FAST, "--select", name, "--json", out)
    assert result.exit_code in (0, 1)
    doc = _strict_json(out.read_text())
    assert doc["selected"]["configuration"] == name
    # The judged mean is this configuration's sample mean, read straight from the file.
    data = pd.read_csv(EDGE)
    column = data[(data.entry_z == 1.0) & (data.holding_weeks == 8)]["excess_return"]
    assert len(column) == 208
    assert doc["results"]["bootstrap"]["selected"]["mean"]["estimate"] == pytest.approx(column.mean(), rel=1e-12)


def test_select_unknown_name_is_exit_2():
    _assert_one_line_error(run("audit", EDGE, *FAST, "--select", "entry_z=9.0, holding_weeks=1"),
                           "no configuration named 'entry_z=9.0, holding_weeks=1'")


@pytest.mark.parametrize("request_", ["holding_weeks=8, entry_z=1.0", "entry_z=1,holding_weeks=8",
                                      "  holding_weeks = 8.00 , entry_z=1.0 "])
def test_select_matches_parameter_values_in_any_order(tmp_path, request_):
    out = tmp_path / "audit.json"
    result = run("audit", EDGE, *FAST, "--select", request_, "--json", out)
    assert result.exit_code in (0, 1), result.stderr
    doc = _strict_json(out.read_text())
    # The exact name is judged and reproduced, whatever form the request took.
    assert doc["selected"]["configuration"] == "entry_z=1.0, holding_weeks=8"
    assert "--select 'entry_z=1.0, holding_weeks=8'" in doc["reproduce"]["command"]


def test_select_without_a_match_lists_the_nearest_names(tmp_path):
    result = run("audit", EDGE, *FAST, "--select", "holding_weeks=8, entry_z=9", "--json", tmp_path / "a.json")
    _assert_one_line_error(result, "nearest: 'entry_z=")
    nearest = result.stderr.split("nearest: ")[1]
    assert nearest.count("holding_weeks=8") >= 3  # the configurations sharing the value given come first
    assert not (tmp_path / "a.json").exists()
    inspected = run("inspect", EDGE, "--select", "holding_weeks=8,entry_z=1.0")
    assert inspected.exit_code == 0, inspected.stderr


def test_strategy_label_errors_are_exit_2(tmp_path):
    _assert_one_line_error(run("audit", EDGE, *FAST, "--strategy", "a\x1bb".encode().decode("unicode_escape")),
                           "--strategy must not contain control or format characters")
    _assert_one_line_error(run("audit", EDGE, *FAST, "--strategy", " "), "--strategy must be a name of 1 to 100 characters")
    policy = tmp_path / "policy.toml"
    policy.write_text("strategy = 5\n")
    _assert_one_line_error(run("audit", EDGE, *FAST, "--policy", policy),
                           f"{policy}: strategy must be a name of 1 to 100 characters; got 5")


def test_standard_input(tmp_path):
    out = tmp_path / "audit.json"
    result = run("audit", "-", *FAST, "--seed", 7, "--json", out, input=EDGE.read_bytes())
    assert result.exit_code == 0, result.output
    doc = _strict_json(out.read_text())
    assert doc["input"]["path"] == "<stdin>"
    assert doc["input"]["sha256"] == hashlib.sha256(EDGE.read_bytes()).hexdigest()
    assert doc["input"]["windows"] == 208


@pytest.mark.parametrize("path, code", [(EDGE, 0), (NOISE, 1)])
def test_quiet_prints_nothing(path, code):
    result = run("audit", path, "--quick", "--quiet")
    assert result.exit_code == code
    assert result.stdout == "" and result.stderr == ""


# ---------------------------------------------------------------------------------------------
# the installed console script


def test_console_script_demo():
    script = Path(sys.executable).parent / "sweepaudit"
    if not script.exists():
        pytest.skip(f"console script not installed beside {sys.executable}")
    # Import this checkout's code, not whichever copy the script was installed from.
    env = {**os.environ, "PYTHONPATH": str(ROOT / "src")}
    proc = subprocess.run(
        [str(script), "audit", "fixtures/demo_edge_long.csv", "--seed", "7", "--quick"],
        cwd=ROOT, env=env, capture_output=True, text=True, timeout=120,
    )
    assert proc.returncode == 0, proc.stderr
    assert "Verdict: GO" in proc.stdout
    assert proc.stderr == ""


def test_audit_and_calibrate_declare_the_input_options_once():
    import typer

    from sweepaudit import cli

    commands = typer.main.get_command(app).commands
    shared = [p.name for p in cli._INPUT_OPTIONS]
    n = len(shared)
    assert n == 18
    for name in ("audit", "calibrate", "inspect"):
        params = commands[name].params
        assert [p.name for p in params[:n]] == shared  # first, in one order
        assert "inputs" not in [p.name for p in params]
    helps = [{p.name: (p.opts, getattr(p, "help", None)) for p in commands[name].params[:n]}
             for name in ("audit", "calibrate", "inspect")]
    assert helps[0] == helps[1] == helps[2]
