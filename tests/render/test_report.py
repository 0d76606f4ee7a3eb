"""Tests of the audit report (sweepaudit.render.report: sections, markdown, html, plots, write; ``--report``).

Checked against something outside the project (the deflated Sharpe curve the report draws is tested
against the paper's example in tests/methods/test_deflation.py):
- the Markdown is parsed by a CommonMark parser (markdown-it-py, with GFM tables): user strings do not
  break table rows and do not become HTML tags;
- the HTML is parsed by Python's html.parser and loaded in a real browser (headless Chromium, marked
  ``browser``): the verdict is on the page and every figure is an image of non-zero size;
- the embedded and linked figures are well-formed SVG (xml.etree).
Internal consistency only:
- every figure of the JSON document's results blocks, checks, input and settings appears in both
  formats, formatted by ``sweepaudit.format.figure`` (the one helper the renderers use);
- atomic writing (no partial report or figures folder after a failure midway);
- the report names an isolated peak of the parameter surface (the rule: tests/methods/test_surface.py).
"""

from __future__ import annotations

import base64

import os
import re
import shutil
import subprocess
import xml.etree.ElementTree as ET
from dataclasses import replace
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pandas as pd
import markupsafe
import pytest
from markdown_it import MarkdownIt
from typer.testing import CliRunner

from sweepaudit import AuditSettings, audit
from sweepaudit.cli import app
from sweepaudit.read import LoadOptions, load_sweep
from sweepaudit.document import figure_material
from sweepaudit.format import figure
from sweepaudit.render.report import MANIFEST, build_report, figures_folder, plots, write_report
from sweepaudit.render.report.markdown import escape as md_escape
from sweepaudit.sweep import Sweep

ROOT = Path(__file__).resolve().parents[2]
EDGE = ROOT / "fixtures" / "demo_edge_long.csv"


# ---------------------------------------------------------------------------------------------
# fixtures
# ---------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def edge_audit():
    sweep = load_sweep(str(EDGE), LoadOptions())
    result = audit(sweep, settings=AuditSettings(seed=7, resamples=400),
                   command="sweepaudit audit fixtures/demo_edge_long.csv --seed 7")
    return result.document, result.figure_material


@pytest.fixture(scope="module")
def written(edge_audit, tmp_path_factory):
    doc, material = edge_audit
    folder = tmp_path_factory.mktemp("reports")
    write_report(folder / "edge.html", doc, material)
    write_report(folder / "edge.md", doc, material)
    return folder


def _numbers(value, path=""):
    """Every numeric leaf of a JSON value, with its key path (booleans and strings excluded)."""
    if isinstance(value, dict):
        for k, v in value.items():
            yield from _numbers(v, f"{path}.{k}")
    elif isinstance(value, list):
        for i, v in enumerate(value):
            yield from _numbers(v, f"{path}[{i}]")
    elif isinstance(value, (int, float)) and not isinstance(value, bool):
        yield path, value


def _figures_of(doc):
    found = list(_numbers(doc["results"], "results"))
    for i, c in enumerate(doc["checks"]):
        found += [(f"checks[{i}].value", c["value"]), (f"checks[{i}].threshold", c["threshold"])]
    for key in ("configurations", "windows", "periods_per_year"):
        if doc["input"][key] is not None:
            found.append((f"input.{key}", doc["input"][key]))
    found += [(f"settings.{k}", v) for k, v in _numbers(doc["settings"])]
    return found


def _shown(name: str, text: str) -> str:
    """A user or prose string as each format shows it (HTML-escaped, or Markdown-escaped)."""
    return str(markupsafe.escape(text)) if name.endswith(".html") else md_escape(text)


def _missing(doc, text):
    return [(p, v, figure(v)) for p, v in _figures_of(doc) if figure(v) not in text]


class _Tags(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags: list[tuple[str, dict]] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))


def _tags(html: str) -> list[tuple[str, dict]]:
    parser = _Tags()
    parser.feed(html)
    return parser.tags


