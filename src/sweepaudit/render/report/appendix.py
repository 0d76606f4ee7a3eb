"""The report's appendix: every variant and diagnostic of the audit, in compact tables.

One row per variant and one column per setting (the deflated Sharpe ratio under each choice, the
data-snooping tests under each scale), one row per configuration, the CSCV diagnostics, the
resampling choices and the policy. Every figure is read through
:class:`~sweepaudit.render.figures.Figures`, so the appendix and the sections together show every
figure of the audit document.
"""

from __future__ import annotations

from collections.abc import Callable

from ...results import FigureMaterial
from ..figures import Figures, words
from .model import Section, Table

__all__ = ["APPENDIX"]

#: Above this many rows a table is folded in the HTML report (a <details> element).
FOLD_ROWS = 60


def _configurations(f: Figures, material: FigureMaterial | None) -> Section:
    configs = f.get("results.bootstrap.configurations") or []
    parameters = list(f.get("input.parameters") or [])
    annual = f.annual
    columns = ["configuration", *parameters, "mean a window [interval]", "Sharpe ratio a window [interval]"]
    if annual:
        columns.append("annualized Sharpe ratio [interval]")
    rows, marks = [], []
    selected = f.get("selected.configuration")
    for i, c in enumerate(configs):
        p = f"results.bootstrap.configurations[{i}]"
        row = [f.text(f"{p}.configuration"), *(f.number(f"{p}.parameters.{name}") for name in parameters),
               f.interval(f"{p}.mean", as_percent=True), f.interval(f"{p}.sharpe")]
        if annual:
            row.append(f.interval(f"{p}.sharpe_annualized"))
        rows.append(tuple(row))
        marks.append("selected" if c["configuration"] == selected else "")
    return Section(
        "every_configuration", "Every configuration", facts=_listing(f),
        meaning=(f"Each configuration's mean excess return and Sharpe ratio with their "
                 f"{f.level('settings.confidence')} intervals; the selected one is marked.",),
        tables=(Table(tuple(columns), tuple(rows), caption=f"{f.whole('input.configurations')} configurations",
                      collapsed=len(rows) > FOLD_ROWS, marks=tuple(marks), wide=len(columns) > 5),),
    )


def _key(path: str, key: str) -> str:
    """``path.key``, or ``path["key"]`` for a key with a dot in it (``0.05``)."""
    return f'{path}["{key}"]' if "." in key else f"{path}.{key}"


def _listing(f: Figures) -> tuple[tuple[str, str], ...]:
    """Which configurations the table lists, and a summary of all of them."""
    li = "results.bootstrap.listing"
    if not f.has(li):
        return ()
    q = f"{li}.sharpe_quantiles"
    levels = list(f.get(q) or {})
    return (
        ("configurations in the table", f"{f.whole(f'{li}.listed')} of {f.whole(f'{li}.of')}: {f.text(f'{li}.rule')}"),
        ("configurations whose mean interval lies above zero", f.whole(f"{li}.mean_interval_above_zero")),
        ("Sharpe ratio a window over all configurations, at the quantiles " + ", ".join(levels),
         ", ".join(f.sharpe(_key(q, k)) for k in levels)),
    )


def _deflated_variants(f: Figures, material: FigureMaterial | None) -> Section | None:
    variants = f.get("results.sharpe.deflated_variants")
    if not variants:
        return None
    d = "results.sharpe.deflated"
    headline = (f.get(f"{d}.variance_mode"), f.get(f"{d}.expected_maximum"), f.get(f"{d}.trials_used"))
    rows, marks = [], []
    for i, v in enumerate(variants):
        p = f"results.sharpe.deflated_variants[{i}]"
        rows.append(_deflated_row(f, p, words("variance_mode", v["variance_mode"]),
                                  words("expected_maximum", v["expected_maximum"]), words("trials_used", v["trials_used"])))
        marks.append("selected" if (v["variance_mode"], v["expected_maximum"], v["trials_used"]) == headline else "")
    rows.append(_deflated_row(f, "results.sharpe.iid.deflated", "iid formula: " + words("variance_mode", headline[0]),
                              words("expected_maximum", f.get("results.sharpe.iid.deflated.expected_maximum")),
                              words("trials_used", headline[2])))
    marks.append("")
    rows.append(_deflated_row(f, d, "as reported: " + words("variance_mode", headline[0]),
                              words("expected_maximum", headline[1]), words("trials_used", headline[2])))
    marks.append("selected")
    columns = ("trial variance", "expected maximum", "trials", "N", "trial Sharpe variance", "luck benchmark a window",
               "annualized", "statistic", "long-run ratio", "probability")
    return Section(
        "deflated_variants", "The deflated Sharpe ratio under every choice",
        meaning=("One row per combination of the trial Sharpe variance, the expected maximum of N trials and the "
                 "trial count; the marked rows are the audit's own choice. The check holds the marked probability "
                 f"to the calibrated level {f.probability(f'{d}.calibrated_level')} (or the policy's fixed level).",),
        tables=(Table(columns, tuple(rows), marks=tuple(marks), wide=True, caption="Deflated Sharpe ratio variants"),),
    )


