"""Tests of the Python entry points (sweepaudit.api: audit, calibrate, the results' views).

Internal consistency only: one audit gathers its evidence once and decides its verdict once, the
baseline included; the result carries the evidence, the verdict, the document and the figures'
raw material, in agreement with one another; every input form (wide and long DataFrames, an array
with dates, a path) gives the same audit; every command-line option has its keyword; the views
(repr, notebook HTML, JSON, JUnit, report, figures, terminal) are drawn from the document, stay
short, and show hostile names escaped.
"""

from __future__ import annotations

import json
import subprocess
import sys
import xml.etree.ElementTree as ET

import matplotlib.figure
import numpy as np
import pandas as pd
import pytest

from sweepaudit import (
    AuditResult,
    AuditSettings,
    CalibrationResult,
    InputError,
    Policy,
    PolicyError,
    audit,
    calibrate,
    sweep_from_array,
)
from sweepaudit import api
from sweepaudit.document import audit_document
from sweepaudit.ledger import read_ledger
from sweepaudit.render.report import build_report

from .helpers import synthetic_returns


@pytest.fixture(scope="module")
def sweep():
    return sweep_from_array(synthetic_returns(windows=80, edges=(0.01, 0.002, 0.0, 0.0)), periods_per_year=52)


def _counting(monkeypatch, name):
    calls = []
    original = getattr(api, name)

    def counted(*args, **kwargs):
        calls.append(args)
        return original(*args, **kwargs)

    monkeypatch.setattr(api, name, counted)
    return calls


def test_evidence_once_and_verdict_once_with_a_baseline(sweep, monkeypatch, tmp_path):
    settings = AuditSettings(seed=3, resamples=200)
    first = audit(sweep, settings=settings)
    base = tmp_path / "base.json"
    base.write_text(json.dumps(first.document))
    gathered, decided = _counting(monkeypatch, "gather_evidence"), _counting(monkeypatch, "decide")
    again = audit(sweep, settings=settings, baseline_path=base)
    assert len(gathered) == 1 and len(decided) == 1
    # The one decision saw the comparison: the drift check is among the checks, and nothing moved.
    assert [c.id for c in again.verdict.checks if c.id == "baseline_drift"] == ["baseline_drift"]
    assert again.baseline.path == str(base) and again.baseline.moved == () and again.baseline.checks_changed == ()
    assert again.document["baseline"]["path"] == str(base)


def test_the_result_agrees_with_itself(sweep):
    result = audit(sweep, settings=AuditSettings(seed=1, resamples=200), command=lambda ev: f"seed {ev.settings.seed}")
    assert isinstance(result, AuditResult)
    assert result.document == audit_document(result.evidence, result.verdict, command="seed 1",
                                             sensitivity=result.sensitivity)
    assert result.document["reproduce"]["command"] == "seed 1"
    assert result.figure_material.selected_index == result.selected_index == result.evidence.selected_index
    assert result.figure_material.deflation_curve is result.evidence.deflation_curve
    assert result.figure_material.mean_distribution.shape == (200,)
    assert result.baseline is None and "baseline" not in result.document
    for name in ("sweep", "settings", "policy", "intervals", "sharpe", "haircut", "overfitting", "snooping"):
        assert getattr(result, name) is getattr(result.evidence, name)


def test_a_baseline_document_without_a_path(sweep):
    settings = AuditSettings(seed=3, resamples=200)
    document = audit(sweep, settings=settings).document
    result = audit(sweep, settings=settings, baseline=document, command="x")
    assert result.baseline.path == "<baseline>"
    assert result.document["reasons"] == audit(sweep, settings=settings, baseline=document).document["reasons"]


# ---------------------------------------------------------------------------------------------
# the notebook-first API: inputs, keywords, the result's views


def _weekly_grid(windows=120, seed=4, hostile=False):
    """SYNTHETIC weekly excess returns of a 2 x 3 grid, as a wide DataFrame with a MultiIndex of
    parameters; ``hostile`` names one mode with markup, an escape sequence and a direction override."""
    rng = np.random.default_rng(seed)
    dates = pd.date_range("2021-01-01", periods=windows, freq="W-FRI", name="week_ending")
    modes = ["<script>alert(1)</script>\x1b[31m\u202eevil", "calm"] if hostile else ["fast", "calm"]
    columns = pd.MultiIndex.from_product([modes, [10, 20, 40]], names=["mode", "lookback"])
    values = rng.normal(0.0, 0.01, (windows, 6)) + np.linspace(0.0, 0.004, 6)
    return pd.DataFrame(values, index=dates, columns=columns)


