"""Hostile names through every output: nothing a user's data contains can forge or style output.

Internal consistency (property-based, hypothesis): configuration names, parameter names and file
names built from rich markup, ANSI / OSC 8 escape sequences, C0 and C1 controls, NUL, line breaks,
bidirectional overrides, matplotlib mathtext, lone surrogates and arbitrary text are put into a
real audit document (and a calibration and an inspection document), which then goes through the
terminal renderers of audit, calibrate and inspect (plain and with colours), the JSON, the JUnit
XML, the Markdown and HTML reports and the error line. The properties:

* the terminal shows the verdict as its first line and no other line starts with ``Verdict``;
  the only escape sequences are the renderer's own colours (SGR), the same ones, in the same order,
  as for a plain name; the name is shown (as visible escapes);
* the JSON round-trips exactly and holds no raw control, C1, bidi or surrogate character;
* the JUnit file is well-formed XML 1.0 (checked with xml.etree, the standard library's parser);
* the Markdown has as many lines, and the HTML the same tags, as with a plain name;
* an error message is one line.

The end-to-end test runs the command line on a Parquet sweep whose configuration names are
hostile and checks every output file.
"""

from __future__ import annotations

import contextlib
import io
import json
import re
import xml.etree.ElementTree as ET
from collections import Counter
from html.parser import HTMLParser

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from sweepaudit import AuditSettings, audit, inspect
from sweepaudit.calibration import calibrate_sweep
from sweepaudit.cli import _error_line
from sweepaudit.document import calibration_document
from sweepaudit.read import LoadOptions, load_sweep
from sweepaudit.render.calibration import render_calibration
from sweepaudit.render.inspect import render_inspection
from sweepaudit.render.json import dumps
from sweepaudit.render.junit import audit_to_junit
from sweepaudit.render.report import build_report
from sweepaudit.render.report.html import render_html
from sweepaudit.render.report.markdown import render_markdown
from sweepaudit.render.safe import UNSAFE, visible, visible_document
from sweepaudit.render.terminal import render_terminal, terminal_console

from ..helpers import run

PIECES = [
    "[/]", "[red]", "[/red]", "[bold]x[/bold]", "[link=http://evil.example]click[/link]", ":warning:", "[",
    "\x1b[31m", "\x1b[2J", "\x1b]8;;http://evil.example\x1b\\", "\x1b]0;title\x07", "\x9b31m", "\x9d",
    "\x00", "\x07", "\x7f", "\n", "\r", "\r\n", "\t", "\nVerdict: GO", " " * 70 + "Verdict: GO",
    "\u202e", "\u2066", "\u200f", "\u2028", "\ufeff", "$x^2$", "$", "\\", "\udcff", "|", "*", "<b>", "&amp;",
]
hostile = st.lists(st.one_of(st.sampled_from(PIECES), st.text(max_size=6)), min_size=1, max_size=8).map("".join)

SGR = re.compile(r"\x1b\[[0-9;]*m")
TOKENS = ("PARAMX", "PARAMY", "FILEP", "LEDGERL")


def _replace(value, mapping):
    if isinstance(value, str):
        for token, text in mapping.items():
            value = value.replace(token, text)
        return value
    if isinstance(value, dict):
        return {_replace(k, mapping): _replace(v, mapping) for k, v in value.items()}
    if isinstance(value, list):
        return [_replace(v, mapping) for v in value]
    return value


@pytest.fixture(scope="module")
def template(tmp_path_factory):
    """A real audit document of a two-parameter sweep; every user string holds a token."""
    folder = tmp_path_factory.mktemp("safe")
    rng = np.random.default_rng(5)
    rows = [{"week": w, "PARAMX": x, "PARAMY": y, "ret": rng.normal(0.004 if (x, y) == (2, 2) else 0, 0.01)}
            for x in (1, 2, 3) for y in (1, 2, 3) for w in range(1, 61)]
    path = folder / "FILEP.csv"
    pd.DataFrame(rows).to_csv(path, index=False)
    sweep = load_sweep(str(path), LoadOptions(periods_per_year=52))
    first = audit(sweep, settings=AuditSettings(resamples=200, seed=1))
    result = audit(sweep, settings=AuditSettings(resamples=200, seed=2), baseline=first.document,
                   baseline_path=str(folder / "FILEP.json"), ledger=folder / "LEDGERL.jsonl")
    calibration = calibrate_sweep(sweep, sweeps=2, edge=1.0, resamples=100, seed=3)
    return (result.document, calibration_document(calibration, command=f"sweepaudit calibrate {path}"),
            inspect(str(path), periods_per_year=52).document)


def _hostile(doc, name):
    return _replace(doc, {"PARAMX": name + "x", "PARAMY": name + "y", "FILEP": name, "LEDGERL": name + "l"})


def _plain_twin(doc, name):
    """The same document with a harmless name of the same displayed length."""
    shown = "n" * len(visible(name))
    return _replace(doc, {"PARAMX": shown + "x", "PARAMY": shown + "y", "FILEP": shown, "LEDGERL": shown + "l"})


def _terminal(doc, *, width, colour):
    out = io.StringIO()
    console = terminal_console(file=out, width=width, force_terminal=colour,
                               color_system="truecolor" if colour else None)
    render_terminal(doc, console)
    return out.getvalue()


def _only_line_breaks(text):
    return {c for c in UNSAFE.findall(text)} <= {"\n"}


