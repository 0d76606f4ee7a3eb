"""Size and power of the whole verdict, by simulation (benchmarks/calibration.py runs the full study).

Checked against theory: a test of level alpha says go on a true null in at most alpha of sweeps
(binomial tolerance on the simulated count), and a selection-aware test at the same level should
find a real edge at least as often as the plain Bonferroni max-t test (Bonferroni's inequality gives
that yardstick its level for any correlation between configurations; it ignores serial dependence).

The default suite runs a short smoke; the study's targets run under ``-m slow``.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.stats import binom

from sweepaudit.calibration import calibrate_verdict
from sweepaudit.simulate import (
    grid_block_columns,
    simulate_crashes,
    simulate_dependent_grid,
    simulate_grid_plateau,
    simulate_hill,
    simulate_quiet_edge,
)


def _allowed(sweeps: int, level: float = 0.05) -> float:
    # a level-alpha procedure exceeds this count with probability below 0.1% (one-sided binomial)
    return binom.ppf(0.999, sweeps, level)


def test_smoke_size_under_persistent_dependence():
    # AR(1) windows with phi = 0.7 on a correlated grid: the earlier verdict's weak spot.
    sweeps = 40
    result = calibrate_verdict(
        lambda rng: simulate_dependent_grid(rng, 25, 156, phi=0.7), sweeps=sweeps, resamples=199, seed=3
    )
    assert result.go.events <= _allowed(sweeps)
    # the yardstick ignores the dependence and says go far more often: the family is a real test
    assert result.yardstick.events > result.go.events


def test_smoke_power_matches_the_yardstick():
    sweeps = 30
    result = calibrate_verdict(
        lambda rng: simulate_grid_plateau(rng, 25, 156, annual_sharpe=2.5), sweeps=sweeps, resamples=199, seed=4,
        planted=grid_block_columns(25, 3),
    )
    assert result.go.rate >= 0.8
    assert result.go.events >= result.yardstick.events - 3  # within Monte Carlo noise of the floor


# ------------------------------------------------------------------------------ the study's targets

SWEEPS = 200


def _target_size(simulate, seed):
    result = calibrate_verdict(simulate, sweeps=SWEEPS, resamples=499, seed=seed)
    assert result.go.rate <= 0.05 + 2 * np.sqrt(0.05 * 0.95 / SWEEPS), result.go
    return result


@pytest.mark.slow
@pytest.mark.parametrize(
    "simulate",
    [
        pytest.param(lambda rng: simulate_dependent_grid(rng, 100, 208), id="grid"),
        pytest.param(lambda rng: simulate_dependent_grid(rng, 100, 208, phi=0.5), id="ar0.5"),
        pytest.param(lambda rng: simulate_dependent_grid(rng, 100, 208, phi=0.7), id="ar0.7"),
        pytest.param(lambda rng: simulate_dependent_grid(rng, 100, 208, shocks="student_t"), id="student-t"),
        pytest.param(lambda rng: simulate_dependent_grid(rng, 100, 208, clustering=True, phi=0.3), id="garch"),
        pytest.param(lambda rng: simulate_crashes(rng, 100, 260), id="crashes"),
    ],
)
def test_false_go_at_most_the_level(simulate):
    _target_size(simulate, seed=11)


@pytest.mark.slow
@pytest.mark.parametrize(
    ("simulate", "planted", "target"),
    [
        pytest.param(lambda rng: simulate_grid_plateau(rng, 100, 208), grid_block_columns(100, 3), 0.9, id="plateau-2"),
        pytest.param(lambda rng: simulate_grid_plateau(rng, 100, 208, annual_sharpe=1.5), grid_block_columns(100, 3),
                     0.7, id="plateau-1.5"),
        pytest.param(lambda rng: simulate_hill(rng, 100, 208), None, 0.0, id="hill"),
        pytest.param(lambda rng: simulate_quiet_edge(rng, 50, 208), [0], 0.6, id="quiet"),
    ],
)
def test_power_targets_and_the_yardstick(simulate, planted, target):
    result = calibrate_verdict(simulate, sweeps=SWEEPS, resamples=499, seed=12, planted=planted)
    assert result.go.rate >= target
    gap_se = np.hypot(result.go.standard_error, result.yardstick.standard_error)
    assert result.go.rate >= result.yardstick.rate - 2 * gap_se
