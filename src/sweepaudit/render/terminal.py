"""Terminal output with rich: the verdict first, in words; then the reasons; then the figures.

Formats the audit JSON document only, so every figure shown traces back to a contract key.

Nothing in the user's data can forge or style this output:

* every string of the document passes through :func:`~sweepaudit.render.safe.visible` first
  (control characters, escape sequences, line breaks and direction overrides become visible
  escapes), and reaches rich only inside ``Text`` objects, which rich never parses as markup
  (the console is also made with markup, emoji codes and highlighting off);
* the first line is the verdict, ``Verdict: GO`` or ``Verdict: NO-GO``, from the verdict alone;
  every line that shows a user string is indented (paragraphs are padded, and user strings sit
  only in a table's later columns, never in a title), so no other line can start with
  ``Verdict``.
"""

from __future__ import annotations

import io

import numpy as np
from rich.console import Console, Group, RenderableType
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from ..format import fmt, pct, prob, sig
from .safe import visible_document

__all__ = ["render_terminal", "terminal_console", "offscreen_console", "terminal_text", "text_row", "indented"]

_INDENT = 2


def terminal_console(**options) -> Console:
    """A rich Console that never reads markup, emoji codes or highlights in what it prints."""
    return Console(markup=False, emoji=False, highlight=False, **options)


def indented(*parts: RenderableType) -> Padding:
    """Parts shown indented: wrapped lines included, none starts at the first column."""
    return Padding(Group(*parts), (0, 0, 0, _INDENT), expand=False)


def text_row(table: Table, *cells: str) -> None:
    """A table row of plain text (a ``str`` cell would be parsed as markup)."""
    table.add_row(*(Text(c) for c in cells))


def _iv(block, scale=1.0, as_pct=False) -> str:
    if not block:
        return "-"
    def f(v):
        if v is None:
            return "-"
        return pct(v * scale) if as_pct else fmt(v * scale)

    return f"{f(block['estimate'])}  [{f(block['low'])}, {f(block['high'])}]"


def _verdict(doc: dict) -> list:
    """The verdict line, the selected configuration and the reasons: the first screen."""
    go = doc["verdict"] == "go"
    sel = doc["selected"]
    head = Text.assemble(("Verdict: ", "bold"), ("GO" if go else "NO-GO", "bold green" if go else "bold red"))
    lines = [Text.assemble(("selected configuration: ", "bold"), sel["configuration"]),
             Text(f"chosen as: {sel['rule']}", style="dim")]
    # Returns that do not look like returns stand on the first screen, passed or not.
    for c in doc["checks"]:
        if c["id"] == "plausible_returns" and (not c["passed"] or c["reason"].startswith("Implausible")):
            lines.append(Text(f"! {c['reason']}", style="bold yellow"))
    reasons = indented(*(Text(f"- {r}") for r in doc["reasons"]))
    return [head, indented(*lines), Text("Reasons", style="bold"), reasons, Text("")]


def _data_table(doc: dict) -> Table:
    inp, st = doc["input"], doc["settings"]
    data = Table(title=Text("The data"), show_header=False, box=None, title_justify="left")
    text_row(data, "file", f"{inp['path']} ({inp['layout']} layout)")
    plural = "s" if inp["configurations"] != 1 else ""
    text_row(data, "sweep", f"{inp['configurations']:,} configuration{plural} x {inp['windows']:,} windows, "
                        f"{inp['first_window']} to {inp['last_window']}")
    ppy = inp["periods_per_year"]
    text_row(data, "periods per year", f"{fmt(ppy)} ({inp['periods_per_year_source']}"
         + (f", {inp['frequency']})" if inp.get("frequency") else ")") if ppy else "unknown: figures per window")
    text_row(data, "resampling", f"{st['resamples']:,} {st['bootstrap']} bootstrap resamples, block length "
         f"{fmt(st['block_length'], 3)}, seed {st['seed']}")
    return data


def _selected_table(doc: dict) -> Table:
    st = doc["settings"]
    boot = doc["results"]["bootstrap"]["selected"]
    figures = Table(title=Text(f"Selected configuration: estimate [{pct(st['confidence'])} "
                               f"{st['interval_method']} interval]"), title_justify="left")
    figures.add_column("figure")
    figures.add_column("per window")
    figures.add_column("annualized")
    text_row(figures, "mean excess return", _iv(boot["mean"], as_pct=True), _iv(boot["mean_annualized"], as_pct=True))
    text_row(figures, "Sharpe ratio", _iv(boot["sharpe"]), _iv(boot["sharpe_annualized"]))
    return figures


