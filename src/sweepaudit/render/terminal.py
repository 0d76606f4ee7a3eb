"""Terminal output with rich: the verdict first, in words; then the reasons; then the figures.

Formats the audit JSON document only, so every figure shown traces back to a contract key.
"""

from __future__ import annotations

from rich.console import Console, Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from ..format import fmt, pct, prob, sig

__all__ = ["render_terminal"]


def _iv(block, scale=1.0, as_pct=False) -> str:
    if not block:
        return "-"
    def f(v):
        if v is None:
            return "-"
        return pct(v * scale) if as_pct else fmt(v * scale)

    return f"{f(block['estimate'])}  [{f(block['low'])}, {f(block['high'])}]"


def _verdict(doc: dict) -> list:
    """The verdict panel and its reasons: the first screen."""
    go = doc["verdict"] == "go"
    title = Text("GO" if go else "NO-GO", style="bold green" if go else "bold red")
    sel = doc["selected"]
    head = Text.assemble(
        ("Verdict: ", "bold"),
        title,
        ("  selected configuration: ", "bold"),
        (sel["configuration"], ""),
    )
    lines = [head, Text(f"Chosen as: {sel['rule']}", style="dim")]
    # Returns that do not look like returns stand on the first screen, passed or not.
    for c in doc["checks"]:
        if c["id"] == "plausible_returns" and (not c["passed"] or c["reason"].startswith("Implausible")):
            lines.append(Text(f"! {c['reason']}", style="bold yellow"))
    reasons = Text("Reasons\n", style="bold")
    for r in doc["reasons"]:
        reasons.append(f"  - {r}\n")
    return [Panel(Group(*lines), title="sweepaudit", expand=False), reasons]


def _data_table(doc: dict) -> Table:
    inp, st = doc["input"], doc["settings"]
    data = Table(title="The data", show_header=False, box=None, title_justify="left")
    data.add_row("file", f"{inp['path']} ({inp['layout']} layout)")
    plural = "s" if inp["configurations"] != 1 else ""
    data.add_row("sweep", f"{inp['configurations']:,} configuration{plural} x {inp['windows']:,} windows, "
                          f"{inp['first_window']} to {inp['last_window']}")
    ppy = inp["periods_per_year"]
    data.add_row("periods per year", f"{fmt(ppy)} ({inp['periods_per_year_source']}"
                 + (f", {inp['frequency']})" if inp.get("frequency") else ")") if ppy else "unknown: figures per window")
    data.add_row("resampling", f"{st['resamples']:,} {st['bootstrap']} bootstrap resamples, block length "
                 f"{fmt(st['block_length'], 3)}, seed {st['seed']}")
    return data


def _selected_table(doc: dict) -> Table:
    st = doc["settings"]
    boot = doc["results"]["bootstrap"]["selected"]
    figures = Table(title=f"Selected configuration: estimate [{pct(st['confidence'])} {st['interval_method']} interval]",
                    title_justify="left")
    figures.add_column("figure")
    figures.add_column("per window")
    figures.add_column("annualized")
    figures.add_row("mean excess return", _iv(boot["mean"], as_pct=True), _iv(boot["mean_annualized"], as_pct=True))
    figures.add_row("Sharpe ratio", _iv(boot["sharpe"]), _iv(boot["sharpe_annualized"]))
    return figures


def _surface_text(surface: dict) -> Text:
    verdict = ("an ISOLATED PEAK among weak neighbours: what selection luck looks like"
               if surface["isolated_peak"] else "not an isolated peak")
    return Text(
        f"Parameter surface ({', '.join(surface['parameters'])}): the selected cell's Sharpe ratio "
        f"{fmt(surface['selected_sharpe'])} against {fmt(surface['neighbour_mean_sharpe'])} on average over "
        f"its {surface['neighbours']} grid neighbours ({fmt(surface['gap_in_standard_errors'], 3)} standard "
        f"errors apart): {verdict}.\n")


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
    return parts


def _checks_table(doc: dict) -> Table:
    checks = Table(title="Checks", title_justify="left")
    checks.add_column("check")
    checks.add_column("result")
    checks.add_column("value")
    checks.add_column("threshold")
    for c in doc["checks"]:
        state = "pass" if c["passed"] else "FAIL"
        if not c["required"]:
            state += " (advisory)"
        checks.add_row(c["id"], state, fmt(c["value"]), fmt(c["threshold"]))
    return checks


