"""The report's sections, one small function per block of the audit JSON document.

:func:`build_report` turns the document (the contract) plus the :class:`~sweepaudit.results.FigureMaterial`
(the raw material of the figures: bootstrap distributions, CSCV splits, the return series, the
deflated-Sharpe curve) into a :class:`~sweepaudit.render.report.model.Report`. The Markdown and HTML
renderers only lay it out, so both formats show the same sections, figures and numbers, each number
formatted by :func:`sweepaudit.format.figure`.

A block the audit did not produce gives a section that says plainly that it is absent; a figure
whose raw material is absent is left out.
"""

from __future__ import annotations

from collections.abc import Callable

from ...format import figure, pct
from ...results import FigureMaterial
from ..safe import visible_document
from .model import Figure, Report, Section, Table

__all__ = ["SECTIONS", "build_report", "headline"]


def _plots():
    """The figure module, imported on first use: matplotlib takes about a second to import, and an
    audit without a report draws nothing."""
    from . import plots

    return plots


def _pct(value) -> str:
    """A fraction as a percentage, for prose only (tables carry the fraction through :func:`figure`)."""
    return pct(value, missing="n/a")


def _interval(block: dict | None) -> str:
    if not block:
        return "n/a"
    return f"{figure(block['estimate'])} [{figure(block['low'])}, {figure(block['high'])}]"


# ---------------------------------------------------------------------------------------------
# sections: one small function per block
# ---------------------------------------------------------------------------------------------

SectionFunction = Callable[[dict, "FigureMaterial | None"], Section]


def _annual(doc: dict) -> bool:
    return doc["input"].get("periods_per_year") is not None


def _data_section(doc: dict, material: FigureMaterial | None) -> Section:
    inp, st = doc["input"], doc["settings"]
    ppy = inp.get("periods_per_year")
    facts = [
        ("input file", inp["path"]),
        ("fingerprint (sha256)", inp.get("sha256") or "n/a (not read from a file)"),
        ("layout", inp["layout"]),
        ("configurations", figure(inp["configurations"])),
        ("windows", figure(inp["windows"])),
        ("first window", str(inp["first_window"])),
        ("last window", str(inp["last_window"])),
        (
            "periods per year",
            f"{figure(ppy)} ({inp.get('periods_per_year_source', 'given')}"
            + (f", {inp['frequency']})" if inp.get("frequency") else ")")
            if ppy is not None
            else "unknown: figures are per window",
        ),
        ("units in the file", inp["units"]),
        ("figures in this report", inp.get("figures_in", "fractions (0.01 = 1%)")),
    ]
    if inp.get("parameters"):
        facts.append(("parameters swept", ", ".join(inp["parameters"])))
    facts += [
        ("resamples", figure(st["resamples"])),
        ("bootstrap", st["bootstrap"]),
        ("block length (windows)", figure(st["block_length"])),
        ("block length chosen by", st.get("block_length_source", "n/a")),
        ("seed", figure(st["seed"])),
    ]
    choice = st.get("block_length_choice")
    if choice:
        facts += [
            ("automatic block length of the selected configuration", figure(choice["selected"])),
            ("75th percentile of the family's automatic block lengths", figure(choice["family_quantile"])),
            ("automatic block length of the average series", figure(choice["average_series"])),
            ("configurations examined for the block length", figure(choice["configurations_examined"])),
            ("family's median AR(1) coefficient", figure(choice["ar_coefficient"])),
            ("share of the long-run variance the block length keeps (AR(1) prediction)", figure(choice["predicted_share"])),
        ]
    return Section(
        "data",
        "The data",
        meaning=(
            "Each value is one window's excess return (strategy minus benchmark) of one configuration "
            "of the sweep. The fingerprint identifies the exact file audited: a different file, even one "
            "byte different, has a different fingerprint.",
        ),
        facts=tuple(facts),
        references=(
            "Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.",
            "Politis, D. N. and White, H. (2004). Automatic block-length selection for the dependent "
            "bootstrap. Econometric Reviews 23(1), 53-70 (correction: Patton, Politis and White 2009).",
        ),
    )


