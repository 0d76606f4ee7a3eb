"""Terminal output of ``sweepaudit inspect``: how an input was read, from the inspection document.

As for the audit (:mod:`sweepaudit.render.terminal`): every string passes through
:func:`~sweepaudit.render.safe.visible` and reaches rich only as ``Text``, never as markup.
"""

from __future__ import annotations

from rich.console import Console, Group
from rich.table import Table
from rich.text import Text

from ..format import fmt, pct
from .safe import visible_document
from .terminal import indented, offscreen_console, terminal_console, text_row

__all__ = ["render_inspection", "inspection_text"]


def _periods(reading: dict) -> str:
    ppy = reading["periods_per_year"]
    if not ppy:
        return reading["periods_per_year_how"]
    return f"{fmt(ppy)} ({reading['periods_per_year_how']})"


def _windows_text(doc: dict) -> str:
    r, w = doc["reading"], doc["windows"]
    first, last = w["first"], w["last"]
    if r.get("first_window_written") not in (None, first):
        first = f"{r['first_window_written']} -> {first}"
    if r.get("last_window_written") not in (None, last):
        last = f"{r['last_window_written']} -> {last}"
    return f"{w['count']:,} windows, first {first}, last {last}"


def _reading_table(doc: dict) -> Table:
    r = doc["reading"]
    t = Table(title=Text("How the input was read"), show_header=False, box=None, title_justify="left")
    source = r["source"] or "-"
    if r.get("separator") is not None:
        source += f", separator '{r['separator']}', decimal mark '{r['decimal']}'"
        if r.get("thousands"):
            source += f", thousands separator '{r['thousands']}'"
    if r.get("index_columns"):
        source += f", index column(s) {', '.join(r['index_columns'])}"
    text_row(t, "input", f"{doc['input']['path']} ({source}; {r['rows']:,} rows)")
    text_row(t, "layout", r["layout"])
    text_row(t, "window column", f"{r['window_column'] or '(none)'}: {r['window_form']}")
    text_row(t, "windows", _windows_text(doc))
    if r.get("aggregation"):
        a = r["aggregation"]
        text_row(t, "aggregation", f"{a['input_windows']:,} input windows compounded into {a['output_windows']:,} "
                                 f"{a['windows']} windows; {a['compounding']}")
    text_row(t, "periods per year", _periods(r))
    text_row(t, "units", f"{r['units']} (figures in fractions: 0.01 = 1%)")
    text_row(t, "value column", r["value_column"] or "(wide: one column per configuration)")
    text_row(t, "benchmark", f"subtracted: {r['benchmark']}" if r["benchmark"] else
              "none: the values are read as excess returns")
    return t


def _configurations_table(doc: dict) -> Table:
    c = doc["configurations"]
    head = c["parameter_table_head"]
    t = Table(title=f"Configurations: {c['count']:,}" + (f" (first {len(head or c['first'])})" if c["count"] > len(
        head or c["first"]) else ""), title_justify="left")
    if head:
        for name in head[0]:
            t.add_column(str(name))
        for row in head:
            text_row(t, *[fmt(v) if isinstance(v, float) else str(v) for v in row.values()])
    else:
        t.add_column("configuration (no parameter table)")
        for name in c["first"]:
            text_row(t, name)
    return t


def _plausibility_text(doc: dict) -> Group:
    p = doc["plausibility"]
    vol = p["largest_volatility_annualized"]
    lines = [Text(f"largest move in one window: {pct(p['largest_window_return'])} "
                  f"({p['largest_window_configuration']}, window {p['largest_window']}); "
                  f"bound {pct(p['max_window_return'])}"),
             Text("largest annualized volatility: " + (
                 f"{pct(vol)} ({p['largest_volatility_configuration']}); bound {pct(p['max_annualized_volatility'])}"
                 if vol is not None else "not known (periods per year unknown)"))]
    if p["beyond_bounds"]:
        state = "allowed by the policy" if p["allowed_by_policy"] else "the plausible_returns check would fail"
        lines.append(Text(f"! beyond the policy's bounds: {state}", style="bold yellow"))
    return Group(Text("Plausibility", style="bold"), indented(*lines), Text(""))


def render_inspection(doc: dict, console: Console | None = None) -> None:
    """Print the inspection to the terminal (or to a given rich Console); lines that show a user
    string are indented or in a table, as in the audit's output."""
    console = console or terminal_console()
    doc = visible_document(doc)
    console.print(_reading_table(doc))
    console.print(_configurations_table(doc))
    console.print(_plausibility_text(doc))
    if doc["warnings"]:
        console.print(Text("Warnings", style="bold yellow"))
        console.print(indented(*(Text(f"! {line}") for line in doc["warnings"])))
        console.print(Text(""))
    else:
        console.print(Text("No warnings.\n"))
    console.print(Text(doc["caution"], style="italic"))


def inspection_text(doc: dict) -> str:
    """The inspection's terminal output as text, rendered for standard output but not printed."""
    console = offscreen_console()
    render_inspection(doc, console)
    return console.file.getvalue()
