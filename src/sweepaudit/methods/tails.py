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
from dataclasses import dataclass

import numpy as np

from ..errors import InputError

__all__ = ["FamilyStress", "family_stress", "STRESS_THRESHOLD", "STRESS_SHARE", "MIN_FAMILY"]

#: A loss beyond this many robust standard deviations counts as a large loss.
STRESS_THRESHOLD = 4.0
#: A window is a stress window when at least this share of the family takes a large loss.
STRESS_SHARE = 0.2
#: Fewer configurations than this say nothing about a family's tails.
MIN_FAMILY = 5

_MAD_TO_SD = 1.4826


@dataclass(frozen=True)
class FamilyStress:
    """The selected configuration's record with the family's stress losses charged to it.

    Attributes
    ----------
    windows : ndarray of int
        0-based positions of the stress windows (empty when none).
    family_loss : ndarray
        The family's average standardised return in each stress window (robust standard deviations).
    selected_return : ndarray
        The selected configuration's return in each stress window, as observed.
    charged_return : ndarray
        What it is charged there: the smaller of its own return and the family's average loss in
        its own scale.
    escaped : int
        Stress windows in which the selected configuration lost less than the family's average.
    adjusted : ndarray, shape (T,)
        The selected configuration's record with the charges applied (equal to the observed record
        when no window is a stress window).
    mean_observed, mean_adjusted : float
        Mean return per window before and after.
    threshold, share : float
        The rule's two parameters.
    applicable : bool
        False for a family of fewer than :data:`MIN_FAMILY` configurations.
    """

    windows: np.ndarray
    family_loss: np.ndarray
    selected_return: np.ndarray
    charged_return: np.ndarray
    escaped: int
    adjusted: np.ndarray
    mean_observed: float
    mean_adjusted: float
    threshold: float
    share: float
    applicable: bool


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
    median = np.median(x, axis=0)
    scale = _MAD_TO_SD * np.median(np.abs(x - median), axis=0)
    # A configuration that is flat most of the time has a zero MAD: fall back to its deviation.
    scale = np.where(scale > 0, scale, x.std(axis=0))
    scale = np.where(scale > 0, scale, 1.0)
    z = (x - median) / scale
    stressed = np.flatnonzero(np.mean(z < -threshold, axis=1) >= share)
    family = z[stressed].mean(axis=1)
    charge = median[selected] + scale[selected] * family
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