def _selection_section(doc: dict, material: FigureMaterial | None) -> Section:
    sel = doc["selected"]
    figs: list[Figure] = []
    notes: list[str] = []
    if material is not None:
        figs.append(_plots().sharpe_ranking(doc, material))
        surface = _plots().sharpe_surface(doc, material)
        if surface is not None:
            figs.append(surface)
        block = doc["results"].get("surface")
        if block is not None and material.surface is not None:
            notes.append(_surface_words(block, material.surface.neighbours_reach_half))
        figs.append(_plots().cumulative_excess(doc, material))
    n = doc["input"]["configurations"]
    return Section(
        "selection",
        "The chosen configuration and how it was picked",
        meaning=(
            f"The audit judges one configuration out of {figure(n)}: {sel['configuration']}. "
            f"It was chosen as: {sel['rule']}.",
            "Picking the best of many settings flatters it: some of its edge is the luck of the draw. "
            "The later sections measure how much of the edge survives once the search is allowed for.",
        ),
        facts=(("selected configuration", sel["configuration"]), ("chosen as", sel["rule"])),
        figures=tuple(figs),
        notes=tuple(notes),
        references=(
            "Bailey, D. H., Borwein, J. M., Lopez de Prado, M. and Zhu, Q. J. (2014). Pseudo-mathematics "
            "and financial charlatanism: the effects of backtest overfitting on out-of-sample performance. "
            "Notices of the AMS 61(5), 458-471.",
        ),
    )


def _surface_words(block: dict, reach_half: bool) -> str:
    """The parameter-surface note; ``reach_half`` says which part of the rule a non-isolated cell fails."""
    words = (
        f"The selected cell's Sharpe ratio ({figure(block['selected_sharpe'])} per window) compares with a mean of "
        f"{figure(block['neighbour_mean_sharpe'])} over its {block['neighbours']} grid neighbours (one step along one "
        f"parameter), a gap of {figure(block['gap_in_standard_errors'])} bootstrap standard errors "
        f"(standard error {figure(block['standard_error'])}). The rule: an isolated peak is one whose "
        "neighbours reach less than half its Sharpe ratio and stay within one standard error of zero."
    )
    if block["isolated_peak"]:
        return words + (
            " It is an ISOLATED PEAK among weak neighbours: a setting that works alone while its "
            "neighbours do not is what selection luck looks like; treat the edge with suspicion."
        )
    return words + " It is not an isolated peak: nearby settings " + (
        "reach at least half its Sharpe ratio." if reach_half
        else "show an edge of their own, more than one standard error above zero."
    )


def _listing_facts(listing: dict | None) -> tuple[tuple[str, str], ...]:
    """Which configurations the table lists, and a summary of all of them."""
    if not listing:
        return ()
    return (
        ("configurations in the table", f"{figure(listing['listed'])} of {figure(listing['of'])}: {listing['rule']}"),
        ("configurations whose mean interval lies above zero", figure(listing["mean_interval_above_zero"])),
        ("Sharpe ratio per window over the configurations: minimum, 5%, 25%, median, 75%, 95%, maximum",
         ", ".join(figure(v) for v in listing["sharpe_quantiles"].values())),
    )


def _every_configuration(doc: dict, level: str) -> Table:
    """Every configuration's intervals, per window (and annualized when the periods are known)."""
    boot = doc["results"]["bootstrap"]
    annual = _annual(doc)
    columns = ["configuration", "mean", "mean low", "mean high", "Sharpe", "Sharpe low", "Sharpe high"]
    if annual:
        columns += ["annualized Sharpe", "annualized low", "annualized high"]
    all_rows = []
    for c in boot["configurations"]:
        row = [c["configuration"]] + [figure(c["mean"][k]) for k in ("estimate", "low", "high")]
        row += [figure(c["sharpe"][k]) for k in ("estimate", "low", "high")]
        if annual:
            sa = c.get("sharpe_annualized") or {}
            row += [figure(sa.get(k)) for k in ("estimate", "low", "high")]
        all_rows.append(tuple(row))
    return Table(
        tuple(columns),
        tuple(all_rows),
        caption=f"Every configuration, per window ({level} intervals)",
        collapsed=len(all_rows) > 60,
        highlight=next((i for i, c in enumerate(boot["configurations"])
                        if c["configuration"] == doc["selected"]["configuration"]), None),
    )


