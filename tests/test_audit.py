"""Tests of the audit's orchestration (sweepaudit.audit), its streamed path (sweepaudit.streamed) and
the engine's in-process executor.

Internal consistency only: the streamed path (configurations in blocks, used when the B x N
resampled moments exceed the memory budget) against the in-memory path on the same resamples;
every method runs once on the evidence the verdict then judges.
"""

import numpy as np
import pytest

from sweepaudit import AuditSettings, audit, sweep_from_array
from sweepaudit.audit import gather_evidence
from sweepaudit.engine import budget_for_width, plan_blocks
from sweepaudit.errors import InputError
from sweepaudit.methods.bootstrap_ci import at_level
from sweepaudit.verdict import decide


@pytest.fixture
def sweep():
    rng = np.random.default_rng(3)
    common = rng.standard_normal((300, 1))
    x = 0.01 * (0.5 * common + rng.standard_normal((300, 45)))
    x[:, 7] += 0.0012  # a modest edge: p-values in the interior, not at their floor
    x[:, 30:34] += 0.0009  # a few more, so StepM takes more than one step
    x[[50, 120], 10:] -= 0.08  # two shared crashes the selected configuration escaped
    return sweep_from_array(x, periods_per_year=52)


def _figures(intervals):
    return np.array([(i.estimate, i.low, i.high) for i in intervals])


