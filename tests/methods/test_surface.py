"""Tests of sweepaudit.methods.surface (the parameter grid and the isolated-peak rule).

Internal consistency only: the rule is our own rule of thumb (see ``PeakShape``); it is checked
against a literal recomputation of its definition by a plain loop over the configurations, on a
lone high cell (isolated) and on a plateau (not isolated), and the grid against the table it
reshapes.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from sweepaudit.methods.surface import isolated_peak, parameter_grid


def grid_parameters(fast=(1, 2, 3), slow=(10, 20, 30)):
    """The parameter table of a fast x slow grid, row-major over slow then fast."""
    rows = [{"fast": f, "slow": s} for s in slow for f in fast]
    names = [f"fast={r['fast']}, slow={r['slow']}" for r in rows]
    return pd.DataFrame(rows, index=pd.Index(names, name="configuration"))


def literal_peak(parameters, sharpes, selected, distribution):
    """The rule of PeakShape, recomputed by a plain loop over the configurations."""
    fast_levels, slow_levels = sorted(parameters["fast"].unique()), sorted(parameters["slow"].unique())
    me = parameters.iloc[selected]
    fi, si = fast_levels.index(me["fast"]), slow_levels.index(me["slow"])
    neighbours = []
    for j in range(len(parameters)):
        fj = fast_levels.index(parameters.iloc[j]["fast"])
        sj = slow_levels.index(parameters.iloc[j]["slow"])
        if abs(fj - fi) + abs(sj - si) == 1:
            neighbours.append(sharpes[j])
    mean = sum(neighbours) / len(neighbours)
    se = np.std(distribution, ddof=1)
    s = sharpes[selected]
    return mean, len(neighbours), se, bool(s > 0 and mean < 0.5 * s and mean < se)


@pytest.mark.parametrize(
    ("means", "expected"),
    [([0, 0, 0, 0, 0.35, 0, 0, 0, 0], True), ([0.1, 0.15, 0.1, 0.15, 0.35, 0.15, 0.1, 0.15, 0.1], False)],
    ids=["lone cell", "plateau"],
)
def test_isolated_peak_flags_a_lone_cell_and_not_a_plateau(means, expected):
    rng = np.random.default_rng(5)
    parameters = grid_parameters()
    sharpes = np.asarray(means) + rng.normal(0, 0.01, 9)
    distribution = rng.normal(sharpes[4], 0.06, 500)
    shape = isolated_peak(parameters, sharpes, selected=4, sharpe_distribution=distribution)
    mean, count, se, isolated = literal_peak(parameters, sharpes, 4, distribution)
    assert shape.neighbours == count == 4
    assert shape.neighbour_mean == pytest.approx(mean)
    assert shape.standard_error == pytest.approx(se)
    assert shape.gap_in_standard_errors == pytest.approx((sharpes[4] - mean) / se)
    assert shape.isolated is isolated is expected
    assert shape.neighbours_reach_half is bool(mean >= 0.5 * sharpes[4])
    assert shape.threshold == pytest.approx(min(0.5 * sharpes[4], se))


def test_corner_cell_has_two_neighbours_and_missing_cells_are_skipped():
    parameters = grid_parameters()
    sharpes = np.arange(9, dtype=float) / 10
    shape = isolated_peak(parameters, sharpes, selected=0, sharpe_distribution=np.linspace(-1, 1, 50))
    assert shape.neighbours == 2 and shape.neighbour_mean == pytest.approx((0.1 + 0.3) / 2)
    # Without the cells beside the corner it has no neighbour left: no shape.
    kept = [0, 2, 4, 5, 6, 7, 8]
    assert isolated_peak(parameters.iloc[kept], sharpes[kept], selected=0, sharpe_distribution=np.ones(5)) is None


def test_grid_lays_the_sharpe_ratios_out_by_parameter_value():
    parameters = grid_parameters().iloc[::-1]  # any row order
    sharpes = np.arange(9, dtype=float)[::-1].copy()
    grid = parameter_grid(parameters, sharpes, selected=0)
    assert (grid.x_parameter, grid.y_parameter) == ("fast", "slow")
    assert grid.x_values == (1, 2, 3) and grid.y_values == (10, 20, 30)
    np.testing.assert_array_equal(grid.sharpe, np.arange(9.0).reshape(3, 3))
    assert grid.selected_cell == (2, 2)  # the first row given is fast=3, slow=30


def test_no_grid_without_exactly_two_orderable_parameters():
    parameters = grid_parameters()
    sharpes = np.zeros(9)
    assert parameter_grid(parameters.iloc[:, :1], sharpes, selected=0) is None
    assert isolated_peak(parameters.iloc[:, :1], sharpes, selected=0, sharpe_distribution=np.ones(3)) is None
    assert parameter_grid(parameters.iloc[:1], sharpes[:1], selected=0) is None
    mixed = parameters.assign(fast=[1, "a", 3] * 3)
    assert parameter_grid(mixed, sharpes, selected=0) is None