def _intervals_section(doc: dict, material: FigureMaterial | None) -> Section:
    st = doc["settings"]
    boot = doc["results"]["bootstrap"]
    sel = boot["selected"]
    level = _pct(st["confidence"])
    rows = [
        ("mean excess return", _interval(sel["mean"]), _interval(sel.get("mean_annualized"))),
        ("Sharpe ratio", _interval(sel["sharpe"]), _interval(sel.get("sharpe_annualized"))),
    ]
    selected_table = Table(
        ("figure", "per window: estimate [low, high]", "annualized: estimate [low, high]"),
        tuple(rows),
        caption=f"Selected configuration, {level} {st['interval_method']} block-bootstrap intervals",
    )
    every_table = _every_configuration(doc, level)
    share = boot.get("long_run_share") or {}
    facts = (
        ("share of the long-run variance the resamples reproduce (median over configurations)", figure(share.get("median"))),
        ("the same, lowest tenth of the configurations", figure(share.get("lowest_decile"))),
    ) if share else ()
    facts += _listing_facts(boot.get("listing"))
    figs = [_plots().bootstrap_mean(doc, material)] if material is not None else []
    m = sel["mean"]
    words = (
        f"The selected configuration earned {_pct(m['estimate'])} per window over the benchmark; "
        f"resampling the windows in blocks puts the {level} range at {_pct(m['low'])} to {_pct(m['high'])}."
    )
    words += (
        " The range stays above zero." if m["low"] is not None and m["low"] > 0
        else " The range reaches zero or below: the data do not rule out no edge at all."
    )
    return Section(
        "intervals",
        "How sure are the returns? Confidence intervals",
        meaning=(
            words,
            "The block bootstrap redraws the track record many times in blocks of consecutive windows, "
            "keeping fat tails and serial dependence, and reads the interval off the redrawn means. "
            "These intervals do not allow for the search over configurations: the sections below do.",
        ),
        facts=facts,
        tables=(selected_table, every_table),
        figures=tuple(figs),
        references=(
            "Efron, B. and Tibshirani, R. (1993). An Introduction to the Bootstrap. Chapman & Hall, ch. 13.",
            "Davison, A. C. and Hinkley, D. V. (1997). Bootstrap Methods and their Application. Cambridge "
            "University Press, sections 5.2 and 8.2.",
            "Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.",
        ),
    )


def _absent(section_id: str, title: str, block: str, meaning: str, references: tuple[str, ...]) -> Section:
    return Section(
        section_id,
        title,
        meaning=(meaning,),
        notes=(f"Not computed in this audit: the JSON has no results.{block} block, so nothing is shown here.",),
        references=references,
        absent=True,
    )


_SHARPE_REFS = (
    "Bailey, D. H. and Lopez de Prado, M. (2012). The Sharpe ratio efficient frontier. Journal of Risk "
    "15(2), 3-44 (probabilistic Sharpe ratio, minimum track record length).",
    "Bailey, D. H. and Lopez de Prado, M. (2014). The deflated Sharpe ratio: correcting for selection "
    "bias, backtest overfitting and non-normality. Journal of Portfolio Management 40(5), 94-107.",
)