def assert_same_audit(whole, streamed):
    """Every figure of two audits of the same sweep and resamples, within rounding.

    The two paths compute the resampled moments as ``weights @ returns`` products of different shapes
    (all configurations at once, or a block at a time) and sum some family figures block by block.
    BLAS and numpy's pairwise sums group terms by shape, so the last bit of a float64 figure may
    differ: bit identity across call shapes is not promised, agreement to 1e-12 relative is (1e-9 for
    the eigenvalue-based effective trials, from a T x T rather than an N x N Gram matrix). Counts
    (p-values, StepM's rejections, CSCV's ranks) agree exactly unless a draw ties its statistic to
    rounding, which these sweeps do not.
    """
    a, b = whole, streamed
    close = dict(rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(_figures(b.intervals.mean), _figures(a.intervals.mean), **close)
    np.testing.assert_allclose(_figures(b.intervals.sharpe), _figures(a.intervals.sharpe), **close)
    for name in ("mean_standard_error", "sharpe_standard_error", "degrees_of_freedom"):
        np.testing.assert_allclose(getattr(b.intervals, name), getattr(a.intervals, name), **close)
    assert a.intervals.method == b.intervals.method
    k = a.evidence.selected_index
    assert k == b.evidence.selected_index
    np.testing.assert_allclose(b.intervals.sharpe_distribution_of(k), a.intervals.sharpe_distribution_of(k), **close)
    assert a.resamples.block_length == pytest.approx(b.resamples.block_length, rel=1e-12)
    for name in ("reality_check", "spa_long_run", "spa_bootstrap", "spa_unstudentized"):
        x, y = getattr(a.snooping, name), getattr(b.snooping, name)
        assert x.pvalue == y.pvalue and x.statistic == pytest.approx(y.statistic, rel=1e-12)
    np.testing.assert_allclose(b.snooping.gating_spa.null_consistent, a.snooping.gating_spa.null_consistent, **close)
    for scale in ("long-run", "bootstrap", "none"):
        x, y = a.snooping.stepm(scale), b.snooping.stepm(scale)
        assert x.significant == y.significant and x.steps == y.steps
        np.testing.assert_allclose(y.critical_values, x.critical_values, **close)
    x, y = a.evidence.overfitting, b.evidence.overfitting
    assert x.probability_of_overfitting == y.probability_of_overfitting
    np.testing.assert_array_equal(x.selected, y.selected)
    np.testing.assert_allclose(y.logits, x.logits, **close)
    assert x.pooled_out_of_sample_mean == pytest.approx(y.pooled_out_of_sample_mean, rel=1e-12)
    assert x.first_order_violation == y.first_order_violation
    s, t = a.sharpe, b.sharpe
    assert s.deflated.probability == pytest.approx(t.deflated.probability, rel=1e-12)
    assert s.effective_trials == pytest.approx(t.effective_trials, rel=1e-9)
    np.testing.assert_allclose(t.effective_trials_detail.eigenvalues, s.effective_trials_detail.eigenvalues,
                               rtol=1e-9, atol=1e-9)
    assert a.evidence.bootstrap_share == pytest.approx(b.evidence.bootstrap_share, rel=1e-12)
    assert a.evidence.tails.stress.windows.size == 2
    assert a.evidence.tails.statistic == pytest.approx(b.evidence.tails.statistic, rel=1e-12)
    np.testing.assert_array_equal(a.evidence.tails.stress.windows, b.evidence.tails.stress.windows)
    assert a.evidence.surface == b.evidence.surface  # no parameter grid here: None on both paths
    # The time structure reads the returns and the family's stress windows: the same on both paths.
    w, v = a.evidence.walk_forward, b.evidence.walk_forward
    assert w is not None and v is not None
    np.testing.assert_array_equal(w.picks, v.picks)
    assert w.statistic == pytest.approx(v.statistic, rel=1e-12) and w.pvalue == pytest.approx(v.pvalue, rel=1e-12)
    assert w.intervals.mean[0].low == pytest.approx(v.intervals.mean[0].low, rel=1e-12)
    assert a.evidence.stability.pvalue == pytest.approx(b.evidence.stability.pvalue, rel=1e-12)
    assert [c.passed for c in a.verdict.checks] == [c.passed for c in b.verdict.checks]
    assert a.evidence.warnings == b.evidence.warnings


@pytest.mark.parametrize("width", [7, 20])
def test_streamed_audit_equals_in_memory_audit(sweep, width):
    settings = AuditSettings(seed=4, resamples=999)
    whole = audit(sweep, settings=settings)
    budget = budget_for_width(width, sweep.n_windows, 999)
    assert not plan_blocks(45, sweep.n_windows, 999, budget).in_memory
    assert plan_blocks(45, sweep.n_windows, 999, budget).width == width
    streamed = audit(sweep, settings=settings, memory_budget=budget)
    assert whole.intervals.distribution_columns is None
    assert streamed.intervals.distribution_columns == (whole.evidence.selected_index,)
    assert 0.002 < whole.snooping.spa_unstudentized.pvalue < 0.9
    assert whole.snooping.stepm("bootstrap").steps >= 2
    assert_same_audit(whole, streamed)


def test_a_streamed_audit_keeps_the_selected_distributions_only(sweep):
    settings = AuditSettings(seed=1, resamples=200)
    streamed = audit(sweep, settings=settings, memory_budget=budget_for_width(10, sweep.n_windows, 200))
    assert streamed.intervals.mean_distribution.shape == (200, 1)
    with pytest.raises(InputError, match="selected configuration only"):
        at_level(streamed.intervals, 0.9)


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


def test_the_in_memory_audit_keeps_its_weights_for_the_time_structure_when_they_fit(sweep):
    from sweepaudit.engine.blocks import IN_MEMORY_ARRAYS
    from sweepaudit.resample import moment_chunk

    b, t, n = 400, sweep.n_windows, sweep.n_configurations
    assert plan_blocks(n, t, b).in_memory and plan_blocks(n, t, b).keep_weights
    # Room for the moments and one chunk of weights, none for the kept weights: drawn again.
    tight = IN_MEMORY_ARRAYS * b * n * 8 + 2 * min(moment_chunk(t), b) * t * 8
    assert plan_blocks(n, t, b, tight).in_memory and not plan_blocks(n, t, b, tight).keep_weights
    settings = AuditSettings(seed=6, resamples=b)
    kept, drawn = gather_evidence(sweep, settings=settings), gather_evidence(sweep, settings=settings, memory_budget=tight)
    # The same weights in the same chunks: the same products, bit for bit.
    assert np.array_equal(kept.walk_forward.intervals.mean_distribution, drawn.walk_forward.intervals.mean_distribution)
    assert np.array_equal(kept.stability.recent_intervals.sharpe_distribution,
                          drawn.stability.recent_intervals.sharpe_distribution, equal_nan=True)


def test_a_streamed_audit_reassessed_under_another_cscv_statistic_streams_cscv(sweep, monkeypatch):
    import importlib

    from sweepaudit.audit import reassess
    from sweepaudit.methods.cscv import cscv

    budget = budget_for_width(10, sweep.n_windows, 400)
    streamed = gather_evidence(sweep, settings=AuditSettings(seed=4, resamples=400), memory_budget=budget)
    assert streamed.intervals.distribution_columns is not None

    def whole_matrix(*args, **kwargs):
        raise AssertionError("CSCV on the whole matrix of a streamed audit (T x N temporaries)")

    monkeypatch.setattr(importlib.import_module("sweepaudit.audit"), "cscv", whole_matrix)
    again = reassess(streamed, policy=streamed.policy.replace(overfitting_statistic="mean"), memory_budget=budget)
    whole = cscv(sweep.returns, partitions=streamed.policy.partitions, statistic="mean")
    # Over blocks of 10 configurations: CSCV's figures as on the whole matrix.
    assert again.overfitting.statistic == "mean"
    assert again.overfitting.probability_of_overfitting == whole.probability_of_overfitting
    np.testing.assert_array_equal(again.overfitting.selected, whole.selected)
    np.testing.assert_allclose(again.overfitting.logits, whole.logits, rtol=1e-12)


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