def _deflated_row(f: Figures, p: str, variance: str, maximum: str, count: str) -> tuple[str, ...]:
    return (variance, maximum, count, f.number(f"{p}.trials", 6), f.number(f"{p}.trial_sharpe_variance"),
            f.sharpe(f"{p}.benchmark_sharpe"), f.sharpe(f"{p}.benchmark_sharpe_annualized"),
            f.sharpe(f"{p}.statistic"), f.sharpe(f"{p}.long_run_ratio"), f.probability(f"{p}.probability"))


def _sharpe_details(f: Figures, material: FigureMaterial | None) -> Section | None:
    s = "results.sharpe"
    if not f.has(s):
        return None
    iid, mtr = f"{s}.iid", f"{s}.min_track_record"
    both = (
        ("standard error of the Sharpe ratio", f.number(f"{s}.standard_error"), f.number(f"{iid}.standard_error")),
        ("probabilistic Sharpe ratio: statistic", f.sharpe(f"{s}.probabilistic.statistic"),
         f.sharpe(f"{iid}.probabilistic.statistic")),
        ("probabilistic Sharpe ratio: probability", f.probability(f"{s}.probabilistic.probability"),
         f.probability(f"{iid}.probabilistic.probability")),
        ("minimum track record, windows", f.number(f"{mtr}.observations"), f.number(f"{iid}.min_track_record.observations")),
        ("minimum track record, years", f.number(f"{mtr}.years", 3), f.number(f"{iid}.min_track_record.years", 3)),
    )
    t = f"{s}.effective_trials"
    facts = (
        ("benchmark of the probabilistic Sharpe ratio, a window", f.sharpe(f"{s}.probabilistic.benchmark")),
        ("windows", f.whole(f"{s}.observations")),
        ("Lo's standard error (Newey-West)", f.number(f"{s}.standard_error_serial_correlation")),
        ("long-run variance ratio: selected; typical trial", f"{f.sharpe(f'{s}.long_run_ratio')}; "
                                                              f"{f.sharpe(f'{s}.long_run_ratio_trial')}"),
        ("annualized with", f"{words('annualization', f.get(f'{s}.annualization'))} (Lo's factor: "
                            f"{f.sharpe(f'{s}.serial_correlation_factor')})"),
        ("trial Sharpe variance: no-edge; spread of the Sharpe ratios",
         f"{f.number(f'{s}.deflated.trial_sharpe_variance_null')}; {f.number(f'{s}.deflated.trial_sharpe_variance_empirical')}"),
        ("deflated statistic; expected maximum", f"{f.sharpe(f'{s}.deflated.statistic')}; "
                                                  f"{words('expected_maximum', f.get(f'{s}.deflated.expected_maximum'))}"),
        ("effective trials: average correlation; from it; Nyholt; Li and Ji",
         f"{f.sharpe(f'{t}.average_correlation')}; {f.number(f'{t}.from_average_correlation', 3)}; "
         f"{f.number(f'{t}.nyholt', 3)}; {f.number(f'{t}.li_ji', 3)}"),
    )
    tables = [Table(("figure", "long-run (reported)", "iid (as published)"), both, caption="Long-run and iid figures")]
    if f.has(f"{s}.haircut"):
        h = f"{s}.haircut"
        tables.append(Table(
            ("adjustment", "adjusted p-value", "Sharpe ratio a window", "annualized", "haircut"),
            tuple((name, f.pvalue(f"{h}.{m}.pvalue"), f.sharpe(f"{h}.{m}.sharpe"), f.sharpe(f"{h}.{m}.sharpe_annualized"),
                   f.percent(f"{h}.{m}.haircut"))
                  for m, name in (("bonferroni", "Bonferroni"), ("holm", "Holm"), ("bhy", "Benjamini-Hochberg-Yekutieli"))),
            caption=(f"Haircut Sharpe ratio: t = {f.sharpe(f'{h}.t_statistic')}, {f.p_is(f'{h}.pvalue')}, "
                     f"{f.number(f'{h}.tests', 6)} tests"),
        ))
    return Section("sharpe_details", "The Sharpe ratio in detail", facts=facts, tables=tuple(tables),
                   meaning=("The reported figures use the long-run variance (serial dependence counted); the "
                            "published iid formulas are beside them. The haircut Sharpe ratio adjusts the "
                            "selected configuration's p-value for the number of tests and reads it back as a Sharpe "
                            "ratio.",),
                   references=("Harvey, C. R. and Liu, Y. (2015). Backtesting. Journal of Portfolio Management 42(1), "
                               "13-28 (the haircut Sharpe ratio).",))


