"""Tests of the audit's orchestration (sweepaudit.audit) and its engine (sweepaudit.engine).

Internal consistency only: the streamed path (configurations in blocks, used when the B x N
resampled moments exceed the memory budget) against the in-memory path on the same resamples;
every method runs once on the evidence the verdict then judges.
"""

import numpy as np
import pytest

from sweepaudit import AuditSettings, audit, sweep_from_array
from sweepaudit.audit import gather_evidence
from sweepaudit.engine import local as engine
from sweepaudit.engine import moments_and_intervals
from sweepaudit.errors import InputError
from sweepaudit.methods.bootstrap_ci import bootstrap_intervals
from sweepaudit.verdict import decide


@pytest.fixture
def sweep():
    rng = np.random.default_rng(3)
    common = rng.standard_normal((300, 1))
    x = 0.01 * (0.5 * common + rng.standard_normal((300, 45)))
    x[:, 7] += 0.0012  # a modest edge: p-values in the interior, not at their floor
    return sweep_from_array(x, periods_per_year=52)


def _figures(intervals):
    return np.array([(i.estimate, i.low, i.high) for i in intervals])


def test_streamed_audit_equals_in_memory_audit(sweep, monkeypatch):
    settings = AuditSettings(seed=4, resamples=999)
    whole = audit(sweep, settings=settings)
    # Blocks of 7 configurations: 7 columns x 999 resamples x 5 arrays x 8 bytes.
    monkeypatch.setattr(engine, "BLOCK_BUDGET", 7 * 999 * 5 * 8)
    streamed = audit(sweep, settings=settings, memory_budget=0)
    assert streamed.intervals.sharpe_distribution.dtype == np.float32
    assert whole.intervals.sharpe_distribution.dtype == np.float64
    # The two paths compute the same resampled moments as weights @ returns products of different
    # shapes (all configurations at once, or 7 at a time). BLAS sums a product in blocks whose size
    # depends on the shapes, so the last bit of a float64 mean may differ between the two paths:
    # bit identity across call shapes is not promised, agreement to rounding (1e-12 relative) is.
    # (The same input and seed on the same machine give the same bytes: tests/test_cli.py.)
    np.testing.assert_allclose(_figures(streamed.intervals.mean), _figures(whole.intervals.mean), rtol=1e-12)
    np.testing.assert_allclose(_figures(streamed.intervals.sharpe), _figures(whole.intervals.sharpe), rtol=1e-12)
    np.testing.assert_allclose(streamed.intervals.sharpe_distribution, whole.intervals.sharpe_distribution, rtol=1e-6)
    # Snooping on the same float64 means, reduced block by block: the same figures to rounding; a
    # p-value counts null draws, so a draw within rounding of the statistic could move it by one.
    for name in ("reality_check", "spa_long_run", "spa_bootstrap", "spa_unstudentized"):
        a, b = getattr(whole.snooping, name), getattr(streamed.snooping, name)
        assert a.pvalue == pytest.approx(b.pvalue, abs=1.01 / 1000)
        assert a.statistic == pytest.approx(b.statistic, rel=1e-12)
    np.testing.assert_allclose(
        whole.snooping.gating_spa.null_consistent, streamed.snooping.gating_spa.null_consistent, rtol=1e-12
    )
    assert 0.002 < whole.snooping.spa_unstudentized.pvalue < 0.9
    for scale in ("long-run", "bootstrap", "none"):
        assert whole.snooping.stepm(scale).significant == streamed.snooping.stepm(scale).significant
    assert [c.passed for c in whole.verdict.checks] == [c.passed for c in streamed.verdict.checks]


def test_streamed_moments_keep_only_means(sweep, monkeypatch):
    monkeypatch.setattr(engine, "BLOCK_BUDGET", 10 * 200 * 5 * 8)
    streamed = audit(sweep, settings=AuditSettings(seed=1, resamples=200), memory_budget=0)
    moments, intervals = moments_and_intervals(
        sweep.returns, streamed.resamples, memory_budget=0,
        intervals=lambda x, m: bootstrap_intervals(x, m, confidence=0.95),
    )
    assert moments.second is None
    assert intervals.mean == streamed.intervals.mean  # the same path, the same shapes: the same bits
    with pytest.raises(InputError, match="kept only the means"):
        moments.sharpe()


