"""The report's first screen and its sections, one small function per question a reviewer asks.

:func:`build_report` turns the audit document (the contract) and the
:class:`~sweepaudit.results.FigureMaterial` (the raw material of the figures) into a
:class:`~sweepaudit.render.report.model.Report`. Every figure is read through
:class:`~sweepaudit.render.figures.Figures`, so it is formatted once, the same way as in the
terminal, and the report remembers which keys it showed. The sections answer one question each, with
their figure and a short table in words; variants and diagnostics go to the appendix
(:mod:`~sweepaudit.render.report.appendix`), one row per variant and one column per setting.

To add a section, write a function ``(Figures, FigureMaterial | None) -> Section`` and put it in
:data:`SECTIONS` (or :data:`~sweepaudit.render.report.appendix.APPENDIX`). A block the audit did
not produce gives a section that says so; a figure whose raw material is absent is left out.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from string import ascii_uppercase

from ... import format as fmt
from ...results import FigureMaterial
from ..figures import Figures, alternative_row, alternative_rows, check_rows, counted, key_figures, words
from .appendix import APPENDIX
from .model import Figure, KeyRow, Report, Section, Table

__all__ = ["SECTIONS", "build_report"]

def _plots():
    """The figure module, imported on first use: matplotlib takes about a second to import, and an
    audit without a report draws nothing."""
    from . import plots

    return plots


SectionFunction = Callable[[Figures, "FigureMaterial | None"], Section]


def _check(f: Figures, check_id: str) -> dict | None:
    return next((c for c in f.get("checks") or [] if c["id"] == check_id), None)


def _state(f: Figures, check_id: str) -> str:
    """How a section's answer is marked: the outcome of the check it rests on."""
    c = _check(f, check_id)
    if c is None:
        return ""
    return ("passed" if c["passed"] else "failed") if c["required"] else "advisory"


def _outcome(f: Figures, *check_ids: str) -> str:
    """``Passed: ... and ...`` / ``Failed: ...``: checks' outcomes in words, for a section's answer.

    Checks with the same outcome share one word (``Passed: a and b.``), so no word is said twice.
    """
    groups: dict[str, list[str]] = {}
    for check_id in check_ids:
        c = _check(f, check_id)
        if c is not None:
            word = ("Passed" if c["passed"] else "Failed") + ("" if c["required"] else " (advisory)")
            groups.setdefault(word, []).append(c.get("outcome") or c["id"])
    return " ".join(f"{word}: {fmt.listed(found)}." for word, found in groups.items())


def _absent(section_id: str, title: str, block: str, meaning: str, references: tuple[str, ...] = ()) -> Section:
    return Section(
        section_id, title, meaning=(meaning,), references=references, absent=True,
        notes=(f"Not computed in this audit (the audit has no {block} figures), so nothing is shown here.",),
    )


def _figures(material: FigureMaterial | None, *makers) -> tuple[Figure, ...]:
    """The figures whose raw material is at hand (a maker returns None without it)."""
    if material is None:
        return ()
    return tuple(fig for fig in (make(material) for make in makers) if fig is not None)


# ---------------------------------------------------------------------------------------------
# the sections


def _checks_section(f: Figures, material: FigureMaterial | None) -> Section:
    rows, marks = [], []
    for r in check_rows(f):
        rows.append((f"{r.name} ({r.id})", r.result, r.value, r.bar, r.reason))
        marks.append("failed" if not r.passed and r.required else "")
    return Section(
        "checks",
        "Why: each check and what it found",
        answer=counted(f) + ".",
        meaning=("The verdict is GO only when every required check passes; an advisory check is shown but does "
                 "not change the verdict. Each check holds one figure to a bar set by the policy.",),
        tables=(Table(("check (policy name)", "result", "figure", "bar", "reason"), tuple(rows),
                      marks=tuple(marks)),),
    )