def _sharpe_section(doc: dict, material: FigureMaterial | None) -> Section:
    title = "The Sharpe ratio after allowing for the search"
    meaning = (
        "The deflated Sharpe ratio asks how likely the selected configuration's true Sharpe ratio is above "
        "the best one would expect from the same number of trials with no skill at all, allowing for fat "
        "tails and skew and the length of the record."
    )
    block = doc["results"].get("sharpe")
    if block is None:
        return _absent("sharpe", title, "sharpe", meaning, _SHARPE_REFS)
    psr = block.get("probabilistic") or {}
    dsr = block.get("deflated") or {}
    mtr = block.get("min_track_record") or {}
    facts = [
        ("observed Sharpe ratio (per window)", figure(block.get("observed"))),
        ("windows", figure(block.get("observations"))),
        ("skewness", figure(block.get("skewness"))),
        ("kurtosis (raw, 3 for normal)", figure(block.get("kurtosis"))),
        ("probabilistic Sharpe ratio: benchmark", figure(psr.get("benchmark"))),
        ("probabilistic Sharpe ratio: probability", figure(psr.get("probability"))),
        ("trials counted", figure(dsr.get("trials"))),
        ("effective trials", figure(dsr.get("effective_trials"))),
        ("variance of the trials' Sharpe ratios", figure(dsr.get("trial_sharpe_variance"))),
        ("best Sharpe ratio expected from luck (per window)", figure(dsr.get("benchmark_sharpe"))),
        ("deflated Sharpe ratio: probability", figure(dsr.get("probability"))),
        ("minimum track record (windows)", figure(mtr.get("observations"))),
        ("minimum track record (years)", figure(mtr.get("years"))),
    ]
    known = {"observed", "observations", "skewness", "kurtosis", "probabilistic", "deflated", "min_track_record"}
    facts += _extra_facts(psr, {"benchmark", "probability"}, prefix="probabilistic Sharpe ratio: ")
    facts += _extra_facts(dsr, {"trials", "effective_trials", "trial_sharpe_variance", "benchmark_sharpe",
                                "probability"}, prefix="deflated Sharpe ratio: ")
    facts += _extra_facts(mtr, {"observations", "years"}, prefix="minimum track record: ")
    facts += _extra_facts(block, known)
    words = [meaning]
    if dsr.get("probability") is not None:
        words.append(
            f"Here the probability is {_pct(dsr['probability'])} with {figure(dsr.get('trials'))} trials counted: "
            + ("strong evidence of skill beyond the search." if dsr["probability"] >= 0.95
               else "not enough to tell skill from the luck of the search.")
        )
    curve = _plots().deflated_by_trials(doc, material.deflation_curve) if material is not None else None
    return Section(
        "sharpe",
        title,
        meaning=tuple(words),
        facts=tuple(facts),
        figures=(curve,) if curve is not None else (),
        references=_SHARPE_REFS,
    )


_CSCV_REFS = (
    "Bailey, D. H., Borwein, J. M., Lopez de Prado, M. and Zhu, Q. J. (2017). The probability of backtest "
    "overfitting. Journal of Computational Finance 20(4), 39-69 (combinatorially symmetric cross-validation).",
)


def _overfitting_section(doc: dict, material: FigureMaterial | None) -> Section:
    title = "Backtest overfitting: does the in-sample winner keep winning? (CSCV)"
    meaning = (
        "The track record is cut into blocks and split every possible way into two halves. In each split "
        "the best configuration of one half is looked up in the other half. The probability of overfitting "
        "is the share of splits where that winner falls to the bottom half out of sample."
    )
    block = doc["results"].get("overfitting")
    if block is None:
        return _absent("overfitting", title, "overfitting", meaning, _CSCV_REFS)
    deg = block.get("degradation") or {}
    facts = [
        ("blocks (partitions)", figure(block.get("partitions"))),
        ("splits (combinations)", figure(block.get("combinations"))),
        ("probability of overfitting", figure(block.get("probability_of_overfitting"))),
        ("probability of an out-of-sample loss", figure(block.get("probability_of_loss"))),
        ("degradation slope", figure(deg.get("slope"))),
        ("degradation intercept", figure(deg.get("intercept"))),
    ]
    extra_deg = {k: v for k, v in deg.items() if k not in ("slope", "intercept")}
    facts += _extra_facts(extra_deg, set(), prefix="degradation ")
    logits = block.get("logits") or {}
    quant_rows = tuple((str(k), figure(v)) for k, v in logits.items()) if isinstance(logits, dict) else ()
    tables = (Table(("logit quantile", "value"), quant_rows, caption="Quantiles of the split logits"),) if quant_rows else ()
    facts += _extra_facts(block, {"partitions", "combinations", "probability_of_overfitting",
                                  "probability_of_loss", "degradation", "logits"})
    words = [meaning]
    p = block.get("probability_of_overfitting")
    if p is not None:
        words.append(
            f"Here the in-sample winner lands in the bottom half out of sample in {_pct(p)} of splits"
            + (" (a coin flip or worse: no evidence the selection picks skill)." if p >= 0.5 else ".")
        )
    words.append(
        "The degradation line relates the winner's out-of-sample statistic to its in-sample one across "
        "splits. When one configuration wins nearly every split its two halves share one record, so the "
        "slope sits near -1 by construction; what matters is whether the out-of-sample statistic stays "
        "above zero (the intercept and the probability of loss), not the sign of the slope."
    )
    figs: list[Figure] = []
    if material is not None:
        for maker in (_plots().logit_histogram, _plots().degradation_scatter):
            f = maker(doc, material)
            if f is not None:
                figs.append(f)
    return Section("overfitting", title, meaning=tuple(words), facts=tuple(facts), tables=tables,
                   figures=tuple(figs), references=_CSCV_REFS)


