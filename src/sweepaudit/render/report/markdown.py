"""The audit report as Markdown, with its figures as SVG files in ``<stem>_figures/`` beside it.

User strings (configuration names, file names) are escaped so that they cannot break a table (pipes,
newlines) or be read as markup (HTML tags, emphasis, links).
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from urllib.parse import quote

from ..safe import visible
from .model import STATES, Report, Section, Table

__all__ = ["render_markdown", "escape"]

_SPECIAL = re.compile(r"([\\`*_\[\]|#~])")
def escape(text: object) -> str:
    """Markdown-safe text: one line (control characters as visible escapes, see
    :func:`~sweepaudit.render.safe.visible`), pipes and emphasis characters escaped, HTML
    characters as entities."""
    s = visible(text)
    s = s.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return _SPECIAL.sub(r"\\\1", s)


def _table(t: Table) -> list[str]:
    lines = []
    if t.caption:
        lines += [f"*{escape(t.caption)}*", ""]
    lines.append("| " + " | ".join(escape(c) for c in t.columns) + " |")
    lines.append("|" + "|".join("---" for _ in t.columns) + "|")
    for i, row in enumerate(t.rows):
        cells = [escape(c) for c in row]
        if t.mark(i) in ("selected", "flips"):
            cells = [f"**{c}**" if c else c for c in cells]
        lines.append("| " + " | ".join(cells) + " |")
    lines.append("")
    return lines


def _figures(s: Section, figures_dir: str, file_names: Mapping[str, str]) -> list[str]:
    lines = []
    for f in s.figures:
        lines += [
            f"![{escape(f.alt)}]({quote(figures_dir)}/{quote(file_names.get(f.name, f.name + '.svg'))})",
            "",
            f"**{escape(f.title)}.** {escape(f.caption)}",
            "",
        ]
    return lines


def _section(s: Section, figures_dir: str, file_names: Mapping[str, str]) -> list[str]:
    lines = [f'<a id="{s.id}"></a>', "", f"## {escape(s.title)}", ""]
    if s.answer:
        state = f"**{STATES[s.state]}** " if s.state else ""
        lines += [f"{state}{escape(s.answer)}", ""]
    if s.absent:
        lines += [line for n in s.notes for line in (f"> {escape(n)}", "")]
        lines += [line for p in s.meaning for line in (escape(p), "")]
    else:
        lines += _figures(s, figures_dir, file_names)
        for t in s.tables:
            lines += _table(t)
        if s.facts:
            lines += _table(Table(("", ""), s.facts))
        lines += [f"- {escape(n)}" for n in s.notes] + ([""] if s.notes else [])
        if s.code:
            fence = "```" if "```" not in s.code else "~~~~"
            lines += [fence + "sh", s.code.replace("\n", " "), fence, ""]
        lines += [line for p in s.meaning for line in (f"*{escape(p)}*", "")]
    if s.references:
        lines += ["References:", ""] + [f"- {escape(r)}" for r in s.references] + [""]
    return lines


def _first_screen(report: Report) -> list[str]:
    word = "GO" if report.verdict == "go" else "NO-GO"
    lines = [
        f"## Verdict: {word}" + (" (PRELIMINARY)" if report.preliminary else ""),
        "",
        f"**{escape(report.sentence)}**",
        "",
        f"{escape(report.counted)}.",
        "",
    ]
    if report.preliminary:
        lines += [f"> **Preliminary:** {escape(report.preliminary)}.", ""]
    lines += [f"**Selected configuration:** {escape(report.selected)} (chosen as: {escape(report.rule)})", ""]
    rows = tuple((k.label, k.per_window, k.annualized, k.bar) for k in report.key_figures)
    lines += _table(Table((f"key figure ({report.interval_words})", "per window", "annualized", "bar or reference"), rows))
    if report.what_if:
        lines += [f"**What would change the verdict:** {escape(report.what_if)}", ""]
    if report.warnings:
        lines += ["**Warnings**", ""] + [f"- {escape(w)}" for w in report.warnings] + [""]
    return lines + [f"> **Caution.** {escape(report.caution)}", ""]


def render_markdown(report: Report, *, figures_dir: str, file_names: Mapping[str, str] | None = None) -> str:
    """The report as Markdown; figures are linked as ``figures_dir/<file name>`` (relative), the file
    name from ``file_names`` (figure name -> file name; default ``<name>.svg``)."""
    file_names = file_names or {}
    lines = [f"# {escape(report.title)}", "", f"Input file: {escape(report.input_path)} · produced by "
                                               f"{escape(report.tool)}", ""]
    lines += _first_screen(report)
    lines += ["Contents:", ""]
    lines += [f"{i}. [{escape(s.title)}](#{s.id})" for i, s in enumerate(report.sections, 1)]
    lines += [f"- Appendix [{escape(s.title)}](#{s.id})" for s in report.appendix] + [""]
    for s in report.sections:
        lines += _section(s, figures_dir, file_names)
    lines += ['<a id="appendix"></a>', "", "## Appendix: every variant and diagnostic", ""]
    for s in report.appendix:
        lines += _section(s, figures_dir, file_names)
    lines += ["---", "", f"*{escape(report.caution)}*", ""]
    return "\n".join(lines)
