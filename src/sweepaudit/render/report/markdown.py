"""The audit report as Markdown, with its figures as SVG files in ``<stem>_figures/`` beside it.

User strings (configuration names, file names) are escaped so that they cannot break a table (pipes,
newlines) or be read as markup (HTML tags, emphasis, links).
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from urllib.parse import quote

from ..safe import visible
from .model import Report, Section, Table

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
        if i == t.highlight:
            cells = [f"**{c}**" for c in cells]
        lines.append("| " + " | ".join(cells) + " |")
    lines.append("")
    return lines


def _section(s: Section, figures_dir: str, file_names: Mapping[str, str]) -> list[str]:
    lines = [f'<a id="{s.id}"></a>', "", f"## {escape(s.title)}", ""]
    for p in s.meaning:
        lines += [escape(p), ""]
    if s.absent:
        for n in s.notes:
            lines += [f"> {escape(n)}", ""]
    else:
        if s.facts:
            lines += _table(Table(("", ""), s.facts))
        for f in s.figures:
            lines += [
                f"![{escape(f.alt)}]({quote(figures_dir)}/{quote(file_names.get(f.name, f.name + '.svg'))})",
                "",
                f"**{escape(f.title)}.** {escape(f.caption)}",
                "",
            ]
        for n in s.notes:
            lines.append(f"- {escape(n)}")
        if s.notes:
            lines.append("")
        for t in s.tables:
            lines += _table(t)
        if s.code:
            fence = "```" if "```" not in s.code else "~~~~"
            lines += [fence + "sh", s.code.replace("\n", " "), fence, ""]
    if s.references:
        lines += ["References:", ""]
        lines += [f"- {escape(r)}" for r in s.references]
        lines.append("")
    return lines


def render_markdown(report: Report, *, figures_dir: str, file_names: Mapping[str, str] | None = None) -> str:
    """The report as Markdown; figures are linked as ``figures_dir/<file name>`` (relative), the file
    name from ``file_names`` (figure name -> file name; default ``<name>.svg``)."""
    file_names = file_names or {}
    word = "GO" if report.verdict == "go" else "NO-GO"
    lines = [
        f"# {escape(report.title)}",
        "",
        f"Input file: {escape(report.input_path)} · produced by {escape(report.tool)}",
        "",
        f"## Verdict: {word}",
        "",
        f"**{escape(report.verdict_words)}**",
        "",
        f"- **Selected configuration:** {escape(report.selected)}",
        f"- **Chosen as:** {escape(report.rule)}",
        "",
        "**Why it passed:**" if report.verdict == "go" else "**Why not:**",
        "",
    ]
    lines += [f"1. {escape(r)}" for r in report.reasons] + [""]
    lines += _table(Table(("headline figure", "estimate [interval]"), report.headline))
    lines += [f"> **Caution.** {escape(report.caution)}", "", "Contents:", ""]
    lines += [f"{i}. [{escape(s.title)}](#{s.id})" for i, s in enumerate(report.sections, 1)] + [""]
    for s in report.sections:
        lines += _section(s, figures_dir, file_names)
    lines += ["---", "", f"*{escape(report.caution)}*", ""]
    return "\n".join(lines)
