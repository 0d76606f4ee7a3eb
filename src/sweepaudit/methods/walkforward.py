"""The walk-forward record of picking the winner: does re-picking the best configuration pay?

A sweep is often used by re-tuning: at each step the configuration that did best so far is traded
in the next window (train on the past, trade the next window, pick again). The audit's selected
configuration is chosen with hindsight, on the whole sample; the walk-forward record judges the
procedure instead. For each window ``t`` after a warm-up, the configuration with the highest Sharpe
ratio on the windows before ``t`` (all of them, or a trailing ``lookback``) is picked and its excess
return in window ``t`` is recorded. Every pick uses only earlier windows, so the record is a genuine
out-of-sample record of the selection procedure itself (the recursive, "real time" model selection
of Pesaran and Timmermann 1995).

Picks are vectorised: cumulative sums of each configuration's returns and squared deviations give
every window's training mean and variance in O(T N), over blocks of configurations so memory stays
bounded; no loop runs over configurations or windows.

The test of the record's mean (the ``walk_forward`` check) guards against two ways a record with no
edge behind it can still show a positive mean:

* **Persistence.** When the configurations' returns are positively autocorrelated, the one that did
  best so far tends to have done well in the last window too, and so to do well in the next: under
  an AR(1) with coefficient phi and no edge anywhere, ``E[x_t | past] = phi x_(t-1)``, and a pick
  that chases the best past Sharpe ratio earns ``phi`` times its pick's last return on average.
  Autocorrelation in per-window excess returns mostly comes from overlapping positions and stale
  valuations, which no re-pick can trade on, so the test reads the innovations
  ``r_t - phi x_(t-1, pick)`` with phi the family's median AR(1) coefficient (bias-corrected,
  :func:`~sweepaudit.methods.longrun.long_run_variance`). Under no edge they are a martingale
  difference sequence; with a constant edge mu their mean is ``(1 - phi) mu`` and their t-ratio
  equals the record's long-run t-ratio (the factor ``(1 - phi)`` cancels against the innovations'
  smaller variance), so nothing is lost against a real edge.
* **Escaped crashes.** In a stress window of the family (:func:`~sweepaudit.methods.tails.family_stress`)
  the pick is charged at least the family's average loss, as the selected configuration is by the
  ``family_tails`` check. A record can also escape crashes by its dates alone: rare shared losses that
  fell in the warm-up are not in the record (the peso problem, Krasker 1980). When the record holds
  fewer stress windows than its share of the whole sample's would predict, the missing ones are charged
  too, each at the average loss the sample's stress windows carry for the record's most picked
  configuration, spread evenly over the record (sweepaudit's rule; with rare crashes of a slightly
  losing premium the test passed 16% of 1,000 simulated null sweeps without the stress charges and
  4.8% with them, ``docs/time_structure.md``).

The t-ratio of the tested series' mean against its long-run standard error is read against
Student's t with the long-run estimate's equivalent degrees of freedom (one-sided).

References
----------
Pesaran, M. H. and Timmermann, A. (1995). Predictability of stock returns: robustness and economic
    significance. Journal of Finance 50(4), 1201-1228 (recursive model selection using only the
    data available at each date; from memory).
Hamilton, J. D. (1994). Time Series Analysis. Princeton University Press, section 3.4 (AR(1):
    ``E[x_t | x_(t-1)] = phi x_(t-1)``).
Krasker, W. S. (1980). The 'peso problem' in testing the efficiency of forward exchange markets.
    Journal of Monetary Economics 6(2), 269-276.
Andrews, D. W. K. and Monahan, J. C. (1992). An improved heteroskedasticity and autocorrelation
    consistent covariance matrix estimator. Econometrica 60(4), 953-966.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import stats

from .. import validate
from ..errors import InputError
from ..results import FamilyStress, WalkForward
from .longrun import long_run_variance
from .tails import stress_charges

__all__ = ["MIN_RECORD", "default_warmup", "walk_forward_picks", "walk_forward"]

#: Fewest windows a walk-forward record needs (the long-run variance of its mean needs 8).
MIN_RECORD = 8

#: Bytes of float64 temporaries one block of configurations may use while picking.
PICK_BUDGET = 256 * 2**20

# A training variance below this share of the configuration's full-sample variance is rounding
# noise of the cumulative sums: the configuration was flat (not invested) in those windows.
_FLAT = 1e-12


def default_warmup(windows: int) -> int:
    """The automatic warm-up: a quarter of the windows (at least 2), so three quarters are traded.

    sweepaudit's choice: long enough for the first picks to rest on a few dozen windows in a sweep
    of a few years, short enough to leave most of the sample as the out-of-sample record.
    """
    return max(2, validate.whole_number(windows, "windows", minimum=1) // 4)


def _block_picks(x: np.ndarray, warmup: int, lookback: int | None) -> tuple[np.ndarray, np.ndarray]:
    """Highest training Sharpe ratio and its column (within the block) for each traded window."""
    t, width = x.shape
    centre = x.mean(axis=0)
    deviation = x - centre
    level = np.einsum("ij,ij->j", deviation, deviation) / t
    sums = np.zeros((t + 1, width))
    np.cumsum(x, axis=0, out=sums[1:])
    squares = np.zeros((t + 1, width))
    np.cumsum(deviation * deviation, axis=0, out=squares[1:])
    positions = np.arange(warmup, t)
    # Training windows [start, t): sums up to t are rows warmup..t-1 (a view); all earlier windows
    # start at row 0, which holds zeros, so only a trailing look-back needs its start rows.
    total, square = sums[warmup:t], squares[warmup:t]
    if lookback is not None:
        starts = np.maximum(0, positions - lookback)
        total, square = total - sums[starts], square - squares[starts]
        count = (positions - starts)[:, None].astype(np.float64)
    else:
        count = positions[:, None].astype(np.float64)
    mean = total / count
    shift = mean - centre
    # Shifting by the full-sample mean leaves the variance unchanged and keeps the sums small.
    variance = (square - count * shift * shift) / (count - 1.0)
    flat = variance <= _FLAT * level
    with np.errstate(divide="ignore", invalid="ignore"):
        sharpe = np.where(flat, -np.inf, mean / np.sqrt(np.where(flat, 1.0, variance)))
    column = np.argmax(sharpe, axis=1)
    return sharpe[np.arange(column.size), column], column


def walk_forward_picks(returns, *, warmup: int, lookback: int | None = None) -> np.ndarray:
    """For each window ``t >= warmup``, the configuration with the highest Sharpe ratio before ``t``.

    Parameters
    ----------
    returns : array_like, shape (T, N)
        Per-window excess returns, windows in rows.
    warmup : int
        The first window traded (0-based); at least 2, so the first pick rests on two windows.
    lookback : int, optional
        Each pick looks at the trailing ``lookback`` windows (at least 2); None: all earlier windows.

    Returns
    -------
    ndarray of int, shape (T - warmup,)
        The picked column for windows ``warmup`` to ``T - 1``.

    Notes
    -----
    The Sharpe ratio is the mean over the sample standard deviation (ddof = 1), the audit's own
    selection rule, here on the training windows only; ties go to the lowest column. A configuration
    flat over its training windows (zero variance: not invested) has no Sharpe ratio and is picked
    only when every configuration is flat (then the first).
    """
    x = validate.returns_matrix(returns, "returns", min_windows=3)
    t, n = x.shape
    warmup = validate.whole_number(warmup, "warmup", minimum=2, maximum=t - 1)
    if lookback is not None:
        lookback = validate.whole_number(lookback, "lookback", minimum=2)
    width = max(1, min(n, PICK_BUDGET // (8 * 8 * (t + 1))))
    best = np.full(t - warmup, -np.inf)
    picks = np.zeros(t - warmup, dtype=np.int64)
    for first in range(0, n, width):
        value, column = _block_picks(x[:, first : first + width], warmup, lookback)
        better = value > best  # strict: an earlier block keeps a tie
        best[better] = value[better]
        picks[better] = column[better] + first
    return picks


def _charged(x: np.ndarray, record: np.ndarray, picks: np.ndarray, warmup: int, stress: FamilyStress | None):
    """The record charged with the family's stress losses: the charged record, the stress windows inside
    the record, the stress windows expected there at the whole sample's rate, and the shortfall's charge
    per window (module notes)."""
    if stress is None or not stress.applicable or stress.windows.size == 0:
        return record, 0, 0.0, 0.0
    inside = stress.windows >= warmup
    columns = np.where(inside, picks[np.maximum(stress.windows - warmup, 0)], 0)
    charge = stress_charges(x, stress, columns)
    charged = record.copy()
    where = stress.windows[inside] - warmup
    charged[where] = np.minimum(record[where], charge[inside])
    held = int(inside.sum())
    expected = stress.windows.size * record.size / x.shape[0]
    if held >= expected:
        return charged, held, expected, 0.0
    # Fewer stress windows fell in the record than the sample's rate predicts: the record is charged
    # the missing ones at the average loss the stress windows carry for its most picked configuration.
    typical = np.full(stress.windows.size, np.argmax(np.bincount(picks)))
    loss = float(np.mean(np.maximum(-stress_charges(x, stress, typical), 0.0)))
    return charged, held, expected, (expected - held) * loss / record.size
def _one_sided(series: np.ndarray) -> tuple[float, float, float]:
    """t-ratio of the mean against its long-run standard error, degrees of freedom, P(T >= t | mean 0)."""
    if np.ptp(series) == 0:  # constant: no variance to judge the mean by
        m = float(series.mean())
        return (math.copysign(math.inf, m) if m else math.nan), math.nan, (0.0 if m > 0 else 1.0)
    estimate = long_run_variance(series[:, None])
    ratio = float(series.mean()) / math.sqrt(float(estimate.variance[0]) / series.size)
    nu = float(estimate.degrees_of_freedom[0])
    return ratio, nu, float(stats.t.sf(ratio, nu))


def _sharpe(series: np.ndarray) -> float:
    sd = float(series.std(ddof=1))
    return float(series.mean()) / sd if sd > 0 else math.nan


def walk_forward(
    returns,
    *,
    selected: int,
    warmup: int,
    lookback: int | None = None,
    persistence: float = 0.0,
    stress: FamilyStress | None = None,
) -> WalkForward:
    """The walk-forward record of re-picking the winner, and the test that its mean is above zero.

    Parameters
    ----------
    returns : array_like, shape (T, N)
        Per-window excess returns, windows in rows.
    selected : int
        The audit's selected configuration (compared with the record over the same windows).
    warmup : int
        The first window traded (0-based): at least 2, leaving at least :data:`MIN_RECORD` windows.
    lookback : int, optional
        Trailing windows each pick looks at (at least 2); None: all earlier windows.
    persistence : float
        AR(1) coefficient of the configurations' returns (in (-1, 1)); its prediction
        ``persistence * returns[t - 1, pick]`` is taken out before the test (module notes).
    stress : FamilyStress, optional
        The family's stress windows (:func:`~sweepaudit.methods.tails.family_stress` on ``returns``);
        the pick of each one inside the record is charged the family's average loss there.

    Returns
    -------
    WalkForward
        Without intervals (the audit adds them from its shared resamples).
    """
    x = validate.returns_matrix(returns, "returns", min_windows=MIN_RECORD + 2)
    t, n = x.shape
    selected = validate.column_index(selected, "selected", n)
    warmup = validate.whole_number(warmup, "warmup", minimum=2, maximum=t - MIN_RECORD,
                                   what=f"a whole number from 2 to {t - MIN_RECORD} (a record of at least "
                                        f"{MIN_RECORD} windows)")
    phi = validate.finite_number(persistence, "persistence")
    if not -1.0 < phi < 1.0:
        raise InputError(f"persistence must lie strictly between -1 and 1; got {persistence!r}")
    picks = walk_forward_picks(x, warmup=warmup, lookback=lookback)
    positions = np.arange(warmup, t)
    record = x[positions, picks]
    charged, stressed, expected, shortfall = _charged(x, record, picks, warmup, stress)
    prediction = phi * x[positions - 1, picks]
    tested = charged - prediction - shortfall
    statistic, nu, pvalue = _one_sided(tested)
    held = x[positions, selected]
    changes = int(np.count_nonzero(picks[1:] != picks[:-1]))
    counts = np.bincount(picks, minlength=n)
    return WalkForward(
        warmup=warmup, lookback=lookback, picks=picks, record=record, selected_record=held,
        mean=float(record.mean()), sharpe=_sharpe(record), pick_changes=changes,
        distinct_picks=int(np.count_nonzero(counts)), pick_change_rate=changes / max(picks.size - 1, 1),
        selected_share=float(np.mean(picks == selected)), most_picked=int(np.argmax(counts)),
        most_picked_share=float(counts.max() / picks.size), selected_mean=float(held.mean()),
        selected_sharpe=_sharpe(held), persistence=phi,
        persistence_gain=float(prediction.mean()), stress_windows=stressed, stress_windows_expected=expected,
        stress_charge=float(np.mean(record - charged)) + shortfall, tested=tested, tested_mean=float(tested.mean()),
        statistic=statistic, degrees_of_freedom=nu, pvalue=pvalue,
    )