# Contract-shaped method blocks (CONTRACT.md), with distinctive numbers, for the sections whose
# methods are not part of this audit yet.
SHARPE_BLOCK = {
    "observed": 0.2731, "observations": 208, "skewness": -0.4123, "kurtosis": 4.871,
    "probabilistic": {"benchmark": 0.0, "probability": 0.9993},
    "deflated": {"trials": 42, "effective_trials": 17.35, "trial_sharpe_variance": 0.006117,
                 "benchmark_sharpe": 0.1823, "probability": 0.8767},
    "min_track_record": {"observations": 61.37, "years": 1.18},
}
OVERFITTING_BLOCK = {
    "partitions": 16, "combinations": 12870, "probability_of_overfitting": 0.1377,
    "probability_of_loss": 0.0623, "degradation": {"slope": -0.3129, "intercept": 0.1456},
    "logits": {"0.05": -0.5521, "0.25": 0.9137, "0.5": 1.742, "0.75": 2.513, "0.95": 3.219},
}
SNOOPING_BLOCK = {
    "reality_check": {"statistic": 3.817, "pvalue": 0.01235},
    "spa": {"statistic": 3.911, "pvalue": 0.00813, "pvalue_lower": 0.00512, "pvalue_upper": 0.02271},
    "stepm": {"significant": ["entry_z=2.0, holding_weeks=4"], "level": 0.05},
}


def _cscv_arrays(material, rng, splits=3432):  # C(14, 7): 14 blocks
    """The material with CSCV splits of its own (slope and intercept as in OVERFITTING_BLOCK)."""
    ins = rng.normal(0.25, 0.05, splits)
    return replace(material, in_sample=ins, out_of_sample=0.1456 - 0.3129 * ins + rng.normal(0, 0.05, splits),
                   logits=rng.normal(1.5, 1.2, splits), split_statistic="sharpe")


# ---------------------------------------------------------------------------------------------
# every section and every figure
# ---------------------------------------------------------------------------------------------

SECTION_IDS = (
    "data", "selection", "intervals", "sharpe", "overfitting", "snooping", "tails", "time", "checks", "warnings",
    "reproduce",
)


def test_both_formats_hold_every_section_and_figure_of_the_json(edge_audit, written):
    doc, material = edge_audit
    html = (written / "edge.html").read_text()
    md = (written / "edge.md").read_text()
    assert len(_figures_of(doc)) > 300  # 42 configurations x 3 blocks x 3 figures, and more
    assert _missing(doc, html) == []
    assert _missing(doc, md) == []
    for sid in SECTION_IDS:
        assert f'id="{sid}"' in html
        assert f'<a id="{sid}"></a>' in md
    for name, text in (("edge.html", html), ("edge.md", md)):
        assert _shown(name, doc["caution"]) in text
        assert doc["reproduce"]["command"] in text  # a code block in Markdown
        assert doc["input"]["sha256"] in text
        assert _shown(name, doc["input"]["path"]) in text
        for reason in doc["reasons"]:
            assert _shown(name, reason) in text
        for warning in doc["warnings"]:
            assert _shown(name, warning) in text


def test_first_screen_comes_first(edge_audit, written):
    doc, _ = edge_audit
    for name in ("edge.html", "edge.md"):
        text = (written / name).read_text()
        verdict_at = text.index("GO" if doc["verdict"] == "go" else "NO-GO")
        first_section = text.index('id="data"')
        selected = _shown(name, doc["selected"]["configuration"])
        assert verdict_at < text.index(selected) < first_section
        assert text.index(_shown(name, doc["reasons"][0])) < first_section
        assert text.index(_shown(name, doc["caution"])) < first_section


def _figure_files(report):
    """The figure files a Markdown report links to, by figure name (``<name>.<hash>.svg``)."""
    linked = re.findall(r"\]\(([^)]+\.svg)\)", Path(report).read_text())
    return {Path(link).name.split(".")[0]: Path(report).parent / link for link in linked}


def _figure_names(report):
    files = _figure_files(report)
    assert all(path.is_file() for path in files.values())
    return set(files)