_SNOOP_REFS = (
    "White, H. (2000). A reality check for data snooping. Econometrica 68(5), 1097-1126.",
    "Hansen, P. R. (2005). A test for superior predictive ability. Journal of Business & Economic "
    "Statistics 23(4), 365-380.",
    "Romano, J. P. and Wolf, M. (2005). Stepwise multiple testing as formalized data snooping. "
    "Econometrica 73(4), 1237-1282 (StepM).",
)


def _snooping_section(doc: dict, material: FigureMaterial | None) -> Section:
    title = "Could the best result be luck? Data-snooping tests"
    meaning = (
        "These tests ask whether the best configuration beats the benchmark by more than the best of this "
        "many configurations would by chance alone, using the same block-bootstrap resamples. A small "
        "p-value (below the policy's significance level) is evidence of a real edge."
    )
    block = doc["results"].get("snooping")
    if block is None:
        return _absent("snooping", title, "snooping", meaning, _SNOOP_REFS)
    rc = block.get("reality_check") or {}
    spa = block.get("spa") or {}
    stepm = block.get("stepm") or {}
    rows = [
        ("reality check (White 2000)", figure(rc.get("statistic")), figure(rc.get("pvalue"))),
        ("superior predictive ability, consistent (Hansen 2005)", figure(spa.get("statistic")), figure(spa.get("pvalue"))),
        ("superior predictive ability, lower", figure(spa.get("statistic")), figure(spa.get("pvalue_lower"))),
        ("superior predictive ability, upper", figure(spa.get("statistic")), figure(spa.get("pvalue_upper"))),
    ]
    table = Table(("test", "statistic", "p-value"), tuple(rows), caption="Tests of the best configuration against chance")
    significant = list(stepm.get("significant") or [])
    notes = [
        f"StepM (Romano and Wolf 2005) at level {figure(stepm.get('level'))}: "
        + (f"{len(significant)} configuration(s) beat the benchmark after allowing for the search: "
           + "; ".join(significant) if significant else "no configuration beats the benchmark after allowing for the search.")
    ]
    facts = _extra_facts(rc, {"statistic", "pvalue"}, prefix="reality check ")
    facts += _extra_facts(spa, {"statistic", "pvalue", "pvalue_lower", "pvalue_upper"}, prefix="SPA ")
    facts += _extra_facts(stepm, {"significant", "level"}, prefix="StepM ")
    facts += _extra_facts(block, {"reality_check", "spa", "stepm"})
    return Section("snooping", title, meaning=(meaning,), facts=tuple(facts), tables=(table,),
                   notes=tuple(notes), references=_SNOOP_REFS)


