"""Tests of sweepaudit.methods.overfitting (the diagnosis rule read off a CSCV result).

Internal consistency only: the rule is our own (docs/overfitting_rule.md); its cases are checked on
seeded synthetic sweeps like those of ``benchmarks/overfitting_rule_study.py`` and at its exact
thresholds; the strength threshold against scipy's normal quantile.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy import stats

from sweepaudit.errors import InputError
from sweepaudit.methods.cscv import cscv
from sweepaudit.methods.overfitting import overfitting_diagnosis


def _sweep(kind: str, rng: np.random.Generator) -> np.ndarray:
    """Synthetic sweeps as in benchmarks/overfitting_rule_study.py (T = 1000, N = 20)."""
    noise = rng.standard_normal((1000, 20))
    if kind == "noise":
        return noise
    if kind == "edge":
        noise[:, 0] += 0.15
        return noise
    if kind == "plateau":
        return 0.10 + np.sqrt(0.5) * rng.standard_normal((1000, 1)) + np.sqrt(0.5) * noise
    start = rng.integers(0, 940)  # lucky: one stretch of 60 windows, a bleed elsewhere
    noise[:, 0] -= 0.03
    noise[start:start + 60, 0] += 1.53
    return noise


@pytest.mark.parametrize(
    ("kind", "case", "at_least"),
    [("noise", "no_edge", 4), ("edge", "robust", 4), ("plateau", "shared_edge", 3),
     ("lucky", "overfit", 2)],
)
def test_diagnosis_cases_on_synthetic_sweeps(kind, case, at_least):
    """Five seeded sweeps of each kind; the expected case for most of them (the simulation study
    gives the rates: about 94% no_edge, 97% robust, 84% shared_edge, 74% overfit). Plateau sweeps
    that are not 'shared_edge' must still pass as 'robust'; noise and lucky sweeps must fail."""
    rng = np.random.default_rng(["noise", "edge", "plateau", "lucky"].index(kind) + 1000)
    diagnoses = [overfitting_diagnosis(cscv(_sweep(kind, rng))) for _ in range(5)]
    assert sum(d.case == case for d in diagnoses) >= at_least
    if kind in ("edge", "plateau"):
        assert sum(d.passed for d in diagnoses) >= 4
    else:
        assert sum(d.passed for d in diagnoses) <= 1


def test_diagnosis_rule_at_its_thresholds():
    """The rule as documented in docs/overfitting_rule.md, at the exact boundaries."""
    rng = np.random.default_rng(1)
    base = cscv(rng.standard_normal((160, 10)), partitions=8)
    c = base.combinations

    def diagnose(pbo, loss, strong_share, **thresholds):
        t = np.where(np.arange(c) < round(strong_share * c), 10.0, 0.0)
        fake = dataclasses.replace(base, probability_of_overfitting=pbo, probability_of_loss=loss,
                                   in_sample_t_statistic=t)
        return overfitting_diagnosis(fake, **thresholds)

    assert diagnose(0.25, 0.2, 0.0).case == "robust"
    assert diagnose(0.26, 0.2, 0.0).case == "shared_edge"
    assert diagnose(0.9, 0.0, 1.0).passed
    failed = diagnose(0.1, 0.21, 0.0)
    assert (failed.case, failed.passed) == ("no_edge", False)
    assert diagnose(0.5, 0.5, 10 / 70).case == "no_edge"
    assert diagnose(0.5, 0.5, 11 / 70).case == "overfit"
    assert diagnose(0.5, 0.5, 0.5, min_strength_share=0.6).case == "no_edge"
    assert diagnose(0.5, 0.3, 0.0, max_probability_of_loss=0.3).case == "shared_edge"
    d = diagnose(0.1, 0.1, 0.0)
    assert d.strength_threshold == pytest.approx(stats.norm.ppf(0.95 ** (1 / 10)))
    assert "loses money out of sample with probability 0.100 (at most 0.200 allowed)" in d.reason


def test_diagnosis_errors():
    with pytest.raises(InputError, match="result must be a CscvResult from cscv\\(\\); got dict"):
        overfitting_diagnosis({})
    result = cscv(np.random.default_rng(0).standard_normal((64, 3)), partitions=4)
    with pytest.raises(InputError, match=r"max_probability_of_loss must be a number in \[0, 1\]; "
                                         r"got 1.5"):
        overfitting_diagnosis(result, max_probability_of_loss=1.5)


@pytest.mark.slow
def test_diagnosis_case_rates_on_synthetic_sweeps():
    """Rates over 40 sweeps of each kind, with margin below those of the simulation study."""
    floors = {"noise": ("no_edge", 0.8), "edge": ("robust", 0.85), "plateau": ("shared_edge", 0.65),
              "lucky": ("overfit", 0.55)}
    for k, (kind, (case, floor)) in enumerate(floors.items()):
        rng = np.random.default_rng(2000 + k)
        diagnoses = [overfitting_diagnosis(cscv(_sweep(kind, rng))) for _ in range(40)]
        assert np.mean([d.case == case for d in diagnoses]) >= floor
        passed = np.mean([d.passed for d in diagnoses])
        assert passed >= 0.9 if kind in ("edge", "plateau") else passed <= 0.12