_BOOTSTRAP_REFS = (
    "Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.",
    "Hall, P. (1988). Theoretical comparison of bootstrap confidence intervals. Annals of Statistics 16(3), "
    "927-953 (the studentized interval).",
)


def _returns_section(f: Figures, material: FigureMaterial | None) -> Section:
    sel = "results.bootstrap.selected"
    annual = f.annual
    rows = [("mean excess return", f.interval(f"{sel}.mean", as_percent=True),
             f.interval(f"{sel}.mean_annualized", as_percent=True) if annual else "n/a"),
            ("Sharpe ratio", f.interval(f"{sel}.sharpe"), f.interval(f"{sel}.sharpe_annualized") if annual else "n/a")]
    level = f"{f.level('settings.confidence')} {words('interval_method', f.get('settings.interval_method'))}"
    share = "results.bootstrap.long_run_share"
    facts = ((("share of the long-run variance the resamples reproduce (median configuration; lowest tenth)",
               f"{f.percent(f'{share}.median')}; {f.percent(f'{share}.lowest_decile')}"),)
             if f.has(f"{share}.median") else ())
    return Section(
        "returns",
        "Does the selected configuration earn more than the benchmark?",
        answer=_outcome(f, "mean_interval") + " " + (
            f"It earned {f.percent(f'{sel}.mean.estimate')} a window over the benchmark; the {level} interval "
            f"runs from {f.percent(f'{sel}.mean.low')} to {f.percent(f'{sel}.mean.high')}."),
        state=_state(f, "mean_interval"),
        meaning=("The block bootstrap redraws the record many times in blocks of consecutive windows, keeping fat "
                 "tails and serial dependence; the studentized interval takes its shape from the redraws and its "
                 "width from the long-run variance. These intervals do not allow for the search over "
                 "configurations: the next sections do.",),
        tables=(Table(("figure", "per window: estimate [interval]", "annualized: estimate [interval]"), tuple(rows),
                      caption=f"The selected configuration, {level} intervals"),),
        facts=facts,
        figures=_figures(material, lambda m: _plots().bootstrap_mean(f.doc, m), lambda m: _plots().cumulative_excess(f.doc, m)),
        references=_BOOTSTRAP_REFS,
    )


_SHARPE_REFS = (
    "Bailey, D. H. and Lopez de Prado, M. (2012). The Sharpe ratio efficient frontier. Journal of Risk "
    "15(2), 3-44 (probabilistic Sharpe ratio, minimum track record length).",
    "Bailey, D. H. and Lopez de Prado, M. (2014). The deflated Sharpe ratio: correcting for selection "
    "bias, backtest overfitting and non-normality. Journal of Portfolio Management 40(5), 94-107.",
)


def _sharpe_rows(f: Figures) -> list[tuple[str, str]]:
    s, d = "results.sharpe", "results.sharpe.deflated"
    annual = f.annual

    def both(path: str) -> str:
        return f.sharpe(path) + (f" ({f.sharpe(path + '_annualized')} annualized)" if annual else "")

    track = "results.sharpe.min_track_record"
    return [
        ("selected Sharpe ratio, per window", both(f"{s}.observed")),
        ("skewness; kurtosis (3 for normal returns)", f"{f.sharpe(f'{s}.skewness')}; {f.sharpe(f'{s}.kurtosis')}"),
        ("probability the true Sharpe ratio is above zero (probabilistic Sharpe ratio)",
         f.probability(f"{s}.probabilistic.probability")),
        ("trials counted", f"{f.number(f'{d}.declared_trials', 6)} declared; {f.number(f'{d}.effective_trials', 3)} "
         f"effective ({words('effective_trials_method', f.get(f'{d}.effective_trials_method'))}); the deflation "
         f"counts the {words('trials_used', f.get(f'{d}.trials_used'))} trials"),
        ("Sharpe ratio the best of the trials would reach by luck", both(f"{d}.benchmark_sharpe")),
        ("deflated Sharpe probability", f.probability(f"{d}.probability")),
        ("calibrated level for these trials (a test of size " + f.number(f"{d}.significance") + ")",
         f.probability(f"{d}.calibrated_level")),
        (f"minimum track record at {f.level(f'{track}.confidence')}",
         f"{f.number(f'{track}.observations')} windows" + (f" ({f.number(f'{track}.years', 3)} years)"
                                                           if f.has(f"{track}.years") else "")
         if f.has(f"{track}.observations") else "none: the Sharpe ratio is not above zero"),
    ]