def test_every_input_form_gives_the_same_audit(tmp_path):
    wide = _weekly_grid()
    names = [f"mode={m}, lookback={k}" for m, k in wide.columns]
    long = wide.stack(["mode", "lookback"], future_stack=True).rename("excess_return").reset_index()
    path = tmp_path / "sweep.csv"
    long.assign(week_ending=long.week_ending.dt.strftime("%Y-%m-%d")).to_csv(path, index=False)
    results = [
        audit(wide, seed=3, resamples=200),
        audit(long, seed=3, resamples=200),
        audit(wide.to_numpy(), dates=wide.index, configurations=names, seed=3, resamples=200),
        audit(str(path), seed=3, resamples=200),
    ]
    first = results[0]
    assert first.sweep.periods_per_year == 52 and list(first.sweep.parameters.columns) == ["mode", "lookback"]
    assert first.surface is not None  # a two-parameter grid: the surface check ran
    for other in results[1:]:
        assert other.sweep.periods_per_year == 52 and other.selected == first.selected
        assert other.sweep.configuration_keys == first.sweep.configuration_keys
        assert other.sharpe.deflated.probability == pytest.approx(first.sharpe.deflated.probability, rel=1e-10)
        assert other.decision == first.decision


def test_settings_by_keyword(tmp_path):
    wide = _weekly_grid()
    result = audit(wide, seed=5, quick=True, confidence=0.9, bootstrap="circular", block_length=4,
                   interval_method="basic", select="lookback=20.0,mode=calm", periods_per_year=52)
    s = result.document["settings"]
    assert (s["seed"], s["resamples"], s["confidence"], s["bootstrap"], s["block_length"], s["interval_method"]) == (
        5, 1000, 0.9, "circular", 4.0, "basic")
    assert result.selected == "mode=calm, lookback=20" and result.settings.selected == "mode=calm, lookback=20"
    base = AuditSettings(seed=1, resamples=300)
    assert audit(wide, settings=base, seed=2).document["settings"]["seed"] == 2  # a keyword wins
    assert audit(wide, settings=base).document["settings"]["resamples"] == 300
    with pytest.raises(InputError, match="^give either resamples or quick, not both$"):
        audit(wide, quick=True, resamples=500)
    with pytest.raises(PolicyError, match=r"^audit\(\) argument: resamples must be >= 100; got 5$"):
        audit(wide, resamples=5)
    with pytest.raises(InputError) as info:
        audit(wide, resamples=200, select="mode=calm, lookback=80")
    nearest = str(info.value).split("nearest: ")[1].split(", 'mode=fast")[0]
    assert sorted(nearest.split("', '")) == ["'mode=calm, lookback=10", "mode=calm, lookback=20", "mode=calm, lookback=40'"]


def test_policy_baseline_ledger_and_strategy_by_keyword(tmp_path):
    wide = _weekly_grid()
    policy = tmp_path / "policy.toml"
    policy.write_text("min_windows = 200\nstrategy = \"trend-weekly\"\n")
    result = audit(wide, resamples=200, policy=policy)
    assert result.document["policy_source"] == str(policy) and result.policy.min_windows == 200
    assert not result.check("enough_windows").passed
    assert audit(wide, resamples=200, policy=Policy(min_windows=50)).document["policy_source"] == "<Policy>"
    with pytest.raises(InputError, match="^policy must be a Policy or the path of a TOML file; got int$"):
        audit(wide, policy=3)
    first = audit(wide, resamples=200, seed=1)
    first.to_json(tmp_path / "base.json")
    again = audit(wide, resamples=200, seed=1, baseline=tmp_path / "base.json")
    assert again.baseline.path == str(tmp_path / "base.json") and again.baseline.moved == ()
    ledger = tmp_path / "trials.jsonl"
    counted = audit(wide, resamples=200, policy=policy, ledger=ledger, trials=10)
    assert counted.document["ledger"]["strategy"] == "trend-weekly" and counted.settings.trials == 10
    other = audit(wide, resamples=200, ledger=ledger, strategy="  carry ")
    assert other.document["ledger"]["strategy"] == "carry" and other.settings.trials == 12
    with pytest.raises(InputError, match="strategy must not contain control or format characters"):
        audit(wide, resamples=200, ledger=ledger, strategy="a\x1b[2Jb")
    with pytest.raises(InputError, match="^strategy must be a name of 1 to 100 characters; got ''$"):
        audit(wide, strategy="")
    assert len(read_ledger(ledger)) == 2  # the refused audits recorded nothing


def test_the_repr_is_short_whatever_the_size():
    rng = np.random.default_rng(8)
    names = [f"lookback={k}, band={b}" for k in range(20) for b in range(20)]
    result = audit(rng.normal(0, 0.01, (80, 400)), configurations=names, periods_per_year=52, resamples=200)
    text = repr(result)
    lines = text.splitlines()
    assert len(text) < 2500 and len(lines) == 5 + len(result.checks)
    assert lines[0] in ("<sweepaudit audit: GO>", "<sweepaudit audit: NO-GO>")
    assert all(f" {c.id} " in text for c in result.checks) and lines[-1] == result.document["caution"]
    assert sum(name in text for name in names) <= 2  # the selected one (and its reasons), never the list
    assert len(result._repr_html_()) < 20_000