def test_absent_method_blocks_are_said_absent_and_have_no_figure(edge_audit, tmp_path):
    # A document from an audit whose method blocks are absent (CONTRACT.md: absent, not empty).
    doc, material = edge_audit
    bare_doc = {**doc, "results": {"bootstrap": doc["results"]["bootstrap"]}}
    bare = replace(material, logits=None, in_sample=None, out_of_sample=None, deflation_curve=None)
    # The sections follow the document: absent blocks draw no figure even when material is at hand.
    write_report(tmp_path / "edge.md", bare_doc, material)
    write_report(tmp_path / "edge.html", bare_doc, bare)
    md = (tmp_path / "edge.md").read_text()
    html = (tmp_path / "edge.html").read_text()
    for key in ("sharpe", "overfitting", "snooping", "stability"):
        assert f"no results.{key} block" in md
        assert f"no results.{key} block" in html
    assert _figure_names(tmp_path / "edge.md") == {"bootstrap_mean", "sharpe_ranking", "sharpe_surface",
                                                    "cumulative_excess"}


def test_method_blocks_present_are_shown_with_every_figure(edge_audit, tmp_path):
    doc, material = edge_audit
    full = {**doc, "results": {**doc["results"], "sharpe": SHARPE_BLOCK, "overfitting": OVERFITTING_BLOCK,
                               "snooping": SNOOPING_BLOCK}}
    with_cscv = _cscv_arrays(material, np.random.default_rng(3))
    write_report(tmp_path / "full.html", full, with_cscv)
    write_report(tmp_path / "full.md", full, with_cscv)
    html = (tmp_path / "full.html").read_text()
    md = (tmp_path / "full.md").read_text()
    for text in (html, md):
        assert _missing(full, text) == []
        assert "Not computed in this audit" not in text
    names = _figure_names(tmp_path / "full.md")
    assert {"cscv_logits", "cscv_degradation", "deflated_by_trials", "edge_over_time", "walk_forward_curve"} <= names
    assert len([t for t, a in _tags(html) if t == "img"]) == len(names) == 9
    for p in figures_folder(tmp_path / "full.md").glob("*.svg"):
        assert ET.parse(p).getroot().tag.endswith("svg")
        assert p.stat().st_size < 400_000  # 3,432 split points are rasterised inside the SVG


def test_html_is_self_contained_and_script_free(written):
    html = (written / "edge.html").read_text()
    assert "<script" not in html.lower()
    assert not re.search(r"""(src|href)\s*=\s*["'](?!data:|#)""", html)
    assert "url(" not in html and "@import" not in html
    imgs = [a for t, a in _tags(html) if t == "img"]
    assert len(imgs) == 9
    for a in imgs:
        assert a["src"].startswith("data:image/svg+xml;base64,")
        svg = base64.b64decode(a["src"].split(",", 1)[1])
        assert ET.fromstring(svg).tag.endswith("svg")
        assert a["alt"]
    assert os.path.getsize(written / "edge.html") < 600_000


def test_markdown_links_every_figure_relatively(written):
    md = (written / "edge.md").read_text()
    links = re.findall(r"!\[[^\]]*\]\(([^)]+)\)", md)
    assert len(links) == 9
    for link in links:
        assert not link.startswith("/") and link.startswith("edge_figures/")
        assert (written / link).is_file()


# ---------------------------------------------------------------------------------------------
# user strings never become markup
# ---------------------------------------------------------------------------------------------

HOSTILE = "<script>alert(1)</script>"
PIPED = "a|b *c* [x](y)"


@pytest.fixture(scope="module")
def hostile(tmp_path_factory):
    folder = tmp_path_factory.mktemp("hostile")
    rng = np.random.default_rng(11)
    t = 40
    frame = pd.DataFrame({
        "window": np.arange(1, t + 1),
        HOSTILE: rng.normal(0.02, 0.01, t),
        PIPED: rng.normal(0.0, 0.01, t),
        "plain": rng.normal(0.0, 0.01, t),
    })
    csv = folder / "<u>sweep.csv"
    frame.to_csv(csv, index=False)
    result = audit(load_sweep(str(csv), LoadOptions()), settings=AuditSettings(seed=1, resamples=200),
                   command=f"sweepaudit audit '{csv}'")
    doc, material = result.document, result.figure_material
    assert doc["selected"]["configuration"] == HOSTILE
    write_report(folder / "r.html", doc, material)
    write_report(folder / "r.md", doc, material)
    return folder, doc