def _sharpe_section(f: Figures, material: FigureMaterial | None) -> Section:
    title = "Is the Sharpe ratio more than the search alone would produce?"
    meaning = ("The deflated Sharpe ratio asks how likely the selected configuration's true Sharpe ratio is above "
               "the best the same number of trials would show with no skill at all, allowing for fat tails, skew "
               "and the length of the record. Every setting ever tried counts as a trial, not only this sweep's.")
    if not f.has("results.sharpe"):
        return _absent("sharpe", title, "Sharpe inference", meaning, _SHARPE_REFS)
    answer = _outcome(f, "deflated_sharpe", "track_record")
    curve = material.deflation_curve if material is not None else None
    figs = (_plots().deflated_by_trials(f.doc, curve),) if curve is not None else ()
    return Section(
        "sharpe", title, answer=answer, state=_state(f, "deflated_sharpe"), meaning=(meaning,),
        tables=(Table(("figure", "value"), tuple(_sharpe_rows(f)), caption="The Sharpe ratio after the search"),),
        figures=tuple(x for x in figs if x is not None), references=_SHARPE_REFS,
    )


_SNOOP_REFS = (
    "White, H. (2000). A reality check for data snooping. Econometrica 68(5), 1097-1126.",
    "Hansen, P. R. (2005). A test for superior predictive ability. Journal of Business & Economic "
    "Statistics 23(4), 365-380.",
    "Romano, J. P. and Wolf, M. (2005). Stepwise multiple testing as formalized data snooping. "
    "Econometrica 73(4), 1237-1282 (StepM).",
)

_STEPM_NAMED = 10


def _snooping_section(f: Figures, material: FigureMaterial | None) -> Section:
    title = "Could the best of this many configurations be luck?"
    meaning = ("These tests ask whether the best configuration beats the benchmark by more than the best of this "
               "many configurations would by chance alone, on the same resamples. StepM names every configuration "
               "that beats the benchmark after allowing for the search.")
    if not f.has("results.snooping"):
        return _absent("snooping", title, "data-snooping", meaning, _SNOOP_REFS)
    s, spa = "results.snooping", "results.snooping.spa"
    rows = (("White's reality check (means)", f.sharpe(f"{s}.reality_check.statistic"), f.pvalue(f"{s}.reality_check.pvalue")),
            (f"Hansen's SPA, consistent ({words('scale', f.get(f'{spa}.scale'))})", f.sharpe(f"{spa}.statistic"),
             f.pvalue(f"{spa}.pvalue")),
            ("Hansen's SPA, lower bound", f.sharpe(f"{spa}.statistic"), f.pvalue(f"{spa}.pvalue_lower")),
            ("Hansen's SPA, upper bound", f.sharpe(f"{spa}.statistic"), f.pvalue(f"{spa}.pvalue_upper")))
    names = f.get(f"{s}.stepm.significant") or []
    named = "; ".join(f.text(f"{s}.stepm.significant[{i}]") for i in range(min(len(names), _STEPM_NAMED)))
    more = " and more (in the appendix, the data-snooping tests under every scale)" if len(names) > _STEPM_NAMED else ""
    beat = "configuration beats" if len(names) == 1 else "configurations beat"
    notes = [
        f"StepM at {f.number(f'{s}.stepm.level')}: {f.count(f'{s}.stepm.significant')} {beat} the benchmark "
        "after allowing for the search" + (f": {named}{more}." if names else "."),
        f"The selected configuration's statistic is {f.sharpe(f'{s}.stepm.selected_statistic')} against StepM's "
        f"critical value {f.sharpe(f'{s}.stepm.selected_critical_value')}: "
        + ("it is among them." if f.get(f"{s}.selected_survives_stepm") else "it is not among them."),
    ]
    if f.get(f"{s}.reality_check.best") != f.get("selected.configuration"):
        notes.append("White's reality check ranks configurations by their mean excess return, not their Sharpe "
                     f"ratio, so its best configuration, {f.text(f'{s}.reality_check.best')}, is not the selected one.")
    return Section(
        "snooping", title, answer=_outcome(f, "data_snooping"), state=_state(f, "data_snooping"), meaning=(meaning,),
        tables=(Table(("test", "statistic", "p-value"), rows, caption="The best configuration against chance"),),
        notes=tuple(notes), figures=_figures(material, lambda m: _plots().sharpe_ranking(f.doc, m)),
        references=_SNOOP_REFS,
    )


