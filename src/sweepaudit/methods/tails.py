"""The family's tails: did the selected configuration escape losses its siblings took?

A strategy that sells insurance earns a steady premium and loses heavily in rare crashes. Over a few
years some configurations of such a sweep happen to miss the crashes their siblings took: their
record shows the premium without the losses, and selecting the best record selects exactly them
(the peso problem). The siblings' losses are evidence about the selected configuration's own
exposure, and :func:`family_stress` puts that evidence back.

Rule (sweepaudit's own; the thresholds are our choice and are documented in the README):

1. Standardise every configuration robustly: ``z = (x - median) / (1.4826 MAD)``, so that the
   crashes themselves do not inflate the scale (Hampel 1974; 1.4826 makes the MAD consistent for
   the normal standard deviation).
2. A *stress window* is one in which at least ``share`` (default 20%) of the configurations lose
   more than ``threshold`` (default 4) robust standard deviations. Under normal windows a loss of
   4 standard deviations has probability 3e-5, so a fifth of the family at once does not happen by
   chance; a common shock with fat tails or a shared crash does.
3. In each stress window the selected configuration is charged at least the family's average
   standardised loss, rescaled to its own median and robust scale: ``x_adj = min(x, median_sel +
   scale_sel * mean_k z_k)``. A configuration that took the loss keeps its own (larger) loss; one
   that escaped is charged what a configuration of the family lost on average.

The verdict then asks whether the edge survives on the adjusted record at the same
selection-adjusted level as the data-snooping test.

References
----------
Hampel, F. R. (1974). The influence curve and its role in robust estimation. JASA 69(346), 383-393.
Krasker, W. S. (1980). The 'peso problem' in testing the efficiency of forward exchange markets.
    Journal of Monetary Economics 6(2), 269-276.
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import InputError
from ..results import FamilyStress, TailTest
from .longrun import long_run_variance, normal_scores

__all__ = ["family_stress", "stress_block", "family_stress_from_blocks", "stress_charges", "tail_test", "STRESS_THRESHOLD", "STRESS_SHARE", "MIN_FAMILY"]

#: A loss beyond this many robust standard deviations counts as a large loss.
STRESS_THRESHOLD = 4.0
#: A window is a stress window when at least this share of the family takes a large loss.
STRESS_SHARE = 0.2
#: Fewer configurations than this say nothing about a family's tails.
MIN_FAMILY = 5

_MAD_TO_SD = 1.4826


def family_stress(
    returns,
    *,
    selected: int,
    threshold: float = STRESS_THRESHOLD,
    share: float = STRESS_SHARE,
) -> FamilyStress:
    """Stress windows of a sweep and the selected configuration's record charged with their losses.

    Parameters
    ----------
    returns : array_like, shape (T, N)
        Per-window excess returns, windows in rows, configurations in columns.
    selected : int
        0-based column of the configuration the audit judges.
    threshold : float
        Robust standard deviations beyond which a loss is large (positive number; default 4).
    share : float
        Share of configurations that must take a large loss in the same window (in (0, 1]; default 0.2).

    Returns
    -------
    FamilyStress
    """
    x = np.asarray(returns, dtype=np.float64)
    if x.ndim != 2 or not np.isfinite(x).all():
        raise InputError("returns must be a finite T x N matrix")
    t, n = x.shape
    if not 0 <= selected < n:
        raise InputError(f"selected must be a column index between 0 and {n - 1}; got {selected!r}")
    if not (math.isfinite(threshold) and threshold > 0):
        raise InputError(f"threshold must be a positive number of robust standard deviations; got {threshold!r}")
    if not (0 < share <= 1):
        raise InputError(f"share must lie in (0, 1]; got {share!r}")
    own = x[:, selected]
    empty = np.zeros(0)
    if n < MIN_FAMILY:
        return FamilyStress(np.zeros(0, dtype=np.int64), empty, empty, empty, 0, own.copy(),
                            float(own.mean()), float(own.mean()), threshold, share, False)
    median, scale = _robust_scale(x)
    z = (x - median) / scale
    stressed = np.flatnonzero(np.mean(z < -threshold, axis=1) >= share)
    family = z[stressed].mean(axis=1)
    return _charged(own, float(median[selected]), float(scale[selected]), stressed, family, threshold, share)


def _robust_scale(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each column's median and robust standard deviation (1.4826 MAD; Hampel 1974)."""
    median = np.median(x, axis=0)
    scale = _MAD_TO_SD * np.median(np.abs(x - median), axis=0)
    # A configuration that is flat most of the time has a zero MAD: fall back to its deviation.
    scale = np.where(scale > 0, scale, x.std(axis=0))
    scale = np.where(scale > 0, scale, 1.0)
    return median, scale


