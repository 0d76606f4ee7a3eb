"""Terminal output with rich: the decision first, then why, then the figures behind it.

Formats the audit JSON document only (through :class:`~sweepaudit.render.figures.Figures`), so every
figure shown traces back to a contract key and reads as in the report. The first screen: the
verdict, its one sentence, how many required checks passed, a preliminary mark for a quick run, the
key figures with their intervals, what would change the verdict, the warnings and the caution.
Then the reasons, the checks, the data and each method's figures. Readable at 80 columns: a wrapped
reason or warning continues under its own text, not at the margin; failures are red, passes green.

Nothing in the user's data can forge or style this output:

* every string of the document passes through :func:`~sweepaudit.render.safe.visible` first
  (control characters, escape sequences, line breaks and direction overrides become visible
  escapes), and reaches rich only inside ``Text`` objects, which rich never parses as markup
  (the console is also made with markup, emoji codes and highlighting off); styles are applied
  only to the tool's own words (``GO``, ``FAIL``), never to a user string;
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

from .figures import Figures, alternative_row, alternative_rows, check_rows, counted, key_figures, words

__all__ = ["render_terminal", "terminal_console", "offscreen_console", "terminal_text", "text_row", "indented",
           "bullets"]

_INDENT = 2
_PASS, _FAIL, _WARN = "green", "bold red", "bold yellow"


def terminal_console(**options) -> Console:
    """A rich Console that never reads markup, emoji codes or highlights in what it prints."""
    return Console(markup=False, emoji=False, highlight=False, **options)


def indented(*parts: RenderableType) -> Padding:
    """Parts shown indented: wrapped lines included, none starts at the first column."""
    return Padding(Group(*parts), (0, 0, 0, _INDENT), expand=False)


def text_row(table: Table, *cells: str | Text) -> None:
    """A table row of plain text (a ``str`` cell would be parsed as markup)."""
    table.add_row(*(c if isinstance(c, Text) else Text(c) for c in cells))


def bullets(items: list[tuple[Text | str, str]]) -> Padding:
    """Indented items, each a marker and a text; a wrapped text continues under itself (a hanging indent)."""
    grid = Table.grid(padding=(0, 1))
    grid.add_column(no_wrap=True)
    grid.add_column(overflow="fold")
    for marker, words in items:
        text_row(grid, marker if isinstance(marker, Text) else Text(marker), Text(words))
    return indented(grid)


def _state(passed: bool, words: str | None = None) -> Text:
    """``pass`` in green or ``FAIL`` in red (the tool's own words only)."""
    return Text(words or ("pass" if passed else "FAIL"), style=_PASS if passed else _FAIL)


def _head(f: Figures) -> list[RenderableType]:
    """The verdict line and what it rests on: the first lines of the output."""
    go = f.get("verdict") == "go"
    summary = f.get("summary") or {}
    # The first line is the verdict alone (CI logs and scripts read it); a quick run's mark follows it.
    head = Text.assemble(("Verdict: ", "bold"), ("GO" if go else "NO-GO", "bold green" if go else "bold red"))
    lines: list[RenderableType] = []
    if f.get("preliminary"):
        lines.append(Text("PRELIMINARY: " + f.text("summary.preliminary_reason") + ".", style=_WARN))
    lines.append(Text(summary.get("sentence") or ""))
    lines.append(Text(counted(f) + "."))
    lines += [Text.assemble(("selected configuration: ", "bold"), f.text("selected.configuration")),
              Text("chosen as: " + f.text("selected.rule"), style="dim")]
    # Returns that do not look like returns stand on the first screen, passed or not.
    for c in f.get("checks") or []:
        if c["id"] == "plausible_returns" and (not c["passed"] or c["reason"].startswith("Implausible")):
            lines.append(Text(f"! {c['reason']}", style=_WARN))
    return [head, indented(*lines), Text("")]


def _key_table(f: Figures) -> Table:
    method = {"studentized": "studentized", "percentile": "percentile", "basic": "basic"}.get(
        f.get("settings.interval_method"), "")
    table = Table(title=Text(f"Key figures: estimate [{f.level('settings.confidence')} {method} interval]"),
                  title_justify="left", box=None, padding=(0, 1), pad_edge=True)
    table.add_column("")
    table.add_column("per window")
    annual = f.annual
    if annual:
        table.add_column("annualized")
    for row in key_figures(f):
        cells = [row.label, row.per_window]
        if annual:
            cells.append(row.annualized if row.annualized is not None else row.note)
        elif row.note:
            cells[1] += f"  ({row.note})"
        text_row(table, *cells)
    return table


def _what_if(f: Figures) -> list[RenderableType]:
    """What would change the verdict: the finding, each choice that flips it, the others in a line."""
    if not f.has("sensitivity"):
        return []
    rows = alternative_rows(f)
    flips = [r for r in rows if r.flips]
    items: list[tuple[Text | str, str]] = [
        (Text(r.verdict, style=_FAIL if r.verdict == "NO-GO" else _PASS), f"{r.question}: {r.setting} ({r.moved})")
        for r in flips]
    if f.has("sensitivity.control") and f.get("sensitivity.control.flips"):
        control = alternative_row(f, "sensitivity.control")
        items.append((Text(control.verdict, style=_WARN), f"{control.question}: {control.setting} ({control.moved})"))
    same = [r.short for r in rows if not r.flips]
    if same:
        items.append((Text("same", style="dim"), ("unchanged under " if flips else "")
                      + ", ".join(same) + f" (same seed; new draws: {f.whole('sensitivity.resamples')} resamples)"))
    finding = Text(f.text("sensitivity.summary"), style=_WARN if flips else "")
    return [Text("What would change the verdict", style="bold"), indented(finding),
            bullets(items), Text("")]


def _warnings(f: Figures) -> list[RenderableType]:
    warnings = f.get("warnings") or []
    if not warnings:
        return []
    return [Text("Warnings", style=_WARN), bullets([("!", f.text(f"warnings[{i}]")) for i in range(len(warnings))]),
            Text("")]


def _reasons(f: Figures) -> list[RenderableType]:
    items: list[tuple[Text | str, str]] = []
    for r in check_rows(f):
        if r.required and (not r.passed or f.get("verdict") == "go"):
            items.append((_state(r.passed, r.id), r.reason))
    title = "Why" + (" not" if f.get("verdict") != "go" else "")
    return [Text(title, style="bold"), bullets(items), Text("")]


def _checks_table(f: Figures) -> Table:
    table = Table(title=Text("Checks"), title_justify="left")
    for name in ("check", "result", "figure", "bar"):
        table.add_column(name)
    for r in check_rows(f):
        text_row(table, r.id, _state(r.passed, r.result), r.value, r.bar)
    return table


def _data_table(f: Figures) -> Table:
    data = Table(title=Text("The data"), show_header=False, box=None, title_justify="left")
    text_row(data, "file", f"{f.text('input.path')} ({f.text('input.layout')} layout)")
    n = f.get("input.configurations")
    text_row(data, "sweep", f"{f.whole('input.configurations')} configuration{'s' if n != 1 else ''} x "
                            f"{f.whole('input.windows')} windows, {f.text('input.first_window')} to "
                            f"{f.text('input.last_window')}")
    if f.annual:
        how = f.text("input.periods_per_year_source") + (f", {f.text('input.frequency')}" if f.has("input.frequency")
                                                         else "")
        text_row(data, "periods per year", f"{f.number('input.periods_per_year')} ({how})")
    else:
        text_row(data, "periods per year", "unknown: figures per window")
    text_row(data, "resampling", f"{f.whole('settings.resamples')} {f.text('settings.bootstrap')} bootstrap "
                                 f"resamples, block length {f.number('settings.block_length', 3)}, seed "
                                 f"{f.whole('settings.seed')}")
    return data


def _first_screen(f: Figures) -> list[RenderableType]:
    return [*_head(f), _key_table(f), Text(""), *_what_if(f), *_warnings(f),
            Text(f.text("caution"), style="italic"), Text("")]


def _sections(f: Figures) -> list[RenderableType]:
    return [*_first_screen(f), *_reasons(f), _checks_table(f), Text(""), _data_table(f), Text(""),
            *_method_parts(f), *_gate_parts(f)]


def _facts(title: str, rows: list[tuple[str, str]], caption: str | None = None) -> Table:
    """A titled two-column table of a label and a figure in words."""
    table = Table(title=Text(title), title_justify="left", show_header=False)
    table.add_column("figure")
    table.add_column("value")
    for label, value in rows:
        text_row(table, label, value)
    if caption:
        table.caption, table.caption_justify = Text(caption), "left"
    return table


def _method_parts(f: Figures) -> list[RenderableType]:
    """One part per method block the audit produced, in the document's order of reading."""
    parts: list[RenderableType] = []
    for key, part in (("surface", _surface), ("sharpe", _sharpe), ("snooping", _snooping),
                      ("overfitting", _overfitting), ("tails", _tails)):
        if f.has(f"results.{key}"):
            parts += [part(f), Text("")]
    parts += _time(f)
    return parts


_BARS = "\u2581\u2582\u2583\u2584\u2585\u2586\u2587\u2588"
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


def _stability(f: Figures) -> list[RenderableType]:
    """The selected configuration's record period by period, the decay test, the rolling line."""
    st, annual = "results.stability", f.annual
    suffix, unit = ("_annualized", "annualized") if annual else ("", "a window")
    # Window labels are the user's strings: they sit in a later column, never in the title.
    t = Table(title=Text(f"Is the edge still alive? The selected configuration over time ({unit})"),
              title_justify="left")
    for column in ("period", "windows", "from / to", "mean excess return", "Sharpe ratio", "t (long-run)"):
        t.add_column(column)
    for p in [f"{st}.thirds[{i}]" for i in range(len(f.get(f"{st}.thirds") or []))] + [f"{st}.early", f"{st}.recent"]:
        text_row(t, f.text(f"{p}.period"), f.whole(f"{p}.windows"),
                 f"{f.text(f'{p}.first_window')} / {f.text(f'{p}.last_window')}",
                 f.estimate(f"{p}.mean{suffix}", as_percent=True), f.estimate(f"{p}.sharpe{suffix}"),
                 f.sharpe(f"{p}.t_ratio"))
    c, r = f"{st}.change", f"{st}.rolling"
    t.caption = Text(f"Recent minus earlier mean: {f.percent(f'{c}.difference{suffix}')} "
                     f"{'a year' if annual else 'a window'}, t = {f.sharpe(f'{c}.statistic')} against the long-run "
                     f"standard error, one-sided {f.p_is(f'{c}.pvalue')}.")
    t.caption_justify = "left"
    parts: list[RenderableType] = [t]
    values = f.get(f"{r}.sharpe") or []
    if any(v is not None for v in values):
        start = f.get(f"{r}.windows") - 1  # the first value ends at this window
        marks = [p["start"] - start for p in (f.get(f"{st}.thirds") or [])[1:]]
        parts.append(indented(
            Text(f"Rolling {f.whole(f'{r}.windows')}-window Sharpe ratio ({unit}): last "
                 f"{f.sharpe(f'{r}.last_sharpe{suffix}')}, lowest {f.sharpe(f'{r}.lowest_sharpe{suffix}')}, highest "
                 f"{f.sharpe(f'{r}.highest_sharpe{suffix}')}, above zero {f.percent(f'{r}.share_above_zero')} of "
                 "the time; thirds marked |:"),
            Text(_sparkline(values, marks), no_wrap=True, overflow="crop")))
    return parts


def _walk_forward(f: Figures) -> Table:
    w, annual = "results.walk_forward", f.annual
    suffix, unit = ("_annualized", "annualized") if annual else ("", "a window")
    looks = "all earlier windows" if not f.has(f"{w}.lookback") else f"the {f.whole(f'{w}.lookback')} windows before"
    same = f"{w}.selected_same_windows"
    rows = [
        ("first window traded", f.text(f"{w}.first_window")),
        (f"mean excess return ({unit})", f.estimate(f"{w}.mean{suffix}", as_percent=True)),
        (f"Sharpe ratio ({unit})", f.estimate(f"{w}.sharpe{suffix}")),
        ("the selected configuration, same windows",
         f"{f.percent(f'{same}.mean{suffix}')}, Sharpe ratio {f.sharpe(f'{same}.sharpe{suffix}')}"),
        ("picks", f"changed {f.whole(f'{w}.pick_changes')} times ({f.percent(f'{w}.pick_change_rate')} of windows), "
                  f"{f.whole(f'{w}.distinct_picks')} configurations; the selected one "
                  f"{f.percent(f'{w}.selected_share')} of the time"),
        ("most picked / last picked", f"{f.text(f'{w}.most_picked')} ({f.percent(f'{w}.most_picked_share')}) / "
                                      f"{f.text(f'{w}.last_pick')}"),
        ("test of the mean", f"t = {f.sharpe(f'{w}.test.statistic')}, one-sided {f.p_is(f'{w}.test.pvalue')} "
                             f"(persistence {f.sharpe(f'{w}.persistence.ar_coefficient')} taken out: "
                             f"{f.percent(f'{w}.persistence.mean_prediction')} a window; stress charge "
                             f"{f.percent(f'{w}.stress.mean_charge')} a window)"),
    ]
    return _facts(f"Re-picking the winner: walk-forward record (best Sharpe ratio on {looks}, "
                  f"{f.whole(f'{w}.windows')} windows)", rows)


def _time(f: Figures) -> list[RenderableType]:
    """The edge over time and the walk-forward record, with one sentence on what they mean."""
    parts: list[RenderableType] = []
    if f.has("results.stability"):
        parts += _stability(f) + [Text("")]
    if f.has("results.walk_forward"):
        parts += [_walk_forward(f), Text("")]
    if f.has("results.time_meaning"):
        parts += [indented(Text(f.text("results.time_meaning"), style="italic")), Text("")]
    return parts


def _surface(f: Figures) -> RenderableType:
    s = "results.surface"
    finding = ("an ISOLATED PEAK among weak neighbours: what selection luck looks like"
               if f.get(f"{s}.isolated_peak") else "not an isolated peak")
    return Group(Text("Parameter surface", style="bold"), indented(Text(
        f"parameters {', '.join(f.get(f'{s}.parameters'))}: the selected cell's Sharpe ratio "
        f"{f.sharpe(f'{s}.selected_sharpe')} against {f.sharpe(f'{s}.neighbour_mean_sharpe')} on average over its "
        f"{f.whole(f'{s}.neighbours')} grid neighbours ({f.sharpe(f'{s}.gap_in_standard_errors')} standard "
        f"errors apart, standard error {f.sharpe(f'{s}.standard_error')}): {finding}.")))


def _sharpe(f: Figures) -> Table:
    s, d = "results.sharpe", "results.sharpe.deflated"
    annual = f.annual

    def both(path: str, annual_path: str) -> str:
        return f.sharpe(path) + (f" ({f.sharpe(annual_path)} annualized)" if annual and f.has(annual_path) else "")

    track = (f"{f.number(f'{s}.min_track_record.observations')} windows"
             + (f" ({f.number(f'{s}.min_track_record.years', 3)} years)" if f.has(f"{s}.min_track_record.years") else "")
             if f.has(f"{s}.min_track_record.observations") else "none: the Sharpe ratio is not above zero")
    rows = [
        ("selected Sharpe ratio (per window)", both(f"{s}.observed", f"{s}.observed_annualized")),
        ("skewness / kurtosis (raw, 3 for normal)", f"{f.number(f'{s}.skewness', 3)} / {f.number(f'{s}.kurtosis', 3)}"),
        ("probabilistic Sharpe ratio against 0", f.probability(f"{s}.probabilistic.probability")),
        ("trials counted / effective trials", f"{f.number(f'{d}.declared_trials', 6)} / "
         f"{f.number(f'{d}.effective_trials', 3)} ({words('effective_trials_method', f.get(f'{d}.effective_trials_method'))}); "
         f"the deflation counts the {words('trials_used', f.get(f'{d}.trials_used'))} trials"),
        ("Sharpe ratio the best of the trials reaches by luck", both(f"{d}.benchmark_sharpe", f"{d}.benchmark_sharpe_annualized")),
        ("deflated Sharpe probability", f"{f.probability(f'{d}.probability')} (calibrated level "
         f"{f.probability(f'{d}.calibrated_level')}, a test of size {f.number(f'{d}.significance')})"),
        ("minimum track record", track),
    ]
    if f.has(f"{s}.haircut"):
        key = "sharpe_annualized" if annual else "sharpe"
        rows.append(("haircut Sharpe ratio (Bonferroni / Holm / BHY)",
                     " / ".join(f.sharpe(f"{s}.haircut.{m}.{key}") for m in ("bonferroni", "holm", "bhy"))
                     + (" annualized" if annual else " per window")))
    return _facts("The Sharpe ratio after allowing for the search", rows,
                  "The deflated probability is the chance that the true Sharpe ratio beats what the best of the "
                  "trials would show by luck alone; the check holds it to the calibrated level.")


_STEPM_SHOWN = 10


def _snooping(f: Figures) -> Table:
    s = "results.snooping"
    spa = f"{s}.spa"
    rows = [
        ("White's reality check p-value", f.pvalue(f"{s}.reality_check.pvalue")),
        (f"Hansen's SPA p-value ({words('scale', f.get(f'{spa}.scale'))})",
         f"{f.pvalue(f'{spa}.pvalue')} (lower {f.pvalue(f'{spa}.pvalue_lower')}, upper {f.pvalue(f'{spa}.pvalue_upper')})"),
    ]
    for key in ("spa_long_run", "spa_studentized", "spa_unstudentized"):
        if f.get(f"{s}.{key}.scale") != f.get(f"{spa}.scale") and f.has(f"{s}.{key}"):
            rows.append((f"  the same, {words('scale', f.get(f'{s}.{key}.scale'))}", f.pvalue(f"{s}.{key}.pvalue")))
    names = f.get(f"{s}.stepm.significant") or []
    shown = "; ".join(names[:_STEPM_SHOWN]) + (f", ... ({len(names) - _STEPM_SHOWN:,} more)"
                                              if len(names) > _STEPM_SHOWN else "")
    rows.append((f"StepM: beat the benchmark at {f.number(f'{s}.stepm.level')}",
                 f"{f.count(f'{s}.stepm.significant')}: {shown}" if names else "none"))
    kept = "yes" if f.get(f"{s}.selected_survives_stepm") else "NO: the selected configuration is not among them"
    rows.append(("the selected configuration survives StepM",
                 f"{kept} (statistic {f.number(f'{s}.stepm.selected_statistic', 3)}, critical value "
                 f"{f.number(f'{s}.stepm.selected_critical_value', 3)})"))
    rows.append(("the check reads", f"{words('gating', f.get(f'{s}.gating'))}: {f.pvalue(f'{s}.gating_pvalue')}"))
    return _facts("Data-snooping tests (null: no configuration beats the benchmark)", rows)


def _overfitting(f: Figures) -> Table:
    o = "results.overfitting"
    deg = f"{o}.degradation"
    dominance = f"{o}.stochastic_dominance"
    second = f.get(f"{dominance}.second_order")
    rows = [
        ("probability of backtest overfitting", f"{f.probability(f'{o}.probability_of_overfitting')} (pure luck: "
         f"{f.probability(f'{o}.null_probability_of_overfitting')})"),
        ("the in-sample winner loses money out of sample", f.probability(f"{o}.probability_of_loss")),
        ("degradation: out of sample = a + b x in sample", f"b = {f.number(f'{deg}.slope', 3)}, a = "
         f"{f.number(f'{deg}.intercept', 3)}, R^2 = {f.number(f'{deg}.r_squared', 3)}"),
        ("the winner dominates a random pick (1st / 2nd order)",
         f"{'yes' if f.get(f'{dominance}.first_order') else 'no'} / "
         f"{'n/a' if second is None else ('yes' if second else 'no')}"),
        ("diagnosis", words("case", f.get(f"{o}.diagnosis.case"))),
    ]
    title = (f"Overfitting: CSCV over {f.whole(f'{o}.combinations')} splits of {f.whole(f'{o}.partitions')} blocks "
             f"({words('statistic', f.get(f'{o}.statistic'))})")
    return _facts(title, rows)


def _tails(f: Figures) -> RenderableType:
    t = "results.tails"
    windows = len(f.get(f"{t}.stress_windows") or [])
    if not windows:
        words_ = ("no stress window (no window in which a large share of the configurations took a large loss)")
    else:
        words_ = (f"{f.count(f'{t}.stress_windows')} stress window{'s' if windows != 1 else ''}, "
                  f"{f.whole(f'{t}.escaped')} escaped by the "
                  f"selected configuration; charged the family's losses, its mean goes from "
                  f"{f.percent(f'{t}.mean_observed')} to {f.percent(f'{t}.mean_adjusted')} a window, statistic "
                  f"{f.number(f'{t}.statistic', 3)} against the critical value {f.number(f'{t}.critical_value', 3)}")
    return Group(Text("The family's tails", style="bold"), indented(Text(words_ + ".")))


_MOVES_SHOWN = 8


def _ledger_part(f: Figures) -> RenderableType:
    state = ("new (recorded now)" if f.get("ledger.new_sweep") else "already recorded (no trials added)"
             if not f.get("ledger.trials_added") else "already recorded")
    lines = [Text(f"{f.text('ledger.path')}: this sweep is {state}; {f.whole('ledger.sweeps_recorded')} distinct "
                  f"sweeps recorded, {f.whole('ledger.trials_counted')} trials counted")]
    if f.has("ledger.note"):
        lines.append(Text(f.text("ledger.note")))
    return Group(Text("Trial ledger", style="bold"), indented(*lines), Text(""))


def _baseline_table(f: Figures) -> Table:
    table = Table(title=Text("Against the baseline"), title_justify="left")
    table.add_column("gated figure (results.*)", overflow="fold", min_width=24)
    for name in ("before", "after", "change", "allowed worsening", ""):
        table.add_column(name)
    worsened = {g["key"] for g in f.get("baseline.worsened") or []}
    for i, g in enumerate(f.get("baseline.gated") or []):
        flag = Text("EXCEEDED", style=_FAIL) if g["exceeded"] else Text("worse" if g["key"] in worsened else "")
        p = f"baseline.gated[{i}]"
        text_row(table, g["key"].removeprefix("results."), f.number(f"{p}.before"), f.number(f"{p}.after"),
                 f.number(f"{p}.change"), f.number(f"{p}.allowed_worsening"), flag)
    return table


def _baseline_moves(f: Figures) -> Padding:
    lines = []
    if f.get("baseline.selected_changed"):
        lines.append(Text(f"! the baseline judged '{f.text('baseline.selected_before')}': the selected figures "
                          "compare different configurations"))
    lines += [Text(f"check {c['id']}: {c['before']} -> {c['after']}") for c in f.get("baseline.checks_changed") or []]
    moved = f.get("baseline.moved") or []
    # Summary figures in document order; the per-configuration ones only counted (the JSON
    # block lists every move).
    summary = [(i, m) for i, m in enumerate(moved) if "configurations[" not in m["key"]]
    lines.append(Text(f"{len(moved):,} figures moved ({len(moved) - len(summary):,} of them per configuration)"
                      + (":" if summary else "")))
    shown = [Text(f"{m['key']}: {f.number(f'baseline.moved[{i}].before')} -> {f.number(f'baseline.moved[{i}].after')} "
                  f"({f.number(f'baseline.moved[{i}].change')})") for i, m in summary[:_MOVES_SHOWN]]
    if len(summary) > _MOVES_SHOWN:
        shown.append(Text(f"... and {len(summary) - _MOVES_SHOWN:,} more"))
    return indented(*lines, indented(*shown))


def _gate_parts(f: Figures) -> list[RenderableType]:
    """The trial ledger and the comparison with a baseline audit, when the audit used them."""
    parts: list[RenderableType] = []
    if f.has("ledger"):
        parts.append(_ledger_part(f))
    if f.has("baseline"):
        parts += [_baseline_table(f),
                  indented(Text(f"baseline file: {f.text('baseline.path')} (verdict then: "
                                f"{f.text('baseline.verdict_before')})")),
                  _baseline_moves(f), Text("")]
    return parts


def render_terminal(doc: dict, console: Console | None = None) -> None:
    """Print the audit to the terminal (or to a given rich Console); see the module notes."""
    console = console or terminal_console()
    for part in _sections(Figures(doc)):
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