_CSCV_REFS = (
    "Bailey, D. H., Borwein, J. M., Lopez de Prado, M. and Zhu, Q. J. (2017). The probability of backtest "
    "overfitting. Journal of Computational Finance 20(4), 39-69 (combinatorially symmetric cross-validation).",
)


def _overfitting_section(f: Figures, material: FigureMaterial | None) -> Section:
    title = "Does the in-sample winner keep winning out of sample?"
    meaning = ("CSCV cuts the record into blocks and splits them every possible way into two halves; in each split "
               "the best configuration of one half is looked up in the other. The probability of overfitting is the "
               "share of splits in which that winner falls to the bottom half; near 0.5 it cannot tell no edge from "
               "an edge many configurations share, so the check also reads how often the winner loses money.")
    if not f.has("results.overfitting"):
        return _absent("overfitting", title, "CSCV", meaning, _CSCV_REFS)
    o = "results.overfitting"
    rows = (
        ("probability of overfitting (the winner falls to the bottom half)",
         f"{f.probability(f'{o}.probability_of_overfitting')} (pure luck: {f.probability(f'{o}.null_probability_of_overfitting')})"),
        ("probability the winner loses money out of sample", f.probability(f"{o}.probability_of_loss")),
        ("degradation: out of sample = a + b x in sample",
         f"a = {f.sharpe(f'{o}.degradation.intercept')}, b = {f.sharpe(f'{o}.degradation.slope')}, "
         f"R\u00b2 = {f.sharpe(f'{o}.degradation.r_squared')}"),
        ("diagnosis", words("case", f.get(f"{o}.diagnosis.case"))),
        ("splits; blocks; ranked by", f"{f.whole(f'{o}.combinations')}; {f.whole(f'{o}.partitions')}; "
                                      f"{words('statistic', f.get(f'{o}.statistic'))}"),
    )
    return Section(
        "overfitting", title, answer=_outcome(f, "overfitting"), state=_state(f, "overfitting"), meaning=(meaning,),
        tables=(Table(("figure", "value"), rows, caption="CSCV"),),
        figures=_figures(material, lambda m: _plots().logit_histogram(f.doc, m), lambda m: _plots().degradation_scatter(f.doc, m)),
        references=_CSCV_REFS,
    )