def _tails_section(doc: dict, material: FigureMaterial | None) -> Section:
    title = "Did the winner escape its family's crashes? The family's tails"
    meaning = (
        "A strategy that sells insurance earns a steady premium and loses heavily in rare crashes; over a few "
        "years some configurations miss the crashes their siblings take, and picking the best record picks "
        "them. A stress window is one in which a large share of the configurations take a large loss; the "
        "selected configuration is charged at least the family's average loss in each of them, and its edge "
        "must still clear the data-snooping test's bar."
    )
    refs = ("Krasker, W. S. (1980). The 'peso problem' in testing the efficiency of forward exchange markets. "
            "Journal of Monetary Economics 6(2), 269-276.",)
    block = doc["results"].get("tails")
    if block is None:
        return _absent("tails", title, "tails", meaning, refs)
    windows = block.get("stress_windows") or []
    facts = (
        ("large loss: more than this many robust standard deviations", figure(block.get("threshold"))),
        ("stress window: at least this share of the configurations take one", figure(block.get("share"))),
        ("stress windows", figure(len(windows))),
        ("stress windows the selected configuration escaped", figure(block.get("escaped"))),
        ("mean excess return per window, as observed", figure(block.get("mean_observed"))),
        ("mean excess return per window, charged", figure(block.get("mean_adjusted"))),
        ("charged record's statistic (normal scale)", figure(block.get("statistic"))),
        ("selection-adjusted critical value", figure(block.get("critical_value"))),
        ("passes", figure(block.get("passed"))),
    )
    notes = (("Stress windows: " + ", ".join(windows)),) if windows else ("No stress window in this sweep.",)
    return Section("tails", title, meaning=(meaning,), facts=facts, notes=notes, references=refs)


_TIME_REFS = (
    "Pesaran, M. H. and Timmermann, A. (1995). Predictability of stock returns: robustness and economic "
    "significance. Journal of Finance 50(4), 1201-1228 (model selection using only the data available at "
    "each date).",
    "Chow, G. C. (1960). Tests of equality between sets of coefficients in two linear regressions. "
    "Econometrica 28(3), 591-605.",
    "Andrews, D. W. K. and Monahan, J. C. (1992). An improved heteroskedasticity and autocorrelation "
    "consistent covariance matrix estimator. Econometrica 60(4), 953-966.",
)


def _value_cells(value) -> tuple[str, str, str]:
    """Estimate, low and high of an interval block; a plain number has no bounds."""
    if isinstance(value, dict):
        return figure(value.get("estimate")), figure(value.get("low")), figure(value.get("high"))
    return figure(value), "", ""


def _periods_table(block: dict, annual: bool) -> Table:
    """The thirds, the windows before the recent period and the recent period, each with its figures."""
    keys = ("mean", "sharpe") + (("mean_annualized", "sharpe_annualized") if annual else ())
    columns = ["period", "first window", "last window", "windows", "t-ratio (long-run)", "degrees of freedom"]
    for key in keys:
        name = key.replace("_", " ")
        columns += [name, f"{name} low", f"{name} high"]
    rows = []
    for p in (*block["thirds"], block["early"], block["recent"]):
        row = [p["period"], str(p["first_window"]), str(p["last_window"]), figure(p["windows"]), figure(p["t_ratio"]),
               figure(p["degrees_of_freedom"])]
        for key in keys:
            row += _value_cells(p[key])
        rows.append(tuple(row))
    return Table(tuple(columns), tuple(rows), caption="The selected configuration's record, period by period "
                 "(means as fractions; intervals from the audit's resamples for the two periods the test compares)")


def _rolling_table(block: dict) -> Table:
    """The rolling Sharpe ratio window by window (folded in HTML: it is the figure's raw numbers)."""
    rolling = block["rolling"]
    first = rolling["windows"]  # the first stretch ends at this window (1-based)
    rows = tuple((figure(first + i), figure(v)) for i, v in enumerate(rolling.get("sharpe") or []))
    return Table(("stretch ends at window number", "Sharpe ratio per window"), rows, collapsed=True,
                 caption=f"The rolling {figure(rolling['windows'])}-window Sharpe ratio, window by window "
                         f"(the first stretch ends at {rolling['first_window']})")


def _walk_forward_table(block: dict, annual: bool) -> Table:
    keys = ("mean", "sharpe") + (("mean_annualized", "sharpe_annualized") if annual else ())
    rows = tuple((key.replace("_", " "), *_value_cells(block[key])) for key in keys)
    return Table(("walk-forward record", "estimate", "low", "high"), rows,
                 caption="The walk-forward record's mean excess return and Sharpe ratio with their intervals")


