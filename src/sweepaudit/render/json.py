"""The audit JSON (schema ``sweepaudit.audit/1``): the contract every other renderer formats.

Numbers are per window unless the key says ``annualized``; a figure that cannot be computed is
``null`` (never NaN or Infinity).
"""

from __future__ import annotations

import json
import math
from dataclasses import fields
from typing import Any

import numpy as np

from .._version import AUDIT_SCHEMA, __version__
from ..audit import CAUTION, AuditResults
from ..methods.bootstrap_ci import Interval

__all__ = ["audit_to_dict", "dumps"]

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


def audit_to_dict(
    results: AuditResults,
    *,
    command: str | None = None,
    policy_source: str = "defaults",
    ledger: dict | None = None,
) -> dict:
    """The audit as the JSON contract's object.

    ``policy_source`` is the policy file's path or ``"defaults"``; ``ledger`` is the trial ledger's
    block (:func:`sweepaudit.gate.ledger_to_dict`) when one was used. The ``baseline`` block comes
    from ``results.baseline``.
    """
    sweep = results.sweep
    ppy = sweep.periods_per_year
    k = results.selected_index
    iv = results.intervals
    mean_factor = ppy
    sharpe_factor = math.sqrt(ppy) if ppy else None
    policy = {f.name: getattr(results.policy, f.name) for f in fields(results.policy)}
    verdict = results.verdict
    params = sweep.parameters.reset_index(drop=True).to_dict("records") or [{}] * sweep.n_configurations
    out = {
        "schema": AUDIT_SCHEMA,
        "tool": {"name": "sweepaudit", "version": __version__},
        "input": {
            "path": sweep.path,
            "sha256": sweep.sha256,
            "layout": sweep.layout,
            "configurations": sweep.n_configurations,
            "windows": sweep.n_windows,
            "periods_per_year": ppy,
            "periods_per_year_source": sweep.periods_source,
            "frequency": sweep.frequency,
            "units": sweep.units,
            "figures_in": "fractions (0.01 = 1%)",
            "first_window": sweep.windows[0],
            "last_window": sweep.windows[-1],
            "parameters": list(sweep.parameters.columns),
        },
        "settings": {
            "seed": results.settings.seed,
            "resamples": results.resamples.count,
            "bootstrap": results.resamples.kind,
            "block_length": results.resamples.block_length,
            "block_length_source": results.block_length_source,
            "confidence": iv.confidence,
            "interval_method": iv.method,
            "trials": results.settings.trials,
        },
        "selected": {"configuration": results.selected, "rule": results.selection_rule},
        "verdict": verdict.decision,
        "reasons": list(verdict.reasons),
        "checks": [
            {
                "id": c.id,
                "passed": c.passed,
                "required": c.required,
                "value": c.value,
                "threshold": c.threshold,
                "reason": c.reason,
            }
            for c in verdict.checks
        ],
        "warnings": list(results.warnings),
        "caution": CAUTION,
        "policy": policy,
        "policy_source": policy_source,
        "results": {
            "bootstrap": {
                "selected": {
                    "mean": _interval(iv.mean[k]),
                    "mean_annualized": _interval(iv.mean[k], mean_factor),
                    "sharpe": _interval(iv.sharpe[k]),
                    "sharpe_annualized": _interval(iv.sharpe[k], sharpe_factor),
                },
                "configurations": [
                    {
                        "configuration": name,
                        "parameters": params[j],
                        "mean": _interval(iv.mean[j]),
                        "sharpe": _interval(iv.sharpe[j]),
                        "sharpe_annualized": _interval(iv.sharpe[j], sharpe_factor),
                    }
                    for j, name in enumerate(sweep.configurations)
                ],
            },
        },
        "reproduce": {"command": command, "seed": results.settings.seed, "version": __version__},
    }
    if results.sharpe is not None:
        out["results"]["sharpe"] = _sharpe_block(results)
    if results.snooping is not None:
        out["results"]["snooping"] = _snooping_block(results)
    if results.surface is not None:
        peak = results.surface
        out["results"]["surface"] = {
            "parameters": list(sweep.parameters.columns),
            "selected_sharpe": peak.sharpe,
            "neighbour_mean_sharpe": peak.neighbour_mean,
            "neighbours": peak.neighbours,
            "standard_error": peak.standard_error,
            "gap_in_standard_errors": peak.gap_in_standard_errors,
            "isolated_peak": peak.isolated,
        }
    if results.overfitting is not None:
        out["results"]["overfitting"] = _overfitting_block(results)
    if getattr(results, "baseline", None) is not None:
        from ..baseline import baseline_to_dict

        out["baseline"] = baseline_to_dict(results.baseline)
    if ledger is not None:
        out["ledger"] = ledger
    return _clean(out)


def _spa(spa) -> dict:
    return {
        "statistic": spa.statistic,
        "pvalue": spa.pvalue,
        "pvalue_lower": spa.pvalue_lower,
        "pvalue_upper": spa.pvalue_upper,
        "studentized": spa.studentized,
    }


def _stepm(step, names) -> dict:
    return {
        "significant": [names[i] for i in step.significant],
        "level": step.level,
        "studentized": step.studentized,
        "recentring": step.recentring,
        "steps": step.steps,
        "critical_values": list(step.critical_values),
    }


def _snooping_block(results: AuditResults) -> dict:
    sn = results.snooping
    names = results.sweep.configurations
    gating_stepm = sn.gating_stepm
    return {
        "gating": sn.gating,
        "gating_pvalue": sn.pvalue,
        "counting": sn.reality_check.counting,
        "reality_check": {
            "statistic": sn.reality_check.statistic,
            "pvalue": sn.reality_check.pvalue,
            "best": names[sn.reality_check.best],
        },
        "spa": _spa(sn.gating_spa),
        "spa_studentized": _spa(sn.spa),
        "spa_unstudentized": _spa(sn.spa_unstudentized),
        "stepm": _stepm(gating_stepm, names),
        "stepm_studentized": _stepm(sn.stepm, names),
        "stepm_unstudentized": _stepm(sn.stepm_unstudentized, names),
        "selected_survives_stepm": results.selected_index in gating_stepm.significant,
    }


def _overfitting_block(results: AuditResults) -> dict:
    r = results.overfitting
    d = results.overfitting_diagnosis
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
    }


def _sharpe_block(results: AuditResults) -> dict:
    inf = results.sharpe
    ppy = results.sweep.periods_per_year
    head = _deflated(inf.deflated, ppy)
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
        }
    )
    detail = inf.effective_trials_detail
    hc = results.haircut
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
        "probabilistic": {
            "benchmark": inf.probabilistic.benchmark,
            "statistic": inf.probabilistic.statistic,
            "probability": inf.probabilistic.probability,
        },
        "deflated": head,
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
    if hc is not None:
        block["haircut"] = {
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
    return block


def dumps(document: dict) -> str:
    """Serialise deterministically (same audit, same bytes)."""
    return json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