def _tails_section(f: Figures, material: FigureMaterial | None) -> Section:
    title = "Did the winner escape the crashes its siblings took?"
    meaning = ("A strategy that sells insurance earns a steady premium and loses heavily in rare crashes; over a few "
               "years some configurations miss the crashes their siblings take, and picking the best record picks "
               "them. In each stress window (a large share of the configurations take a large loss) the selected "
               "configuration is charged at least the family's average loss, and its edge must still clear the "
               "data-snooping test's bar.")
    refs = ("Krasker, W. S. (1980). The 'peso problem' in testing the efficiency of forward exchange markets. "
            "Journal of Monetary Economics 6(2), 269-276.",)
    if not f.has("results.tails"):
        return _absent("tails", title, "family-tails", meaning, refs)
    t = "results.tails"
    windows = f.get(f"{t}.stress_windows") or []
    rows = (
        ("a large loss: beyond this many robust standard deviations", f.sharpe(f"{t}.threshold")),
        ("a stress window: at least this share of the configurations take one", f.percent(f"{t}.share")),
        ("stress windows; escaped by the selected configuration",
         f"{f.count(f'{t}.stress_windows')}; {f.whole(f'{t}.escaped')}"),
        ("mean excess return a window, as observed; charged with the family's losses",
         f"{f.percent(f'{t}.mean_observed')}; {f.percent(f'{t}.mean_adjusted')}"),
        ("charged record's statistic against the selection-adjusted bar",
         f"{f.sharpe(f'{t}.statistic')} against {f.sharpe(f'{t}.critical_value')}" if f.has(f"{t}.statistic")
         else f"nothing to charge (no stress window); the bar is {f.sharpe(f'{t}.critical_value')}"),
    )
    notes = ("Stress windows: " + ", ".join(f.text(f"{t}.stress_windows[{i}]") for i in range(len(windows))) + ".",
             ) if windows else ()
    return Section("tails", title, answer=_outcome(f, "family_tails"), state=_state(f, "family_tails"),
                   meaning=(meaning,), tables=(Table(("figure", "value"), rows, caption="The family's tails"),),
                   notes=notes, references=refs)


def _surface_section(f: Figures, material: FigureMaterial | None) -> Section:
    title = "Is the winner a lone peak on the parameter grid?"
    meaning = ("A real edge tends to extend to nearby settings; a lone good setting among weak neighbours is what "
               "selection luck looks like. The rule: an isolated peak is one whose grid neighbours (one step along one "
               "parameter) reach less than half its Sharpe ratio and stay within one standard error of zero.")
    figs = _figures(material, lambda m: _plots().sharpe_surface(f.doc, m))
    if not f.has("results.surface"):
        if not figs:
            return _absent("surface", title, "parameter-grid", meaning)
        return Section("surface", title, answer="The selected cell has no grid neighbours to compare with.",
                       meaning=(meaning,), figures=figs)
    s = "results.surface"
    rows = (
        ("parameters", ", ".join(f.text(f"{s}.parameters[{i}]") for i in range(len(f.get(f"{s}.parameters"))))),
        ("selected cell's Sharpe ratio, per window", f.sharpe(f"{s}.selected_sharpe")),
        ("its grid neighbours' mean Sharpe ratio (neighbours)",
         f"{f.sharpe(f'{s}.neighbour_mean_sharpe')} ({f.whole(f'{s}.neighbours')})"),
        ("gap, in bootstrap standard errors (standard error)",
         f"{f.sharpe(f'{s}.gap_in_standard_errors')} ({f.sharpe(f'{s}.standard_error')})"),
        ("isolated peak", "yes" if f.get(f"{s}.isolated_peak") else "no"),
    )
    return Section("surface", title, answer=_outcome(f, "parameter_surface"), state=_state(f, "parameter_surface"),
                   meaning=(meaning,), tables=(Table(("figure", "value"), rows, caption="The parameter grid"),),
                   figures=figs)


_TIME_REFS = (
    "Pesaran, M. H. and Timmermann, A. (1995). Predictability of stock returns: robustness and economic "
    "significance. Journal of Finance 50(4), 1201-1228 (model selection using only the data available at "
    "each date).",
    "Andrews, D. W. K. and Monahan, J. C. (1992). An improved heteroskedasticity and autocorrelation "
    "consistent covariance matrix estimator. Econometrica 60(4), 953-966.",
)