def _surface_text(surface: dict) -> Group:
    verdict = ("an ISOLATED PEAK among weak neighbours: what selection luck looks like"
               if surface["isolated_peak"] else "not an isolated peak")
    return Group(Text("Parameter surface", style="bold"), indented(Text(
        f"parameters {', '.join(surface['parameters'])}: the selected cell's Sharpe ratio "
        f"{fmt(surface['selected_sharpe'])} against {fmt(surface['neighbour_mean_sharpe'])} on average over "
        f"its {surface['neighbours']} grid neighbours ({fmt(surface['gap_in_standard_errors'], 3)} standard "
        f"errors apart): {verdict}.")), Text(""))


def _method_parts(doc: dict) -> list:
    """One part per method block the audit produced, in the document's order of reading."""
    results, parts = doc["results"], []
    if results.get("surface"):
        parts.append(_surface_text(results["surface"]))
    if results.get("sharpe"):
        parts.append(_sharpe_table(results["sharpe"], doc["input"]["periods_per_year"]))
    if results.get("snooping"):
        parts.append(_snooping_table(results["snooping"], doc["selected"]["configuration"]))
    if results.get("overfitting"):
        parts.append(_overfitting_table(results["overfitting"]))
    if results.get("tails"):
        parts.append(_tails_text(results["tails"]))
    return parts + _time_parts(doc)


def _period_cells(block: dict, annual: bool) -> tuple[str, str]:
    """Mean (a percentage) and Sharpe ratio of a period, annualized when the periods per year are known,
    with the interval when the document has one."""
    mean, sharpe = (block["mean_annualized"], block["sharpe_annualized"]) if annual else (block["mean"], block["sharpe"])
    if isinstance(mean, dict):
        return _iv(mean, as_pct=True), _iv(sharpe)
    return pct(mean), fmt(sharpe)


_BARS = "▁▂▃▄▅▆▇█"
_SPARK_WIDTH = 60


def _sparkline(values: list, marks: list[int]) -> str:
    """The rolling Sharpe ratio as one line of bars (means of equal runs of values), a ``|`` where a
    sub-period starts; positions in ``marks`` index ``values``."""
    finite = np.array([np.nan if v is None else v for v in values], dtype=float)
    width = min(_SPARK_WIDTH, finite.size)
    edges = np.linspace(0, finite.size, width + 1).round().astype(int)
    with np.errstate(all="ignore"):
        means = np.array([np.nanmean(finite[a:b]) if np.isfinite(finite[a:b]).any() else np.nan
                          for a, b in zip(edges[:-1], edges[1:])])
    low, high = np.nanmin(means), np.nanmax(means)
    span = high - low if high > low else 1.0
    bars = [" " if not np.isfinite(m) else _BARS[int(round((m - low) / span * (len(_BARS) - 1)))] for m in means]
    for mark in sorted({int(np.searchsorted(edges, m, side="right")) - 1 for m in marks if 0 < m < finite.size},
                       reverse=True):
        bars.insert(mark, "|")
    return "".join(bars)


def _rolling_line(st: dict, annual: bool) -> Group | None:
    """The rolling figure as a line of bars under its caption, the thirds marked."""
    rolling = st["rolling"]
    values = rolling.get("sharpe") or []
    if not any(v is not None for v in values):
        return None
    start = rolling["windows"] - 1  # the first value ends at this window
    marks = [p["start"] - start for p in st["thirds"][1:]]
    suffix = "_annualized" if annual else ""
    return Group(Text(f"Rolling {rolling['windows']}-window Sharpe ratio, {fmt(rolling['lowest_sharpe' + suffix], 3)} "
                      f"to {fmt(rolling['highest_sharpe' + suffix], 3)}{' annualized' if annual else ' per window'}; "
                      "thirds marked |:"),
                 Text(_sparkline(values, marks), no_wrap=True, overflow="crop"))