_SCALES = (("spa_long_run", "stepm_long_run"), ("spa_studentized", "stepm_studentized"),
           ("spa_unstudentized", "stepm_unstudentized"))


def _snooping_details(f: Figures, material: FigureMaterial | None) -> Section | None:
    s = "results.snooping"
    if not f.has(s):
        return None
    rows, marks = [], []
    for spa_key, stepm_key in _SCALES:
        a, b = f"{s}.{spa_key}", f"{s}.{stepm_key}"
        if not f.has(a):
            continue
        rows.append((words("scale", f.get(f"{a}.scale")), f.sharpe(f"{a}.statistic"), f.pvalue(f"{a}.pvalue"),
                     f.pvalue(f"{a}.pvalue_lower"), f.pvalue(f"{a}.pvalue_upper"),
                     f"{f.count(f'{b}.significant')} at {f.number(f'{b}.level')}", f.whole(f"{b}.steps"),
                     f"{f.sharpe(f'{b}.selected_statistic')} ({f.sharpe(f'{b}.selected_critical_value')})",
                     ", ".join(f.sharpe(f"{b}.critical_values[{j}]") for j in range(len(f.get(f"{b}.critical_values"))))))
        marks.append("selected" if f.get(f"{a}.scale") == f.get(f"{s}.scale") else "")
    names = f.get(f"{s}.stepm.significant") or []
    facts = (
        ("reality check: statistic; p-value; its best configuration (by mean)",
         f"{f.sharpe(f'{s}.reality_check.statistic')}; {f.pvalue(f'{s}.reality_check.pvalue')}; "
         f"{f.text(f'{s}.reality_check.best')}"),
        ("the check reads", f"{words('gating', f.get(f'{s}.gating'))}: {f.pvalue(f'{s}.gating_pvalue')}"),
        ("smallest p-value the resamples can give (one in resamples + 1)", f.number(f"{s}.pvalue_floor", 2)),
        ("p-values count the observed statistic", words("counting", f.get(f"{s}.counting"))),
        ("StepM recentring", words("recentring", f.get(f"{s}.stepm.recentring"))),
        ("selected configuration: long-run variance ratio; AR(1) coefficient; degrees of freedom",
         f"{f.sharpe(f'{s}.selected_long_run.variance_ratio')}; {f.sharpe(f'{s}.selected_long_run.ar_coefficient')}; "
         f"{f.number(f'{s}.selected_long_run.degrees_of_freedom', 3)}") if f.has(f"{s}.selected_long_run") else
        ("selected configuration's long-run variance", "n/a"),
        ("configurations StepM keeps at the gating scale", "; ".join(
            f.text(f"{s}.stepm.significant[{i}]") for i in range(len(names))) or "none"),
    )
    columns = ("scale", "SPA statistic", "SPA p-value", "lower", "upper", "StepM keeps", "steps",
               "selected statistic (its critical value)", "critical values by step")
    return Section("snooping_details", "The data-snooping tests under every scale", facts=facts,
                   tables=(Table(columns, tuple(rows), marks=tuple(marks), wide=True,
                                 caption="One row per scale; the marked row gates"),))