def _time_rows(f: Figures) -> list[tuple[str, str]]:
    """The figures the evidence over time rests on (the rest go to the appendix)."""
    rows: list[tuple[str, str]] = []
    st, walk = "results.stability", "results.walk_forward"
    if f.has(st):
        rows += [
            (f"mean excess return a window, before the recent period ({f.whole(f'{st}.early.windows')} windows)",
             f.estimate(f"{st}.early.mean", as_percent=True)),
            (f"the same, recent period ({f.whole(f'{st}.recent.windows')} windows from "
             f"{f.text(f'{st}.recent.first_window')})", f.estimate(f"{st}.recent.mean", as_percent=True)),
            ("change a window; t-ratio (long-run); one-sided p-value",
             f"{f.percent(f'{st}.change.difference')}; {f.sharpe(f'{st}.change.statistic')}; "
             f"{f.pvalue(f'{st}.change.pvalue')}"),
        ]
    if f.has(walk):
        rows += [
            (f"walk-forward record: mean a window ({f.whole(f'{walk}.windows')} windows from "
             f"{f.text(f'{walk}.first_window')})", f.estimate(f"{walk}.mean", as_percent=True)),
            ("walk-forward test: t-ratio; one-sided p-value",
             f"{f.sharpe(f'{walk}.test.statistic')}; {f.pvalue(f'{walk}.test.pvalue')}"),
            ("walk-forward picks: changes of pick; configurations picked",
             f"{f.whole(f'{walk}.pick_changes')}; {f.whole(f'{walk}.distinct_picks')}"),
        ]
    return rows


def _time_section(f: Figures, material: FigureMaterial | None) -> Section:
    title = "Is the edge still alive? The evidence over time"
    meaning = (
        "Every full-sample figure is blind to time: an edge that appeared only recently and one that has died "
        "get the same mean, Sharpe ratio and p-values. The decay test asks whether the recent period earned less "
        "than the windows before it, beyond what chance allows under serial dependence. The walk-forward record "
        "judges the selection procedure rather than the winner chosen with hindsight: before each window after a "
        "warm-up, the configuration with the best Sharpe ratio so far is picked and its return in that window "
        "recorded, with what the picks' own last returns foretold taken out and the family's crash losses "
        "charged."
    )
    if not (f.has("results.stability") or f.has("results.walk_forward")):
        return _absent("time", title, "time-structure", meaning, _TIME_REFS)
    said = f.text("results.time_meaning") if f.has("results.time_meaning") else ""
    # The sentence on the evidence over time says what each test found; the outcome adds only which failed.
    ran = [c for c in (_check(f, "edge_decay"), _check(f, "walk_forward")) if c]
    failed = [c["id"] for c in ran if not c["passed"]]
    if failed or not said:
        head = _outcome(f, *failed) if failed else _outcome(f, "edge_decay", "walk_forward")
    else:
        head = "Passed" + ("" if any(c["required"] for c in ran) else " (advisory)") + "."
    answer = " ".join(x for x in (head, said) if x)
    states = {_state(f, "edge_decay"), _state(f, "walk_forward")} - {""}
    state = next((s for s in ("failed", "advisory", "passed") if s in states), "")
    return Section(
        "time", title, answer=answer, state=state,
        meaning=(meaning,), tables=(Table(("figure", "value"), tuple(_time_rows(f)), caption="The edge over time"),),
        figures=_figures(material, lambda m: _plots().edge_over_time(f.doc, m),
                         lambda m: _plots().walk_forward_curve(f.doc, m)),
        references=_TIME_REFS,
    )


