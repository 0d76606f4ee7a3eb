"""What would change the verdict: the verdict re-decided under each reasonable alternative choice.

An audit makes choices an analyst could reasonably have made otherwise: the trial Sharpe variance
of the deflation, the trials it counts, the deflated check's bar, the Sharpe ratio's standard error,
the statistic CSCV ranks by, how the data-snooping tests scale each configuration, the interval
method, the block bootstrap and its block length. :func:`what_would_change` changes one choice at a
time, re-decides the verdict with the one :func:`~sweepaudit.verdict.decide` (same thresholds, same
checks) and reports which choices flip it. A go that one reasonable choice turns into a no-go is
*fragile*; a no-go that one choice turns into a go hangs on that choice.

This module decides verdicts and computes no statistics: the evidence under each choice comes from
:func:`sweepaudit.audit.reassess`, which re-runs only the methods the choice reaches. The cost:

* choices that only change which figures the verdict reads (the deflated bar, the snooping scale,
  the trial variance and count, the Sharpe variance: every variant is already part of the
  evidence or a closed form on it) cost next to nothing;
* the interval method re-reads the kept bootstrap distributions; the CSCV statistic runs CSCV again;
* the bootstrap kind and the block length need new resamples: they are drawn from the audit's seed,
  :data:`ALTERNATIVE_RESAMPLES` of them (or the audit's own count when smaller), and only the
  methods that read resamples run again. With fewer resamples than the audit, the audit's own
  choices are re-run at that count too (the *control*), so a difference that is only Monte Carlo
  noise shows as such. ``benchmarks/sensitivity_cost.py`` measures the cost.
* an audit that streamed over blocks of configurations (beyond its memory budget, or on Dask) kept
  only the selected configuration's bootstrap distributions: the interval method, the bootstrap kind
  and the block length would each be a whole new streamed audit, so they are left out and named in
  ``not_examined`` (and the summary), and the verdict is re-decided under the other choices only.

The baseline comparison, when there is one, is the audit's own (the drift check is not
recomputed).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable
from dataclasses import dataclass, replace

from .audit import reassess
from .engine import plan_blocks, side_by_side
from .format import number, probability
from .policy import Policy
from .results import Alternative, BaselineComparison, Check, CheckShift, Evidence, Sensitivity, Verdict
from .verdict import decide

__all__ = ["ALTERNATIVE_RESAMPLES", "CHOICES", "what_would_change"]

#: Resamples drawn for each alternative that needs new ones (the audit's own count when smaller).
ALTERNATIVE_RESAMPLES = 1_000

Change = tuple["Policy | None", "dict | None"]  # a new policy, and AuditSettings fields to replace


@dataclass(frozen=True)
class Choice:
    """One choice the audit made, its alternatives and the checks it reaches.

    ``current(evidence)`` is the audit's setting; ``alternatives(evidence)`` the other reasonable
    settings; ``change(evidence, setting)`` the policy and settings that make it; ``words(evidence,
    setting)`` a setting in words; ``needs`` the part of the evidence the choice reaches (the
    choice is left out when the audit has none); ``resampled`` whether it needs new resamples.
    """

    id: str
    question: str
    reaches: tuple[str, ...]
    current: Callable[[Evidence], str]
    alternatives: Callable[[Evidence], tuple[str, ...]]
    change: Callable[[Evidence, str], Change]
    words: Callable[[Evidence, str], str]
    recomputed: str
    needs: str = "intervals"
    resampled: bool = False


def _policy_choice(id: str, question: str, key: str, words: dict[str, str], reaches: tuple[str, ...],
                   recomputed: str, needs: str, *, others: Callable[[Evidence], tuple[str, ...]] | None = None
                   ) -> Choice:
    """A choice that is one policy key."""
    def alternatives(e: Evidence) -> tuple[str, ...]:
        return tuple(v for v in (others(e) if others else tuple(words)) if v != getattr(e.policy, key))

    return Choice(
        id, question, reaches,
        current=lambda e: str(getattr(e.policy, key)),
        alternatives=alternatives,
        change=lambda e, v: (e.policy.replace(**{key: v}), None),
        words=lambda e, v: words[v],
        recomputed=recomputed,
        needs=needs,
    )


def _bar_words(e: Evidence, setting: str) -> str:
    if setting == "fixed":
        return f"fixed level {probability(e.policy.min_deflated_probability)}, as in the paper"
    level = e.sharpe.deflated_level if e.sharpe is not None else None
    return f"calibrated level ({probability(level)}), a test of size {number(e.policy.significance)}"


def _interval_others(e: Evidence) -> tuple[str, ...]:
    # studentized or not: the percentile interval against the studentized one
    return ("percentile",) if e.intervals.method == "studentized" else ("studentized",)


_INTERVAL_WORDS = {"studentized": "studentized (bootstrap-t)", "percentile": "percentile",
                   "basic": "basic"}

_BOOTSTRAP_WORDS = {"stationary": "stationary", "circular": "circular block", "moving-block": "moving-block"}


def _block_lengths(e: Evidence) -> dict[str, float]:
    """The block length halved and doubled, within [1, T] (whole for circular and moving blocks)."""
    length, t = e.resamples.block_length, e.sweep.n_windows
    whole = e.resamples.kind != "stationary"
    halved = max(1.0, float(math.ceil(length / 2)) if whole else length / 2)
    doubled = min(float(t), 2 * length)
    return {name: v for name, v in (("halved", halved), ("doubled", doubled)) if v != length}


def _block_words(e: Evidence, setting: str) -> str:
    lengths = _block_lengths(e)
    if setting in lengths:
        return f"{setting}: {number(lengths[setting], 3)} windows"
    how = "automatic" if e.settings.block_length is None else "as given"
    return f"{number(e.resamples.block_length, 3)} windows ({how})"


def _bootstrap_change(e: Evidence, kind: str) -> Change:
    """Another bootstrap kind: its own automatic block length, or the given one (whole for blocks)."""
    given = e.settings.block_length
    if given is not None and kind != "stationary":
        given = float(math.ceil(given))
    return None, {"bootstrap": kind, "block_length": given}


CHOICES: tuple[Choice, ...] = (
    _policy_choice(
        "trial_variance", "trial Sharpe variance of the deflation", "deflation_variance",
        {"null": "no-edge sampling variance", "empirical": "spread of the configurations' Sharpe ratios"},
        ("deflated_sharpe",), "nothing: every variant of the deflated Sharpe ratio is part of the audit", "sharpe",
        others=lambda e: ("null", "empirical") if e.sweep.n_configurations >= 2 else ("null",)),
    _policy_choice(
        "trial_count", "trials the deflation counts", "deflation_trials",
        {"declared": "declared trials", "effective": "effective (independent) trials"},
        ("deflated_sharpe",), "nothing: every variant of the deflated Sharpe ratio is part of the audit", "sharpe"),
    Choice(
        "deflated_bar", "deflated Sharpe check's bar", ("deflated_sharpe",),
        current=lambda e: e.policy.deflation_threshold,
        alternatives=lambda e: tuple(v for v in ("calibrated", "fixed") if v != e.policy.deflation_threshold),
        change=lambda e, v: (e.policy.replace(deflation_threshold=v), None),
        words=_bar_words, recomputed="nothing: the same figure held to another bar", needs="sharpe"),
    _policy_choice(
        "sharpe_variance", "Sharpe ratio's standard error", "sharpe_variance",
        {"long-run": "long-run variance (serial dependence counted)", "iid": "iid formula as published"},
        ("deflated_sharpe", "track_record"), "the Sharpe inference, on the audit's long-run variance", "sharpe"),
    _policy_choice(
        "cscv_statistic", "statistic CSCV ranks by", "overfitting_statistic",
        {"sharpe": "Sharpe ratio", "mean": "mean excess return"},
        ("overfitting",), "CSCV, on the same windows", "overfitting"),
    _policy_choice(
        "snooping_scale", "scale of the data-snooping tests", "snooping_scale",
        {"long-run": "long-run t-ratios", "bootstrap": "bootstrap standard deviation", "none": "unscaled means"},
        ("data_snooping", "family_tails"), "nothing: the tests ran under every scale", "snooping"),
    Choice(
        "interval_method", "interval for the mean", ("mean_interval",),
        current=lambda e: e.intervals.method,
        alternatives=_interval_others,
        change=lambda e, v: (None, {"interval_method": v}),
        words=lambda e, v: _INTERVAL_WORDS[v], recomputed="the intervals, from the same resamples"),
    Choice(
        "bootstrap", "block bootstrap", ("mean_interval", "data_snooping", "family_tails"),
        current=lambda e: e.resamples.kind,
        alternatives=lambda e: tuple(k for k in _BOOTSTRAP_WORDS if k != e.resamples.kind),
        change=_bootstrap_change,
        words=lambda e, v: _BOOTSTRAP_WORDS[v] + (" (own automatic block length)"
                                                  if e.settings.block_length is None else ""),
        recomputed="new resamples (same seed) and the methods that read them", resampled=True),
    Choice(
        "block_length", "block length", ("mean_interval", "data_snooping", "family_tails"),
        current=lambda e: number(e.resamples.block_length, 3),
        alternatives=lambda e: tuple(_block_lengths(e)),
        change=lambda e, v: (None, {"block_length": _block_lengths(e)[v]}),
        words=_block_words,
        recomputed="new resamples (same seed) and the methods that read them", resampled=True),
)


def _shifts(reached: tuple[str, ...], before: Verdict, after: Verdict) -> tuple[CheckShift, ...]:
    """The checks a choice reaches, and every other check whose outcome it changes, in display order."""
    old = {c.id: c for c in before.checks}
    shown = []
    for c in after.checks:
        was: Check | None = old.get(c.id)
        if c.id in reached or was is None or was.passed != c.passed:
            shown.append(CheckShift(
                c.id, c.passed, c.value, c.threshold,
                None if was is None else was.passed, None if was is None else was.value,
                None if was is None else was.threshold,
            ))
    return tuple(shown)


def _alternative(choice: Choice, setting: str, evidence: Evidence, verdict: Verdict,
                 baseline: BaselineComparison | None, resamples: int, memory_budget: int | None) -> Alternative:
    """The verdict re-decided with one choice changed."""
    policy, fields = choice.change(evidence, setting)
    policy = policy or evidence.policy
    settings = evidence.settings
    if choice.resampled:
        fields = {**(fields or {}), "resamples": resamples}
    if fields:
        settings = replace(settings, **fields)
    again = decide(reassess(evidence, policy=policy, settings=settings, memory_budget=memory_budget, verdict_only=True),
                   policy, baseline)
    return Alternative(
        choice=choice.id, question=choice.question,
        as_audited=choice.current(evidence), setting=setting,
        as_audited_words=choice.words(evidence, choice.current(evidence)),
        setting_words=choice.words(evidence, setting), recomputed=choice.recomputed,
        resamples=resamples if choice.resampled else None,
        decision=again.decision, flips=again.decision != verdict.decision,
        failed=tuple(c.id for c in again.checks if c.required and not c.passed),
        checks=_shifts(choice.reaches, verdict, again),
    )


def _control(evidence: Evidence, verdict: Verdict, baseline: BaselineComparison | None,
             resamples: int, memory_budget: int | None) -> Alternative:
    """The audit's own choices with ``resamples`` resamples (same seed)."""
    settings = replace(evidence.settings, resamples=resamples)
    again = decide(reassess(evidence, settings=settings, memory_budget=memory_budget, verdict_only=True),
                   evidence.policy, baseline)
    count = number(evidence.resamples.count)
    return Alternative(
        choice="resamples", question="number of resamples", as_audited=str(evidence.resamples.count),
        setting=str(resamples), as_audited_words=f"{count} resamples", setting_words=f"{number(resamples)} resamples",
        recomputed="new resamples (same seed) and the methods that read them", resamples=resamples,
        decision=again.decision, flips=again.decision != verdict.decision,
        failed=tuple(c.id for c in again.checks if c.required and not c.passed),
        checks=_shifts(("mean_interval", "data_snooping", "family_tails"), verdict, again),
    )