def test_hostile_names_are_escaped_in_html(hostile):
    folder, _ = hostile
    html = (folder / "r.html").read_text()
    assert "<script" not in html.lower()
    assert "<u>sweep" not in html
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
    assert "&lt;u&gt;sweep.csv" in html
    assert not [t for t, _ in _tags(html) if t in ("script", "u")]


def test_hostile_names_stay_text_in_the_figure_files(hostile):
    folder, _ = hostile
    svgs = list(figures_folder(folder / "r.md").glob("*.svg"))
    assert svgs
    for path in svgs:
        root = ET.parse(path).getroot()
        assert not [e for e in root.iter() if e.tag.rsplit("}", 1)[-1] == "script"], path.name
    ranking = _figure_files(folder / "r.md")["sharpe_ranking"].read_text()
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in ranking


def test_hostile_names_cannot_break_markdown(hostile):
    folder, doc = hostile
    md = (folder / "r.md").read_text()
    rendered = MarkdownIt("commonmark").enable("table").render(md)
    assert "<script" not in rendered.lower()
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in rendered
    tags = {t for t, _ in _tags(rendered)}
    assert "script" not in tags and "u" not in tags
    assert 'href="y"' not in rendered  # "[x](y)" in a name stays text, not a link
    # every row of the every-configuration table keeps its cell count despite the pipe in a name
    tokens = MarkdownIt("commonmark").enable("table").parse(md)
    widths = []
    row = None
    for tok in tokens:
        if tok.type == "tr_open":
            row = 0
        elif tok.type in ("td_open", "th_open"):
            row += 1
        elif tok.type == "tr_close":
            widths.append(row)
    assert widths.count(7) == 1 + 3  # header + 3 configurations (per window only: 7 columns)
    assert "a|b" in rendered  # the pipe is shown as text


# ---------------------------------------------------------------------------------------------
# atomic writing
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["out.html", "out.md"])
def test_failure_midway_leaves_no_report_and_keeps_the_previous_one(edge_audit, tmp_path, monkeypatch, name):
    doc, material = edge_audit
    target = tmp_path / name
    target.write_text("previous report")
    before = sorted(p.name for p in tmp_path.iterdir())

    def broken(*args, **kwargs):
        raise RuntimeError("plotting failed")

    monkeypatch.setattr(plots, "sharpe_surface", broken)  # the second figure: midway through rendering
    with pytest.raises(RuntimeError, match="plotting failed"):
        write_report(target, doc, material)
    assert target.read_text() == "previous report"
    assert sorted(p.name for p in tmp_path.iterdir()) == before  # no figures folder, no temp files
    assert not figures_folder(target).exists()


def test_failure_midway_leaves_no_new_report(edge_audit, tmp_path, monkeypatch):
    doc, material = edge_audit
    monkeypatch.setattr(plots, "sharpe_surface", lambda *a, **k: 1 / 0)
    with pytest.raises(ZeroDivisionError):
        write_report(tmp_path / "new.md", doc, material)
    assert list(tmp_path.iterdir()) == []


def test_rewriting_a_markdown_report_replaces_only_its_own_figures(edge_audit, tmp_path):
    doc, material = edge_audit
    target = tmp_path / "again.md"
    folder = figures_folder(target)
    folder.mkdir()
    (folder / "stale.svg").write_text("a file sweepaudit did not write")
    write_report(target, doc, material)
    first = _figure_files(target)
    changed = {**doc, "verdict": "no-go" if doc["verdict"] == "go" else "go"}
    moved = replace(material, mean_distribution=material.mean_distribution * 1.5)  # a new bootstrap figure
    write_report(target, changed, moved)
    second = _figure_files(target)
    assert (folder / "stale.svg").read_text() == "a file sweepaudit did not write"
    assert first["bootstrap_mean"] != second["bootstrap_mean"] and not first["bootstrap_mean"].exists()
    assert first["sharpe_surface"] == second["sharpe_surface"]  # same figure, same file, kept
    on_disk = {p.name for p in folder.iterdir()}
    assert on_disk == {"stale.svg", MANIFEST, *(p.name for p in second.values())}
    assert sorted(p.name for p in tmp_path.iterdir()) == ["again.md", "again_figures"]


