"""Tests of the audit's orchestration (sweepaudit.audit).

Internal consistency only: the streamed path (configurations in blocks, used when the B x N
resampled moments exceed the memory budget) against the in-memory path on the same resamples.
"""

import numpy as np
import pytest

import importlib

audit_module = importlib.import_module("sweepaudit.audit")
from sweepaudit import AuditSettings, audit, sweep_from_array


@pytest.fixture
def sweep():
    rng = np.random.default_rng(3)
    common = rng.standard_normal((300, 1))
    x = 0.01 * (0.5 * common + rng.standard_normal((300, 45)))
    x[:, 7] += 0.0012  # a modest edge: p-values in the interior, not at their floor
    return sweep_from_array(x, periods_per_year=52)


def test_streamed_audit_equals_in_memory_audit(sweep, monkeypatch):
    settings = AuditSettings(seed=4, resamples=999)
    whole = audit(sweep, settings=settings)
    # Blocks of 7 configurations: 7 columns x 999 resamples x 5 arrays x 8 bytes.
    monkeypatch.setattr(audit_module, "BLOCK_BUDGET", 7 * 999 * 5 * 8)
    streamed = audit(sweep, settings=settings, memory_budget=0)
    assert streamed.intervals.sharpe_distribution.dtype == np.float32
    assert whole.intervals.sharpe_distribution.dtype == np.float64
    # Intervals come from each block's float64 moments: identical.
    assert streamed.intervals.mean == whole.intervals.mean
    assert streamed.intervals.sharpe == whole.intervals.sharpe
    np.testing.assert_allclose(streamed.intervals.sharpe_distribution, whole.intervals.sharpe_distribution, rtol=1e-6)
    # Snooping on the same float64 means, reduced block by block: exactly the same figures.
    for name in ("reality_check", "spa", "spa_unstudentized"):
        a, b = getattr(whole.snooping, name), getattr(streamed.snooping, name)
        assert a.pvalue == b.pvalue
        assert a.statistic == b.statistic
    np.testing.assert_array_equal(whole.snooping.spa.null_consistent, streamed.snooping.spa.null_consistent)
    assert 0.002 < whole.snooping.spa_unstudentized.pvalue < 0.9
    assert whole.snooping.stepm.significant == streamed.snooping.stepm.significant
    assert [c.passed for c in whole.verdict.checks] == [c.passed for c in streamed.verdict.checks]


def test_streamed_moments_keep_only_means(sweep, monkeypatch):
    monkeypatch.setattr(audit_module, "BLOCK_BUDGET", 10 * 200 * 5 * 8)
    streamed = audit(sweep, settings=AuditSettings(seed=1, resamples=200), memory_budget=0)
    from sweepaudit.errors import InputError

    moments, _ = audit_module._resample_and_intervals(
        sweep.returns, streamed.resamples, 0.95, "percentile", 0, None
    )
    assert moments.second is None
    with pytest.raises(InputError, match="kept only the means"):
        moments.sharpe()
