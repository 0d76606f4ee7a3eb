"""The JSON contract (schema ``sweepaudit.audit/1``): Evidence + Verdict -> the audit document, and
the raw material of the report's figures.

Every figure a user can see is a key of this document; the renderers (terminal, JUnit, report)
format it and nothing else. Numbers are per window unless the key says ``annualized``; a figure
that cannot be computed is ``null`` (never NaN or Infinity). Keys are added freely and never
renamed or removed without a new schema.

The block builders here select and reshape result fields; they compute no statistics. The same
holds for :func:`figure_material`, which picks the arrays the figures draw.
"""

from __future__ import annotations

import math
from dataclasses import asdict, fields
from typing import Any

import numpy as np

from ._version import AUDIT_SCHEMA, CALIBRATION_SCHEMA, INSPECT_SCHEMA, __version__
from .format import number, percent, pvalue_floor, whole
from .methods.surface import parameter_grid
from .policy import Policy
from .results import (
    Alternative,
    BaselineComparison,
    Evidence,
    FigureMaterial,
    GatedMove,
    Interval,
    LedgerTally,
    Rate,
    Sensitivity,
    SweepCalibration,
    Verdict,
    VerdictCalibration,
)
from .sweep import Sweep
from .verdict import MEASURES, summary

__all__ = [
    "CAUTION",
    "results_document",
    "checks_block",
    "summary_block",
    "sensitivity_block",
    "baseline_block",
    "ledger_block",
    "audit_document",
    "figure_material",
    "calibration_block",
    "calibration_document",
    "plausibility_block",
    "inspection_document",
]

CAUTION = (
    "Statistical evidence, not investment advice. Past performance does not guarantee future "
    "results. Defer to your firm's own risk and compliance process before committing capital."
)