# ---------------------------------------------------------------------------------------------
# the command line
# ---------------------------------------------------------------------------------------------


def test_unknown_suffix_exits_2_before_the_audit_runs(tmp_path):
    runner = CliRunner()
    # the sweep file does not exist: the suffix error must come first
    result = runner.invoke(app, ["audit", str(tmp_path / "missing.csv"), "--report", str(tmp_path / "r.pdf")])
    assert result.exit_code == 2
    err = result.stderr if hasattr(result, "stderr") else result.output
    assert "--report" in err and ".pdf" in err and ".md" in err and ".html" in err
    assert list(tmp_path.iterdir()) == []


def test_missing_report_folder_exits_2(tmp_path):
    result = CliRunner().invoke(app, ["audit", str(EDGE), "--report", str(tmp_path / "nope" / "r.md")])
    assert result.exit_code == 2
    assert "does not exist" in (result.stderr if hasattr(result, "stderr") else result.output)


def test_cli_writes_the_report(tmp_path):
    result = CliRunner().invoke(app, ["audit", str(EDGE), "--seed", "7", "--resamples", "200", "-q",
                                      "--report", str(tmp_path / "cli.html"), "--json", str(tmp_path / "a.json")])
    assert result.exit_code in (0, 1)
    html = (tmp_path / "cli.html").read_text()
    assert "--resamples 200" in html and "Sweep audit" in html


# ---------------------------------------------------------------------------------------------
# the figures' mathematics and rules
# ---------------------------------------------------------------------------------------------

def _grid_sweep(means, rng, t=400):
    """A 3 x 3 sweep over (fast, slow) whose column means are ``means[i][j]``."""
    names, cols, rows = [], [], []
    for i, slow in enumerate((10, 20, 30)):
        for j, fast in enumerate((1, 2, 3)):
            names.append(f"fast={fast}, slow={slow}")
            cols.append(rng.normal(means[i][j], 1.0, t))
            rows.append({"fast": fast, "slow": slow})
    params = pd.DataFrame(rows, index=pd.Index(names, name="configuration"))
    return Sweep(returns=np.column_stack(cols), configurations=tuple(names), parameters=params,
                 windows=tuple(str(k) for k in range(t)))


def test_report_names_an_isolated_peak_and_not_a_plateau():
    # The rule itself is tested on arrays in tests/methods/test_surface.py.
    rng = np.random.default_rng(5)
    lone = audit(_grid_sweep([[0, 0, 0], [0, 0.35, 0], [0, 0, 0]], rng),
                 settings=AuditSettings(seed=2, resamples=300))
    plateau = audit(_grid_sweep([[0.1, 0.15, 0.1], [0.15, 0.35, 0.15], [0.1, 0.15, 0.1]], rng),
                    settings=AuditSettings(seed=2, resamples=300))
    for res, expected in ((lone, True), (plateau, False)):
        assert res.selected == "fast=2, slow=20"
        assert res.surface.neighbours == 4 and res.surface.isolated is expected
        text = "\n".join(n for s in build_report(res.document, res.figure_material).sections for n in s.notes)
        assert ("ISOLATED PEAK" in text) is expected
        assert ("It is not an isolated peak" in text) is not expected


def test_no_surface_without_two_parameters(edge_audit):
    doc, material = edge_audit
    assert plots.sharpe_surface(doc, material) is not None
    result = audit(load_sweep(str(EDGE), LoadOptions()), settings=AuditSettings(seed=7, resamples=100))
    evidence = replace(result.evidence, sweep=replace(result.sweep, parameters=result.sweep.parameters.iloc[:, :1]))
    one = figure_material(evidence)
    assert one.sharpe_grid is None
    assert plots.sharpe_surface(doc, one) is None


