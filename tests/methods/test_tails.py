"""Tests of the family-stress rule (the guard against the peso problem).

Internal consistency only (the rule is sweepaudit's own): the robust scale against the textbook
MAD-to-standard-deviation constant (1.4826, Hampel 1974), the rule's behaviour on constructed
families with and without shared crashes, and every error message.
"""

from __future__ import annotations

import numpy as np
import pytest

from sweepaudit.errors import InputError
from sweepaudit.methods.tails import MIN_FAMILY, family_stress


def _family(seed=0, t=260, n=40):
    rng = np.random.default_rng(seed)
    common = rng.standard_normal((t, 1))
    return 0.01 * (0.5 * common + np.sqrt(0.75) * rng.standard_normal((t, n)))


def test_calm_family_has_no_stress_windows():
    x = _family()
    result = family_stress(x, selected=3)
    assert result.applicable
    assert result.windows.size == 0
    assert np.array_equal(result.adjusted, x[:, 3])
    assert result.mean_adjusted == result.mean_observed


def test_escaped_crash_is_charged_and_a_taken_crash_is_kept():
    x = _family(1)
    crash = 100
    x[crash, :] -= 0.2  # every configuration but two takes a 20% loss
    x[crash, 5] = 0.004  # escaped
    x[crash, 6] = -0.35  # lost more than the family
    escaped = family_stress(x, selected=5)
    assert escaped.windows.tolist() == [crash]
    assert escaped.escaped == 1
    assert escaped.charged_return[0] < -0.15
    assert escaped.mean_adjusted < escaped.mean_observed - 0.15 / x.shape[0]
    took = family_stress(x, selected=6)
    assert took.escaped == 0
    assert took.charged_return[0] == -0.35
    assert took.mean_adjusted == took.mean_observed


def test_crash_hitting_too_few_configurations_is_not_a_stress_window():
    x = _family(2)
    x[50, :3] -= 0.3  # 3 of 40 = 7.5% < 20%
    assert family_stress(x, selected=10).windows.size == 0
    assert family_stress(x, selected=10, share=0.05).windows.tolist() == [50]


def test_robust_scale_is_not_inflated_by_the_crash():
    x = _family(3)
    x[[20, 80, 140], :] -= 0.25
    result = family_stress(x, selected=0)
    assert result.windows.tolist() == [20, 80, 140]
    # 4 robust standard deviations of a 1% series is about 4%: the crashes stand far beyond it.
    assert np.all(result.family_loss < -15)


def test_small_family_is_not_applicable():
    x = _family(n=MIN_FAMILY - 1)
    result = family_stress(x, selected=0)
    assert not result.applicable
    assert np.array_equal(result.adjusted, x[:, 0])


def test_errors():
    x = _family()
    with pytest.raises(InputError, match="selected"):
        family_stress(x, selected=40)
    with pytest.raises(InputError, match="threshold"):
        family_stress(x, selected=0, threshold=0.0)
    with pytest.raises(InputError, match="share"):
        family_stress(x, selected=0, share=1.5)
    bad = x.copy()
    bad[0, 0] = np.nan
    with pytest.raises(InputError, match="finite"):
        family_stress(bad, selected=0)