def _charged(own, median, scale, stressed, family, threshold, share) -> FamilyStress:
    """The selected record charged with the family's average standardised loss in stress windows."""
    charge = median + scale * family
    observed = own[stressed]
    charged = np.minimum(observed, charge)
    adjusted = own.copy()
    adjusted[stressed] = charged
    return FamilyStress(
        windows=stressed,
        family_loss=family,
        selected_return=observed,
        charged_return=charged,
        escaped=int(np.count_nonzero(observed > charge)),
        adjusted=adjusted,
        mean_observed=float(own.mean()),
        mean_adjusted=float(adjusted.mean()),
        threshold=float(threshold),
        share=float(share),
        applicable=True,
    )


def stress_block(block, *, threshold: float = STRESS_THRESHOLD) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """One column block's share of :func:`family_stress`: per window, how many of its configurations
    lost more than ``threshold`` robust standard deviations and the sum of their standardised
    returns; and each configuration's median and robust scale.

    Returns
    -------
    (below, total, median, scale) : ndarrays, shapes (T,), (T,), (n,), (n,)
    """
    x = np.asarray(block, dtype=np.float64)
    median, scale = _robust_scale(x)
    z = (x - median) / scale
    return np.count_nonzero(z < -threshold, axis=1).astype(np.float64), z.sum(axis=1), median, scale


def family_stress_from_blocks(
    below: np.ndarray, total: np.ndarray, own: np.ndarray, median: float, scale: float, *,
    configurations: int, threshold: float = STRESS_THRESHOLD, share: float = STRESS_SHARE,
) -> FamilyStress:
    """:func:`family_stress` from the summed :func:`stress_block` of every column block (the same
    figures; the family's mean standardised loss to rounding, its sum being taken block by block).

    Parameters
    ----------
    below, total : ndarray, shape (T,)
        Summed over the blocks.
    own : ndarray, shape (T,)
        The selected configuration's returns; ``median`` and ``scale`` its robust centre and scale.
    configurations : int
        N.
    """
    if configurations < MIN_FAMILY:
        raise InputError(f"the blocked family-stress rule needs at least {MIN_FAMILY} configurations")
    stressed = np.flatnonzero(below / configurations >= share)
    return _charged(np.asarray(own, dtype=np.float64), median, scale, stressed, total[stressed] / configurations,
                    threshold, share)


def tail_test(stress: FamilyStress, *, critical_value: float) -> TailTest:
    """Whether the selected configuration's charged record still clears the selection-adjusted bar.

    The charged record's mean is divided by its own long-run standard error
    (:func:`~sweepaudit.methods.longrun.long_run_variance`: the charged losses widen it too) and the
    t-ratio is read against Student's t with the estimate's equivalent degrees of freedom, then put
    on the standard normal scale (:func:`~sweepaudit.methods.longrun.normal_scores`) - the scale on
    which the data-snooping test compares its statistics with ``critical_value``.

    Parameters
    ----------
    stress : FamilyStress
        From :func:`family_stress`.
    critical_value : float
        The data-snooping test's critical value for the selected configuration (``inf`` when the
        test could not reject at any level its resamples allow).

    Returns
    -------
    TailTest
    """
    if not stress.applicable or stress.windows.size == 0:
        return TailTest(stress, None, float(critical_value), True)
    charged = stress.adjusted[:, None]
    estimate = long_run_variance(charged)
    ratio = math.sqrt(charged.shape[0]) * float(charged.mean()) / math.sqrt(float(estimate.variance[0]))
    statistic = float(normal_scores(np.array([ratio]), estimate.degrees_of_freedom)[0])
    return TailTest(stress, statistic, float(critical_value), bool(statistic > critical_value))


def stress_charges(returns, stress: FamilyStress, columns) -> np.ndarray:
    """What :func:`family_stress` charges in each stress window, for a configuration named per window.

    The walk-forward record (:mod:`sweepaudit.methods.walkforward`) holds a different configuration
    in each window; it is charged by the same rule as the selected configuration: in stress window
    ``stress.windows[i]`` the configuration ``columns[i]`` loses at least the family's average
    standardised loss there, in its own median and robust scale.

    Parameters
    ----------
    returns : array_like, shape (T, N)
        The sweep the stress windows were found in.
    stress : FamilyStress
        From :func:`family_stress` on ``returns``.
    columns : array_like of int, shape (len(stress.windows),)
        The configuration to charge in each stress window.

    Returns
    -------
    ndarray
        The charge (a return level; the record keeps its own return when that is lower).
    """
    x = np.asarray(returns, dtype=np.float64)
    cols = np.asarray(columns, dtype=np.int64)
    if cols.shape != stress.windows.shape:
        raise InputError(f"columns must name one configuration per stress window ({stress.windows.size}); "
                         f"got {cols.size}")
    if cols.size == 0:
        return np.zeros(0)
    unique, where = np.unique(cols, return_inverse=True)
    median, scale = _robust_scale(x[:, unique])
    return median[where] + scale[where] * stress.family_loss