def _sections(doc: dict) -> list:
    parts = [*_verdict(doc), _data_table(doc), _selected_table(doc), *_method_parts(doc), _checks_table(doc)]
    parts += _gate_sections(doc)
    if doc["warnings"]:
        w = Text("Warnings\n", style="bold yellow")
        for line in doc["warnings"]:
            w.append(f"  ! {line}\n")
        parts.append(w)
    parts.append(Text(doc["caution"], style="italic"))
    return parts


_STEPM_SHOWN = 10


def _snooping_table(sn: dict, selected: str) -> Table:
    t = Table(title="Data-snooping tests (null: no configuration beats the benchmark)",
              title_justify="left", show_header=False)
    t.add_column("figure")
    t.add_column("value")
    t.add_row("White's reality check p-value", prob(sn["reality_check"]["pvalue"]))
    spa = sn["spa"]
    words = {"long-run": "long-run t-ratios", "bootstrap": "bootstrap-scaled", "none": "unscaled"}
    t.add_row(f"Hansen's SPA p-value ({words.get(spa.get('scale'), spa.get('scale'))})",
              f"consistent {prob(spa['pvalue'])}  (lower {prob(spa['pvalue_lower'])}, upper {prob(spa['pvalue_upper'])})")
    for key, label in (("spa_studentized", "bootstrap-scaled"), ("spa_unstudentized", "unscaled")):
        other = sn.get(key)
        if other and other.get("scale") != spa.get("scale"):
            t.add_row(f"  the same, {label}", f"consistent {prob(other['pvalue'])}")
    st = sn["stepm"]
    names = st["significant"]
    shown = "; ".join(names[:_STEPM_SHOWN]) + (f", ... ({len(names) - _STEPM_SHOWN} more)" if len(names) > _STEPM_SHOWN else "")
    t.add_row(f"StepM: beat the benchmark at {sig(st['level'], 6)}", f"{len(names)}: {shown}" if names else "none")
    t.add_row("selected configuration survives StepM",
              ("yes" if sn["selected_survives_stepm"] else f"NO: {selected} is not among them")
              + f"  (statistic {sig(st['selected_statistic'], 3)}, critical value {sig(st['selected_critical_value'], 3)})")
    t.add_row("gate", f"{sn['gating']} p-value {prob(sn['gating_pvalue'])}")
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
    t = Table(title=f"Overfitting: CSCV over {ov['combinations']:,} splits of {ov['partitions']} blocks "
              f"({ov['statistic']})", title_justify="left", show_header=False)
    t.add_column("figure")
    t.add_column("value")
    t.add_row("probability of backtest overfitting (PBO)",
              f"{prob(ov['probability_of_overfitting'])}  (pure luck: {prob(ov['null_probability_of_overfitting'])})")
    t.add_row("in-sample winner loses out of sample", prob(ov["probability_of_loss"]))
    deg = ov["degradation"]
    t.add_row("degradation: out-of-sample = a + b x in-sample",
              f"b = {fmt(deg['slope'], 3)}, a = {fmt(deg['intercept'], 3)}, R^2 = {fmt(deg['r_squared'], 3)}")
    sd = ov["stochastic_dominance"]
    t.add_row("winner dominates a random pick (1st / 2nd order)",
              f"{'yes' if sd['first_order'] else 'no'} / "
              f"{'-' if sd['second_order'] is None else ('yes' if sd['second_order'] else 'no')}")
    t.add_row("diagnosis", ov["diagnosis"]["case"].replace("_", " "))
    return t