def _time_section(doc: dict, material: FigureMaterial | None) -> Section:
    title = "Is the edge still alive? The evidence over time"
    meaning = (
        "Every full-sample figure is blind to time: an edge that appeared only recently and the same edge "
        "reversed in time, one that has died, get the same mean, Sharpe ratio and p-values. This section cuts "
        "the selected configuration's record into thirds and a rolling window, and tests whether the recent "
        "period earned less than the windows before it, beyond what chance allows under serial dependence "
        "(the difference of the two means over its long-run standard error, read against Student's t)."
    )
    walk_meaning = (
        "The walk-forward record judges the selection procedure rather than the winner chosen with "
        "hindsight: before each window after a warm-up, the configuration with the best Sharpe ratio so "
        "far is picked and its return in that window recorded. The test of its mean takes out what the "
        "picks' own last returns foretold (autocorrelation that overlapping positions or stale prices "
        "create, which no re-pick can trade) and charges the family's crash losses, as the family-tails "
        "check does."
    )
    block, walk = doc["results"].get("stability"), doc["results"].get("walk_forward")
    if block is None and walk is None:
        return _absent("time", title, "stability", meaning, _TIME_REFS)
    annual = _annual(doc)
    tables, facts, figs, notes = [], [], [], []
    if block is not None:
        tables += [_periods_table(block, annual), _rolling_table(block)]
        facts += _extra_facts({**block, "rolling": {k: v for k, v in block["rolling"].items() if k != "sharpe"}},
                              {"thirds", "early", "recent"})
    else:
        notes.append("Not computed in this audit: the JSON has no results.stability block.")
    if walk is not None:
        tables.append(_walk_forward_table(walk, annual))
        facts += _extra_facts(walk, {"mean", "sharpe", "mean_annualized", "sharpe_annualized"},
                              prefix="walk-forward: ")
    else:
        notes.append("Not computed in this audit: the JSON has no results.walk_forward block.")
    if material is not None:
        figs = [f for f in (_plots().edge_over_time(doc, material), _plots().walk_forward_curve(doc, material)) if f]
    sentence = doc["results"].get("time_meaning")
    words = (meaning,) + ((walk_meaning,) if walk is not None else ()) + ((sentence,) if sentence else ())
    return Section("time", title, meaning=words,
                   facts=tuple(facts), tables=tuple(tables), figures=tuple(figs), notes=tuple(notes),
                   references=_TIME_REFS)


def _extra_facts(block: dict, known: set, prefix: str = "") -> list[tuple[str, str]]:
    """Figures a block holds beyond the ones a section names, so no figure of the JSON goes unshown."""
    out: list[tuple[str, str]] = []
    for key, value in block.items():
        if key in known:
            continue
        label = prefix + key.replace("_", " ")
        if isinstance(value, dict):
            out += _extra_facts(value, set(), prefix=label + ": ")
        elif isinstance(value, list) and any(isinstance(v, dict) for v in value):
            for i, item in enumerate(value, start=1):
                out += _extra_facts(item, set(), prefix=f"{label} {i}: ")
        elif isinstance(value, list):
            out.append((label, ", ".join(figure(v) if not isinstance(v, str) else v for v in value) or "none"))
        elif isinstance(value, str):
            out.append((label, value))
        else:
            out.append((label, figure(value)))
    return out


def _checks_section(doc: dict, material: FigureMaterial | None) -> Section:
    rows = tuple(
        (
            c["id"],
            "passed" if c["passed"] else "FAILED",
            "required" if c.get("required", True) else "advisory",
            figure(c.get("value")),
            figure(c.get("threshold")),
            c["reason"],
        )
        for c in doc["checks"]
    )
    policy = doc.get("policy") or {}
    prow = []
    for key, value in policy.items():
        shown = ", ".join(value) if isinstance(value, list) else (value if isinstance(value, str) else figure(value))
        prow.append((key.replace("_", " "), shown))
    return Section(
        "checks",
        "The policy and each check",
        meaning=(
            "The verdict is GO only when every required check passes; advisory checks are shown but do not "
            "change the verdict. Each check quotes the figure it measured and the threshold it was held to.",
        ),
        tables=(
            Table(("check", "result", "kind", "value", "threshold", "reason"), rows, caption="Checks"),
            Table(("policy setting", "value"), tuple(prow), caption="Policy applied"),
        ),
    )