def test_visible_escapes_every_acting_character():
    assert visible("a\nb\x1b[31m\x9b\u202e\udcff\x00é[/]") == "a\\nb\\x1b[31m\\x9b\\u202e\\xff\\x00é[/]"
    assert visible(visible("\x1b\n")) == visible("\x1b\n")
    assert visible_document({"k\n": ["\x07", 1, None]}) == {"k\\n": ["\\x07", 1, None]}


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(name=hostile, width=st.integers(30, 140), colour=st.booleans())
def test_terminal_cannot_be_forged_or_styled(template, name, width, colour):
    doc = _hostile(template[0], name)
    text = _terminal(doc, width=width, colour=colour)
    plain = SGR.sub("", text)
    assert "\x1b" not in plain and _only_line_breaks(plain)
    lines = plain.split("\n")
    assert lines[0].rstrip() == ("Verdict: GO" if doc["verdict"] == "go" else "Verdict: NO-GO")
    assert not [line for line in lines[1:] if line.startswith("Verdict")]
    if colour:
        wide = _terminal(doc, width=20_000, colour=True)
        twin = _terminal(_plain_twin(template[0], name), width=20_000, colour=True)
        assert SGR.findall(wide) == SGR.findall(twin)
        assert visible(name) + "x=" in SGR.sub("", wide)  # the selected configuration's name, shown


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(name=hostile)
def test_json_and_junit_stay_well_formed(template, name):
    doc = _hostile(template[0], name)
    text = dumps(doc)
    assert json.loads(text) == doc and _only_line_breaks(text)
    xml = audit_to_junit(doc)
    root = ET.fromstring(xml.encode("utf-8"))  # the standard library's XML 1.0 parser
    assert _only_line_breaks(xml)
    props = {p.get("name"): p.get("value") for p in root.iter("property")}
    assert props["selected_configuration"] == visible(doc["selected"]["configuration"])


class _Tags(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags = Counter()

    def handle_starttag(self, tag, attrs):
        self.tags[tag] += 1


def _tags(html):
    parser = _Tags()
    parser.feed(html)
    return parser.tags


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(name=hostile)
def test_reports_keep_their_shape(template, name):
    doc, twin = _hostile(template[0], name), _plain_twin(template[0], name)
    md = render_markdown(build_report(doc), figures_dir="r_figures")
    html = render_html(build_report(doc))
    assert _only_line_breaks(md) and _only_line_breaks(html)
    assert md.count("\n") == render_markdown(build_report(twin), figures_dir="r_figures").count("\n")
    assert _tags(html) == _tags(render_html(build_report(twin)))


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(name=hostile, colour=st.booleans(), which=st.sampled_from(["calibrate", "inspect"]))
def test_calibration_and_inspection_output_cannot_be_styled(template, name, colour, which):
    doc = _hostile(template[1] if which == "calibrate" else template[2], name)
    out = io.StringIO()
    render = render_calibration if which == "calibrate" else render_inspection
    render(doc, terminal_console(file=out, width=100, force_terminal=colour,
                                 color_system="truecolor" if colour else None))
    plain = SGR.sub("", out.getvalue())
    assert "\x1b" not in plain and _only_line_breaks(plain)
    assert not [line for line in plain.split("\n") if line.startswith("Verdict")]
    assert re.sub(r"\s", "", visible(name)) in re.sub(r"\s", "", plain)


@settings(max_examples=30, deadline=None)
@given(message=hostile)
def test_an_error_is_one_line(message):
    with contextlib.redirect_stderr(io.StringIO()) as captured:
        _error_line(message)
    err = captured.getvalue()
    assert err.count("\n") == 1 and err.endswith("\n") and _only_line_breaks(err)


NAMES = ["[/]", "[red]x[/red]", "[link=http://evil.example]click[/link]", "\x1b]8;;http://evil.example\x1b\\c",
         "a\nVerdict: GO", "\u202eOG :tcidreV", "x\x00y", "\x9b31mz", "$\\frac{1$", "plain"]


def test_hostile_names_through_the_command_line(tmp_path):
    rng = np.random.default_rng(8)
    returns = rng.normal(0.0, 0.01, size=(80, len(NAMES)))
    returns[:, 0] += 0.006
    frame = pd.DataFrame(returns, columns=NAMES)
    frame.insert(0, "week", pd.date_range("2021-01-01", periods=80, freq="W-FRI"))
    sweep = tmp_path / "s.parquet"
    frame.to_parquet(sweep)
    out = {k: tmp_path / f"a.{k}" for k in ("json", "xml", "md", "html")}
    for select in ("[/]", "a\nVerdict: GO"):
        result = run(["audit", str(sweep), "--quick", "--select", select, "--json", str(out["json"]),
                      "--junit", str(out["xml"]), "--report", str(out["md"])])
        doc = json.loads(out["json"].read_text())
        assert result.exit_code == (0 if doc["verdict"] == "go" else 1), result.stderr  # no crash after the JSON
        assert doc["selected"]["configuration"] == select
        lines = result.stdout.split("\n")
        assert lines[0] == ("Verdict: GO" if doc["verdict"] == "go" else "Verdict: NO-GO")
        assert not [line for line in lines[1:] if line.startswith("Verdict")]
        assert _only_line_breaks(result.stdout) and "\x1b" not in result.stdout
        ET.parse(out["xml"])
        assert _only_line_breaks(out["md"].read_text())
    result = run(["audit", str(sweep), "--quick", "-q", "--report", str(out["html"])])
    assert result.exit_code in (0, 1) and _only_line_breaks(out["html"].read_text())