def _clean(value: Any) -> Any:
    """JSON-safe copy: numpy scalars to Python, non-finite floats to None."""
    if isinstance(value, dict):
        return {str(k): _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    if isinstance(value, np.ndarray):
        return [_clean(v) for v in value.tolist()]
    if isinstance(value, (np.bool_, bool)):
        return bool(value)
    if isinstance(value, (np.integer,)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        f = float(value)
        return f if math.isfinite(f) else None
    return value


def _interval(iv: Interval, factor: float | None = 1.0) -> dict | None:
    if factor is None:
        return None
    s = iv.scaled(factor)
    return {"estimate": s.estimate, "low": s.low, "high": s.high}


def _input_block(evidence: Evidence) -> dict:
    sweep = evidence.sweep
    return {
        "path": sweep.path,
        "sha256": sweep.sha256,
        "layout": sweep.layout,
        "configurations": sweep.n_configurations,
        "windows": sweep.n_windows,
        "periods_per_year": sweep.periods_per_year,
        "periods_per_year_source": sweep.periods_source,
        "frequency": sweep.frequency,
        "units": sweep.units,
        "figures_in": "fractions (0.01 = 1%)",
        "first_window": sweep.windows[0],
        "last_window": sweep.windows[-1],
        "parameters": list(sweep.parameters.columns),
        "plausibility": plausibility_block(sweep),
        "reading": dict(sweep.reading),
    }


def plausibility_block(sweep: Sweep) -> dict:
    """The figures the ``plausible_returns`` check judges (:attr:`Sweep.plausibility`), by field name."""
    return asdict(sweep.plausibility)


#: Rows of the parameter table and configuration names an inspection shows.
INSPECT_HEAD = 10


def inspection_document(sweep: Sweep, policy: Policy) -> dict:
    """The ``sweepaudit.inspect/1`` document: how the input was read, without auditing it.

    ``reading`` is :attr:`Sweep.reading` (layout, window column and form, units, value column,
    benchmark, aggregation, periods per year and how they were found); ``plausibility`` adds the
    policy's bounds and whether the ``plausible_returns`` check would pass.
    """
    p = sweep.plausibility
    over = p.largest_window_return >= policy.max_window_return or (
        p.largest_volatility_annualized is not None
        and p.largest_volatility_annualized > policy.max_annualized_volatility
    )
    table = sweep.parameters.head(INSPECT_HEAD).reset_index()
    return _clean({
        "schema": INSPECT_SCHEMA,
        "tool": {"name": "sweepaudit", "version": __version__},
        "input": {"path": sweep.path, "sha256": sweep.sha256},
        "reading": dict(sweep.reading),
        "windows": {"count": sweep.n_windows, "first": sweep.windows[0], "last": sweep.windows[-1]},
        "configurations": {
            "count": sweep.n_configurations,
            "first": list(sweep.configurations[:INSPECT_HEAD]),
            "parameters": list(sweep.parameters.columns),
            "parameter_table_head": table.to_dict("records") if len(sweep.parameters.columns) else [],
        },
        "plausibility": {
            **plausibility_block(sweep),
            "max_window_return": policy.max_window_return,
            "max_annualized_volatility": policy.max_annualized_volatility,
            "beyond_bounds": bool(over),
            "allowed_by_policy": bool(over and policy.allow_implausible_returns),
        },
        "warnings": list(sweep.notes),
        "caution": CAUTION,
    })


def _settings_block(evidence: Evidence) -> dict:
    return {
        "seed": evidence.settings.seed,
        "resamples": evidence.resamples.count,
        "bootstrap": evidence.resamples.kind,
        "block_length": evidence.resamples.block_length,
        "block_length_source": evidence.block_length_source,
        "confidence": evidence.intervals.confidence,
        "interval_method": evidence.intervals.method,
        "trials": evidence.settings.trials,
        "final_resamples": evidence.policy.resamples,
        "block_length_choice": _block_choice(evidence),
    }


def _block_choice(evidence: Evidence) -> dict | None:
    c = evidence.block_choice
    if c is None:
        return None
    return {
        "selected": c.selected,
        "family_quantile": c.family_quantile,
        "average_series": c.average_series,
        "configurations_examined": c.configurations_examined,
        "ar_coefficient": c.ar_coefficient,
        "predicted_share": c.predicted_share,
        "lengthened": c.lengthened,
        "rule": c.rule,
    }


def checks_block(verdict: Verdict) -> list[dict]:
    """The ``checks`` list: one object per check the verdict ran, in display order.

    ``measure`` names the figure ``value`` and ``threshold`` hold, ``value_kind`` its number style
    (``count``, ``windows``, ``return``, ``probability``, ``pvalue``, ``statistic``) and
    ``passes_when`` how the value must stand against the threshold (``at least``, ``at most``,
    ``above``, ``below``); ``outcome`` is what the result means, in a few words.
    """
    out = []
    for c in verdict.checks:
        m = MEASURES.get(c.id)
        out.append({
            "id": c.id,
            "passed": c.passed,
            "required": c.required,
            "value": c.value,
            "threshold": c.threshold,
            "reason": c.reason,
            "measure": m.label if m else None,
            "value_kind": m.kind if m else None,
            "passes_when": m.passes_when if m else None,
            "outcome": (m.passed if c.passed else m.failed) if m else None,
        })
    return out


def summary_block(evidence: Evidence, verdict: Verdict) -> dict:
    """The ``summary`` block: the verdict in one sentence, the required checks counted, and whether
    the audit is preliminary (fewer resamples than the policy asks of a final audit, ``--quick``)."""
    required = [c for c in verdict.checks if c.required]
    advisory = [c for c in verdict.checks if not c.required]
    used, final = evidence.resamples.count, evidence.policy.resamples
    return {
        "sentence": summary(verdict),
        "required": len(required),
        "required_passed": sum(c.passed for c in required),
        "required_failed": sum(not c.passed for c in required),
        "advisory": len(advisory),
        "advisory_passed": sum(c.passed for c in advisory),
        "advisory_failed": sum(not c.passed for c in advisory),
        "preliminary": used < final,
        "preliminary_reason": (
            f"{whole(used)} resamples, fewer than the {whole(final)} the policy asks of a final audit: "
            "a first look, to be confirmed by a full run" if used < final else None),
    }


def _bootstrap_block(evidence: Evidence) -> dict:
    sweep = evidence.sweep
    ppy = sweep.periods_per_year
    k = evidence.selected_index
    iv = evidence.intervals
    sharpe_factor = math.sqrt(ppy) if ppy else None
    listed = _listed(evidence)
    params = _parameter_rows(sweep, listed)
    return {
        "selected": {
            "mean": _interval(iv.mean[k]),
            "mean_annualized": _interval(iv.mean[k], ppy),
            "sharpe": _interval(iv.sharpe[k]),
            "sharpe_annualized": _interval(iv.sharpe[k], sharpe_factor),
        },
        "long_run_share": {"median": evidence.bootstrap_share, "lowest_decile": evidence.bootstrap_share_low},
        "configurations": [
            {
                "configuration": sweep.configurations[j],
                "parameters": row,
                "mean": _interval(iv.mean[j]),
                "sharpe": _interval(iv.sharpe[j]),
                "sharpe_annualized": _interval(iv.sharpe[j], sharpe_factor),
            }
            for j, row in zip(listed, params)
        ],
        "listing": _listing(evidence, listed),
    }


def _listed(evidence: Evidence) -> np.ndarray:
    """The configurations the JSON lists, in sweep order: every one up to the policy's
    ``listed_configurations``; beyond it the selected one and the best and the worst by Sharpe ratio
    (half each), so a million-configuration audit does not write hundreds of MB."""
    n = evidence.sweep.n_configurations
    limit = evidence.policy.listed_configurations
    if n <= limit:
        return np.arange(n)
    order = np.argsort(np.where(np.isfinite(evidence.sharpe_ratios), evidence.sharpe_ratios, -np.inf), kind="stable")
    bottom, top = order[: limit // 2], order[n - (limit - limit // 2):]
    keep = np.concatenate([bottom, top])
    if evidence.selected_index not in keep:  # a named selection: it takes the place of the lowest of the best
        keep = np.append(keep[keep != top[0]], evidence.selected_index)
    return np.sort(keep)


def _parameter_rows(sweep, listed: np.ndarray) -> list[dict]:
    table = sweep.parameters.reset_index(drop=True)
    if table.shape[1] == 0:
        return [{}] * len(listed)
    return table.iloc[listed].to_dict("records")


def _listing(evidence: Evidence, listed: np.ndarray) -> dict:
    """Which configurations ``configurations`` lists, and a summary of every configuration's intervals."""
    iv = evidence.intervals
    n = evidence.sweep.n_configurations
    rule = ("every configuration" if len(listed) == n else
            f"the selected configuration and the best and the worst by Sharpe ratio, {len(listed):,} in all "
            f"(policy key listed_configurations)")
    mean_low = np.array([i.low for i in iv.mean], dtype=float)
    sharpe = np.array([i.estimate for i in iv.sharpe], dtype=float)
    return {
        "listed": int(len(listed)),
        "of": int(n),
        "rule": rule,
        "mean_interval_above_zero": int(np.count_nonzero(mean_low > 0)),
        "sharpe_quantiles": {f"{q:g}": float(v) for q, v in zip(_SUMMARY_LEVELS, np.nanquantile(sharpe, _SUMMARY_LEVELS))},
    }


_SUMMARY_LEVELS = (0.0, 0.05, 0.25, 0.5, 0.75, 0.95, 1.0)


def _surface_block(evidence: Evidence) -> dict:
    peak = evidence.surface
    return {
        "parameters": list(evidence.sweep.parameters.columns),
        "selected_sharpe": peak.sharpe,
        "neighbour_mean_sharpe": peak.neighbour_mean,
        "neighbours": peak.neighbours,
        "standard_error": peak.standard_error,
        "gap_in_standard_errors": peak.gap_in_standard_errors,
        "isolated_peak": peak.isolated,
    }


def results_document(evidence: Evidence) -> dict:
    """The ``results`` block: one sub-block per method the audit ran (absent when it did not run)."""
    out: dict[str, Any] = {"bootstrap": _bootstrap_block(evidence)}
    if evidence.sharpe is not None:
        out["sharpe"] = _sharpe_block(evidence)
    if evidence.snooping is not None:
        out["snooping"] = _snooping_block(evidence)
    if evidence.surface is not None:
        out["surface"] = _surface_block(evidence)
    if evidence.overfitting is not None:
        out["overfitting"] = _overfitting_block(evidence)
    if evidence.tails is not None and evidence.tails.stress.applicable:
        out["tails"] = _tails_block(evidence)
    if evidence.walk_forward is not None:
        out["walk_forward"] = _walk_forward_block(evidence)
    if evidence.stability is not None:
        out["stability"] = _stability_block(evidence)
    meaning = _time_meaning(out, evidence.policy.significance, evidence.sweep.periods_per_year)
    if meaning is not None:
        out["time_meaning"] = meaning
    return _clean(out)


def audit_document(
    evidence: Evidence,
    verdict: Verdict,
    *,
    command: str | None = None,
    policy_source: str = "defaults",
    baseline: BaselineComparison | None = None,
    ledger: dict | None = None,
    sensitivity: Sensitivity | None = None,
) -> dict:
    """The whole audit JSON object.

    Parameters
    ----------
    evidence, verdict
        What the audit found and the verdict on it.
    command : str, optional
        The command that reproduces every figure (the ``reproduce`` block).
    policy_source : str
        The policy file's path or ``"defaults"``.
    baseline : BaselineComparison, optional
        The comparison with a baseline audit (the ``baseline`` block).
    ledger : dict, optional
        The trial ledger's block (:func:`ledger_block`) when one was used.
    sensitivity : Sensitivity, optional
        What would change the verdict (the ``sensitivity`` block, :func:`sensitivity_block`).
    """
    head = summary_block(evidence, verdict)
    out = {
        "schema": AUDIT_SCHEMA,
        "tool": {"name": "sweepaudit", "version": __version__},
        "input": _input_block(evidence),
        "settings": _settings_block(evidence),
        "selected": {"configuration": evidence.selected, "rule": evidence.selection_rule},
        "verdict": verdict.decision,
        "preliminary": head["preliminary"],
        "summary": head,
        "reasons": list(verdict.reasons),
        "checks": checks_block(verdict),
        "warnings": list(evidence.warnings),
        "caution": CAUTION,
        "policy": {f.name: getattr(evidence.policy, f.name) for f in fields(evidence.policy)},
        "policy_source": policy_source,
        "results": results_document(evidence),
        "reproduce": {"command": command, "seed": evidence.settings.seed, "version": __version__},
    }
    if baseline is not None:
        out["baseline"] = baseline_block(baseline)
    if ledger is not None:
        out["ledger"] = ledger
    if sensitivity is not None:
        out["sensitivity"] = sensitivity_block(sensitivity)
    return _clean(out)


def _alternative_dict(a: Alternative) -> dict:
    return {
        "id": a.id,
        "choice": a.choice,
        "question": a.question,
        "as_audited": a.as_audited,
        "as_audited_words": a.as_audited_words,
        "setting": a.setting,
        "setting_words": a.setting_words,
        "recomputed": a.recomputed,
        "resamples": a.resamples,
        "verdict": a.decision,
        "flips": a.flips,
        "failed_checks": list(a.failed),
        "checks": [
            {
                "id": c.id, "passed": c.passed, "value": c.value, "threshold": c.threshold,
                "as_audited": {"passed": c.passed_as_audited, "value": c.value_as_audited,
                               "threshold": c.threshold_as_audited},
            }
            for c in a.checks
        ],
    }


def sensitivity_block(sensitivity: Sensitivity) -> dict:
    """The ``sensitivity`` block: the verdict re-decided under each alternative choice.

    ``alternatives`` lists one object per choice changed (``id`` is ``choice:setting``), with the
    verdict under it, whether it ``flips`` the audit's, the required checks that fail and the
    checks it reaches (value and threshold, beside the audit's own under ``as_audited``);
    ``fragile`` is a go that some alternative flips; ``control`` the audit's own choices with the
    alternatives' resample count (null when that is the audit's own count); ``not_examined`` the
    choices left out because each would be a whole new audit (after a streamed audit).
    """
    return {
        "verdict": sensitivity.decision,
        "summary": sensitivity.summary,
        "fragile": sensitivity.fragile,
        "flipped_by": list(sensitivity.flipped_by),
        "resamples": sensitivity.resamples,
        "alternatives": [_alternative_dict(a) for a in sensitivity.alternatives],
        "control": None if sensitivity.control is None else _alternative_dict(sensitivity.control),
        "not_examined": list(sensitivity.not_examined),
    }


def _spa(spa) -> dict:
    return {
        "statistic": spa.statistic,
        "pvalue": spa.pvalue,
        "pvalue_lower": spa.pvalue_lower,
        "pvalue_upper": spa.pvalue_upper,
        "studentized": spa.studentized,
        "scale": spa.scale,
    }


def _stepm(step, names, selected: int) -> dict:
    return {
        "significant": [names[i] for i in step.significant],
        "level": step.level,
        "studentized": step.studentized,
        "scale": step.scale,
        "recentring": step.recentring,
        "steps": step.steps,
        "critical_values": list(step.critical_values),
        "selected_statistic": step.statistics[selected],
        "selected_critical_value": step.critical_value_for(selected),
    }


def _snooping_block(evidence: Evidence) -> dict:
    sn = evidence.snooping
    names = evidence.sweep.configurations
    k = evidence.selected_index
    long_run = evidence.long_run
    return {
        "gating": sn.gating,
        "gating_pvalue": sn.pvalue,
        "scale": sn.scale,
        "counting": sn.reality_check.counting,
        "reality_check": {
            "statistic": sn.reality_check.statistic,
            "pvalue": sn.reality_check.pvalue,
            "best": names[sn.reality_check.best],
        },
        "spa": _spa(sn.gating_spa),
        "spa_long_run": _spa(sn.spa_long_run),
        "spa_studentized": _spa(sn.spa_bootstrap),
        "spa_unstudentized": _spa(sn.spa_unstudentized),
        "stepm": _stepm(sn.gating_stepm, names, k),
        "stepm_long_run": _stepm(sn.stepm_long_run, names, k),
        "stepm_studentized": _stepm(sn.stepm_bootstrap, names, k),
        "stepm_unstudentized": _stepm(sn.stepm_unstudentized, names, k),
        "selected_survives_stepm": k in sn.gating_stepm.significant,
        "pvalue_floor": pvalue_floor(evidence.resamples.count),
        "selected_long_run": None if long_run is None else {
            "variance_ratio": long_run.ratio[k],
            "ar_coefficient": long_run.ar_coefficient[k],
            "degrees_of_freedom": long_run.degrees_of_freedom[k],
        },
    }


def _tails_block(evidence: Evidence) -> dict:
    test = evidence.tails
    stress = test.stress
    windows = evidence.sweep.windows
    return {
        "threshold": stress.threshold,
        "share": stress.share,
        "stress_windows": [windows[int(i)] for i in stress.windows],
        "escaped": stress.escaped,
        "mean_observed": stress.mean_observed,
        "mean_adjusted": stress.mean_adjusted,
        "statistic": test.statistic,
        "critical_value": test.critical_value,
        "passed": test.passed,
    }


def _mean_and_sharpe(iv, mean: float, sharpe: float, ppy: float | None) -> dict:
    """A record's mean and Sharpe ratio, per window and annualized: intervals when the audit has them,
    plain numbers otherwise."""
    root = math.sqrt(ppy) if ppy else None
    if iv is None:
        return {"mean": mean, "mean_annualized": mean * ppy if ppy else None,
                "sharpe": sharpe, "sharpe_annualized": sharpe * root if root else None}
    return {"mean": _interval(iv.mean[0]), "mean_annualized": _interval(iv.mean[0], ppy),
            "sharpe": _interval(iv.sharpe[0]), "sharpe_annualized": _interval(iv.sharpe[0], root)}


def _walk_forward_block(evidence: Evidence) -> dict:
    walk = evidence.walk_forward
    sweep = evidence.sweep
    names = sweep.configurations
    ppy = sweep.periods_per_year
    return {
        "rule": "highest Sharpe ratio on the earlier windows, re-picked before every window",
        "warmup": walk.warmup,
        "lookback": walk.lookback,
        "first_window": sweep.windows[walk.warmup],
        "windows": walk.windows,
        **_mean_and_sharpe(walk.intervals, walk.mean, walk.sharpe, ppy),
        "pick_changes": walk.pick_changes,
        "pick_change_rate": walk.pick_change_rate,
        "distinct_picks": walk.distinct_picks,
        "most_picked": names[walk.most_picked],
        "most_picked_share": walk.most_picked_share,
        "last_pick": names[int(walk.picks[-1])],
        "selected_share": walk.selected_share,
        "selected_same_windows": {
            "mean": walk.selected_mean,
            "mean_annualized": walk.selected_mean * ppy if ppy else None,
            "sharpe": walk.selected_sharpe,
            "sharpe_annualized": walk.selected_sharpe * math.sqrt(ppy) if ppy else None,
        },
        "persistence": {"ar_coefficient": walk.persistence, "mean_prediction": walk.persistence_gain},
        "stress": {"windows": walk.stress_windows, "expected_windows": walk.stress_windows_expected,
                   "mean_charge": walk.stress_charge},
        "test": {
            "mean_tested": walk.tested_mean,
            "statistic": walk.statistic,
            "degrees_of_freedom": walk.degrees_of_freedom,
            "pvalue": walk.pvalue,
        },
    }


def _period(evidence: Evidence, period, iv=None, name: str = "") -> dict:
    windows = evidence.sweep.windows
    return {
        "period": name,
        "first_window": windows[period.start],
        "last_window": windows[period.stop - 1],
        "start": period.start,
        "windows": period.windows,
        **_mean_and_sharpe(iv, period.mean, period.sharpe, evidence.sweep.periods_per_year),
        "t_ratio": period.t_ratio,
        "degrees_of_freedom": period.degrees_of_freedom,
    }


def _stability_block(evidence: Evidence) -> dict:
    st = evidence.stability
    ppy = evidence.sweep.periods_per_year
    root = math.sqrt(ppy) if ppy else None
    return {
        "configuration": evidence.selected,
        "thirds": [_period(evidence, p, name=f"{which} third")
                   for p, which in zip(st.thirds, ("first", "middle", "last"))],
        "recent_share": st.recent_share,
        "early": _period(evidence, st.early, st.early_intervals, "before the recent period"),
        "recent": _period(evidence, st.recent, st.recent_intervals, "recent period"),
        "change": {
            "difference": st.difference,
            "difference_annualized": st.difference * ppy if ppy else None,
            "standard_error": st.standard_error,
            "statistic": st.statistic,
            "degrees_of_freedom": st.degrees_of_freedom,
            "pvalue": st.pvalue,
            "long_run_ratio": st.long_run_ratio,
        },
        "rolling": {
            "windows": st.rolling_windows,
            "first_window": evidence.sweep.windows[st.rolling_windows - 1],
            "sharpe": st.rolling_sharpe,
            "last_sharpe": st.rolling_sharpe[-1],
            "last_sharpe_annualized": st.rolling_sharpe[-1] * root if root else None,
            "lowest_sharpe": st.rolling_lowest,
            "lowest_sharpe_annualized": st.rolling_lowest * root if root else None,
            "highest_sharpe": st.rolling_highest,
            "highest_sharpe_annualized": st.rolling_highest * root if root else None,
            "share_above_zero": st.rolling_share_positive,
        },
    }


def _mean_words(block: dict, ppy: float | None) -> str:
    """A period's mean as a percentage, a year when the periods per year are known, else per window."""
    value = block["mean_annualized"] if ppy else block["mean"]
    value = value["estimate"] if isinstance(value, dict) else value
    return f"{percent(value)} a year" if ppy else f"{percent(value)} per window"


def _time_meaning(results: dict, level: float, ppy: float | None) -> str | None:
    """One sentence on what the decay test and the walk-forward record mean together (figures of the
    two blocks, in words); None when the audit examined neither."""
    clauses = []
    st, walk = results.get("stability"), results.get("walk_forward")
    if st is not None:
        figures = (f"{_mean_words(st['recent'], ppy)} in the recent period against "
                   f"{_mean_words(st['early'], ppy)} before it")
        if st["change"]["pvalue"] <= level:
            clauses.append(f"the edge has faded ({figures}, a fall beyond chance at the {number(level, 6)} level)")
        elif st["change"]["difference"] < 0:
            clauses.append(f"the edge earned less of late but not beyond chance ({figures})")
        else:
            clauses.append(f"the edge shows no sign of fading ({figures})")
    if walk is not None:
        earned = _mean_words(walk, ppy)
        if walk["test"]["pvalue"] <= level:
            clauses.append(f"re-picking the winner as the windows came would have earned {earned} out of sample, "
                           "above zero beyond chance")
        else:
            clauses.append(f"re-picking the winner as the windows came earned {earned} out of sample, not clearly "
                           "above zero")
    return "Over time, " + "; ".join(clauses) + "." if clauses else None


def _overfitting_block(evidence: Evidence) -> dict:
    r = evidence.overfitting
    d = evidence.overfitting_diagnosis
    return {
        "statistic": r.statistic,
        "partitions": r.partitions,
        "partitions_requested": r.partitions_requested,
        "combinations": r.combinations,
        "block_rule": r.block_rule,
        "probability_of_overfitting": r.probability_of_overfitting,
        "null_probability_of_overfitting": r.null_probability_of_overfitting,
        "probability_of_loss": r.probability_of_loss,
        "median_out_of_sample": r.median_out_of_sample,
        "degradation": {
            "slope": r.degradation_slope,
            "intercept": r.degradation_intercept,
            "r_squared": r.degradation_r_squared,
        },
        "logits": {f"{q:g}": v for q, v in r.logit_quantiles.items()},
        "stochastic_dominance": {
            "first_order": r.first_order_dominance,
            "first_order_violation": r.first_order_violation,
            "second_order": r.second_order_dominance,
            "second_order_violation": r.second_order_violation,
        },
        "diagnosis": {
            "case": d.case,
            "passed": d.passed,
            "in_sample_strength_share": d.in_sample_strength_share,
            "strength_threshold": d.strength_threshold,
            "reason": d.reason,
        },
    }


def _deflated(d, periods_per_year) -> dict:
    root = math.sqrt(periods_per_year) if periods_per_year else None
    return {
        "trials": int(d.trials) if float(d.trials).is_integer() else d.trials,
        "trial_sharpe_variance": d.trial_sharpe_variance,
        "expected_maximum": d.expected_maximum,
        "benchmark_sharpe": d.benchmark_sharpe,
        "benchmark_sharpe_annualized": d.benchmark_sharpe * root if root else None,
        "statistic": d.statistic,
        "probability": d.probability,
        "long_run_ratio": d.long_run_ratio,
    }


def _deflated_head(evidence: Evidence) -> dict:
    """The headline deflated Sharpe ratio and the choices behind it."""
    inf = evidence.sharpe
    head = _deflated(inf.deflated, evidence.sweep.periods_per_year)
    head.update(
        {
            # Li and Ji count whole tests; an eigenvalue sum lands a rounding error off the integer.
            "effective_trials": round(inf.effective_trials, 9),
            "effective_trials_method": inf.effective_trials_method,
            "declared_trials": inf.trials,
            "trials_used": inf.trials_for_deflation,
            "variance_mode": inf.variance_mode,
            "trial_sharpe_variance_null": inf.trial_sharpe_variance_null,
            "trial_sharpe_variance_empirical": inf.trial_sharpe_variance_empirical,
            "calibrated_level": inf.deflated_level,
            "significance": inf.significance,
        }
    )
    return head


def _iid_block(evidence: Evidence) -> dict:
    """The same figures under the published iid formulas, beside the headline ones."""
    inf = evidence.sharpe
    ppy = evidence.sweep.periods_per_year
    return {
        "standard_error": inf.standard_error_iid,
        "probabilistic": {"statistic": inf.probabilistic_iid.statistic, "probability": inf.probabilistic_iid.probability},
        "deflated": _deflated(inf.deflated_iid, ppy),
        "min_track_record": {
            "observations": inf.min_track_record_iid_observations, "years": inf.min_track_record_iid_years,
        },
    }


def _haircut_block(evidence: Evidence) -> dict:
    hc = evidence.haircut
    return {
        "tests": hc.tests,
        "t_statistic": hc.t_statistic,
        "pvalue": hc.pvalue,
        **{
            a.method: {
                "pvalue": a.pvalue,
                "sharpe": a.sharpe,
                "sharpe_annualized": a.sharpe_annualized,
                "haircut": a.haircut,
            }
            for a in (hc.bonferroni, hc.holm, hc.bhy)
        },
    }


def _sharpe_block(evidence: Evidence) -> dict:
    inf = evidence.sharpe
    ppy = evidence.sweep.periods_per_year
    detail = inf.effective_trials_detail
    block = {
        "observed": inf.observed,
        "observed_annualized": inf.observed_annualized,
        "annualization": inf.annualization,
        "serial_correlation_factor": inf.serial_correlation_factor,
        "observations": inf.observations,
        "skewness": inf.skewness,
        "kurtosis": inf.kurtosis,
        "standard_error": inf.standard_error,
        "standard_error_serial_correlation": inf.standard_error_serial_correlation,
        "sharpe_variance": inf.sharpe_variance,
        "long_run_ratio": inf.long_run_ratio,
        "long_run_ratio_trial": inf.long_run_ratio_trial,
        "probabilistic": {
            "benchmark": inf.probabilistic.benchmark,
            "statistic": inf.probabilistic.statistic,
            "probability": inf.probabilistic.probability,
        },
        "deflated": _deflated_head(evidence),
        "iid": _iid_block(evidence),
        "deflated_variants": [
            {
                "variance_mode": v.variance_mode,
                "expected_maximum": v.expected_maximum,
                "trials_used": v.trial_count,
                **_deflated(v.result, ppy),
            }
            for v in inf.variants
        ],
        "effective_trials": {
            "average_correlation": detail.average_correlation,
            "from_average_correlation": detail.from_average_correlation,
            "nyholt": detail.nyholt,
            "li_ji": detail.li_ji,
        },
        "min_track_record": {
            "observations": inf.min_track_record_observations,
            "years": inf.min_track_record_years,
            "confidence": inf.confidence,
        },
    }
    if evidence.haircut is not None:
        block["haircut"] = _haircut_block(evidence)
    return block


def _gated_dict(g: GatedMove) -> dict[str, Any]:
    return {
        "key": g.key,
        "label": g.figure.label,
        "before": g.before,
        "after": g.after,
        "change": g.after - g.before,
        "higher_is_better": g.figure.higher_is_better,
        "allowed_worsening": g.allowed,
        "margin_field": g.figure.margin_field,
        "exceeded": g.exceeded,
    }


def baseline_block(comparison: BaselineComparison) -> dict[str, Any]:
    """The JSON ``baseline`` block."""
    return {
        "path": comparison.path,
        "verdict_before": comparison.verdict_before,
        "selected_before": comparison.selected_before,
        "selected_changed": comparison.selected_before != comparison.selected_after,
        "moved": [
            {"key": m.key, "before": m.before, "after": m.after, "change": m.change} for m in comparison.moved
        ],
        "checks_changed": [
            {"id": c.id, "before": c.before, "after": c.after} for c in comparison.checks_changed
        ],
        "gated": [_gated_dict(g) for g in comparison.gated],
        "worsened": [_gated_dict(g) for g in comparison.worsened],
    }


def ledger_block(tally: LedgerTally, *, declared: int | None, used: int | None, note: str | None) -> dict:
    """The JSON ``ledger`` block: the count (``trials_counted``: distinct configurations of each
    strategy, plus the records counted by data fingerprint), what this audit added, the trials of
    each strategy label, and the data fingerprint kept for the audit trail."""
    return {
        "path": tally.path,
        "fingerprint": tally.fingerprint,
        "new_sweep": tally.new_sweep,
        "records_before": tally.records,
        "sweeps_recorded": tally.sweeps_recorded,
        "trials_counted": tally.trials,
        "trials_declared": declared,
        "trials_used": used,
        "note": note,
        "strategy": tally.strategy,
        "counted_by": "configuration" if tally.by_configuration else "fingerprint",
        "trials_before": tally.trials_before,
        "trials_added": tally.trials_added,
        "fingerprint_records": tally.fingerprint_records,
        "fingerprint_trials": tally.fingerprint_trials,
        "strategies": [{"strategy": label, "trials": count} for label, count in tally.strategies],
        "grid": tally.grid,
    }


def figure_material(evidence: Evidence) -> FigureMaterial:
    """The arrays the report's figures draw, picked from the evidence (and the Sharpe ratios laid out
    on the parameter grid)."""
    k = evidence.selected_index
    sweep = evidence.sweep
    overfit = evidence.overfitting
    return FigureMaterial(
        selected_index=k,
        mean_distribution=evidence.intervals.mean_distribution_of(k),
        returns=sweep.returns,
        dates=sweep.dates,
        sharpe_grid=parameter_grid(sweep.parameters, evidence.sharpe_ratios, selected=k),
        logits=None if overfit is None else overfit.logits,
        in_sample=None if overfit is None else overfit.in_sample,
        out_of_sample=None if overfit is None else overfit.out_of_sample,
        split_statistic=None if overfit is None else overfit.statistic,
        deflation_curve=evidence.deflation_curve,
        surface=evidence.surface,
        walk_forward=evidence.walk_forward,
        stability=evidence.stability,
    )


# ---------------------------------------------------------------------------------------------
# the calibration document (schema sweepaudit.calibration/1)


def _rate(r: Rate) -> dict:
    def num(v: float):
        return None if not math.isfinite(v) else float(v)

    return {
        "rate": num(r.rate),
        "standard_error": num(r.standard_error),
        "upper_95": num(r.upper_95),
        "lower_95": num(r.lower_95),
        "events": r.events,
        "sweeps": r.trials,
    }


def calibration_block(calibration: VerdictCalibration) -> dict:
    """The JSON form of a :class:`VerdictCalibration` (rates, their errors and the check table)."""
    return {
        "sweeps": calibration.sweeps,
        "resamples": calibration.resamples,
        "go": _rate(calibration.go),
        "checks": [
            {"id": c.id, "required": c.required, "failure": _rate(c.failures)} for c in calibration.checks
        ],
        "planted_selected": None if calibration.planted_selected is None else _rate(calibration.planted_selected),
        "bonferroni_max_t": None if calibration.yardstick is None else _rate(calibration.yardstick),
    }


def calibration_document(
    result: SweepCalibration, *, command: str | None = None, policy_source: str | None = None
) -> dict:
    """The ``sweepaudit calibrate --json`` document (schema ``sweepaudit.calibration/1``).

    Every figure the terminal shows is a field here; rates are probabilities in [0, 1].
    ``policy_source`` (a policy file's path or ``"defaults"``) is added to the policy block.
    """
    null = calibration_block(result.null)
    power = None
    if result.power is not None:
        power = calibration_block(result.power)
        power["edge_annualized_sharpe"] = result.edge_annual_sharpe
        power["edge_per_window"] = result.edge_per_window
    policy: dict[str, Any] = {"significance": result.null.policy.significance,
                              "required": list(result.null.policy.required)}
    if policy_source is not None:
        policy["source"] = policy_source
    return {
        "schema": CALIBRATION_SCHEMA,
        "tool": {"name": "sweepaudit", "version": __version__},
        "input": {
            "path": result.sweep.path,
            "sha256": result.sweep.sha256,
            "configurations": result.sweep.n_configurations,
            "windows": result.sweep.n_windows,
            "periods_per_year": result.sweep.periods_per_year,
        },
        "settings": {
            "seed": result.seed,
            "sweeps": result.sweeps,
            "resamples": result.resamples,
            "edge_annualized_sharpe": result.edge_annual_sharpe,
            "null_bootstrap": "stationary",
            "null_block_length": result.null_block_length,
            "null_block_series": result.block_series,
        },
        "policy": policy,
        "selected": {"configuration": result.configuration, "index": result.selected_index},
        "observed_verdict": result.observed,
        "false_go": null["go"],
        "power": power,
        "null": null,
        "command": command,
        "caution": CAUTION,
    }