def _summary(verdict: Verdict, alternatives: tuple[Alternative, ...], control: Alternative | None,
             skipped: tuple[str, ...] = (), configurations: int = 0) -> str:
    """The finding in one sentence (and what was not examined, in a second)."""
    flips = [a for a in alternatives if a.flips]
    n = len(alternatives)
    word = "go" if verdict.decision == "go" else "no-go"
    noise = ""
    if control is not None and control.flips:
        noise = (f" With {control.setting_words} instead of {control.as_audited_words} the verdict itself changes: "
                 "it sits within Monte Carlo noise of its threshold.")
    if skipped:
        noise += (f" Not examined on this streamed audit of {number(configurations)} configurations, where each "
                  f"would be a whole new audit: the {', the '.join(skipped)} (audit again with that option to see).")
    if not flips:
        return f"The {word} holds under every one of the {n} alternative choices.{noise}"
    named = "; ".join(f"the {a.question}: {a.setting_words}" for a in flips)
    if verdict.decision == "go":
        return (f"The go is fragile: {len(flips)} of the {n} alternative choices turn it into a no-go "
                f"({named}).{noise}")
    return f"The no-go hangs on a choice: {len(flips)} of the {n} alternative choices give a go ({named}).{noise}"


def what_would_change(
    evidence: Evidence,
    verdict: Verdict,
    *,
    baseline: BaselineComparison | None = None,
    resamples: int = ALTERNATIVE_RESAMPLES,
    memory_budget: int | None = None,
) -> Sensitivity:
    """Re-decide the verdict under each reasonable alternative choice, one choice at a time.

    Parameters
    ----------
    evidence, verdict
        The audit and its verdict.
    baseline : BaselineComparison, optional
        The audit's comparison with a baseline (reused as is).
    resamples : int
        Resamples of the alternatives that need new ones (bootstrap kind, block length); the
        audit's own count when that is smaller.
    memory_budget : int, optional
        Bytes of working memory for the alternatives that resample (as for the audit); beyond it
        they stream, as the audit did.

    Returns
    -------
    Sensitivity
    """
    count = min(int(resamples), evidence.resamples.count)
    # A streamed audit kept no configuration's distributions but the selected one's: every choice that
    # reads resamples would be a whole new streamed audit, several times the audit's own cost.
    streamed = evidence.intervals.distribution_columns is not None
    present = [c for c in CHOICES if getattr(evidence, c.needs) is not None]
    skipped = tuple(c.question for c in present if streamed and _rereads_resamples(c))
    calls = [functools.partial(_alternative, choice, setting, evidence, verdict, baseline, count, memory_budget)
             for choice in present if choice.question not in skipped for setting in choice.alternatives(evidence)]
    controlled = count < evidence.resamples.count and not streamed
    if controlled:
        calls.append(functools.partial(_control, evidence, verdict, baseline, count, memory_budget))
    # Independent re-decisions: on the free cores side by side (the same figures on any number), as
    # long as two alternatives' resampled moments fit the memory budget at once. A streamed audit's
    # alternatives may stream, with threads of their own: one at a time.
    budget = evidence.policy.memory_budget * 2**20 if memory_budget is None else memory_budget
    paired = plan_blocks(evidence.sweep.n_configurations, evidence.sweep.n_windows, count, budget // 2).in_memory
    found = side_by_side(calls, threads=None if paired and not streamed else 1)
    control = found.pop() if controlled else None
    alternatives = tuple(found)
    flipped = tuple(a.id for a in alternatives if a.flips)
    return Sensitivity(
        decision=verdict.decision, alternatives=alternatives,
        fragile=verdict.decision == "go" and bool(flipped), flipped_by=flipped, control=control,
        resamples=count, summary=_summary(verdict, alternatives, control, skipped, evidence.sweep.n_configurations),
        not_examined=skipped,
    )


def _rereads_resamples(choice: Choice) -> bool:
    """Whether the choice needs the resamples again (new ones, or every configuration's kept draws)."""
    return choice.resampled or choice.id == "interval_method"
