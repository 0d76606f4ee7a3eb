"""The parameter surface of a two-parameter sweep: is the selected cell an isolated peak?

A genuine edge usually sits on a plateau of similar settings; a lone high cell among weak
neighbours is what selection luck looks like (Bailey, Borwein, Lopez de Prado and Zhu 2017 discuss
the stability of performance across neighbouring parameters as a sign against overfitting). The
rule's two thresholds are our own rule of thumb.

References
----------
Bailey, D. H., Borwein, J. M., Lopez de Prado, M. and Zhu, Q. J. (2017). The probability of backtest
overfitting. *Journal of Computational Finance* 20(4), 39-69.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from ..results import PeakShape, SharpeGrid

__all__ = ["PEAK_NEIGHBOUR_SHARE", "PEAK_WEAK_STANDARD_ERRORS", "isolated_peak", "parameter_grid"]

#: The selected cell is an isolated peak among weak neighbours when its neighbours' mean Sharpe ratio
#: is below this share of its own (they reach less than half the peak) ...
PEAK_NEIGHBOUR_SHARE = 0.5
#: ... and below this many bootstrap standard errors of the peak's Sharpe ratio (on their own the
#: neighbours would not be told apart from no edge at all).
PEAK_WEAK_STANDARD_ERRORS = 1.0


def parameter_grid(parameters: pd.DataFrame, sharpe_ratios: np.ndarray, *, selected: int) -> SharpeGrid | None:
    """The Sharpe ratios of a two-parameter sweep on their grid (NaN where the sweep lacks a cell).

    Parameters
    ----------
    parameters : DataFrame
        One row per configuration, in the order of ``sharpe_ratios``, one column per parameter.
    sharpe_ratios : ndarray, shape (N,)
        Per-window Sharpe ratio of each configuration.
    selected : int
        Row of the selected configuration.

    Returns
    -------
    SharpeGrid or None
        None unless there are exactly two parameters, at least two configurations and parameter
        values that can be ordered.
    """
    if parameters.shape[1] != 2 or len(sharpe_ratios) < 2:
        return None
    a, b = parameters.columns
    try:
        xs = sorted(parameters[a].unique())
        ys = sorted(parameters[b].unique())
    except TypeError:  # mixed types cannot be ordered into a grid
        return None
    grid = np.full((len(ys), len(xs)), np.nan)
    ix = {v: i for i, v in enumerate(xs)}
    iy = {v: i for i, v in enumerate(ys)}
    cell = (0, 0)
    for j, (va, vb) in enumerate(zip(parameters[a], parameters[b])):
        grid[iy[vb], ix[va]] = sharpe_ratios[j]
        if j == selected:
            cell = (iy[vb], ix[va])
    return SharpeGrid(str(a), str(b), tuple(xs), tuple(ys), grid, cell)


def isolated_peak(
    parameters: pd.DataFrame,
    sharpe_ratios: np.ndarray,
    *,
    selected: int,
    sharpe_distribution: np.ndarray,
) -> PeakShape | None:
    """Compare the selected cell of a two-parameter sweep with its grid neighbours.

    Parameters
    ----------
    parameters, sharpe_ratios, selected
        As for :func:`parameter_grid`.
    sharpe_distribution : ndarray, shape (B,)
        The selected configuration's resampled Sharpe ratios (its bootstrap standard error).

    Returns
    -------
    PeakShape or None
        None when the sweep does not have exactly two parameters or the selected cell has no
        neighbour.
    """
    g = parameter_grid(parameters, sharpe_ratios, selected=selected)
    if g is None:
        return None
    r, c = g.selected_cell
    rows, cols = g.sharpe.shape
    steps = ((r - 1, c), (r + 1, c), (r, c - 1), (r, c + 1))
    values = np.array([g.sharpe[i, j] for i, j in steps if 0 <= i < rows and 0 <= j < cols])
    values = values[np.isfinite(values)]
    if values.size == 0:
        return None
    sharpe = float(sharpe_ratios[selected])
    dist = np.asarray(sharpe_distribution)
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
    threshold = min(PEAK_NEIGHBOUR_SHARE * sharpe, PEAK_WEAK_STANDARD_ERRORS * se)
    return PeakShape(sharpe, mean, int(values.size), se, gap, isolated, mean >= PEAK_NEIGHBOUR_SHARE * sharpe, threshold)