def test_ranking_of_a_thousand_configurations_thins_labels():
    rng = np.random.default_rng(8)
    from sweepaudit import sweep_from_array

    res = audit(sweep_from_array(rng.normal(0, 0.01, (60, 1000))), settings=AuditSettings(seed=1, resamples=100))
    fig = plots.sharpe_ranking(res.document, res.figure_material)
    root = ET.fromstring(fig.svg)
    texts = [e.text for e in root.iter() if e.tag.endswith("text") and e.text]
    assert sum(bool(re.fullmatch(r"config \d+", t)) for t in texts) == 1  # only the selected one is named
    assert len(fig.svg) < 400_000


# ---------------------------------------------------------------------------------------------
# a real browser
# ---------------------------------------------------------------------------------------------

_PROBE = """
<script>
window.addEventListener("load", function () {
  var out = [];
  document.querySelectorAll("img").forEach(function (i) {
    var r = i.getBoundingClientRect();
    out.push(i.naturalWidth + "x" + i.naturalHeight + "@" + Math.round(r.width) + "x" + Math.round(r.height));
  });
  var p = document.createElement("pre");
  p.id = "probe";
  p.textContent = out.join(" ");
  document.body.appendChild(p);
});
</script>
"""


def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        found = shutil.which(name)
        if found:
            return found
    return "/usr/bin/chromium" if os.path.exists("/usr/bin/chromium") else None


@pytest.mark.browser
def test_html_report_renders_in_a_real_browser(edge_audit, written, tmp_path):
    browser = _chromium()
    if browser is None:
        pytest.skip("headless Chromium not found (install Debian's 'chromium' package to run this test)")
    doc, _ = edge_audit
    html = (written / "edge.html").read_text()
    # The report has no script; a test-only copy gets a probe that writes the images' sizes into the DOM.
    probe = tmp_path / "probe.html"
    probe.write_text(html.replace("</body>", _PROBE + "</body>"))
    command = [browser, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
               "--disable-background-networking", "--disable-component-update", "--disable-sync",
               f"--user-data-dir={tmp_path / 'profile'}", "--virtual-time-budget=10000", "--dump-dom",
               probe.as_uri()]
    done = subprocess.run(command, capture_output=True, text=True, timeout=180)
    assert done.returncode == 0, done.stderr[-2000:]
    dom = done.stdout
    word = "GO" if doc["verdict"] == "go" else "NO-GO"
    assert f'<p class="word">{word}</p>' in dom
    assert build_report(doc).verdict_words.replace("'", "&#39;") in dom or build_report(doc).verdict_words in dom
    match = re.search(r'<pre id="probe">([^<]*)</pre>', dom)
    assert match, "the probe did not run"
    sizes = match.group(1).split()
    assert len(sizes) == 9
    for size in sizes:
        natural, shown = size.split("@")
        nw, nh = (int(v) for v in natural.split("x"))
        sw, sh = (int(v) for v in shown.split("x"))
        assert nw > 100 and nh > 100 and sw > 100 and sh > 100, size


def test_time_section_says_what_the_evidence_over_time_means(edge_audit, written, tmp_path):
    doc, material = edge_audit
    sentence = doc["results"]["time_meaning"]
    assert sentence.startswith("Over time, the edge")
    for name in ("edge.html", "edge.md"):
        text = (written / name).read_text()
        assert _shown(name, sentence) in text
        assert _shown(name, "Is the edge still alive? The evidence over time") in text
    # One block without the other: the section says which is missing and draws only its own figure.
    results = {k: v for k, v in doc["results"].items() if k != "walk_forward"}
    write_report(tmp_path / "time.md", {**doc, "results": results}, material)
    md = (tmp_path / "time.md").read_text()
    assert _shown("time.md", "no results.walk_forward block") in md and "walk-forward record" not in md
    names = _figure_names(tmp_path / "time.md")
    assert "edge_over_time" in names and "walk_forward_curve" not in names