def _cscv_details(f: Figures, material: FigureMaterial | None) -> Section | None:
    o = "results.overfitting"
    if not f.has(o):
        return None
    logits = f.get(f"{o}.logits") or {}
    quantiles = Table(tuple(f"{q} quantile" for q in logits), (tuple(f.sharpe(f'{o}.logits["{q}"]') for q in logits),),
                      caption="The split logits (above zero: the winner stays in the top half)")
    dom, dia = f"{o}.stochastic_dominance", f"{o}.diagnosis"
    facts = (
        ("blocks requested; used", f"{f.whole(f'{o}.partitions_requested')}; {f.whole(f'{o}.partitions')}"),
        ("blocks", f.text(f"{o}.block_rule")),
        ("median out-of-sample statistic of the winner", f.sharpe(f"{o}.median_out_of_sample")),
        ("the winner dominates a random pick: first order (largest violation)",
         f"{f.number(f'{dom}.first_order')} ({f.number(f'{dom}.first_order_violation')})"),
        ("second order (largest violation)", f"{f.number(f'{dom}.second_order')} ({f.number(f'{dom}.second_order_violation')})"),
        ("splits whose winner beats the best-of-N noise level (t above)",
         f"{f.percent(f'{dia}.in_sample_strength_share')} ({f.sharpe(f'{dia}.strength_threshold')})"),
        ("diagnosis; passes", f"{words('case', f.get(f'{dia}.case'))}; {f.number(f'{dia}.passed')}"),
        ("the rule's reading", f.text(f"{dia}.reason")),
    )
    return Section("cscv_details", "CSCV diagnostics", facts=facts, tables=(quantiles,))


def _resampling_details(f: Figures, material: FigureMaterial | None) -> Section:
    c = "settings.block_length_choice"
    facts = [
        ("resamples (a final audit: the policy's count)", f"{f.whole('settings.resamples')} "
                                                          f"({f.whole('settings.final_resamples')})"),
        ("bootstrap; interval", f"{words('bootstrap', f.get('settings.bootstrap'))}; "
                                f"{f.level('settings.confidence')} {words('interval_method', f.get('settings.interval_method'))}"),
        ("block length (windows); chosen by", f"{f.sharpe('settings.block_length')}; {f.text('settings.block_length_source')}"),
        ("trials declared", f.number("settings.trials", 6) if f.has("settings.trials") else "the configurations"),
    ]
    if f.has(c):
        facts += [
            ("automatic lengths: selected configuration; family (75th percentile); average series",
             f"{f.sharpe(f'{c}.selected')}; {f.sharpe(f'{c}.family_quantile')}; {f.sharpe(f'{c}.average_series')}"),
            ("configurations examined", f.whole(f"{c}.configurations_examined")),
            ("family's median AR(1) coefficient; share of the long-run variance the length keeps",
             f"{f.sharpe(f'{c}.ar_coefficient')}; {f.percent(f'{c}.predicted_share')}"),
            ("lengthened to keep enough of the long-run variance", f.number(f"{c}.lengthened")),
        ]
    return Section("resampling", "Resampling", facts=tuple(facts))


def _policy(f: Figures, material: FigureMaterial | None) -> Section:
    rows = []
    for key, value in (f.get("policy") or {}).items():
        path = f"policy.{key}"
        if isinstance(value, list):
            shown = ", ".join(f.text(f"{path}[{i}]") for i in range(len(value))) or "none"
        elif isinstance(value, str):
            shown = f.text(path)
        else:
            shown = f.number(path)
        rows.append((key, shown))
    return Section("policy", "The policy applied", facts=(("from", f.text("policy_source")),),
                   tables=(Table(("policy key", "value"), tuple(rows)),))


