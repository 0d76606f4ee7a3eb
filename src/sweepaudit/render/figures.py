"""The audit document's figures as the renderers show them: read by key, formatted once, remembered.

:class:`Figures` reads a figure of the audit JSON document by its key path
(``results.sharpe.deflated.probability``, ``results.bootstrap.configurations[3].mean``), formats it
with the style its kind calls for (:mod:`sweepaudit.format`) and records the path and the text.
Every renderer reads the document through it, so a figure reads the same in the terminal, the
Markdown and the HTML report, and a test can check both that every figure shown is a key of the
document and that every key of the document is shown somewhere (``tests/render/test_report.py``).

The digests below pick and word what the first screen, the checks and the "what would change the
verdict" block show; the terminal and the report lay them out, each in its own way.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any

from .. import format as fmt
from .safe import visible_document

__all__ = [
    "Figures",
    "KeyFigure",
    "CheckRow",
    "AlternativeRow",
    "key_figures",
    "check_rows",
    "alternative_rows",
    "alternative_row",
    "SHORT_ALTERNATIVES",
    "CHECK_NAMES",
    "WORDS",
    "words",
    "counted",
    "headline",
]

_STEP = re.compile(r"([^.\[\]]+)|\[(\d+)\]|\[\"([^\"]*)\"\]")


class Figures:
    """The audit document (made visible), read by key path; each figure shown is recorded in ``used``."""

    def __init__(self, doc: dict) -> None:
        self.doc = visible_document(doc)
        self.used: dict[str, list[str]] = {}

    def get(self, path: str, default: Any = None) -> Any:
        """The value at ``path`` (dots for keys, ``[i]`` for list items, ``["0.05"]`` for a key with a
        dot); ``default`` when absent."""
        node: Any = self.doc
        for key, index, quoted in _STEP.findall(path):
            try:
                node = node[int(index)] if index else node[quoted or key]
            except (KeyError, IndexError, TypeError):
                return default
        return node

    def has(self, path: str) -> bool:
        return self.get(path) is not None

    def _show(self, path: str, text: str) -> str:
        self.used.setdefault(path, []).append(text)
        return text

    def number(self, path: str, digits: int = 4) -> str:
        return self._show(path, fmt.figure(self.get(path), digits))

    def percent(self, path: str) -> str:
        return self._show(path, fmt.percent(self.get(path)))

    def probability(self, path: str) -> str:
        return self._show(path, fmt.probability(self.get(path)))

    def pvalue(self, path: str) -> str:
        return self._show(path, fmt.pvalue(self.get(path), self._floor_of(path)))

    def p_is(self, path: str) -> str:
        """``p = 0.0123`` or ``p < 0.001``: a p-value after its letter."""
        return self._show(path, fmt.p_is(self.get(path), self._floor_of(path)))

    def _floor_of(self, path: str) -> float | None:
        """The resampling floor for the p-values counted from resamples (the data-snooping tests');
        None for those read off a distribution (the haircut's, the time tests' t-tests)."""
        return self.pvalue_floor() if path.startswith("results.snooping") else None

    def whole(self, path: str) -> str:
        return self._show(path, fmt.whole(self.get(path)))

    def level(self, path: str) -> str:
        return self._show(path, fmt.level(self.get(path)))

    def styled(self, path: str, kind: str | None, *, threshold: bool = False) -> str:
        """A check's value (or, with ``threshold``, its bar) in the style of its ``value_kind``."""
        return self._show(path, fmt.styled(self.get(path), kind or "", floor=self.pvalue_floor(), threshold=threshold))

    def sharpe(self, path: str) -> str:
        """A Sharpe ratio or test statistic: three significant digits (:func:`sweepaudit.format.statistic`)."""
        return self._show(path, fmt.statistic(self.get(path)))

    def count(self, path: str) -> str:
        """How many items the list at ``path`` holds (recorded as ``<path>#count``)."""
        return self._show(f"{path}#count", fmt.whole(len(self.get(path) or ())))

    def text(self, path: str) -> str:
        """A string of the document (already made visible), ``n/a`` when absent."""
        value = self.get(path)
        return self._show(path, fmt.MISSING if value is None else str(value))

    def interval(self, path: str, *, as_percent: bool = False) -> str:
        """``estimate [low, high]`` of an interval block, all three with the same decimals."""
        block = self.get(path) or {}
        text = fmt.interval(block.get("estimate"), block.get("low"), block.get("high"), as_percent=as_percent)
        for part in ("estimate", "low", "high"):
            self._show(f"{path}.{part}", text)
        return text

    def estimate(self, path: str, *, as_percent: bool = False) -> str:
        """An interval block as ``estimate [low, high]``; a plain figure (no interval computed) alone."""
        if isinstance(self.get(path), dict):
            return self.interval(path, as_percent=as_percent)
        return self.percent(path) if as_percent else self.sharpe(path)

    def pvalue_floor(self) -> float | None:
        """The smallest p-value the audit's resamples can give."""
        floor = self.get("results.snooping.pvalue_floor")
        return floor if floor is not None else fmt.pvalue_floor(self.get("settings.resamples"))

    @property
    def annual(self) -> bool:
        return self.get("input.periods_per_year") is not None


#: The document's option values in words, by what they choose (no enum value reaches a reader).
WORDS: dict[str, dict[str, str]] = {
    "variance_mode": {"null": "the no-edge sampling variance", "empirical": "the spread of the Sharpe ratios"},
    "expected_maximum": {"approximate": "the paper's approximation", "exact": "exact"},
    "trials_used": {"declared": "declared", "effective": "effective"},
    "effective_trials_method": {"li_ji": "Li and Ji", "nyholt": "Nyholt", "average_correlation": "average correlation"},
    "scale": {"long-run": "long-run t-ratios", "bootstrap": "bootstrap-scaled", "none": "unscaled"},
    "gating": {"spa": "Hansen's SPA (consistent p-value)", "reality_check": "White's reality check"},
    "counting": {"include-observed": "the observed statistic counted", "strict-share": "a strict share"},
    "recentring": {"consistent": "Hansen's consistent recentring", "upper": "no recentring (upper)"},
    "statistic": {"sharpe": "Sharpe ratio", "mean": "mean excess return"},
    "case": {"robust": "robust: the winner holds up", "shared_edge": "shared edge: several configurations hold up",
             "overfit": "overfit: the winner is a product of the selection",
             "no_edge": "no edge: nothing holds up out of sample"},
    "annualization": {"square_root": "square root of the periods per year",
                      "serial_correlation": "Lo's serial-correlation factor"},
    "bootstrap": {"stationary": "stationary", "circular": "circular block", "moving-block": "moving-block"},
    "interval_method": {"studentized": "studentized", "percentile": "percentile", "basic": "basic"},
    "sharpe_variance": {"long-run": "long-run variance", "iid": "iid formula"},
    "deflation_threshold": {"calibrated": "calibrated level", "fixed": "fixed level"},
}


def words(kind: str, value: object) -> str:
    """An option value in words (as given when it has none)."""
    return WORDS.get(kind, {}).get(str(value), fmt.MISSING if value is None else str(value))


def counted(f: Figures) -> str:
    """``6 of 8 required checks passed (2 failed); 1 of 2 advisory checks passed (1 failed)``."""
    text = (f"{f.whole('summary.required_passed')} of {f.whole('summary.required')} required "
            f"check{'s' if f.get('summary.required') != 1 else ''} passed ({f.whole('summary.required_failed')} failed)")
    if f.get("summary.advisory"):
        text += (f"; {f.whole('summary.advisory_passed')} of {f.whole('summary.advisory')} advisory "
                 f"check{'s' if f.get('summary.advisory') != 1 else ''} passed ({f.whole('summary.advisory_failed')} "
                 "failed)")
    return text


# ---------------------------------------------------------------------------------------------
# the first screen's key figures


@dataclass(frozen=True)
class KeyFigure:
    """One row of the key figures: a label, the figure per window and annualized (or one value)."""

    label: str
    per_window: str
    annualized: str | None = None
    note: str = ""


def key_figures(f: Figures) -> list[KeyFigure]:
    """The figures a reader needs first: the edge with its interval, then each selection test's figure."""
    sel = "results.bootstrap.selected"
    rows = [
        KeyFigure("mean excess return", f.interval(f"{sel}.mean", as_percent=True),
                  f.interval(f"{sel}.mean_annualized", as_percent=True) if f.has(f"{sel}.mean_annualized") else None),
        KeyFigure("Sharpe ratio", f.interval(f"{sel}.sharpe"),
                  f.interval(f"{sel}.sharpe_annualized") if f.has(f"{sel}.sharpe_annualized") else None),
    ]
    checks = {c["id"]: i for i, c in enumerate(f.get("checks") or [])}
    if f.has("results.sharpe.deflated.probability"):
        rows.append(KeyFigure("deflated Sharpe probability", f.probability("results.sharpe.deflated.probability"),
                              note=_bar(f, checks.get("deflated_sharpe"))))
    if f.has("results.snooping.gating_pvalue"):
        test = "reality check" if f.get("results.snooping.gating") == "reality_check" else "SPA"
        rows.append(KeyFigure(f"data-snooping p-value ({test})", f.pvalue("results.snooping.gating_pvalue"),
                              note=_bar(f, checks.get("data_snooping"))))
    if f.has("results.overfitting.probability_of_overfitting"):
        rows.append(KeyFigure("probability of overfitting (CSCV)",
                              f.probability("results.overfitting.probability_of_overfitting"),
                              note="pure luck: " + f.probability("results.overfitting.null_probability_of_overfitting")))
    return rows


def headline(doc: dict) -> tuple[tuple[str, str], ...]:
    """The first screen's key figures as ``(label, value)`` pairs (the notebook view's table)."""
    out = []
    for k in key_figures(Figures(doc)):
        value = k.per_window + (f"; annualized {k.annualized}" if k.annualized else "")
        out.append((k.label, value + (f" ({k.note})" if k.note else "")))
    return tuple(out)


def _bar(f: Figures, index: int | None) -> str:
    """``needs at least 0.794`` for a check's threshold; empty when the check did not run."""
    if index is None:
        return ""
    c = f.get(f"checks[{index}]")
    if c.get("threshold") is None:
        return ""
    return f"needs {c['passes_when']} {f.styled(f'checks[{index}].threshold', c['value_kind'], threshold=True)}"


# ---------------------------------------------------------------------------------------------
# the checks


#: Each check in a few words, for tables (the id stays beside it: it is the policy's name).
CHECK_NAMES = {
    "enough_windows": "record long enough",
    "plausible_returns": "returns plausible",
    "mean_interval": "mean above zero",
    "deflated_sharpe": "Sharpe ratio after the search",
    "track_record": "minimum track record",
    "baseline_drift": "no drift from the baseline",
    "overfitting": "holds up out of sample (CSCV)",
    "data_snooping": "beats the luck of the best of N",
    "family_tails": "did not escape the family's crashes",
    "parameter_surface": "not an isolated peak",
    "walk_forward": "re-picking the winner earns",
    "edge_decay": "the edge has not faded",
}


@dataclass(frozen=True)
class CheckRow:
    """One check as a reader sees it."""

    id: str
    name: str
    passed: bool
    required: bool
    measure: str
    value: str
    bar: str
    outcome: str
    reason: str

    @property
    def result(self) -> str:
        word = "pass" if self.passed else "FAIL"
        return word if self.required else f"{word} (advisory)"


def check_rows(f: Figures) -> list[CheckRow]:
    """Every check the verdict ran, in display order: its figure against its bar, in words."""
    rows = []
    for i, c in enumerate(f.get("checks") or []):
        kind = c.get("value_kind")
        bar = fmt.MISSING
        if c.get("threshold") is not None:
            bar = f"{c.get('passes_when') or ''} {f.styled(f'checks[{i}].threshold', kind, threshold=True)}".strip()
        else:
            f.styled(f"checks[{i}].threshold", kind, threshold=True)
        rows.append(CheckRow(
            id=c["id"], name=CHECK_NAMES.get(c["id"], c["id"]), passed=c["passed"], required=c["required"],
            measure=c.get("measure") or c["id"], value=f.styled(f"checks[{i}].value", kind), bar=bar,
            outcome=c.get("outcome") or "", reason=f.text(f"checks[{i}].reason"),
        ))
    return rows


# ---------------------------------------------------------------------------------------------
# what would change the verdict


#: Each alternative of the ``sensitivity`` block in a few words (``choice:setting`` -> words).
SHORT_ALTERNATIVES = {
    "trial_variance:empirical": "empirical trial variance", "trial_variance:null": "no-edge trial variance",
    "trial_count:effective": "effective trials", "trial_count:declared": "declared trials",
    "deflated_bar:fixed": "the paper's fixed bar", "deflated_bar:calibrated": "the calibrated bar",
    "sharpe_variance:iid": "iid Sharpe variance", "sharpe_variance:long-run": "long-run Sharpe variance",
    "cscv_statistic:mean": "CSCV on means", "cscv_statistic:sharpe": "CSCV on Sharpe ratios",
    "snooping_scale:bootstrap": "bootstrap-scaled snooping tests", "snooping_scale:none": "unscaled snooping tests",
    "snooping_scale:long-run": "long-run snooping tests",
    "interval_method:percentile": "percentile interval", "interval_method:studentized": "studentized interval",
    "interval_method:basic": "basic interval",
    "bootstrap:circular": "circular bootstrap", "bootstrap:moving-block": "moving-block bootstrap",
    "bootstrap:stationary": "stationary bootstrap",
    "block_length:halved": "half the block length", "block_length:doubled": "twice the block length",
}


@dataclass(frozen=True)
class AlternativeRow:
    """One alternative choice: what changed, the verdict under it and the figures that moved."""

    id: str
    short: str
    question: str
    as_audited: str
    setting: str
    verdict: str
    flips: bool
    moved: str
    recomputed: str


def alternative_rows(f: Figures) -> list[AlternativeRow]:
    """The alternatives of the ``sensitivity`` block, each with the figures of the checks it reaches."""
    return [alternative_row(f, f"sensitivity.alternatives[{i}]")
            for i in range(len(f.get("sensitivity.alternatives") or []))]


def alternative_row(f: Figures, path: str) -> AlternativeRow:
    """One alternative (or the ``sensitivity.control``) as a reader sees it."""
    a = f.get(path)
    return AlternativeRow(
        id=a["id"], short=SHORT_ALTERNATIVES.get(a["id"], a["setting_words"]), question=f.text(f"{path}.question"), as_audited=f.text(f"{path}.as_audited_words"),
        setting=f.text(f"{path}.setting_words"), verdict="GO" if a["verdict"] == "go" else "NO-GO",
        flips=a["flips"], moved="; ".join(filter(None, (_moved(f, f"{path}.checks[{j}]")
                                                         for j in range(len(a["checks"]))))) or "nothing",
        recomputed=f.get(f"{path}.recomputed") or "",
    )


def _moved(f: Figures, path: str) -> str:
    """``deflated Sharpe probability from 0.286 to 0.318, needs at least 0.794: fails`` for one reached check."""
    c = f.get(path)
    if c["value"] is None and c["as_audited"]["value"] is None and c["passed"] == c["as_audited"]["passed"]:
        return ""  # nothing to compare (a test that found nothing to judge either way)
    audited = {k["id"]: k for k in f.get("checks") or []}.get(c["id"], {})
    kind, measure, when = audited.get("value_kind"), audited.get("measure") or c["id"], audited.get("passes_when") or ""
    before_value, after_value = f.styled(f"{path}.as_audited.value", kind), f.styled(f"{path}.value", kind)
    value = f"{after_value} (unchanged)" if before_value == after_value else f"from {before_value} to {after_value}"
    bar = f.styled(f"{path}.threshold", kind, threshold=True)
    before = f.styled(f"{path}.as_audited.threshold", kind, threshold=True)
    against = f", needs {when} {bar}" + (f" (was {before})" if before != bar else "") if c["threshold"] is not None else ""
    was = c["as_audited"]["passed"]
    state = ("passes" if c["passed"] else "fails") if was in (None, c["passed"]) else (
        "now passes" if c["passed"] else "now fails")
    return f"{measure} {value}{against}: {state}"