def _stability_table(st: dict, annual: bool) -> Table:
    # Window labels are the user's strings: they sit in a later column, never in the title.
    t = Table(title=Text(f"Is the edge still alive? The selected configuration over time "
                         f"({'annualized' if annual else 'per window'})"), title_justify="left")
    for column in ("period", "windows", "from / to", "mean excess return", "Sharpe ratio", "t (long-run)"):
        t.add_column(column)
    for p in (*st["thirds"], st["early"], st["recent"]):
        text_row(t, p["period"], f"{p['windows']:,}", f"{p['first_window']} / {p['last_window']}",
                 *_period_cells(p, annual), fmt(p["t_ratio"], 3))
    change, rolling = st["change"], st["rolling"]
    moved = change["difference_annualized"] if annual else change["difference"]
    suffix = "_annualized" if annual else ""
    t.caption = Text(f"Recent minus earlier mean: {pct(moved)}{' a year' if annual else ' per window'}, "
                     f"t = {fmt(change['statistic'], 3)} against the long-run standard error, one-sided p = "
                     f"{prob(change['pvalue'])}. Rolling {rolling['windows']}-window Sharpe ratio: last "
                     f"{fmt(rolling['last_sharpe' + suffix], 3)}, lowest {fmt(rolling['lowest_sharpe' + suffix], 3)}, "
                     f"highest {fmt(rolling['highest_sharpe' + suffix], 3)}, above zero "
                     f"{pct(rolling['share_above_zero'])} of the time.")
    t.caption_justify = "left"
    return t


def _walk_forward_table(wf: dict, annual: bool) -> Table:
    looks = "all earlier windows" if wf["lookback"] is None else f"the {wf['lookback']:,} windows before"
    t = Table(title=Text(f"Re-picking the winner: walk-forward record (best Sharpe ratio on {looks}, "
                         f"{wf['windows']:,} windows)"), title_justify="left", show_header=False)
    t.add_column("figure")
    t.add_column("value")
    unit = "annualized" if annual else "per window"
    mean, sharpe = _period_cells(wf, annual)
    held = wf["selected_same_windows"]
    text_row(t, "first window traded", str(wf["first_window"]))
    text_row(t, f"mean excess return ({unit})", mean)
    text_row(t, f"Sharpe ratio ({unit})", sharpe)
    text_row(t, "the selected configuration, same windows",
             f"{pct(held['mean_annualized'] if annual else held['mean'])}, Sharpe "
             f"{fmt(held['sharpe_annualized'] if annual else held['sharpe'], 3)}")
    text_row(t, "picks", f"changed {wf['pick_changes']:,} times ({pct(wf['pick_change_rate'])} of windows), "
             f"{wf['distinct_picks']:,} configurations; the selected one {pct(wf['selected_share'])} of the time")
    text_row(t, "most picked / last picked", f"{wf['most_picked']} ({pct(wf['most_picked_share'])}) / {wf['last_pick']}")
    test = wf["test"]
    text_row(t, "test of the mean", f"t = {fmt(test['statistic'], 3)}, one-sided p = {prob(test['pvalue'])} "
             f"(persistence {fmt(wf['persistence']['ar_coefficient'], 3)} taken out: "
             f"{pct(wf['persistence']['mean_prediction'])} per window; stress charge "
             f"{pct(wf['stress']['mean_charge'])} per window)")
    return t


def _time_parts(doc: dict) -> list:
    """The edge over time and the walk-forward record, with one sentence on what they mean."""
    results, parts = doc["results"], []
    annual = doc["input"]["periods_per_year"] is not None
    if results.get("stability"):
        parts.append(_stability_table(results["stability"], annual))
        line = _rolling_line(results["stability"], annual)
        if line is not None:
            parts += [indented(line), Text("")]
    if results.get("walk_forward"):
        parts.append(_walk_forward_table(results["walk_forward"], annual))
    if results.get("time_meaning"):
        parts += [indented(Text(results["time_meaning"], style="italic")), Text("")]
    return parts


def _checks_table(doc: dict) -> Table:
    checks = Table(title=Text("Checks"), title_justify="left")
    checks.add_column("check")
    checks.add_column("result")
    checks.add_column("value")
    checks.add_column("threshold")
    for c in doc["checks"]:
        state = "pass" if c["passed"] else "FAIL"
        if not c["required"]:
            state += " (advisory)"
        text_row(checks, c["id"], state, fmt(c["value"]), fmt(c["threshold"]))
    return checks


def _sections(doc: dict) -> list:
    parts = [*_verdict(doc), _data_table(doc), _selected_table(doc), *_method_parts(doc), _checks_table(doc)]
    parts += _gate_sections(doc)
    if doc["warnings"]:
        parts += [Text("Warnings", style="bold yellow"), indented(*(Text(f"! {w}") for w in doc["warnings"])),
                  Text("")]
    parts.append(Text(doc["caution"], style="italic"))
    return parts


_STEPM_SHOWN = 10