def test_evidence_has_no_verdict_and_the_verdict_is_decided_from_it(sweep):
    settings = AuditSettings(seed=2, resamples=200)
    result = audit(sweep, settings=settings)
    evidence = gather_evidence(sweep, settings=settings)
    assert not hasattr(evidence, "verdict")
    assert decide(evidence, result.policy) == result.verdict
    assert result.sharpe is result.evidence.sharpe and result.selected == evidence.selected
    assert result.document["verdict"] == result.verdict.decision
    assert [c["id"] for c in result.document["checks"]] == [c.id for c in result.verdict.checks]


def test_resamples_below_one_name_the_argument(sweep):
    with pytest.raises(InputError, match="^resamples must be a whole number of at least 1; got 0$"):
        gather_evidence(sweep, settings=AuditSettings(resamples=0))


# ------------------------------------------------------------------------------------- evidence over time


def test_time_structure_uses_the_audit_resamples_and_the_policy(sweep):
    from sweepaudit.methods.bootstrap_ci import part_columns, part_intervals
    from sweepaudit.methods.stability import edge_stability
    from sweepaudit.methods.walkforward import walk_forward
    from sweepaudit.policy import DEFAULT_POLICY
    from sweepaudit.resample import resampled_moments

    evidence = gather_evidence(sweep, settings=AuditSettings(seed=5, resamples=300))
    walk, st, k = evidence.walk_forward, evidence.stability, evidence.selected_index
    x = sweep.returns
    # Defaults: a quarter of the windows as warm-up, all earlier windows, the family's median AR(1).
    plain = walk_forward(x, selected=k, warmup=75, persistence=float(np.median(evidence.long_run.ar_coefficient)),
                         stress=evidence.tails.stress)
    assert np.array_equal(walk.picks, plain.picks) and walk.pvalue == plain.pvalue
    assert st.pvalue == edge_stability(x[:, k], rolling_windows=52).pvalue
    # The intervals replay the audit's own resamples (the same seed: the same draws).
    series = np.where(np.arange(300) >= 75, np.concatenate([np.zeros(75), walk.record]), 0.0)
    parts = [(series, np.arange(300) >= 75)]
    (again,) = part_intervals(parts, resampled_moments(part_columns(parts), evidence.resamples))
    np.testing.assert_allclose(walk.intervals.mean_distribution, again.mean_distribution, rtol=1e-12)
    assert st.recent_intervals.mean[0].estimate == pytest.approx(x[150:, k].mean())
    # Policy keys reach the methods.
    policy = DEFAULT_POLICY.replace(walk_forward_warmup=100, walk_forward_lookback=26, recent_share=0.25)
    other = gather_evidence(sweep, settings=AuditSettings(seed=5, resamples=300), policy=policy)
    assert (other.walk_forward.warmup, other.walk_forward.lookback, other.walk_forward.windows) == (100, 26, 200)
    assert other.stability.recent.windows == 75


def test_too_short_a_record_is_said_not_examined():
    x = np.random.default_rng(9).normal(0, 0.01, (20, 4))
    evidence = gather_evidence(sweep_from_array(x), settings=AuditSettings(resamples=100))
    assert evidence.stability is None and evidence.walk_forward is not None
    assert any("too few to cut into thirds" in w for w in evidence.warnings)
    from sweepaudit.policy import DEFAULT_POLICY

    late = gather_evidence(sweep_from_array(x), settings=AuditSettings(resamples=100),
                           policy=DEFAULT_POLICY.replace(walk_forward_warmup=15))
    assert late.walk_forward is None
    assert any("a warm-up of 15 windows leaves fewer than 8" in w for w in late.warnings)
    single = gather_evidence(sweep_from_array(x[:, :1]), settings=AuditSettings(resamples=100))
    assert single.walk_forward is None