def _what_if_section(f: Figures, material: FigureMaterial | None) -> Section:
    title = "What would change the verdict?"
    meaning = ("The verdict re-decided with one choice changed at a time, among the choices an analyst could "
               "reasonably have made otherwise, with the same checks and thresholds. A go that one of them turns "
               "into a no-go is fragile. Choices that only change which figures the verdict reads cost nothing; the "
               "bootstrap kind and the block length need new resamples, drawn from the same seed.")
    if not f.has("sensitivity"):
        return _absent("what_if", title, "sensitivity", meaning)
    rows, marks = [], []
    every = alternative_rows(f) + ([alternative_row(f, "sensitivity.control")] if f.has("sensitivity.control") else [])
    for r in every:
        rows.append((r.question, r.as_audited, r.setting, r.verdict, r.moved))
        marks.append("flips" if r.flips else "")
    notes = [f"Alternatives that draw new resamples use {f.whole('sensitivity.resamples')} of them, from the "
             "audit's seed."]
    if f.has("sensitivity.control"):
        notes.append("The last row re-runs the audit's own choices with that many resamples: "
                     + ("its verdict differs, so the verdict sits within Monte Carlo noise of its threshold."
                        if f.get("sensitivity.control.flips") else "its verdict is the audit's, so the rows above "
                        "differ by their choice, not by the number of resamples."))
    return Section(
        "what_if", title, answer=f.text("sensitivity.summary"),
        state=("fragile" if f.get("verdict") == "go" else "hangs") if f.get("sensitivity.flipped_by") else "holds",
        meaning=(meaning,),
        tables=(Table(("choice", "as audited", "alternative", "verdict", "what moved"), tuple(rows),
                      marks=tuple(marks), caption="One choice changed at a time"),),
        notes=tuple(notes),
    )


def _baseline_section(f: Figures, material: FigureMaterial | None) -> Section | None:
    if not f.has("baseline"):
        return None
    rows, marks = [], []
    for i, g in enumerate(f.get("baseline.gated") or []):
        p = f"baseline.gated[{i}]"
        rows.append((f.text(f"{p}.label") if g.get("label") else g["key"], f.number(f"{p}.before"), f.number(f"{p}.after"), f.number(f"{p}.change"),
                     f.number(f"{p}.allowed_worsening"), "exceeded" if g["exceeded"] else ""))
        marks.append("failed" if g["exceeded"] else "")
    return Section(
        "baseline", "Has the evidence weakened since the baseline?",
        answer=_outcome(f, "baseline_drift"), state=_state(f, "baseline_drift"),
        facts=(("baseline file", f.text("baseline.path")), ("its verdict", f.text("baseline.verdict_before")),
               ("its selected configuration", f.text("baseline.selected_before"))),
        tables=(Table(("gated figure", "before", "after", "change", "allowed worsening", ""), tuple(rows),
                      marks=tuple(marks), caption="The gated figures"),),
    )


def _data_facts(f: Figures) -> list[tuple[str, str]]:
    ppy = (f"{f.number('input.periods_per_year')} ({f.text('input.periods_per_year_source')}"
           + (f", {f.text('input.frequency')})" if f.has("input.frequency") else ")")
           if f.annual else "unknown: figures are per window")
    p = "input.plausibility"
    facts = [
        ("input file", f.text("input.path")),
        ("fingerprint (sha256)", f.text("input.sha256") if f.has("input.sha256") else "n/a (not read from a file)"),
        ("layout; units in the file", f"{f.text('input.layout')}; {f.text('input.units')}"),
        ("configurations x windows", f"{f.whole('input.configurations')} x {f.whole('input.windows')}"),
        ("first and last window", f"{f.text('input.first_window')} to {f.text('input.last_window')}"),
        ("periods per year", ppy),
        ("rows read", f.whole("input.reading.rows")),
        ("largest excess return in one window", f"{f.percent(f'{p}.largest_window_return')} "
         f"({f.text(f'{p}.largest_window_configuration')}, window {f.text(f'{p}.largest_window')})"),
        ("largest annualized volatility", f"{f.percent(f'{p}.largest_volatility_annualized')} "
         f"({f.text(f'{p}.largest_volatility_configuration')})" if f.has(f"{p}.largest_volatility_annualized")
         else "not judged (periods per year unknown)"),
        ("resampling", f"{f.whole('settings.resamples')} {words('bootstrap', f.get('settings.bootstrap'))} bootstrap "
                       f"resamples, block length {f.sharpe('settings.block_length')} windows, seed "
                       f"{f.whole('settings.seed')}"),
    ]
    if f.has("ledger"):
        used = f.number("ledger.trials_used", 6) if f.has("ledger.trials_used") else "n/a"
        declared = f.number("ledger.trials_declared", 6) if f.has("ledger.trials_declared") else "none"
        facts.append(("trial ledger", f"{f.text('ledger.path')}: {f.whole('ledger.records_before')} records of "
                                      f"{f.whole('ledger.sweeps_recorded')} distinct sweeps, "
                                      f"{f.whole('ledger.trials_counted')} trials counted; declared {declared}; "
                                      f"the deflation counts {used}"))
    return facts