def _warnings_section(doc: dict, material: FigureMaterial | None) -> Section:
    notes = tuple(doc["warnings"]) or ("No warnings.",)
    return Section(
        "warnings",
        "Warnings",
        meaning=("What the audit noticed about the data or the methods that a reader should weigh.",),
        notes=notes,
    )


def _reproduce_section(doc: dict, material: FigureMaterial | None) -> Section:
    rep = doc.get("reproduce") or {}
    tool = doc.get("tool") or {}
    facts = (
        ("seed", figure(rep.get("seed"))),
        ("tool version", f"{tool.get('name', 'sweepaudit')} {rep.get('version') or tool.get('version')}"),
        ("schema", doc.get("schema", "n/a")),
        ("input fingerprint (sha256)", doc["input"].get("sha256") or "n/a"),
    )
    command = rep.get("command")
    return Section(
        "reproduce",
        "How to reproduce this audit",
        meaning=(
            "Run this command on the same file (same fingerprint) with the same tool version: it recomputes "
            "every figure of this report exactly. Add --json PATH or --report PATH to write the outputs.",
        ),
        facts=facts,
        code=command if command else None,
        notes=() if command else ("The command that produced this audit was not recorded.",),
    )


SECTIONS: tuple[SectionFunction, ...] = (
    _data_section,
    _selection_section,
    _intervals_section,
    _sharpe_section,
    _overfitting_section,
    _snooping_section,
    _tails_section,
    _time_section,
    _checks_section,
    _warnings_section,
    _reproduce_section,
)


def headline(doc: dict) -> tuple[tuple[str, str], ...]:
    """The key figures of the first screen (the report's and the notebook view's), with their intervals."""
    sel = doc["results"]["bootstrap"]["selected"]
    annual = _annual(doc)
    out = [
        ("mean excess return per window", _interval(sel["mean"])),
        ("Sharpe ratio per window", _interval(sel["sharpe"])),
    ]
    if annual:
        out.insert(1, ("mean excess return, annualized", _interval(sel.get("mean_annualized"))))
        out.append(("Sharpe ratio, annualized", _interval(sel.get("sharpe_annualized"))))
    sh = doc["results"].get("sharpe")
    if sh and (sh.get("deflated") or {}).get("probability") is not None:
        out.append(("deflated Sharpe ratio probability", figure(sh["deflated"]["probability"])))
    ov = doc["results"].get("overfitting")
    if ov and ov.get("probability_of_overfitting") is not None:
        out.append(("probability of overfitting", figure(ov["probability_of_overfitting"])))
    surface = doc["results"].get("surface")
    if surface is not None:
        out.append((
            "parameter surface",
            "ISOLATED PEAK among weak neighbours" if surface["isolated_peak"] else "not an isolated peak",
        ))
    return tuple(out)


def build_report(doc: dict, material: FigureMaterial | None = None) -> Report:
    """The report's sections from the audit JSON document and (for figures) their raw material.

    Every string of the document is made visible first (:func:`~sweepaudit.render.safe.visible`):
    no control character or direction override from the user's data reaches the report.
    """
    doc = visible_document(doc)
    go = doc["verdict"] == "go"
    words = (
        "The evidence supports the selected configuration's edge under the policy applied."
        if go
        else "The evidence does not support committing capital to the selected configuration."
    )
    tool = doc.get("tool") or {}
    return Report(
        title=f"Sweep audit: {doc['input']['path']}",
        verdict=doc["verdict"],
        verdict_words=words,
        selected=doc["selected"]["configuration"],
        rule=doc["selected"]["rule"],
        reasons=tuple(doc["reasons"]),
        caution=doc["caution"],
        headline=headline(doc),
        input_path=doc["input"]["path"],
        sections=tuple(fn(doc, material) for fn in SECTIONS),
        tool=f"{tool.get('name', 'sweepaudit')} {tool.get('version', '')}".strip(),
    )