def _sharpe_table(sh: dict, ppy) -> Table:
    d = sh["deflated"]
    t = Table(title="Selection-adjusted Sharpe inference (per window; annualized in brackets)",
              title_justify="left", show_header=False)
    t.add_column("figure")
    t.add_column("value")
    ann = lambda v, a: fmt(v) + (f"  ({fmt(a, 3)} annualized)" if a is not None else "")
    t.add_row("selected Sharpe ratio", ann(sh["observed"], sh["observed_annualized"]))
    t.add_row("skewness / kurtosis (raw)", f"{fmt(sh['skewness'], 3)} / {fmt(sh['kurtosis'], 3)}")
    t.add_row("probabilistic Sharpe ratio vs 0", prob(sh["probabilistic"]["probability"]))
    t.add_row("trials / effective trials", f"{fmt(d['trials'], 6)} / {fmt(d['effective_trials'], 3)} "
              f"({d['effective_trials_method']}); deflation uses {d['trials_used']} trials")
    t.add_row("best-of-trials luck benchmark", ann(d["benchmark_sharpe"], d["benchmark_sharpe_annualized"])
              + f"  [{d['variance_mode']} variance, {d['expected_maximum']} expected maximum]")
    t.add_row("deflated Sharpe probability", prob(d["probability"]))
    mtrl = sh["min_track_record"]
    t.add_row("minimum track record", "-" if mtrl["observations"] is None else
              f"{fmt(mtrl['observations'])} windows" + (f" ({fmt(mtrl['years'], 3)} years)" if mtrl["years"] else ""))
    hc = sh.get("haircut")
    if hc:
        t.add_row("haircut Sharpe (Bonferroni / Holm / BHY)",
                  " / ".join(fmt(hc[m]["sharpe_annualized"] if ppy else hc[m]["sharpe"], 3) for m in ("bonferroni", "holm", "bhy"))
                  + (" annualized" if ppy else " per window"))
    t.caption = ("The deflated probability is the chance that the true Sharpe ratio beats what the best "
                 "of the trials would show by luck alone; 0.95 or more is strong evidence of a real edge.")
    t.caption_justify = "left"
    return t

_MOVES_SHOWN = 8


def _gate_sections(doc: dict) -> list:
    """The trial ledger and the comparison with a baseline audit, when the audit used them."""
    parts: list = []
    ledger = doc.get("ledger")
    if ledger:
        text = Text("Trial ledger\n", style="bold")
        state = ("new (recorded now)" if ledger["new_sweep"] else "already recorded (no trials added)"
                 if not ledger.get("trials_added") else "already recorded")
        text.append(f"  {ledger['path']}: this sweep is {state}; {ledger['sweeps_recorded']:,} distinct "
                    f"sweeps recorded, {ledger['trials_counted']:,} trials counted\n")
        if ledger.get("note"):
            text.append(f"  {ledger['note']}\n")
        parts.append(text)
    base = doc.get("baseline")
    if base:
        table = Table(title=f"Against the baseline {base['path']} (verdict then: {base['verdict_before']})",
                      title_justify="left")
        table.add_column("gated figure (results.*)", overflow="fold", min_width=24)
        table.add_column("before")
        table.add_column("after")
        table.add_column("change")
        table.add_column("allowed worsening")
        table.add_column("")
        for g in base["gated"]:
            flag = "EXCEEDED" if g["exceeded"] else ("worse" if g in base["worsened"] else "")
            table.add_row(g["key"].removeprefix("results."), fmt(g["before"]), fmt(g["after"]), fmt(g["change"]),
                          fmt(g["allowed_worsening"]), flag)
        parts.append(table)
        text = Text()
        if base.get("selected_changed"):
            text.append(f"  ! the baseline judged {base['selected_before']!r}: the selected figures compare "
                        "different configurations\n")
        for c in base["checks_changed"]:
            text.append(f"  check {c['id']}: {c['before']} -> {c['after']}\n")
        moved = base["moved"]
        # Summary figures in document order; the per-configuration ones only counted (the JSON
        # block lists every move).
        summary = [m for m in moved if "configurations[" not in m["key"]]
        text.append(f"  {len(moved):,} figures moved ({len(moved) - len(summary):,} of them per configuration)"
                    + (":\n" if summary else "\n"))
        for m in summary[:_MOVES_SHOWN]:
            text.append(f"    {m['key']}: {fmt(m['before'])} -> {fmt(m['after'])} ({fmt(m['change'])})\n")
        if len(summary) > _MOVES_SHOWN:
            text.append(f"    ... and {len(summary) - _MOVES_SHOWN:,} more\n")
        parts.append(text)
    return parts


def render_terminal(doc: dict, console: Console | None = None) -> None:
    """Print the audit to the terminal (or to a given rich Console)."""
    console = console or Console()
    for part in _sections(doc):
        console.print(part)
