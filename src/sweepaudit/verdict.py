"""Checks and the go / no-go verdict: evidence + policy (+ a baseline comparison) -> Verdict, once.

Each check is a small function registered with :func:`check`. It receives the evidence, the policy
and the comparison with a baseline audit (None without one) and returns a :class:`Check` (or
``None`` when it does not apply, e.g. a selection test on a single configuration). Adding a check
is one function here, its id in :data:`sweepaudit.policy.CHECK_IDS` and, when it should gate by
default, in the policy's ``required``.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import NamedTuple

from .format import interval, level, listed, number, p_is, percent, probability, pvalue, pvalue_floor, statistic, whole
from .policy import Policy
from .results import BaselineComparison, Check, Evidence, Verdict

__all__ = ["check", "CHECKS", "MEASURES", "Measure", "decide", "summary"]


CheckFunction = Callable[[Evidence, Policy, "BaselineComparison | None"], "Check | None"]
CHECKS: dict[str, CheckFunction] = {}


class Measure(NamedTuple):
    """What a check's ``value`` and ``threshold`` are, in words, and what its outcome means.

    ``kind`` is the number style (:data:`sweepaudit.format.STYLES`): ``count``, ``windows``,
    ``return``, ``probability``, ``pvalue`` (from resamples), ``test_pvalue`` (from a distribution),
    ``statistic`` or ``number``; ``passes_when`` says how the value
    must stand against the threshold: ``at least``, ``at most``, ``above`` or ``below``.
    ``passed`` and ``failed`` are the outcome in a few words, for the verdict's one sentence.
    """

    label: str
    kind: str
    passes_when: str
    passed: str
    failed: str


#: Each check's figure and outcome in words (the JSON ``checks`` block carries them).
MEASURES: dict[str, Measure] = {
    "enough_windows": Measure(
        "windows in the record", "count", "at least",
        "the record is long enough to judge", "the record is too short to judge"),
    "plausible_returns": Measure(
        "largest excess return in one window", "return", "below",
        "the values look like returns", "the values do not look like returns in the stated units"),
    "mean_interval": Measure(
        "lower end of the mean excess return's interval", "return", "above",
        "the mean excess return's interval lies above zero", "the mean excess return's interval reaches zero"),
    "deflated_sharpe": Measure(
        "deflated Sharpe probability", "probability", "at least",
        "the Sharpe ratio beats what the search alone would produce",
        "the Sharpe ratio is not clearly more than the search alone would produce"),
    "track_record": Measure(
        "windows in the record, against the minimum track record", "windows", "at least",
        "the record is longer than its minimum track record", "the record is shorter than its minimum track record"),
    "baseline_drift": Measure(
        "largest worsening against the baseline", "number", "at most",
        "the evidence held up against the baseline", "the evidence weakened against the baseline"),
    "overfitting": Measure(
        "probability of an out-of-sample loss (CSCV)", "probability", "at most",
        "the in-sample winner holds up out of sample", "the in-sample winner does not hold up out of sample"),
    "data_snooping": Measure(
        "data-snooping p-value", "pvalue", "at most",
        "the edge beats the luck of picking the best configuration",
        "the edge does not beat the luck of picking the best configuration"),
    "family_tails": Measure(
        "statistic of the record charged with the family's losses", "statistic", "above",
        "the edge does not come from missing the family's crashes",
        "the edge may come from missing crashes the family took"),
    "parameter_surface": Measure(
        "grid neighbours' mean Sharpe ratio", "statistic", "at least",
        "the selected cell is not an isolated peak", "the selected cell is an isolated peak"),
    "walk_forward": Measure(
        "walk-forward record's p-value (mean above zero)", "test_pvalue", "at most",
        "re-picking the winner as the windows came earned out of sample",
        "re-picking the winner as the windows came has not been shown to earn out of sample"),
    "edge_decay": Measure(
        "p-value of the recent period's fall", "test_pvalue", "above",
        "the recent evidence is not significantly worse than the early evidence",
        "the edge has faded in the recent period"),
}


def summary(verdict: Verdict) -> str:
    """The verdict in one sentence: how many required checks passed and what the outcome rests on.

    No-go names what each failed required check found; go, what the required checks found.
    """
    required = [c for c in verdict.checks if c.required]
    failed = [c for c in required if not c.passed]
    if not required:
        return "No-go: no required check ran, so nothing supports a go."
    if failed:
        found = listed([MEASURES[c.id].failed if c.id in MEASURES else f"{c.id} failed" for c in failed])
        return (f"No-go, with {whole(len(failed))} of {_plural(len(required), 'required check')} failed: "
                f"{found}.")
    weighty = sorted((c for c in required if c.id in MEASURES), key=lambda c: _WEIGHT.index(c.id)
                     if c.id in _WEIGHT else len(_WEIGHT))
    found = listed([MEASURES[c.id].passed for c in weighty[:3]])
    return f"Go, with all {_plural(len(required), 'required check')} passed: {found}."


# The checks a go rests on most, first: what the one sentence of a go names.
_WEIGHT = ("deflated_sharpe", "data_snooping", "overfitting", "mean_interval", "family_tails", "track_record",
           "walk_forward", "edge_decay", "baseline_drift", "parameter_surface", "plausible_returns", "enough_windows")


def _plural(count: int, word: str, words: str | None = None) -> str:
    """``1 configuration``, ``3 configurations``."""
    return f"{whole(count)} {word if count == 1 else (words or word + 's')}"


def check(check_id: str) -> Callable[[CheckFunction], CheckFunction]:
    """Register a check function under a stable id (order of registration = order of display)."""

    def register(fn: CheckFunction) -> CheckFunction:
        CHECKS[check_id] = fn
        return fn

    return register


@check("enough_windows")
def _enough_windows(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check:
    t = evidence.sweep.n_windows
    need = policy.min_windows
    ok = t >= need
    if ok:
        reason = f"The record has {whole(t)} windows, at least the policy's minimum of {whole(need)}."
    else:
        reason = (
            f"The record has only {whole(t)} windows, fewer than the policy's minimum of {whole(need)}: "
            "too short to support a decision; collect more out-of-sample windows."
        )
    return Check("enough_windows", ok, float(t), float(need), reason)


@check("plausible_returns")
def _plausible_returns(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check:
    # The reader already refuses levels, counters and dates whatever the units; this check judges
    # the size of what is left, which units or a leveraged book can blow up (Sweep.plausibility).
    p = evidence.sweep.plausibility
    bound, vol_bound = policy.max_window_return, policy.max_annualized_volatility
    found = []
    if p.largest_window_return >= bound:
        found.append(
            f"{p.largest_window_configuration!r} moves {percent(p.largest_window_return)} in window "
            f"{p.largest_window!r}, at or beyond the policy's {percent(bound)} in one window"
        )
    vol = p.largest_volatility_annualized
    if vol is not None and vol > vol_bound:
        found.append(
            f"{p.largest_volatility_configuration!r} has an annualized volatility of {percent(vol)}, beyond the "
            f"policy's {percent(vol_bound)}"
        )
    if not found:
        vol_text = f" and no annualized volatility is above {percent(vol_bound)}" if vol is not None else (
            " (volatility not judged: periods per year unknown)")
        reason = (f"No excess return reaches {percent(bound)} in one window (the largest is "
                  f"{percent(p.largest_window_return)}){vol_text}: the values look like returns in the stated units.")
        return Check("plausible_returns", True, p.largest_window_return, bound, reason)
    what = "; ".join(found)
    if policy.allow_implausible_returns:
        reason = f"Implausible returns allowed by the policy (allow_implausible_returns): {what}."
        return Check("plausible_returns", True, p.largest_window_return, bound, reason)
    reason = (
        f"Implausible returns: {what}. Check the units (--units percent or bps) and that the columns hold "
        "per-window returns, not prices or cumulative curves; a policy may allow such returns "
        "(allow_implausible_returns)."
    )
    return Check("plausible_returns", False, p.largest_window_return, bound, reason)


@check("mean_interval")
def _mean_interval(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check:
    k = evidence.selected_index
    iv = evidence.intervals.mean[k]
    confidence = level(evidence.intervals.confidence)
    ok = iv.low > 0
    name = evidence.sweep.configurations[k]
    figures = interval(iv.estimate, iv.low, iv.high, as_percent=True)
    if ok:
        reason = (
            f"The {confidence} block-bootstrap interval for the mean excess return of {name!r} lies above "
            f"zero: {figures} a window."
        )
    else:
        reason = (
            f"The {confidence} block-bootstrap interval for the mean excess return of {name!r} reaches zero "
            f"or below: {figures} a window, so the data do not rule out that it earns nothing over the "
            "benchmark."
        )
    return Check("mean_interval", ok, iv.low, 0.0, reason)


@check("deflated_sharpe")
def _deflated_sharpe(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    inf = evidence.sharpe
    if inf is None:
        return None
    d = inf.deflated
    trials = number(d.trials, 6)
    if policy.deflation_threshold == "calibrated":
        need = inf.deflated_level
        bar = (f"the calibrated level {probability(need)}, which makes this check a "
               f"{level(policy.significance)} test for {trials} trials")
    else:
        need = policy.min_deflated_probability
        bar = f"the policy's fixed level {probability(need)}"
    ok = d.probability >= need
    luck = f"the {statistic(d.benchmark_sharpe)} a window the best of {trials} trials with no edge would reach by luck"
    if ok:
        reason = (
            f"The deflated Sharpe probability is {probability(d.probability)}, at least {bar}: the selected "
            f"Sharpe ratio of {statistic(d.sharpe)} a window clears {luck}."
        )
    else:
        reason = (
            f"The deflated Sharpe probability is {probability(d.probability)}, below {bar}: the selected "
            f"Sharpe ratio of {statistic(d.sharpe)} a window is not clearly more than {luck}."
        )
    return Check("deflated_sharpe", ok, d.probability, need, reason)


@check("track_record")
def _track_record(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    inf = evidence.sharpe
    if inf is None:
        return None
    t = evidence.sweep.n_windows
    need = inf.min_track_record_observations
    confidence = level(inf.confidence)
    if need is None:
        return Check(
            "track_record",
            False,
            float(t),
            None,
            f"The selected Sharpe ratio is not above zero, so no record, however long, would show a "
            f"positive Sharpe ratio at {confidence} confidence.",
        )
    ok = t >= need
    if ok:
        reason = (
            f"The record of {whole(t)} windows is at least the minimum track record of {number(need)} windows "
            f"needed to show a positive Sharpe ratio at {confidence} confidence."
        )
    else:
        reason = (
            f"The record of {whole(t)} windows is shorter than the minimum track record of {number(need)} "
            f"windows needed to show a positive Sharpe ratio at {confidence} confidence, given its skewness "
            "and kurtosis: wait for more out-of-sample windows."
        )
    return Check("track_record", ok, float(t), float(need), reason)

@check("baseline_drift")
def _baseline_drift(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    # Present only when the audit was compared with a baseline audit (sweepaudit.baseline).
    comparison = baseline
    if comparison is None:
        return None
    where = comparison.path
    judged = [g for g in comparison.gated if g.allowed is not None]
    if not judged:
        # A truncated or foreign baseline must not switch the gate off silently.
        return Check(
            "baseline_drift", False, None, None,
            f"No gated figure is present in both this audit and the baseline {where}, so the gate cannot "
            "compare them: regenerate the baseline from an audit you trust.",
        )

    def ratio(g):
        if g.allowed > 0:
            return g.worsening / g.allowed
        return math.inf if g.worsening > 0 else (0.0 if g.worsening == 0 else -math.inf)

    def moved(g) -> str:
        verb = "fell" if g.figure.higher_is_better else "rose"
        return (
            f"{g.figure.label} ({g.key}) {verb} from {number(g.before)} to {number(g.after)}, by "
            f"{number(g.worsening)}, more than the {number(g.allowed)} the policy allows "
            f"({g.figure.margin_field})"
        )

    worst = max(judged, key=ratio)
    exceeded = [g for g in judged if g.exceeded]
    if exceeded:
        reason = (
            f"Against the baseline {where}, " + "; ".join(moved(g) for g in exceeded) + ": the evidence "
            "is weaker than at the baseline, so the gate fails even if every other check passes; "
            "review what changed before trusting this sweep."
        )
        return Check("baseline_drift", False, worst.worsening, worst.allowed, reason)
    if worst.worsening > 0:
        detail = (
            f"the largest move was {worst.figure.label} ({worst.key}), worse by {number(worst.worsening)} "
            f"within the allowed {number(worst.allowed)}"
        )
    else:
        detail = "none of them got worse"
    reason = (
        f"Against the baseline {where}, no gated figure worsened by more than the policy allows "
        f"({whole(len(judged))} compared; {detail})."
    )
    return Check("baseline_drift", True, worst.worsening, worst.allowed, reason)


@check("overfitting")
def _overfitting(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    d = evidence.overfitting_diagnosis
    if d is None:
        return None
    reason = _OVERFITTING_WORDS[d.case](d, evidence.sweep.n_configurations)
    return Check("overfitting", d.passed, d.probability_of_loss, d.max_probability_of_loss, reason)


def _cscv_loss(d, *, only: bool = False) -> str:
    allowed = "at most" if d.probability_of_loss <= d.max_probability_of_loss else "more than"
    return (f"loses money out of sample with probability {'only ' if only else ''}{probability(d.probability_of_loss)} "
            f"({allowed} the {probability(d.max_probability_of_loss)} allowed)")


def _cscv_strength(d, n: int) -> str:
    enough = d.in_sample_strength_share >= d.min_strength_share
    return (f"stands out beyond the best of {whole(n)} noise configurations in {'' if enough else 'only '}"
            f"{percent(d.in_sample_strength_share)} of splits ({'at least' if enough else 'below'} "
            f"{percent(d.min_strength_share)})")


def _cscv_pbo(d) -> str:
    side = "at most" if d.probability_of_overfitting <= d.max_probability_of_overfitting else "above"
    return (f"the probability of overfitting is {probability(d.probability_of_overfitting)} ({side} "
            f"{probability(d.max_probability_of_overfitting)})")


# One sentence for each case of the CSCV rule (methods.overfitting.overfitting_diagnosis).
_OVERFITTING_WORDS = {
    "robust": lambda d, n: (
        f"Across the CSCV splits the in-sample winner {_cscv_loss(d)} and {_cscv_pbo(d)}: picking the "
        "in-sample winner holds up out of sample."),
    "shared_edge": lambda d, n: (
        f"Across the CSCV splits the in-sample winner {_cscv_loss(d, only=True)}, although {_cscv_pbo(d)}: "
        "several configurations share the edge, so which of them is picked matters little, and the edge "
        "holds up out of sample."),
    "overfit": lambda d, n: (
        f"Across the CSCV splits the in-sample winner {_cscv_strength(d, n)} yet {_cscv_loss(d)}; "
        f"{_cscv_pbo(d)}: the winner is a product of the selection and does not hold up out of sample."),
    "no_edge": lambda d, n: (
        f"Across the CSCV splits the in-sample winner {_cscv_loss(d)} and {_cscv_strength(d, n)}; "
        f"{_cscv_pbo(d)}: nothing in the sweep holds up out of sample."),
}


_SCALE_WORDS = {
    "long-run": "each configuration's t-ratio against its long-run standard deviation",
    "bootstrap": "each configuration scaled by its bootstrap standard deviation",
    "none": "unscaled means",
}


@check("data_snooping")
def _data_snooping(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    sn = evidence.snooping
    if sn is None:
        return None
    p = sn.pvalue
    alpha = number(policy.significance)
    n = evidence.sweep.n_configurations
    name = "White's reality check" if sn.gating == "reality_check" else "Hansen's SPA test (consistent p-value)"
    stepm = sn.gating_stepm
    k = evidence.selected_index
    selected = evidence.sweep.configurations[k]
    stat, critical = float(stepm.statistics[k]), stepm.critical_value_for(k)
    kept = k in stepm.significant
    ok = p <= policy.significance and kept
    side = "at or below" if p <= policy.significance else "above"
    shown = pvalue(p, pvalue_floor(evidence.resamples.count))
    family = (f"{name} on {_SCALE_WORDS[sn.scale]} gives p {shown if shown.startswith('<') else '= ' + shown}, "
              f"{side} the policy's {alpha}")
    figures = f"its statistic {statistic(stat)} against the critical value {statistic(critical)} for the best of {whole(n)}"
    survivors = _plural(len(stepm.significant), "configuration")
    if kept:
        step = f"StepM at {alpha} keeps {selected!r} among the {survivors} that beat the benchmark ({figures})"
    else:
        step = (f"StepM at {alpha} does not find {selected!r} itself beating the benchmark ({figures}; "
                f"{survivors} survive{'s' if len(stepm.significant) == 1 else ''})")
    if ok:
        reason = f"{family}, and {step}: its edge is more than the best of {whole(n)} configurations could show by luck."
    else:
        reason = f"{family}; {step}: the selected edge is not clearly more than the luck of picking the best of {whole(n)}."
    return Check("data_snooping", ok, p, policy.significance, reason)


@check("family_tails")
def _family_tails(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    test = evidence.tails
    if test is None or not test.stress.applicable:
        return None
    stress = test.stress
    selected = evidence.selected
    large = (f"at least {percent(stress.share)} of the configurations lose more than "
             f"{number(stress.threshold)} robust standard deviations")
    if stress.windows.size == 0:
        reason = (
            f"No window is a stress window (one in which {large}): the family shows no shared crash that "
            f"{selected!r} could have escaped by luck."
        )
        return Check("family_tails", True, None, test.critical_value, reason)
    windows = _plural(int(stress.windows.size), "stress window")
    if not stress.escaped:
        where = "its only stress window" if stress.windows.size == 1 else f"each of its {windows}"
        reason = (
            f"{selected!r} lost at least its family's average in {where} (a window in which {large}): it "
            "escaped no shared loss by luck."
        )
        return Check("family_tails", True, test.statistic, test.critical_value, reason)
    escaped = (f"escaped {whole(stress.escaped)} of the {windows} in which its family took large losses "
               f"(windows in which {large})")
    charged = (f"charged the family's average loss there, its mean excess return goes from "
               f"{percent(stress.mean_observed)} to {percent(stress.mean_adjusted)} a window")
    bar = f"({statistic(test.statistic)} against {statistic(test.critical_value)})"
    if test.passed:
        reason = f"{selected!r} {escaped}; {charged}, and its edge still clears the selection-adjusted bar {bar}."
    else:
        reason = (f"{selected!r} {escaped}; {charged}, and its edge no longer clears the selection-adjusted bar "
                  f"{bar}: its record may owe its edge to missing crashes its siblings took (the peso problem).")
    return Check("family_tails", test.passed, test.statistic, test.critical_value, reason)


def _window_label(evidence: Evidence, position: int) -> str:
    return str(evidence.sweep.windows[position])


@check("walk_forward")
def _walk_forward(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    walk = evidence.walk_forward
    if walk is None:
        return None
    alpha = policy.significance
    ok = walk.pvalue <= alpha
    looks = "all earlier windows" if walk.lookback is None else f"the {whole(walk.lookback)} windows before it"
    record = (
        f"Re-picking the configuration with the best Sharpe ratio on {looks} and trading it in the next window, "
        f"from window {_window_label(evidence, walk.warmup)!r} on ({_plural(walk.windows, 'window')}, the pick "
        f"changing {_plural(walk.pick_changes, 'time')}), earned {percent(walk.mean)} a window"
    )
    adjust = f"with what the picks' last returns foretold (AR(1) coefficient {statistic(walk.persistence)}) taken out"
    if walk.stress_charge > 0:
        adjust += (f" and the family's stress losses charged ({_plural(walk.stress_windows, 'stress window')} in the "
                   f"record, {number(walk.stress_windows_expected, 3)} at the whole sample's rate; "
                   f"{percent(walk.stress_charge)} a window)")
    test = f"t = {statistic(walk.statistic)}, one-sided {p_is(walk.pvalue)}"
    if ok:
        reason = (f"{record}; {adjust}, its mean is above zero ({test}, at or below the policy's {number(alpha)}): "
                  "the selection procedure itself earns out of sample.")
    else:
        reason = (f"{record}; {adjust}, its mean is not clearly above zero ({test}, above the policy's "
                  f"{number(alpha)}): picking the winner as one goes has not been shown to pay out of sample.")
    return Check("walk_forward", ok, walk.pvalue, alpha, reason)


@check("edge_decay")
def _edge_decay(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    st = evidence.stability
    if st is None:
        return None
    alpha = policy.significance
    ok = st.pvalue > alpha
    periods = (
        f"the recent {_plural(st.recent.windows, 'window')} (from {_window_label(evidence, st.recent.start)!r}) "
        f"average {percent(st.recent.mean)} a window against {percent(st.early.mean)} over the "
        f"{whole(st.early.windows)} before"
    )
    test = (f"change {percent(st.difference)} a window, t = {statistic(st.statistic)} against the long-run standard "
            f"error, one-sided {p_is(st.pvalue)}")
    if ok:
        reason = (f"For {evidence.selected!r}, {periods} ({test}, above the policy's {number(alpha)}): the recent "
                  "evidence is not significantly worse than the early evidence.")
    else:
        reason = (f"For {evidence.selected!r}, {periods} ({test}, at or below the policy's {number(alpha)}): the "
                  "recent evidence is significantly worse than the early evidence, so the edge may have decayed; "
                  "the full-sample figures describe a past that may not last.")
    return Check("edge_decay", ok, st.pvalue, alpha, reason)


@check("parameter_surface")
def _parameter_surface(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    peak = evidence.surface
    if peak is None:
        return None
    ok = not peak.isolated
    verb = "averages" if peak.neighbours == 1 else "average"
    neighbours = (f"its {_plural(peak.neighbours, 'grid neighbour')} {verb} a Sharpe ratio of "
                  f"{statistic(peak.neighbour_mean)} a window against its {statistic(peak.sharpe)}")
    if ok:
        reason = f"The selected cell of the parameter grid is not an isolated peak: {neighbours}."
    else:
        reason = (
            f"The selected cell is an isolated peak among weak neighbours: {neighbours}, within one standard "
            "error of zero; a setting that works alone is what selection luck looks like."
        )
    # The rule's bar is the lower of its two parts: half the peak, and one standard error.
    return Check("parameter_surface", ok, peak.neighbour_mean, peak.threshold, reason)


def decide(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None = None) -> Verdict:
    """Run every registered check once; the verdict is go only when every required check passes.

    ``baseline`` is the comparison with an earlier audit (:func:`sweepaudit.baseline.compare_results`);
    without one the ``baseline_drift`` check does not apply.

    The reasons are ``"<check id>: <reason>"``: on no-go one per failed required check, on go one
    per required check.

    Checks the policy disables are not run; a check that is neither required nor disabled is
    advisory (reported, without effect on the verdict).
    """
    checks: list[Check] = []
    disabled = set(policy.disabled)
    for check_id, fn in CHECKS.items():
        if check_id in disabled:
            continue
        c = fn(evidence, policy, baseline)
        if c is None:
            continue
        checks.append(
            Check(c.id, c.passed, c.value, c.threshold, c.reason, required=check_id in policy.required)
        )
    failed = [c for c in checks if c.required and not c.passed]
    # Each reason names its check, so a reader of the reasons alone knows which test spoke.
    if not any(c.required for c in checks):
        return Verdict(
            "no-go",
            ("policy: no required check ran (the policy requires none, or disables them all), so "
             "nothing supports a go; require at least one check",),
            tuple(checks),
        )
    if failed:
        return Verdict("no-go", tuple(f"{c.id}: {c.reason}" for c in failed), tuple(checks))
    return Verdict("go", tuple(f"{c.id}: {c.reason}" for c in checks if c.required), tuple(checks))
