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
    need = policy.min_deflated_probability
    ok = d.probability >= need
    luck = (
        f"the best of {sig(d.trials, 6)} trials with no edge would reach a Sharpe ratio of about "
        f"{sig(d.benchmark_sharpe)} per window by luck"
    )
    if ok:
        reason = (
            f"Deflated Sharpe probability {sig(d.probability, 3)} reaches the policy's {sig(need, 3)}: "
            f"{luck}, and the selected Sharpe ratio of {sig(d.sharpe)} clears it with confidence."
        )
    else:
        reason = (
            f"Deflated Sharpe probability {sig(d.probability, 3)} is below the policy's {sig(need, 3)}: "
            f"{luck}, so the selected Sharpe ratio of {sig(d.sharpe)} is not clearly more than "
            "selection luck."
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


@check("data_snooping")
def _data_snooping(evidence: Evidence, policy: Policy, baseline: BaselineComparison | None) -> Check | None:
    sn = evidence.snooping
    if sn is None:
        return None
    p = sn.pvalue
    level = policy.significance
    n = evidence.sweep.n_configurations
    name = (
        "White's reality check" if sn.gating == "reality_check"
        else f"Hansen's SPA test ({'studentized, ' if sn.studentized else ''}consistent p-value)"
    )
    ok = p <= level
    stepm = sn.gating_stepm
    k = evidence.selected_index
    selected = evidence.sweep.configurations[k]
    survivors = len(stepm.significant)
    if k in stepm.significant:
        step_note = f"StepM keeps {selected!r} among the {survivors} configuration(s) that beat the benchmark."
    else:
        step_note = (
            f"StepM does not find {selected!r} itself beating the benchmark "
            f"({survivors} configuration(s) survive)."
        )
    if ok:
        reason = (
            f"{name}: p = {prob(p)} at or below the policy's {sig(level, 6)}: the best of the {n} configurations "
            f"beats the benchmark by more than the best of {n} could by luck. {step_note}"
        )
    else:
        reason = (
            f"{name}: p = {prob(p)} above the policy's {sig(level, 6)}: the best of the {n} configurations does "
            f"not beat the benchmark by more than the best of {n} could by luck. {step_note}"
        )
    return Check("data_snooping", ok, p, level, reason)


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
