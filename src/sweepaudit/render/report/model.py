"""The report's model: a first screen, sections that each answer one question, and an appendix.

The Markdown and HTML renderers lay a :class:`Report` out; neither adds or drops a figure. Every
number in it was read from the audit document through
:class:`~sweepaudit.render.figures.Figures`, which :attr:`Report.shown` keeps (key path -> the
texts shown), so a test can hold the report to the document.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

__all__ = ["Figure", "Table", "Section", "KeyRow", "Report", "STATES"]

#: How a section's answer is marked, by its state: a check's outcome, or whether the verdict holds
#: under the alternative choices (the same words in HTML and Markdown).
STATES = {"passed": "PASS", "failed": "FAIL", "advisory": "ADVISORY", "holds": "HOLDS", "fragile": "FRAGILE",
          "hangs": "HANGS ON A CHOICE"}


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
    """A table of formatted cells, with its caption.

    ``marks`` flags rows to emphasise (the selected configuration, a choice that flips the verdict,
    a failed check): ``"selected"``, ``"flips"``, ``"failed"`` or ``""``.
    """

    columns: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    caption: str = ""
    collapsed: bool = False  # long tables: folded in HTML (a <details> element), shown in Markdown
    marks: tuple[str, ...] = ()
    wide: bool = False  # many columns: smaller type in HTML and print

    def mark(self, row: int) -> str:
        return self.marks[row] if row < len(self.marks) else ""

    @property
    def long(self) -> bool:
        """More than about a third of a printed A4 page (20 rows, or 1,500 characters of cells): it may
        break across pages; a shorter table moves whole to the next page."""
        return len(self.rows) > 20 or sum(len(cell) for row in self.rows for cell in row) > 1500


@dataclass(frozen=True)
class Section:
    """One section: the question it answers, the answer in a sentence, its figure and a short table."""

    id: str
    title: str
    answer: str = ""  # the finding, in one or two sentences
    state: str = ""  # a key of STATES, or "" (nothing to mark): how the answer is marked
    meaning: tuple[str, ...] = ()  # how to read it, in plain words
    facts: tuple[tuple[str, str], ...] = ()  # label, value
    tables: tuple[Table, ...] = ()
    figures: tuple[Figure, ...] = ()
    notes: tuple[str, ...] = ()  # bullets: findings, absent blocks
    code: str | None = None  # a command to copy
    references: tuple[str, ...] = ()
    absent: bool = False  # the audit did not produce this block


@dataclass(frozen=True)
class KeyRow:
    """One key figure of the first screen."""

    label: str
    per_window: str
    annualized: str
    bar: str


@dataclass(frozen=True)
class Report:
    """The whole report: the first screen, the sections, the appendix."""

    title: str
    verdict: str  # "go" | "no-go"
    sentence: str  # the verdict in one sentence
    counted: str  # "6 of 8 required checks passed"
    preliminary: str | None  # why the audit is preliminary, or None
    selected: str
    rule: str
    key_figures: tuple[KeyRow, ...]
    interval_words: str  # "95% studentized intervals"
    what_if: str  # what would change the verdict, in one sentence
    what_if_flips: tuple[str, ...]
    warnings: tuple[str, ...]
    caution: str
    input_path: str
    sections: tuple[Section, ...]
    appendix: tuple[Section, ...]
    tool: str
    shown: dict[str, tuple[str, ...]] = field(default_factory=dict)

    @property
    def figures(self) -> tuple[Figure, ...]:
        return tuple(f for s in (*self.sections, *self.appendix) for f in s.figures)