def _data_section(f: Figures, material: FigureMaterial | None) -> Section:
    command = f.get("reproduce.command")
    tool = f"{f.text('tool.name')} {f.text('tool.version')}"
    return Section(
        "data",
        "What was audited, and how to reproduce it",
        meaning=("Each value is one window's excess return (strategy minus benchmark) of one configuration. The "
                 "fingerprint identifies the exact data audited. The command above, run with the same tool version "
                 f"({tool}) on the same data, recomputes every figure of this report.",),
        facts=tuple(_data_facts(f)),
        code=f.text("reproduce.command") if command else None,
        notes=() if command else ("The command that produced this audit was not recorded.",),
    )


#: The report's sections in reading order; a function may return None to leave its section out.
SECTIONS: tuple[Callable[[Figures, "FigureMaterial | None"], "Section | None"], ...] = (
    _checks_section,
    _what_if_section,
    _returns_section,
    _sharpe_section,
    _snooping_section,
    _overfitting_section,
    _tails_section,
    _time_section,
    _surface_section,
    _baseline_section,
    _data_section,
)


# ---------------------------------------------------------------------------------------------
# the first screen


def _key_rows(f: Figures) -> tuple[KeyRow, ...]:
    return tuple(KeyRow(k.label, k.per_window, k.annualized or "", k.note) for k in key_figures(f))


def build_report(doc: dict, material: FigureMaterial | None = None) -> Report:
    """The report from the audit JSON document and (for figures) their raw material.

    Every string of the document is made visible first (:func:`~sweepaudit.render.safe.visible`):
    no control character or direction override from the user's data reaches the report.
    """
    f = Figures(doc)
    sections = tuple(s for s in (fn(f, material) for fn in SECTIONS) if s is not None)
    present = (s for s in (fn(f, material) for fn in APPENDIX) if s is not None)
    appendix = tuple(replace(s, title=f"{letter}. {s.title}") for letter, s in zip(ascii_uppercase, present))
    flips = tuple(r.short for r in alternative_rows(f) if r.flips) if f.has("sensitivity") else ()
    level = f"{f.level('settings.confidence')} {words('interval_method', f.get('settings.interval_method'))} intervals"
    return Report(
        title=f"Sweep audit: {f.text('input.path')}",
        verdict=f.get("verdict"),
        sentence=f.text("summary.sentence"),
        counted=counted(f),
        preliminary=f.text("summary.preliminary_reason") if f.get("preliminary") else None,
        selected=f.text("selected.configuration"),
        rule=f.text("selected.rule"),
        key_figures=_key_rows(f),
        interval_words=level,
        what_if=f.text("sensitivity.summary") if f.has("sensitivity") else "",
        what_if_flips=flips,
        warnings=tuple(f.text(f"warnings[{i}]") for i in range(len(f.get("warnings") or []))),
        caution=f.text("caution"),
        input_path=f.text("input.path"),
        sections=sections,
        appendix=appendix,
        tool=f"{f.get('tool.name', 'sweepaudit')} {f.get('tool.version', '')}".strip(),
        shown={k: tuple(v) for k, v in f.used.items()},
    )

