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
