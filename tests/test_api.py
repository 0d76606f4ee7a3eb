"""Tests of the Python entry point (sweepaudit.api.audit).

Internal consistency only: one audit gathers its evidence once and decides its verdict once, the
baseline included; the result carries the evidence, the verdict, the document and the figures'
raw material, in agreement with one another.
"""

from __future__ import annotations

import json

import pytest

from sweepaudit import AuditResult, AuditSettings, audit, sweep_from_array
from sweepaudit import api
from sweepaudit.document import audit_document

from .helpers import synthetic_returns


@pytest.fixture(scope="module")
def sweep():
    return sweep_from_array(synthetic_returns(windows=80, edges=(0.01, 0.002, 0.0, 0.0)), periods_per_year=52)


def _counting(monkeypatch, name):
    calls = []
    original = getattr(api, name)

    def counted(*args, **kwargs):
        calls.append(args)
        return original(*args, **kwargs)

    monkeypatch.setattr(api, name, counted)
    return calls


def test_evidence_once_and_verdict_once_with_a_baseline(sweep, monkeypatch, tmp_path):
    settings = AuditSettings(seed=3, resamples=200)
    first = audit(sweep, settings=settings)
    base = tmp_path / "base.json"
    base.write_text(json.dumps(first.document))
    gathered, decided = _counting(monkeypatch, "gather_evidence"), _counting(monkeypatch, "decide")
    again = audit(sweep, settings=settings, baseline_path=base)
    assert len(gathered) == 1 and len(decided) == 1
    # The one decision saw the comparison: the drift check is among the checks, and nothing moved.
    assert [c.id for c in again.verdict.checks if c.id == "baseline_drift"] == ["baseline_drift"]
    assert again.baseline.path == str(base) and again.baseline.moved == () and again.baseline.checks_changed == ()
    assert again.document["baseline"]["path"] == str(base)


def test_the_result_agrees_with_itself(sweep):
    result = audit(sweep, settings=AuditSettings(seed=1, resamples=200), command=lambda ev: f"seed {ev.settings.seed}")
    assert isinstance(result, AuditResult)
    assert result.document == audit_document(result.evidence, result.verdict, command="seed 1",
                                             sensitivity=result.sensitivity)
    assert result.document["reproduce"]["command"] == "seed 1"
    assert result.figures.selected_index == result.selected_index == result.evidence.selected_index
    assert result.figures.deflation_curve is result.evidence.deflation_curve
    assert result.figures.mean_distribution.shape == (200,)
    assert result.baseline is None and "baseline" not in result.document
    for name in ("sweep", "settings", "policy", "intervals", "sharpe", "haircut", "overfitting", "snooping"):
        assert getattr(result, name) is getattr(result.evidence, name)


def test_a_baseline_document_without_a_path(sweep):
    settings = AuditSettings(seed=3, resamples=200)
    document = audit(sweep, settings=settings).document
    result = audit(sweep, settings=settings, baseline=document, command="x")
    assert result.baseline.path == "<baseline>"
    assert result.document["reasons"] == audit(sweep, settings=settings, baseline=document).document["reasons"]