def _snooping_table(sn: dict, selected: str) -> Table:
    t = Table(title=Text("Data-snooping tests (null: no configuration beats the benchmark)"),
              title_justify="left", show_header=False)
    t.add_column("figure")
    t.add_column("value")
    text_row(t, "White's reality check p-value", prob(sn["reality_check"]["pvalue"]))
    spa = sn["spa"]
    words = {"long-run": "long-run t-ratios", "bootstrap": "bootstrap-scaled", "none": "unscaled"}
    text_row(t, f"Hansen's SPA p-value ({words.get(spa.get('scale'), spa.get('scale'))})",
              f"consistent {prob(spa['pvalue'])}  (lower {prob(spa['pvalue_lower'])}, upper {prob(spa['pvalue_upper'])})")
    for key, label in (("spa_studentized", "bootstrap-scaled"), ("spa_unstudentized", "unscaled")):
        other = sn.get(key)
        if other and other.get("scale") != spa.get("scale"):
            text_row(t, f"  the same, {label}", f"consistent {prob(other['pvalue'])}")
    st = sn["stepm"]
    names = st["significant"]
    shown = "; ".join(names[:_STEPM_SHOWN]) + (f", ... ({len(names) - _STEPM_SHOWN} more)" if len(names) > _STEPM_SHOWN else "")
    text_row(t, f"StepM: beat the benchmark at {sig(st['level'], 6)}", f"{len(names)}: {shown}" if names else "none")
    text_row(t, "selected configuration survives StepM",
             ("yes" if sn["selected_survives_stepm"] else f"NO: {selected} is not among them")
             + f"  (statistic {sig(st['selected_statistic'], 3)}, critical value {sig(st['selected_critical_value'], 3)})")
    text_row(t, "gate", f"{sn['gating']} p-value {prob(sn['gating_pvalue'])}")
    return t


def _tails_text(tails: dict) -> Text:
    windows = len(tails["stress_windows"])
    if not windows:
        return Text("The family's tails: no stress window (no window in which a large share of the "
                    "configurations took a large loss).\n")
    return Text(
        f"The family's tails: {windows} stress window(s), {tails['escaped']} escaped by the selected "
        f"configuration; charged the family's losses, its mean goes from {pct(tails['mean_observed'])} to "
        f"{pct(tails['mean_adjusted'])} per window, statistic {sig(tails['statistic'], 3)} against the "
        f"critical value {sig(tails['critical_value'], 3)}.\n"
    )


def _overfitting_table(ov: dict) -> Table:
    t = Table(title=Text(f"Overfitting: CSCV over {ov['combinations']:,} splits of {ov['partitions']} blocks "
                         f"({ov['statistic']})"), title_justify="left", show_header=False)
    t.add_column("figure")
    t.add_column("value")
    text_row(t, "probability of backtest overfitting (PBO)",
              f"{prob(ov['probability_of_overfitting'])}  (pure luck: {prob(ov['null_probability_of_overfitting'])})")
    text_row(t, "in-sample winner loses out of sample", prob(ov["probability_of_loss"]))
    deg = ov["degradation"]
    text_row(t, "degradation: out-of-sample = a + b x in-sample",
              f"b = {fmt(deg['slope'], 3)}, a = {fmt(deg['intercept'], 3)}, R^2 = {fmt(deg['r_squared'], 3)}")
    sd = ov["stochastic_dominance"]
    text_row(t, "winner dominates a random pick (1st / 2nd order)",
              f"{'yes' if sd['first_order'] else 'no'} / "
              f"{'-' if sd['second_order'] is None else ('yes' if sd['second_order'] else 'no')}")
    text_row(t, "diagnosis", ov["diagnosis"]["case"].replace("_", " "))
    return t


def _sharpe_table(sh: dict, ppy) -> Table:
    d = sh["deflated"]
    t = Table(title=Text("Selection-adjusted Sharpe inference (per window; annualized in brackets)"),
              title_justify="left", show_header=False)
    t.add_column("figure")
    t.add_column("value")
    ann = lambda v, a: fmt(v) + (f"  ({fmt(a, 3)} annualized)" if a is not None else "")
    text_row(t, "selected Sharpe ratio", ann(sh["observed"], sh["observed_annualized"]))
    text_row(t, "skewness / kurtosis (raw)", f"{fmt(sh['skewness'], 3)} / {fmt(sh['kurtosis'], 3)}")
    text_row(t, "probabilistic Sharpe ratio vs 0", prob(sh["probabilistic"]["probability"]))
    text_row(t, "trials / effective trials", f"{fmt(d['trials'], 6)} / {fmt(d['effective_trials'], 3)} "
              f"({d['effective_trials_method']}); deflation uses {d['trials_used']} trials")
    text_row(t, "best-of-trials luck benchmark", ann(d["benchmark_sharpe"], d["benchmark_sharpe_annualized"])
              + f"  [{d['variance_mode']} variance, {d['expected_maximum']} expected maximum]")
    text_row(t, "deflated Sharpe probability", prob(d["probability"]))
    mtrl = sh["min_track_record"]
    text_row(t, "minimum track record", "-" if mtrl["observations"] is None else
              f"{fmt(mtrl['observations'])} windows" + (f" ({fmt(mtrl['years'], 3)} years)" if mtrl["years"] else ""))
    hc = sh.get("haircut")
    if hc:
        text_row(t, "haircut Sharpe (Bonferroni / Holm / BHY)",
                  " / ".join(fmt(hc[m]["sharpe_annualized"] if ppy else hc[m]["sharpe"], 3) for m in ("bonferroni", "holm", "bhy"))
                  + (" annualized" if ppy else " per window"))
    t.caption = Text("The deflated probability is the chance that the true Sharpe ratio beats what the best "
                 "of the trials would show by luck alone; 0.95 or more is strong evidence of a real edge.")
    t.caption_justify = "left"
    return t

