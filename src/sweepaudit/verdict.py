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

from .format import pct, prob, sig
from .policy import Policy
from .results import BaselineComparison, Check, Evidence, Verdict

__all__ = ["check", "CHECKS", "decide"]


CheckFunction = Callable[[Evidence, Policy, "BaselineComparison | None"], "Check | None"]
CHECKS: dict[str, CheckFunction] = {}


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
        reason = f"The track record has {t} windows, at least the policy's minimum of {need}."
    else:
        reason = (
            f"The track record has only {t} windows, fewer than the policy's minimum of {need}: "
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
            f"{p.largest_window_configuration!r} moves {pct(p.largest_window_return)} in window {p.largest_window!r}, "
            f"at or beyond the policy's {pct(bound)} in one window"
        )
    vol = p.largest_volatility_annualized
    if vol is not None and vol > vol_bound:
        found.append(
            f"{p.largest_volatility_configuration!r} has an annualised volatility of {pct(vol)}, beyond the "
            f"policy's {pct(vol_bound)}"
        )
    if not found:
        vol_text = f" and no annualised volatility above {pct(vol_bound)}" if vol is not None else (
            " (volatility not judged: periods per year unknown)")
        reason = (f"No excess return reaches {pct(bound)} in one window (largest {pct(p.largest_window_return)})"
                  f"{vol_text}: the values look like returns in the stated units.")
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
    level = pct(evidence.intervals.confidence)
    ok = iv.low > 0
    name = evidence.sweep.configurations[k]
    if ok:
        reason = (
            f"The {level} block-bootstrap interval for the mean excess return of {name!r} lies above "
            f"zero (lower end {sig(iv.low)} per window)."
        )
    else:
        reason = (
            f"The {level} block-bootstrap interval for the mean excess return of {name!r} reaches "
            f"down to {sig(iv.low)} per window, at or below zero: the data do not rule out that it "
            "earns nothing over the benchmark."
        )
    return Check("mean_interval", ok, iv.low, 0.0, reason)