def test_hostile_names_are_escaped_in_the_repr_and_the_html():
    result = audit(_weekly_grid(hostile=True), resamples=200, select="mode=calm, lookback=10")
    hostile = next(c for c in result.sweep.configurations if "script" in c)
    assert result.sweep.index_of(hostile) >= 0
    for shown in (repr(result), result._repr_html_(), repr(result.document["selected"]), result.terminal()):
        assert "\x1b" not in shown and "\u202e" not in shown
    page = result._repr_html_()
    assert "<script" not in page.lower() and "javascript:" not in page and " on" + "error=" not in page
    html_hostile = audit(_weekly_grid(hostile=True), resamples=200, select=hostile)._repr_html_()
    assert "&lt;script&gt;alert(1)&lt;/script&gt;\\x1b[31m\\u202eevil" in html_hostile
    assert "<script" not in html_hostile.lower()
    assert "'mode=<script>alert(1)</script>\\x1b[31m\\u202eevil" in repr(audit(_weekly_grid(hostile=True),
                                                                              resamples=200, select=hostile))


def test_the_result_writes_and_shows_itself(tmp_path, capsys):
    result = audit(_weekly_grid(), resamples=200, seed=2)
    d = result.to_dict()
    assert d == result.document and d is not result.document
    d["verdict"] = "changed"
    assert result.document["verdict"] != "changed"
    text = result.to_json(tmp_path / "audit.json")
    assert (tmp_path / "audit.json").read_text() == text and json.loads(text)["schema"] == "sweepaudit.audit/1"
    junit = ET.fromstring(result.to_junit(tmp_path / "checks.xml"))
    assert int(junit.get("tests")) == len(result.checks) and (tmp_path / "checks.xml").is_file()
    result.write_report(tmp_path / "audit.html")
    result.write_report(tmp_path / "memo.md")
    assert "data:image/svg+xml;base64," in (tmp_path / "audit.html").read_text()
    assert any((tmp_path / "memo_figures").glob("*.svg"))
    with pytest.raises(InputError, match="from its suffix"):
        result.write_report(tmp_path / "audit.pdf")
    view = result.terminal(width=120)
    assert "Verdict: " in view and result.selected in view and "\x1b" not in view
    result.show()
    assert "Verdict: " in capsys.readouterr().out


def test_figures_are_matplotlib_figures_from_the_report():
    result = audit(_weekly_grid(), resamples=200)
    figures = result.figures()
    report = build_report(result.document, result.figure_material)
    assert list(figures) == [f.name for f in report.figures] and len(figures) >= 5
    assert all(isinstance(f, matplotlib.figure.Figure) for f in figures.values())
    assert "sharpe_surface" in figures and figures["sharpe_surface"].axes


def test_typed_access_to_each_method():
    result = audit(_weekly_grid(), resamples=200)
    ev = result.evidence
    for name in ("tails", "long_run", "deflation_curve", "block_choice", "overfitting_diagnosis", "surface"):
        assert getattr(result, name) is getattr(ev, name)
    assert isinstance(result.sharpe.deflated.probability, float)
    assert result.check("deflated_sharpe") in result.checks and result.decision == result.verdict.decision
    with pytest.raises(InputError, match="no check 'nope' in this audit"):
        result.check("nope")


def test_importing_and_drawing_leave_the_matplotlib_backend_alone(tmp_path):
    script = (
        "import matplotlib; matplotlib.use('svg')\n"
        "import numpy as np, sweepaudit\n"
        "r = sweepaudit.audit(np.random.default_rng(1).normal(0, 0.01, (60, 3)), periods_per_year=52, resamples=200)\n"
        "r.figures()\n"
        "print(matplotlib.get_backend())\n"
    )
    out = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, cwd=tmp_path, check=True)
    assert out.stdout.strip() == "svg"


def test_calibrate_from_python():
    wide = _weekly_grid()
    result = calibrate(wide, sweeps=4, resamples=100, edge=0.5, seed=1, select="lookback=40, mode=calm")
    assert isinstance(result, CalibrationResult) and result.configuration == "mode=calm, lookback=40"
    assert result.false_go.trials == 4 and result.power is not None and result.power.trials == 4
    text = repr(result)
    assert text.startswith("<sweepaudit calibration>") and "false-go rate" in text and len(text) < 2500
    assert text.splitlines()[-1] == result.document["caution"]
    assert "<script" not in result._repr_html_() and "Failure rate of each check" in result._repr_html_()
    assert result.to_dict()["schema"] == "sweepaudit.calibration/1" and "Calibration" in result.terminal()
    with pytest.raises(InputError, match="^sweeps must be at least 1"):
        calibrate(wide, sweeps=0)
