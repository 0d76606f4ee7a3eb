"""The parameter surface of a two-parameter sweep: is the selected cell an isolated peak?

A genuine edge usually sits on a plateau of similar settings; a lone high cell among weak
neighbours is what selection luck looks like. The rule's two thresholds are our own rule of thumb.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..results import PeakShape

if TYPE_CHECKING:
    from ..audit import AuditResults

__all__ = ["PEAK_NEIGHBOUR_SHARE", "PEAK_WEAK_STANDARD_ERRORS", "PeakShape", "isolated_peak", "parameter_grid"]



#: The selected cell is an isolated peak among weak neighbours when its neighbours' mean Sharpe ratio
#: is below this share of its own (they reach less than half the peak) ...
PEAK_NEIGHBOUR_SHARE = 0.5
#: ... and below this many bootstrap standard errors of the peak's Sharpe ratio (on their own the
#: neighbours would not be told apart from no edge at all).
PEAK_WEAK_STANDARD_ERRORS = 1.0


def parameter_grid(results: AuditResults) -> tuple[list, list, np.ndarray, tuple[int, int]] | None:
    """The two-parameter grid of per-window Sharpe ratios (NaN where the sweep lacks a cell)."""
    params = results.sweep.parameters
    if params.shape[1] != 2 or results.sweep.n_configurations < 2:
        return None
    a, b = params.columns
    try:
        xs = sorted(params[a].unique())
        ys = sorted(params[b].unique())
    except TypeError:  # mixed types cannot be ordered into a grid
        return None
    grid = np.full((len(ys), len(xs)), np.nan)
    ix = {v: i for i, v in enumerate(xs)}
    iy = {v: i for i, v in enumerate(ys)}
    cell = (0, 0)
    for j, (va, vb) in enumerate(zip(params[a], params[b])):
        grid[iy[vb], ix[va]] = results.sharpe_ratios[j]
        if j == results.selected_index:
            cell = (iy[vb], ix[va])
    return xs, ys, grid, cell


def isolated_peak(results: AuditResults) -> PeakShape | None:
    """Compare the selected cell of a two-parameter sweep with its grid neighbours.

    Returns None when the sweep does not have exactly two parameters or the selected cell has no
    neighbour. A genuine edge usually sits on a plateau of similar settings; a lone high cell among
    weak ones is what selection luck looks like (Bailey, Borwein, Lopez de Prado and Zhu 2017 discuss
    the stability of performance across neighbouring parameters as a sign against overfitting).
    """
    g = parameter_grid(results)
    if g is None:
        return None
    _, _, grid, (r, c) = g
    rows, cols = grid.shape
    steps = ((r - 1, c), (r + 1, c), (r, c - 1), (r, c + 1))
    values = np.array([grid[i, j] for i, j in steps if 0 <= i < rows and 0 <= j < cols])
    values = values[np.isfinite(values)]
    if values.size == 0:
        return None
    k = results.selected_index
    sharpe = float(results.sharpe_ratios[k])
    dist = results.intervals.sharpe_distribution[:, k]
    dist = dist[np.isfinite(dist)]
    se = float(np.std(dist, ddof=1)) if dist.size > 1 else float("nan")
    mean = float(values.mean())
    gap = (sharpe - mean) / se if se > 0 else float("nan")
    isolated = bool(
        sharpe > 0
        and mean < PEAK_NEIGHBOUR_SHARE * sharpe
        and math.isfinite(se)
        and mean < PEAK_WEAK_STANDARD_ERRORS * se
    )
    return PeakShape(sharpe, mean, int(values.size), se, gap, isolated)