@check("deflated_sharpe")
def _deflated_sharpe(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    inf = evidence.sharpe
    if inf is None:
        return None
    d = inf.deflated
    if policy.deflation_threshold == "calibrated":
        need = inf.deflated_level
        bar = (f"the calibrated level {sig(need, 3)} (the probability that makes this check a "
               f"{pct(policy.significance)} test for {sig(d.trials, 6)} trials)")
    else:
        need = policy.min_deflated_probability
        bar = f"the policy's fixed {sig(need, 3)}"
    ok = d.probability >= need
    luck = (
        f"the best of {sig(d.trials, 6)} trials with no edge would reach a Sharpe ratio of about "
        f"{sig(d.benchmark_sharpe)} per window by luck"
    )
    if ok:
        reason = (
            f"Deflated Sharpe probability {sig(d.probability, 3)} reaches {bar}: {luck}, and the selected "
            f"Sharpe ratio of {sig(d.sharpe)} clears it by enough."
        )
    else:
        reason = (
            f"Deflated Sharpe probability {sig(d.probability, 3)} is below {bar}: {luck}, so the selected "
            f"Sharpe ratio of {sig(d.sharpe)} is not clearly more than selection luck."
        )
    return Check("deflated_sharpe", ok, d.probability, need, reason)


@check("track_record")
def _track_record(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    inf = evidence.sharpe
    if inf is None:
        return None
    t = evidence.sweep.n_windows
    need = inf.min_track_record_observations
    level = pct(inf.confidence)
    if need is None:
        return Check(
            "track_record",
            False,
            float(t),
            None,
            f"The selected Sharpe ratio is not above zero, so no track record, however long, would "
            f"show a positive Sharpe ratio at {level} confidence.",
        )
    ok = t >= need
    if ok:
        reason = (
            f"The track record of {t} windows is at least the minimum track record length of "
            f"{sig(need)} windows needed to show a positive Sharpe ratio at {level} confidence."
        )
    else:
        reason = (
            f"The track record of {t} windows is shorter than the minimum track record length of "
            f"{sig(need)} windows needed to show a positive Sharpe ratio at {level} confidence, "
            "given its skewness and kurtosis: wait for more out-of-sample windows."
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
            f"{g.figure.label} ({g.key}) {verb} from {sig(g.before)} to {sig(g.after)}, by "
            f"{sig(g.worsening)}, more than the {sig(g.allowed)} the policy allows "
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
            f"the largest move was {worst.figure.label} ({worst.key}), worse by {sig(worst.worsening)} "
            f"within the allowed {sig(worst.allowed)}"
        )
    else:
        detail = "none of them got worse"
    reason = (
        f"Against the baseline {where}, no gated figure worsened by more than the policy allows "
        f"({len(judged)} compared; {detail})."
    )
    return Check("baseline_drift", True, worst.worsening, worst.allowed, reason)


@check("overfitting")
def _overfitting(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    d = evidence.overfitting_diagnosis
    if d is None:
        return None
    meaning = {
        "robust": "picking the in-sample winner holds up out of sample",
        "shared_edge": "several configurations share the edge, so the choice among them matters "
        "little but the edge itself holds up out of sample",
        "overfit": "the in-sample winner is a product of the selection and does not hold up out of sample",
        "no_edge": "nothing in the sweep holds up out of sample",
    }[d.case]
    reason = f"CSCV finds this sweep {d.case.replace('_', ' ')}: {d.reason}; {meaning}."
    return Check("overfitting", d.passed, d.probability_of_loss, d.max_probability_of_loss, reason)


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
    level = policy.significance
    n = evidence.sweep.n_configurations
    name = "White's reality check" if sn.gating == "reality_check" else "Hansen's SPA test (consistent p-value)"
    stepm = sn.gating_stepm
    k = evidence.selected_index
    selected = evidence.sweep.configurations[k]
    statistic = float(stepm.statistics[k])
    critical = stepm.critical_value_for(k)
    kept = k in stepm.significant
    ok = p <= level and kept
    family = (
        f"{name} on {_SCALE_WORDS[sn.scale]}: p = {prob(p)}, "
        + ("at or below" if p <= level else "above")
        + f" the policy's {sig(level, 6)}"
    )
    if kept:
        step = (f"StepM at {sig(level, 6)} keeps {selected!r} among the {len(stepm.significant)} configuration(s) "
                f"that beat the benchmark (its statistic {sig(statistic, 3)} exceeds the critical value "
                f"{sig(critical, 3)} for the best of {n})")
    else:
        step = (f"StepM at {sig(level, 6)} does not find {selected!r} itself beating the benchmark (its statistic "
                f"{sig(statistic, 3)} against the critical value {sig(critical, 3)} for the best of {n}; "
                f"{len(stepm.significant)} configuration(s) survive)")
    if ok:
        reason = f"{family}, and {step}: its edge is more than the best of {n} configurations could show by luck."
    else:
        reason = f"{family}; {step}: the selected edge is not clearly more than the luck of picking the best of {n}."
    return Check("data_snooping", ok, p, level, reason)


@check("family_tails")
def _family_tails(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    test = evidence.tails
    if test is None or not test.stress.applicable:
        return None
    stress = test.stress
    selected = evidence.selected
    if stress.windows.size == 0:
        reason = (
            f"No window is a stress window (one in which at least {pct(stress.share)} of the configurations lose "
            f"more than {sig(stress.threshold, 3)} robust standard deviations): the family shows no shared "
            f"crash that {selected!r} could have escaped by luck."
        )
        return Check("family_tails", True, None, test.critical_value, reason)
    windows = stress.windows.size
    if not stress.escaped:
        reason = (
            f"{selected!r} lost at least its family's average in each of the {windows} stress window(s) (windows in "
            f"which at least {pct(stress.share)} of the configurations lost more than {sig(stress.threshold, 3)} "
            "robust standard deviations): it escaped no shared loss by luck."
        )
        return Check("family_tails", True, test.statistic, test.critical_value, reason)
    escaped = f"escaped {stress.escaped} of the {windows} stress window(s) in which its family took large losses"
    charged = (f"charged the family's average loss there, its mean excess return goes from "
               f"{sig(stress.mean_observed)} to {sig(stress.mean_adjusted)} per window")
    if test.passed:
        reason = (f"{selected!r} {escaped}; {charged}, and its edge still clears the selection-adjusted bar "
                  f"({sig(test.statistic, 3)} against {sig(test.critical_value, 3)}).")
    else:
        reason = (f"{selected!r} {escaped}; {charged}, and its edge no longer clears the selection-adjusted bar "
                  f"({sig(test.statistic, 3)} against {sig(test.critical_value, 3)}): its record may owe its "
                  "edge to missing crashes its siblings took (the peso problem).")
    return Check("family_tails", test.passed, test.statistic, test.critical_value, reason)


def _window_label(evidence: Evidence, position: int) -> str:
    return str(evidence.sweep.windows[position])


@check("walk_forward")
def _walk_forward(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    walk = evidence.walk_forward
    if walk is None:
        return None
    level = policy.significance
    ok = walk.pvalue <= level
    looks = "all earlier windows" if walk.lookback is None else f"the {walk.lookback} windows before it"
    record = (
        f"Re-picking the configuration with the best Sharpe ratio on {looks} and trading it in the next window, "
        f"from window {_window_label(evidence, walk.warmup)!r} on ({walk.windows} windows, the pick changing "
        f"{walk.pick_changes} times), earned {pct(walk.mean)} per window"
    )
    adjust = f"with what the picks' last returns foretold (AR(1) coefficient {sig(walk.persistence, 3)}) taken out"
    if walk.stress_charge > 0:
        adjust += (f" and the family's stress losses charged ({walk.stress_windows} stress window(s) in the record, "
                   f"{sig(walk.stress_windows_expected, 3)} at the whole sample's rate; {pct(walk.stress_charge)} per "
                   "window)")
    test = f"t = {sig(walk.statistic, 3)}, one-sided p = {prob(walk.pvalue)}"
    if ok:
        reason = (f"{record}; {adjust}, its mean is above zero ({test}, at or below {sig(level, 6)}): the "
                  "selection procedure itself earns out of sample.")
    else:
        reason = (f"{record}; {adjust}, its mean is not clearly above zero ({test}, above {sig(level, 6)}): "
                  "picking the winner as one goes has not been shown to pay out of sample.")
    return Check("walk_forward", ok, walk.pvalue, level, reason)


@check("edge_decay")
def _edge_decay(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    st = evidence.stability
    if st is None:
        return None
    level = policy.significance
    ok = st.pvalue > level
    periods = (
        f"the recent {st.recent.windows} windows (from {_window_label(evidence, st.recent.start)!r}) average "
        f"{pct(st.recent.mean)} per window against {pct(st.early.mean)} over the {st.early.windows} before"
    )
    test = (f"change {pct(st.difference)} per window, t = {sig(st.statistic, 3)} against the long-run standard "
            f"error, one-sided p = {prob(st.pvalue)}")
    if ok:
        reason = (f"For {evidence.selected!r}, {periods} ({test}, above {sig(level, 6)}): the recent evidence is "
                  "not significantly worse than the early evidence.")
    else:
        reason = (f"For {evidence.selected!r}, {periods} ({test}, at or below {sig(level, 6)}): the recent "
                  "evidence is significantly worse than the early evidence, so the edge may have decayed; the "
                  "full-sample figures describe a past that may not last.")
    return Check("edge_decay", ok, st.pvalue, level, reason)


@check("parameter_surface")
def _parameter_surface(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    peak = evidence.surface
    if peak is None:
        return None
    ok = not peak.isolated
    if ok:
        reason = (
            f"The selected cell of the parameter grid is not an isolated peak: its grid neighbours average "
            f"a Sharpe ratio of {sig(peak.neighbour_mean)} per window against its {sig(peak.sharpe)}."
        )
    else:
        reason = (
            f"The selected cell is an isolated peak among weak neighbours (they average a Sharpe ratio of "
            f"{sig(peak.neighbour_mean)} per window against its {sig(peak.sharpe)}, within one standard "
            "error of zero): a setting that works alone is what selection luck looks like."
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
