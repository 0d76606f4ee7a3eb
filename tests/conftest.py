"""Shared fixtures."""

from __future__ import annotations

import pytest

from sweepaudit import AuditSettings, audit, sweep_from_array

from .helpers import synthetic_returns


@pytest.fixture(scope="module")
def small_results():
    sweep = sweep_from_array(synthetic_returns(), periods_per_year=52)
    return audit(sweep, settings=AuditSettings(resamples=200, seed=1))