def _baseline_moves(f: Figures, material: FigureMaterial | None) -> Section | None:
    moved = f.get("baseline.moved")
    if moved is None:
        return None
    rows = tuple((m["key"], f.number(f"baseline.moved[{i}].before"), f.number(f"baseline.moved[{i}].after"),
                  f.number(f"baseline.moved[{i}].change")) for i, m in enumerate(moved))
    changed = tuple((c["id"], f"{c['before']} -> {c['after']}") for c in f.get("baseline.checks_changed") or [])
    return Section("baseline_moves", "Every figure that moved since the baseline", facts=changed,
                   meaning=("Each figure of the audit that differs from the baseline's, by its key in the audit "
                            "document; the gated ones are in the section on the baseline.",),
                   tables=(Table(("figure (key in the audit document)", "before", "after", "change"), rows,
                                 collapsed=len(rows) > FOLD_ROWS,
                                 caption=f"{f.count('baseline.moved')} figures moved"),))


def _period_row(f: Figures, p: str, annual: bool) -> tuple[str, ...]:
    row = (f.text(f"{p}.period"), f"{f.text(f'{p}.first_window')} to {f.text(f'{p}.last_window')}",
           f"{f.whole(f'{p}.windows')} (from {f.whole(f'{p}.start')})", f.estimate(f"{p}.mean", as_percent=True),
           f.estimate(f"{p}.sharpe"))
    if annual:
        row += (f.estimate(f"{p}.mean_annualized", as_percent=True), f.estimate(f"{p}.sharpe_annualized"))
    return row + (f"{f.sharpe(f'{p}.t_ratio')} ({f.number(f'{p}.degrees_of_freedom')})",)


def _stability_facts(f: Figures) -> list[tuple[str, str]]:
    st, c, r = "results.stability", "results.stability.change", "results.stability.rolling"
    return [
        ("configuration examined", f.text(f"{st}.configuration")),
        ("recent period: share of the record", f.percent(f"{st}.recent_share")),
        ("change a window (annualized); its long-run standard error", f"{f.percent(f'{c}.difference')} "
         f"({f.percent(f'{c}.difference_annualized')}); {f.number(f'{c}.standard_error')}"),
        ("decay test: t-ratio; degrees of freedom; one-sided p-value; long-run variance ratio",
         f"{f.sharpe(f'{c}.statistic')}; {f.number(f'{c}.degrees_of_freedom')}; {f.pvalue(f'{c}.pvalue')}; "
         f"{f.number(f'{c}.long_run_ratio')}"),
        (f"rolling {f.whole(f'{r}.windows')}-window Sharpe ratio (first ending {f.text(f'{r}.first_window')}): "
         "last; lowest; highest (annualized)",
         f"{f.sharpe(f'{r}.last_sharpe')} ({f.sharpe(f'{r}.last_sharpe_annualized')}); "
         f"{f.sharpe(f'{r}.lowest_sharpe')} ({f.sharpe(f'{r}.lowest_sharpe_annualized')}); "
         f"{f.sharpe(f'{r}.highest_sharpe')} ({f.sharpe(f'{r}.highest_sharpe_annualized')})"),
        ("rolling Sharpe ratio: share of stretches above zero", f.percent(f"{r}.share_above_zero")),
    ]


def _walk_facts(f: Figures, annual: bool) -> list[tuple[str, str]]:
    w = "results.walk_forward"
    same = f"{w}.selected_same_windows"
    facts = [
        ("walk-forward rule", f.text(f"{w}.rule")),
        ("warm-up windows; look-back (windows)", f"{f.whole(f'{w}.warmup')}; "
         + (f.whole(f"{w}.lookback") if f.has(f"{w}.lookback") else "all earlier windows")),
        ("record from; windows", f"{f.text(f'{w}.first_window')}; {f.whole(f'{w}.windows')}"),
        ("mean excess return a window; Sharpe ratio", f"{f.estimate(f'{w}.mean', as_percent=True)}; "
         f"{f.estimate(f'{w}.sharpe')}"),
        ("changes of pick (share of windows); configurations picked",
         f"{f.whole(f'{w}.pick_changes')} ({f.percent(f'{w}.pick_change_rate')}); {f.whole(f'{w}.distinct_picks')}"),
        ("most picked (share of windows); last pick", f"{f.text(f'{w}.most_picked')} "
         f"({f.percent(f'{w}.most_picked_share')}); {f.text(f'{w}.last_pick')}"),
        ("share of windows the selected configuration was picked", f.percent(f"{w}.selected_share")),
        ("the selected configuration over the same windows: mean; Sharpe ratio",
         f"{f.percent(f'{same}.mean')}; {f.sharpe(f'{same}.sharpe')}"),
        ("what the picks' last returns foretold: AR(1) coefficient; mean taken out",
         f"{f.sharpe(f'{w}.persistence.ar_coefficient')}; {f.percent(f'{w}.persistence.mean_prediction')}"),
        ("stress windows in the record (at the whole sample's rate); charge a window",
         f"{f.whole(f'{w}.stress.windows')} ({f.number(f'{w}.stress.expected_windows', 3)}); "
         f"{f.percent(f'{w}.stress.mean_charge')}"),
        ("mean tested; t-ratio; degrees of freedom; one-sided p-value",
         f"{f.percent(f'{w}.test.mean_tested')}; {f.sharpe(f'{w}.test.statistic')}; "
         f"{f.number(f'{w}.test.degrees_of_freedom')}; {f.pvalue(f'{w}.test.pvalue')}"),
    ]
    if annual:
        facts += [("annualized: mean; Sharpe ratio", f"{f.estimate(f'{w}.mean_annualized', as_percent=True)}; "
                   f"{f.estimate(f'{w}.sharpe_annualized')}"),
                  ("the selected configuration over the same windows, annualized: mean; Sharpe ratio",
                   f"{f.percent(f'{same}.mean_annualized')}; {f.sharpe(f'{same}.sharpe_annualized')}")]
    return facts