_MOVES_SHOWN = 8


def _ledger_part(ledger: dict) -> Group:
    state = ("new (recorded now)" if ledger["new_sweep"] else "already recorded (no trials added)"
             if not ledger.get("trials_added") else "already recorded")
    lines = [Text(f"{ledger['path']}: this sweep is {state}; {ledger['sweeps_recorded']:,} distinct "
                  f"sweeps recorded, {ledger['trials_counted']:,} trials counted")]
    if ledger.get("note"):
        lines.append(Text(ledger["note"]))
    return Group(Text("Trial ledger", style="bold"), indented(*lines), Text(""))


def _baseline_table(base: dict) -> Table:
    table = Table(title=Text("Against the baseline"), title_justify="left")
    table.add_column("gated figure (results.*)", overflow="fold", min_width=24)
    for name in ("before", "after", "change", "allowed worsening", ""):
        table.add_column(name)
    for g in base["gated"]:
        flag = "EXCEEDED" if g["exceeded"] else ("worse" if g in base["worsened"] else "")
        text_row(table, g["key"].removeprefix("results."), fmt(g["before"]), fmt(g["after"]), fmt(g["change"]),
             fmt(g["allowed_worsening"]), flag)
    return table


def _baseline_moves(base: dict) -> Padding:
    lines = []
    if base.get("selected_changed"):
        lines.append(Text(f"! the baseline judged '{base['selected_before']}': the selected figures compare "
                          "different configurations"))
    lines += [Text(f"check {c['id']}: {c['before']} -> {c['after']}") for c in base["checks_changed"]]
    moved = base["moved"]
    # Summary figures in document order; the per-configuration ones only counted (the JSON
    # block lists every move).
    summary = [m for m in moved if "configurations[" not in m["key"]]
    lines.append(Text(f"{len(moved):,} figures moved ({len(moved) - len(summary):,} of them per configuration)"
                      + (":" if summary else "")))
    shown = [Text(f"{m['key']}: {fmt(m['before'])} -> {fmt(m['after'])} ({fmt(m['change'])})")
             for m in summary[:_MOVES_SHOWN]]
    if len(summary) > _MOVES_SHOWN:
        shown.append(Text(f"... and {len(summary) - _MOVES_SHOWN:,} more"))
    return indented(*lines, indented(*shown))


def _gate_sections(doc: dict) -> list:
    """The trial ledger and the comparison with a baseline audit, when the audit used them."""
    parts: list = []
    if doc.get("ledger"):
        parts.append(_ledger_part(doc["ledger"]))
    base = doc.get("baseline")
    if base:
        parts += [_baseline_table(base),
                  indented(Text(f"baseline file: {base['path']} (verdict then: {base['verdict_before']})")),
                  _baseline_moves(base), Text("")]
    return parts


def render_terminal(doc: dict, console: Console | None = None) -> None:
    """Print the audit to the terminal (or to a given rich Console); see the module notes."""
    console = console or terminal_console()
    for part in _sections(visible_document(doc)):
        console.print(part)


def offscreen_console() -> Console:
    """A console that renders into memory as standard output would show it (width, colours),
    without touching standard output (which may be full or closed)."""
    screen = terminal_console()
    return terminal_console(file=io.StringIO(), width=screen.width, force_terminal=screen.is_terminal,
                            color_system=screen.color_system)


def terminal_text(doc: dict) -> str:
    """The terminal output as text, rendered for standard output (width, colours) but not printed."""
    console = offscreen_console()
    render_terminal(doc, console)
    return console.file.getvalue()
