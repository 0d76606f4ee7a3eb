"""Terminal output of ``sweepaudit inspect``: how an input was read, from the inspection document."""

from __future__ import annotations

from rich.console import Console
from rich.table import Table
from rich.text import Text

from ..format import fmt, pct

__all__ = ["render_inspection"]


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
    t = Table(title="How the input was read", show_header=False, box=None, title_justify="left")
    source = r["source"] or "-"
    if r.get("separator") is not None:
        source += f", separator {r['separator']!r}, decimal mark {r['decimal']!r}"
        if r.get("thousands"):
            source += f", thousands separator {r['thousands']!r}"
    if r.get("index_columns"):
        source += f", index column(s) {', '.join(r['index_columns'])}"
    t.add_row("input", f"{doc['input']['path']} ({source}; {r['rows']:,} rows)")
    t.add_row("layout", r["layout"])
    t.add_row("window column", f"{r['window_column'] or '(none)'}: {r['window_form']}")
    t.add_row("windows", _windows_text(doc))
    if r.get("aggregation"):
        a = r["aggregation"]
        t.add_row("aggregation", f"{a['input_windows']:,} input windows compounded into {a['output_windows']:,} "
                                 f"{a['windows']} windows; {a['compounding']}")
    t.add_row("periods per year", _periods(r))
    t.add_row("units", f"{r['units']} (figures in fractions: 0.01 = 1%)")
    t.add_row("value column", r["value_column"] or "(wide: one column per configuration)")
    t.add_row("benchmark", f"subtracted: {r['benchmark']}" if r["benchmark"] else
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
            t.add_row(*[fmt(v) if isinstance(v, float) else str(v) for v in row.values()])
    else:
        t.add_column("configuration (no parameter table)")
        for name in c["first"]:
            t.add_row(name)
    return t


def _plausibility_text(doc: dict) -> Text:
    p = doc["plausibility"]
    vol = p["largest_volatility_annualized"]
    text = Text("Plausibility\n", style="bold")
    text.append(f"  largest move in one window: {pct(p['largest_window_return'])} "
                f"({p['largest_window_configuration']}, window {p['largest_window']}); bound {pct(p['max_window_return'])}\n")
    text.append("  largest annualised volatility: " + (
        f"{pct(vol)} ({p['largest_volatility_configuration']}); bound {pct(p['max_annualized_volatility'])}\n"
        if vol is not None else "not known (periods per year unknown)\n"))
    if p["beyond_bounds"]:
        state = "allowed by the policy" if p["allowed_by_policy"] else "the plausible_returns check would fail"
        text.append(f"  ! beyond the policy's bounds: {state}\n", style="bold yellow")
    return text


def render_inspection(doc: dict, console: Console | None = None) -> None:
    """Print the inspection to the terminal (or to a given rich Console)."""
    console = console or Console()
    console.print(_reading_table(doc))
    console.print(_configurations_table(doc))
    console.print(_plausibility_text(doc))
    if doc["warnings"]:
        w = Text("Warnings\n", style="bold yellow")
        for line in doc["warnings"]:
            w.append(f"  ! {line}\n")
        console.print(w)
    else:
        console.print(Text("No warnings.\n"))
    console.print(Text(doc["caution"], style="italic"))