def _time_details(f: Figures, material: FigureMaterial | None) -> Section | None:
    st, w = "results.stability", "results.walk_forward"
    if not (f.has(st) or f.has(w)):
        return None
    annual = f.annual
    tables, facts = [], []
    if f.has(st):
        paths = [f"{st}.thirds[{i}]" for i in range(len(f.get(f"{st}.thirds") or []))] + [f"{st}.early", f"{st}.recent"]
        columns = ("period", "from and to", "windows (first index)", "mean a window", "Sharpe ratio a window")
        columns += ("mean annualized", "Sharpe ratio annualized") if annual else ()
        tables.append(Table(columns + ("t-ratio (degrees of freedom)",),
                            tuple(_period_row(f, p, annual) for p in paths), wide=True,
                            caption="The selected configuration's record, period by period (intervals for the two "
                                    "periods the decay test compares)"))
        facts += _stability_facts(f)
        r = f"{st}.rolling"
        values = [f.sharpe(f"{r}.sharpe[{i}]") for i in range(len(f.get(f"{r}.sharpe") or []))]
        # The figure's raw numbers: folded in HTML and left out of print, shown in Markdown.
        tables.append(Table(("Sharpe ratio a window, ten stretches a row",),
                            tuple((", ".join(values[i:i + 10]),) for i in range(0, len(values), 10)), collapsed=True,
                            caption=f"The rolling Sharpe ratio, stretch by stretch from the one ending "
                                    f"{f.text(f'{r}.first_window')}"))
    if f.has(w):
        facts += _walk_facts(f, annual)
    return Section("time_details", "The evidence over time in detail", facts=tuple(facts), tables=tuple(tables))


def _alternatives(f: Figures, material: FigureMaterial | None) -> Section | None:
    if not f.has("sensitivity"):
        return None
    paths = [f"sensitivity.alternatives[{i}]" for i in range(len(f.get("sensitivity.alternatives") or []))]
    if f.has("sensitivity.control"):
        paths.append("sensitivity.control")
    rows = tuple((f"{f.text(f'{p}.question')}: {f.text(f'{p}.setting_words')}", f.text(f"{p}.recomputed"),
                  f.whole(f"{p}.resamples") if f.has(f"{p}.resamples") else "the audit's own")
                 for p in paths)
    return Section("alternatives", "How each alternative verdict was computed",
                   meaning=("Choices that only change which figures the verdict reads re-read the same evidence; the "
                            "others run again only what they reach, new resamples drawn from the audit's seed.",),
                   tables=(Table(("alternative", "what ran again", "resamples"), rows),))


#: The appendix in reading order; a function may return None to leave its part out.
APPENDIX: tuple[Callable[[Figures, "FigureMaterial | None"], "Section | None"], ...] = (
    _configurations,
    _deflated_variants,
    _sharpe_details,
    _snooping_details,
    _cscv_details,
    _resampling_details,
    _time_details,
    _alternatives,
    _policy,
    _baseline_moves,
)
