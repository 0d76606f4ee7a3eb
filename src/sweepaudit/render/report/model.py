"""The report's model: sections of plain words, facts, tables and figures, the same for every format.

The Markdown and HTML renderers lay a :class:`Report` out; neither adds or drops a figure.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

__all__ = ["Figure", "Table", "Section", "Report"]


@dataclass(frozen=True)
class Figure:
    """A rendered plot: SVG bytes plus the words a reader needs."""

    name: str  # file stem, e.g. "bootstrap_mean"
    title: str
    caption: str  # what the figure shows and how to read it
    alt: str
    svg: bytes
    # The matplotlib Figure the SVG was saved from (``AuditResult.figures()`` hands it out).
    plot: Any = field(default=None, compare=False, repr=False)


@dataclass(frozen=True)
class Table:
    """A table of formatted cells, with its caption."""

    columns: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    caption: str = ""
    collapsed: bool = False  # long tables: folded in HTML (a <details> element), shown in Markdown
    highlight: int | None = None  # row to emphasise (the selected configuration)


@dataclass(frozen=True)
class Section:
    """One section: plain-language paragraphs, facts, tables, figures, and the method's reference."""

    id: str
    title: str
    meaning: tuple[str, ...] = ()  # what it means, in plain words
    facts: tuple[tuple[str, str], ...] = ()  # label, value
    tables: tuple[Table, ...] = ()
    figures: tuple[Figure, ...] = ()
    notes: tuple[str, ...] = ()  # bullets: findings, absent blocks
    code: str | None = None  # a command to copy
    references: tuple[str, ...] = ()
    absent: bool = False  # the audit did not produce this block


@dataclass(frozen=True)
class Report:
    """The whole report: the first screen (verdict, reasons, headline figures) and the sections."""

    title: str
    verdict: str  # "go" | "no-go"
    verdict_words: str
    selected: str
    rule: str
    reasons: tuple[str, ...]
    caution: str
    headline: tuple[tuple[str, str], ...]
    input_path: str
    sections: tuple[Section, ...]
    tool: str

    @property
    def figures(self) -> tuple[Figure, ...]:
        return tuple(f for s in self.sections for f in s.figures)
