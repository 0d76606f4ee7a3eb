"""Probability of backtest overfitting by combinatorially symmetric cross-validation (CSCV).

Bailey, D. H., Borwein, J. M., Lopez de Prado, M. and Zhu, Q. J. (2017), "The Probability of
Backtest Overfitting", Journal of Computational Finance 20(4).

The T x N matrix of per-window excess returns is cut into S contiguous blocks. Every choice of S/2
blocks is an in-sample half and its complement the out-of-sample half. For each of the C(S, S/2)
splits the configuration with the best in-sample statistic is selected and its out-of-sample rank
among all N configurations is turned into a logit; the probability of backtest overfitting (PBO) is
the share of logits at or below zero.

Notes
-----
Conventions (each one is tested in ``tests/methods/test_cscv.py``):

* Blocks: ``T`` windows are cut into ``S`` contiguous blocks in time order; when ``T`` is not a
  multiple of ``S`` the first ``T mod S`` blocks get one extra window, so no window is dropped.
  The cut is reported in ``CscvResult.block_bounds`` and ``CscvResult.block_rule``.
* Minimum block size: the floor is 2 windows per block for ``"sharpe"`` and 1 for ``"mean"``; the
  comfortable minimum is 4 windows per block for ``"sharpe"`` and 1 for ``"mean"`` (our choice: a
  block of 4 windows keeps a single window from dominating a block and limits leakage of serial
  dependence across block edges). When the requested ``partitions`` leaves blocks below the
  comfortable minimum, ``partitions`` is reduced to the largest even number that meets it (or, if
  none does, the floor) and a ``SweepAuditWarning`` is emitted. Below the floor at two blocks the
  data are refused with ``DegenerateDataError``.
* Statistic: ``"sharpe"`` is mean / standard deviation (ddof = 1) over the pooled windows of the
  chosen blocks, per window, not annualized; ``"mean"`` is the pooled mean excess return.
* Zero variance (``"sharpe"``): when every window of a half-sample of a configuration has the same
  value ``v``, its Sharpe ratio there is the limit of mean / sd as the sd goes to zero: ``+inf``
  for ``v > 0``, ``-inf`` for ``v < 0`` and ``0`` for ``v = 0`` (no excess return, no edge). Ranks
  handle infinities; the degradation regression uses only splits with finite statistics. A warning
  names how many configurations are affected.
* In-sample ties: the configuration with the lowest column index among the tied best is selected.
  A tie is exact equality of the computed statistics. Statistics come from uncentred block sums,
  so duplicate columns, and data whose sums are exact in binary floating point (small integers,
  multiples of powers of two), tie reliably; values equal only in decimal arithmetic may differ
  in the last bit and then do not tie.
* Out-of-sample ranks run from 1 (worst) to N (best); tied values get the average (mid) rank. The
  relative rank is ``w = rank / (N + 1)`` and the logit ``ln(w / (1 - w))``.
* PBO is the share of splits with logit ``<= 0`` ("at or below zero"), so its value when nothing
  has an edge is 1/2 for even N and (N + 1) / (2N) for odd N.
* Probability of loss is the share of splits whose selected configuration has an out-of-sample
  statistic strictly below zero.
* Stochastic dominance compares the empirical distribution of the selected configuration's
  out-of-sample statistic (one value per split) with that of a configuration picked at random: all
  N configurations' out-of-sample statistics pooled over all splits. Dominance is weak (identical
  distributions count as dominance). First order holds when
  ``F_selected(x) <= F_pooled(x)`` for every ``x``; the largest violation
  ``max_x (F_selected(x) - F_pooled(x))`` is exact because the supremum of that step-function
  difference is reached at a value of the selected sample. Second order holds when
  ``E[(x - X_selected)^+] <= E[(x - X_pooled)^+]`` (integrated CDFs); it is evaluated at every
  value of the selected sample and in the limit ``x -> inf`` (the difference of means), which can
  miss a larger violation between two neighbouring selected values; gaps below 1e-12 times the
  largest absolute selected value (at least 1e-12) count as rounding, not violation.

Computation: per-block (uncentred) sums, sums of squares and counts give every half-sample's
statistic with one matrix product (split-indicator matrix times block sums), processed in chunks
of splits so memory stays bounded. The product is evaluated as two lookups in subset-sum tables
of the first and last S/2 blocks plus one addition (the matrix product itself when the tables
would exceed 96 MiB). The complement of the i-th split (block sets ordered as bit
masks) is the (C - 1 - i)-th, so every half-sample is computed once and serves as in-sample for
one split and out-of-sample for its mirror.
"""

from __future__ import annotations

import functools
import math
import warnings
from dataclasses import dataclass
from typing import get_args

import numpy as np

from .. import validate
from ..errors import DegenerateDataError, InputError, SweepAuditWarning
from ..results import CscvBlockRanks, CscvBlockWinners, CscvResult, SplitStatistic

__all__ = ["cscv", "cscv_layout", "cscv_block_winners", "combine_winners", "cscv_block_ranks", "cscv_from_blocks"]


_STATISTICS: tuple[str, ...] = get_args(SplitStatistic)
# Floor and comfortable minimum of windows per block (see module Notes).
_FLOOR_WINDOWS_PER_BLOCK = {"sharpe": 2, "mean": 1}
_COMFORTABLE_WINDOWS_PER_BLOCK = {"sharpe": 4, "mean": 1}
# C(20, 10) = 184,756 splits; beyond that the enumeration is impractical.
_MAX_PARTITIONS = 20
# Bytes per (splits x configurations) float array in a chunk; a handful are alive at once. Chunks
# that stay in the processor's cache: 2 MiB ran about 20% faster than 16 MiB at 200 and at 1,000
# configurations (benchmarks/cscv_speed.py).
_CHUNK_BYTES = 2 * 2**20
_CACHE_BYTES = 128 * 2**20
_TABLE_BYTES = 96 * 2**20
# Most uniform bins that locate pooled values among the selected values without a binary search.
_DOMINANCE_BINS = 2**20
_LOGIT_QUANTILE_LEVELS = (0.05, 0.25, 0.5, 0.75, 0.95)
_BLOCK_RULE = "contiguous blocks in time order; the first T mod S blocks get one extra window"


def _validate(returns, partitions, statistic) -> tuple[np.ndarray, int, str, list[str]]:
    statistic = validate.choice(statistic, "statistic", _STATISTICS)
    partitions = validate.whole_number(partitions, "partitions", minimum=2, what="an even whole number of at least 2")
    if partitions % 2:
        raise InputError(f"partitions must be an even whole number of at least 2; got {partitions}")
    if partitions > _MAX_PARTITIONS:
        raise InputError(
            f"partitions must be at most {_MAX_PARTITIONS} "
            f"(C({_MAX_PARTITIONS}, {_MAX_PARTITIONS // 2}) = "
            f"{math.comb(_MAX_PARTITIONS, _MAX_PARTITIONS // 2):,} splits); got {partitions}"
        )
    matrix = validate.returns_matrix(returns, min_windows=1, min_configurations=2)
    messages: list[str] = []
    return matrix, _partitions_used(matrix.shape[0], partitions, statistic, messages), statistic, messages


def _partitions_used(windows: int, partitions: int, statistic: str, messages: list[str]) -> int:
    """``partitions``, or fewer (with a message) when blocks would hold too few windows."""
    floor = _FLOOR_WINDOWS_PER_BLOCK[statistic]
    comfortable = _COMFORTABLE_WINDOWS_PER_BLOCK[statistic]
    if windows < 2 * floor:
        raise DegenerateDataError(
            f"returns has {windows} window(s); CSCV with statistic {statistic!r} needs at least "
            f"{2 * floor} windows (2 blocks of at least {floor} window(s) each)"
        )
    if windows // partitions >= comfortable:
        return partitions
    evens = range(partitions, 1, -2)
    used = next((s for s in evens if windows // s >= comfortable), 0) or next(
        s for s in evens if windows // s >= floor
    )
    messages.append(
        f"returns has {windows} windows, too few for partitions={partitions} with at least "
        f"{comfortable} windows per block (statistic {statistic!r}); using partitions={used} "
        f"({windows // used} or more windows per block, {math.comb(used, used // 2):,} splits)"
    )
    return used


def _block_bounds(windows: int, partitions: int) -> np.ndarray:
    base, extra = divmod(windows, partitions)
    sizes = np.full(partitions, base, dtype=np.int64)
    sizes[:extra] += 1
    stops = np.cumsum(sizes)
    return np.column_stack([stops - sizes, stops])


@functools.lru_cache(maxsize=4)
def _split_indicator(partitions: int) -> np.ndarray:
    """Boolean (C, S) matrix of in-sample blocks, ordered by bit mask so row C-1-i mirrors row i."""
    masks = np.arange(2**partitions, dtype=np.int64)
    bits = ((masks[:, None] >> np.arange(partitions)) & 1).astype(bool)
    indicator = bits[bits.sum(axis=1) == partitions // 2]
    indicator.flags.writeable = False
    return indicator


class _HalfStatistics:
    """Statistic of every configuration on any set of half-samples, from per-block sums."""

    def __init__(self, matrix: np.ndarray, bounds: np.ndarray, statistic: str) -> None:
        self.statistic = statistic
        # Raw (uncentred) sums: for integer or other dyadic data every sum is exact, so halves that
        # tie in exact arithmetic tie bit for bit. Sum-of-squares variances lose accuracy only when
        # |mean| / sd is enormous, which per-window excess returns are not.
        starts = bounds[:, 0]
        self.counts = (bounds[:, 1] - bounds[:, 0]).astype(np.float64)
        self.sums = np.add.reduceat(matrix, starts, axis=0)
        self.squares = np.add.reduceat(matrix * matrix, starts, axis=0)
        self.constant_columns = np.zeros(0, dtype=np.int64)
        if statistic == "sharpe":
            low = np.minimum.reduceat(matrix, starts, axis=0)
            high = np.maximum.reduceat(matrix, starts, axis=0)
            flat = low == high
            # A half can be constant only if at least S/2 of the column's blocks are.
            self.constant_columns = np.flatnonzero(flat.sum(axis=0) >= len(starts) // 2)
            self.block_flat = flat[:, self.constant_columns]
            self.block_value = low[:, self.constant_columns]
        # Subset-sum tables: a half is a subset of the first S/2 blocks plus a subset of the last
        # S/2, so its sums are one table row from each side added: one addition per entry and
        # the same order of additions for every column. Fall back to the matrix product (0/1
        # split-indicator matrix times block sums) when the tables would be large.
        partitions = len(starts)
        self.side = partitions // 2
        tables = 2 if statistic == "sharpe" else 1
        size = 2 * 2**self.side * matrix.shape[1] * 8 * tables
        self.tables = None
        if size <= _TABLE_BYTES:
            self.tables = [
                (self._subset_sums(block[: self.side]), self._subset_sums(block[self.side:]))
                for block in ([self.sums, self.squares] if tables == 2 else [self.sums])
            ]

    @staticmethod
    def _subset_sums(blocks: np.ndarray) -> np.ndarray:
        """Row m holds the sum of the blocks whose bits are set in m, added in bit order."""
        table = np.zeros((2 ** blocks.shape[0], blocks.shape[1]))
        for bit, block in enumerate(blocks):
            table[2**bit: 2 ** (bit + 1)] = table[: 2**bit] + block
        return table

    def _half_sums(self, indicator: np.ndarray, which: int) -> np.ndarray:
        if self.tables is None:
            source = self.sums if which == 0 else self.squares
            return indicator.astype(np.float64) @ source
        bits = 1 << np.arange(self.side)
        low = indicator[:, : self.side] @ bits
        high = indicator[:, self.side:] @ bits
        first, second = self.tables[which]
        out = first[low]
        out += second[high]
        return out

    def t_statistic(self, indicator: np.ndarray, columns: np.ndarray) -> np.ndarray:
        """t-statistic of the mean, mean / (sd / sqrt(n)), of one column per half-sample."""
        weights = indicator.astype(np.float64)
        count = weights @ self.counts
        total = np.einsum("ij,ji->i", weights, self.sums[:, columns])
        squares = np.einsum("ij,ji->i", weights, self.squares[:, columns])
        mean = total / count
        with np.errstate(divide="ignore", invalid="ignore"):
            variance = (squares - total * mean) / (count - 1.0)
        # Constant halves (sd 0) follow the Sharpe convention: sign(mean) * inf, 0 for mean 0; a
        # one-window half ("mean" with S = 2 and T = 2) carries no evidence: 0.
        positive = variance > 0
        value = _signed_infinity(mean)
        value[positive] = mean[positive] / np.sqrt(variance[positive]) * np.sqrt(count[positive])
        value[count < 2] = 0.0
        return value

    def __call__(self, indicator: np.ndarray) -> np.ndarray:
        count = (indicator.astype(np.float64) @ self.counts)[:, None]
        total = self._half_sums(indicator, 0)
        value = total / count
        if self.statistic == "mean":
            return value
        # In place: variance = (sum of squares - sum * mean) / (n - 1).
        spread = self._half_sums(indicator, 1)
        total *= value
        spread -= total
        spread /= count - 1.0
        if spread.min() <= 0:  # rounding can leave a non-constant half with variance <= 0
            degenerate = ~(spread > 0)
            spread[degenerate] = 1.0
            value[degenerate] = _signed_infinity(value[degenerate])
        np.sqrt(spread, out=spread)
        value /= spread
        for k, column in enumerate(self.constant_columns):
            flat = self.block_flat[:, k]
            vals = self.block_value[:, k]
            all_flat = ~(indicator & ~flat).any(axis=1)
            top = np.where(indicator, vals, -np.inf).max(axis=1)
            bottom = np.where(indicator, vals, np.inf).min(axis=1)
            constant = all_flat & (top == bottom)
            value[constant, column] = _signed_infinity(top[constant])
        return value


def _signed_infinity(values: np.ndarray) -> np.ndarray:
    """Limit of mean / sd as sd -> 0: +inf, -inf, or 0 for a zero mean."""
    return np.where(values > 0, np.inf, np.where(values < 0, -np.inf, 0.0))


def _rows_per_chunk(configurations: int) -> int:
    return max(2, _CHUNK_BYTES // (8 * configurations))


def cscv(
    returns,
    *,
    partitions: int = 16,
    statistic: SplitStatistic = "sharpe",
    dominance: bool = True,
    warn: bool = True,
) -> CscvResult:
    """Probability of backtest overfitting by combinatorially symmetric cross-validation.

    Parameters
    ----------
    returns : numpy.ndarray or pandas.DataFrame
        T x N per-window excess returns: rows are windows in time order, columns configurations.
    partitions : int, default 16
        Number S of contiguous blocks; even, 2 .. 20. Reduced, with a warning, when blocks would
        hold too few windows (see Notes).
    statistic : {"sharpe", "mean"}, default "sharpe"
        Performance statistic on a half-sample: per-window Sharpe ratio (mean / sd, ddof = 1) or
        mean excess return, over the pooled windows of its blocks.
    dominance : bool, default True
        Whether to compute the stochastic-dominance figures and the pooled out-of-sample mean (a
        second pass over every split's statistics of every configuration, about half the cost).
        False leaves them None: for callers that only decide a verdict, which never reads them
        (a calibration's audits, the sensitivity block's re-runs).
    warn : bool, default True
        Emit the warnings below. False: they are only in the result's ``warnings`` (for a caller
        that runs CSCV on another thread and issues them in its own order).

    Returns
    -------
    CscvResult
        PBO, probability of loss, logits, degradation line, stochastic dominance and the per-split
        raw material.

    Raises
    ------
    InputError
        ``returns`` not a finite 2-D matrix with at least 2 columns; ``partitions`` not an even
        integer in 2 .. 20; unknown ``statistic``.
    DegenerateDataError
        Fewer windows than two blocks at the floor need (4 for "sharpe", 2 for "mean").

    Warns
    -----
    SweepAuditWarning
        ``partitions`` reduced; zero-variance half-samples; degradation line not computable.

    Notes
    -----
    Bailey, Borwein, Lopez de Prado and Zhu (2017), the CSCV procedure: for each split,
    n* = argmax of the in-sample statistic; w = rank of n* out of sample / (N + 1); logit =
    ln(w / (1 - w)); PBO = share of logits <= 0. Degradation: least squares of the out-of-sample on
    the in-sample statistic of n*. Blocks, ties, zero variance, dominance: the module docstring.
    """
    matrix, used, statistic, messages = _validate(returns, partitions, statistic)
    halves = _HalfStatistics(matrix, _block_bounds(matrix.shape[0], used), statistic)
    if halves.constant_columns.size:
        messages.append(
            f"{halves.constant_columns.size} configuration(s) have at least {used // 2} blocks "
            "of identical windows; a half-sample with zero variance gets Sharpe ratio +inf, "
            "-inf or 0 by the sign of its constant value"
        )
    result = _splits(matrix, halves, used, int(partitions), messages, dominance)
    for message in messages if warn else ():
        warnings.warn(message, SweepAuditWarning, stacklevel=2)
    return result


def _splits(matrix: np.ndarray, halves: _HalfStatistics, used: int, requested: int, messages: list[str],
            dominance: bool = True) -> CscvResult:
    """Every split's winner, then the figures CSCV reads off them (messages collect the warnings)."""
    windows, configurations = matrix.shape
    indicator = _split_indicator(used)
    combinations = indicator.shape[0]
    # Keep every half-sample's statistics for the dominance pass when they fit the cache budget;
    # otherwise they are recomputed chunk by chunk.
    cache = (np.empty((combinations, configurations))
             if dominance and combinations * configurations * 8 <= _CACHE_BYTES else None)
    step = max(1, _rows_per_chunk(configurations) // 2)
    winners = _winners(halves, indicator, step, cache)
    if not dominance:
        return _read_off(winners, None, None, windows, configurations, used, requested, halves.statistic, messages)
    if cache is not None:
        chunks = (cache[i:i + step] for i in range(0, combinations, step))
    else:
        chunks = (halves(indicator[i:i + step]) for i in range(0, combinations, step))
    points = np.unique(winners.out_of_sample)
    pooled = _pooled(points, chunks, combinations * configurations)
    del cache
    return _read_off(winners, points, pooled, windows, configurations, used, requested, halves.statistic, messages)


def _read_off(winners, points, pooled, windows, configurations, used, requested, statistic, messages) -> CscvResult:
    """The figures CSCV reads off every split's winner and the pooled out-of-sample values."""
    indicator = _split_indicator(used)
    combinations = indicator.shape[0]
    relative = winners.rank / (configurations + 1)
    logits = np.log(relative / (1.0 - relative))
    quantiles = {q: float(v) for q, v in zip(_LOGIT_QUANTILE_LEVELS,
                                             np.quantile(logits, _LOGIT_QUANTILE_LEVELS))}
    slope, intercept, r_squared = _degradation(winners.in_sample, winners.out_of_sample, messages)
    if pooled is None:  # not asked for
        dominance = dict.fromkeys(("first_order_dominance", "first_order_violation", "second_order_dominance",
                                   "second_order_violation", "pooled_out_of_sample_mean"))
    else:
        dominance = _dominance_figures(winners.out_of_sample, points, pooled, combinations * configurations)
    if pooled is not None and dominance["second_order_dominance"] is None:
        messages.append(
            "second-order dominance and the pooled out-of-sample mean not computed: some "
            "out-of-sample statistics are infinite (zero-variance half-samples)"
        )
    return CscvResult(
        # 2 * rank <= N + 1 is the exact integer form of logit <= 0.
        probability_of_overfitting=float(np.mean(2.0 * winners.rank <= configurations + 1)),
        probability_of_loss=float(np.mean(winners.out_of_sample < 0)),
        logits=logits, logit_quantiles=quantiles,
        degradation_slope=slope, degradation_intercept=intercept, degradation_r_squared=r_squared,
        in_sample=winners.in_sample, out_of_sample=winners.out_of_sample, selected=winners.selected,
        out_of_sample_rank=winners.rank, relative_rank=relative,
        in_sample_blocks=np.nonzero(indicator)[1].reshape(combinations, used // 2),
        in_sample_t_statistic=winners.t_statistic,
        median_out_of_sample=float(np.median(winners.out_of_sample)),
        null_probability_of_overfitting=0.5 if configurations % 2 == 0 else (configurations + 1) / (2 * configurations),
        statistic=statistic, partitions=used, partitions_requested=requested, combinations=combinations,
        windows=windows, configurations=configurations, block_bounds=_block_bounds(windows, used),
        block_rule=_BLOCK_RULE, warnings=tuple(messages), **dominance,
    )


@dataclass(frozen=True)
class _Winners:
    """The in-sample winner of every split: its column, statistics in and out of sample, rank."""

    selected: np.ndarray
    in_sample: np.ndarray
    out_of_sample: np.ndarray
    rank: np.ndarray
    t_statistic: np.ndarray


def _winners(halves: _HalfStatistics, indicator: np.ndarray, step: int, cache: np.ndarray | None) -> _Winners:
    """One pass over the splits in chunks: split i and its mirror C - 1 - i share their halves."""
    combinations = indicator.shape[0]
    half = combinations // 2
    out = _Winners(*(np.empty(combinations, dtype=d) for d in (np.int64, float, float, float, float)))
    for start in range(0, half, step):
        first = np.arange(start, min(start + step, half))
        rows = np.concatenate([first, combinations - 1 - first])
        values = halves(indicator[rows])
        if cache is not None:
            cache[rows] = values
        count = first.size
        mirror = np.concatenate([np.arange(count, 2 * count), np.arange(count)])
        best = np.argmax(values, axis=1)  # first maximum: lowest index wins ties
        chosen_oos = values[mirror, best]
        below = np.empty(rows.size)
        equal = np.empty(rows.size)
        # Row k's out-of-sample half is row k + count (and back): compare on views, no copy.
        for own, other in ((slice(0, count), slice(count, None)),
                           (slice(count, None), slice(0, count))):
            target = chosen_oos[own, None]
            below[own] = np.count_nonzero(values[other] < target, axis=1)
            equal[own] = np.count_nonzero(values[other] == target, axis=1)
        out.selected[rows] = best
        out.in_sample[rows] = values[np.arange(rows.size), best]
        out.out_of_sample[rows] = chosen_oos
        out.rank[rows] = below + (equal + 1) / 2.0
        out.t_statistic[rows] = halves.t_statistic(indicator[rows], best)
    return out


def _degradation(in_sample: np.ndarray, out_of_sample: np.ndarray, messages: list[str]):
    """Least-squares line out = intercept + slope * in over splits with finite statistics."""
    finite = np.isfinite(in_sample) & np.isfinite(out_of_sample)
    if not finite.all():
        messages.append(
            f"degradation line fitted on {int(finite.sum())} of {finite.size} splits; the rest "
            "have an infinite statistic (zero-variance half-sample)"
        )
    x, y = in_sample[finite], out_of_sample[finite]
    if not (x.size >= 3 and np.ptp(x) > 0):
        messages.append(
            "degradation line not computed: the selected configuration's in-sample statistic "
            "does not vary across splits (or fewer than 3 finite splits)"
        )
        return None, None, None
    dx, dy = x - x.mean(), y - y.mean()
    sxx, sxy, syy = float(dx @ dx), float(dx @ dy), float(dy @ dy)
    slope = sxy / sxx
    return slope, float(y.mean()) - slope * float(x.mean()), (sxy * sxy / (sxx * syy) if syy > 0 else 0.0)


def _pooled(points: np.ndarray, chunks, pooled_size: int) -> dict:
    """How the pooled values fall among the selected values: counts and sums per slot (a sum over
    chunks, so column blocks add up)."""
    counts = np.zeros(points.size + 1)
    sums = np.zeros(points.size + 1)
    pooled_total = 0.0
    pooled_nonfinite = 0
    locate = _SlotFinder(points, pooled_size // 4)
    for values in chunks:
        values = values.ravel()
        slot = locate(values)  # number of selected values strictly below each pooled value
        counts += np.bincount(slot, minlength=points.size + 1)
        finite = np.isfinite(values)
        if finite.all():
            sums += np.bincount(slot, weights=values, minlength=points.size + 1)
            pooled_total += values.sum()
        else:
            pooled_nonfinite += int(values.size - finite.sum())
    return {"counts": counts, "sums": sums, "total": pooled_total, "nonfinite": pooled_nonfinite}


def _dominance_figures(selected_oos: np.ndarray, points: np.ndarray, pooled: dict, pooled_size: int) -> dict:
    """First- and second-order dominance from the pooled counts (see the module Notes)."""
    counts, sums = pooled["counts"], pooled["sums"]
    # F_pooled(x_k) = share of pooled values <= x_k, i.e. with slot <= k.
    pooled_cdf = np.cumsum(counts)[:-1] / pooled_size
    selected_cdf = np.searchsorted(np.sort(selected_oos), points, side="right") / selected_oos.size
    first = float(max(0.0, np.max(selected_cdf - pooled_cdf)))

    second: float | None = None
    pooled_mean: float | None = None
    if pooled["nonfinite"] == 0 and np.all(np.isfinite(selected_oos)):
        # E[(x - X)^+] = x F(x) - E[X 1{X <= x}] at every selected value, plus x -> inf.
        pooled_lpm = points * pooled_cdf - np.cumsum(sums)[:-1] / pooled_size
        sel_sorted = np.sort(selected_oos)
        sel_partial = np.cumsum(sel_sorted)[np.searchsorted(sel_sorted, points, side="right") - 1]
        selected_lpm = points * selected_cdf - sel_partial / selected_oos.size
        pooled_mean = pooled["total"] / pooled_size
        gaps = np.append(selected_lpm - pooled_lpm, pooled_mean - float(np.mean(selected_oos)))
        # Rounding in the partial sums: differences below this scale count as ties.
        scale = 1e-12 * max(1.0, float(np.max(np.abs(points))))
        second = float(np.max(gaps, initial=0.0))
        second = 0.0 if second <= scale else second
    return {
        "first_order_dominance": first == 0.0,
        "first_order_violation": first,
        "second_order_dominance": None if second is None else second == 0.0,
        "second_order_violation": second,
        "pooled_out_of_sample_mean": pooled_mean,
    }


class _SlotFinder:
    """``np.searchsorted(points, values, side="left")`` through a uniform-bin lookup table.

    The bin of a value is a monotone function of it, so a value whose bin holds no point has as
    many points below it as all lower bins hold; only values sharing a bin with a point need the
    binary search. Exact, and several times faster than searching every value.
    """

    def __init__(self, points: np.ndarray, values_expected: int) -> None:
        self.points = points
        finite = points[np.isfinite(points)]
        self.trivial = finite.size == 0 or finite[0] == finite[-1]
        if self.trivial:
            return
        self.low = float(finite[0])
        # Enough bins that few values share one with a point, never many more than values.
        self.bins = int(np.clip(64 * points.size, 1024, min(_DOMINANCE_BINS, values_expected)))
        self.scale = self.bins / (float(finite[-1]) - self.low)
        point_bins = self._bins(points)
        per_bin = np.bincount(point_bins, minlength=self.bins + 1)
        self.below = np.concatenate([[0], np.cumsum(per_bin)[:-1]])
        self.shared = per_bin > 0

    def _bins(self, values: np.ndarray) -> np.ndarray:
        # Monotone in the value; values below the lowest point share bin 0 with it and those above
        # the top share the last bin, so both go through the exact search. Values are never NaN.
        with np.errstate(invalid="ignore", over="ignore"):
            scaled = values - self.low
            scaled *= self.scale
            np.clip(scaled, 0.0, float(self.bins), out=scaled)
        return scaled.astype(np.int64)

    def __call__(self, values: np.ndarray) -> np.ndarray:
        if self.trivial:
            return np.searchsorted(self.points, values, side="left")
        bins = self._bins(values)
        slot = self.below[bins]
        exact = np.flatnonzero(self.shared[bins])
        slot[exact] = np.searchsorted(self.points, values[exact], side="left")
        return slot


# --------------------------------------------------------------------------------------------------
# CSCV over column blocks: every figure from two passes of per-block summaries


def cscv_layout(windows: int, *, partitions: int = 16, statistic: SplitStatistic = "sharpe") -> tuple[int, list[str]]:
    """The partitions CSCV uses for ``windows`` windows (see the module Notes) and the message saying
    why it used fewer than asked, for :func:`cscv_block_winners` and :func:`cscv_from_blocks`."""
    statistic = validate.choice(statistic, "statistic", _STATISTICS)
    _validate(np.zeros((max(int(windows), 1), 2)), partitions, statistic)  # the same argument checks
    messages: list[str] = []
    return _partitions_used(int(windows), int(partitions), statistic, messages), messages


def _block_halves(block: np.ndarray, used: int, statistic: str) -> tuple[_HalfStatistics, np.ndarray, int]:
    matrix = np.asarray(block, dtype=np.float64)
    halves = _HalfStatistics(matrix, _block_bounds(matrix.shape[0], used), statistic)
    return halves, _split_indicator(used), max(1, _rows_per_chunk(matrix.shape[1]) // 2)


def _paired_rows(combinations: int, step: int):
    """Split i and its mirror C - 1 - i share their halves: rows in pairs, chunk by chunk."""
    half = combinations // 2
    for start in range(0, half, step):
        first = np.arange(start, min(start + step, half))
        count = first.size
        yield count, np.concatenate([first, combinations - 1 - first]), np.concatenate(
            [np.arange(count, 2 * count), np.arange(count)])


def cscv_block_winners(block: np.ndarray, *, partitions: int, statistic: SplitStatistic, start: int = 0) -> CscvBlockWinners:
    """Each split's best configuration within one column block (first pass of a blocked CSCV).

    Parameters
    ----------
    block : ndarray, shape (T, n)
        The block's returns.
    partitions : int
        The partitions CSCV uses (:func:`cscv_layout`).
    statistic : {"sharpe", "mean"}
    start : int
        The block's first column in the sweep.
    """
    halves, indicator, step = _block_halves(block, partitions, statistic)
    combinations = indicator.shape[0]
    out = CscvBlockWinners(*(np.empty(combinations, dtype=d) for d in (float, np.int64, float, float)),
                           constant=int(halves.constant_columns.size))
    for _, rows, mirror in _paired_rows(combinations, step):
        values = halves(indicator[rows])
        best = np.argmax(values, axis=1)  # first maximum: lowest index wins ties
        out.in_sample[rows] = values[np.arange(rows.size), best]
        out.column[rows] = best + start
        out.out_of_sample[rows] = values[mirror, best]
        out.t_statistic[rows] = halves.t_statistic(indicator[rows], best)
    return out


def combine_winners(parts: list[CscvBlockWinners]) -> CscvBlockWinners:
    """The sweep's winner of every split from the blocks' (in column order: ties go to the lower column)."""
    first = parts[0]
    out = CscvBlockWinners(first.in_sample.copy(), first.column.copy(), first.out_of_sample.copy(),
                           first.t_statistic.copy(), constant=sum(p.constant for p in parts))
    for part in parts[1:]:
        better = part.in_sample > out.in_sample
        for name in ("in_sample", "column", "out_of_sample", "t_statistic"):
            getattr(out, name)[better] = getattr(part, name)[better]
    return out


def cscv_block_ranks(
    block: np.ndarray, *, partitions: int, statistic: SplitStatistic, target: np.ndarray, points: np.ndarray,
    pooled_size: int,
) -> CscvBlockRanks:
    """Second pass of a blocked CSCV: how one block's out-of-sample values rank against each split's
    winner, and how they fall among the winners' values (for the dominance figures).

    Parameters
    ----------
    block : ndarray, shape (T, n)
    partitions, statistic
        As for :func:`cscv_block_winners`.
    target : ndarray, shape (C,)
        The winner's out-of-sample value of every split (:func:`combine_winners`).
    points : ndarray
        ``numpy.unique(target)``.
    pooled_size : int
        C times the sweep's configurations.
    """
    halves, indicator, step = _block_halves(block, partitions, statistic)
    combinations = indicator.shape[0]
    below, equal = np.zeros(combinations), np.zeros(combinations)

    def values_counted():
        # Every half-sample once (split i and its mirror), counted against the winners on the way.
        for count, rows, _ in _paired_rows(combinations, step):
            values = halves(indicator[rows])
            for own, other in ((slice(0, count), slice(count, None)), (slice(count, None), slice(0, count))):
                wanted = target[rows[own], None]
                below[rows[own]] = np.count_nonzero(values[other] < wanted, axis=1)
                equal[rows[own]] = np.count_nonzero(values[other] == wanted, axis=1)
            yield values

    pooled = _pooled(points, values_counted(), pooled_size)
    return CscvBlockRanks(below, equal, pooled)


def _add_pooled(a: dict, b: dict) -> dict:
    return {key: a[key] + b[key] for key in a}


def cscv_from_blocks(
    winners: CscvBlockWinners, ranks: list[CscvBlockRanks], *, windows: int, configurations: int,
    partitions: int, requested: int, statistic: SplitStatistic, messages: list[str],
) -> CscvResult:
    """The :func:`cscv` result from the two passes' summaries (the same figures; the pooled mean to
    rounding, its sum being taken block by block).

    ``messages`` are :func:`cscv_layout`'s; the warnings are emitted here, as :func:`cscv` does.
    """
    messages = list(messages)
    if winners.constant:
        messages.append(
            f"{winners.constant} configuration(s) have at least {partitions // 2} blocks "
            "of identical windows; a half-sample with zero variance gets Sharpe ratio +inf, "
            "-inf or 0 by the sign of its constant value"
        )
    below = np.sum([r.below for r in ranks], axis=0)
    equal = np.sum([r.equal for r in ranks], axis=0)
    pooled = ranks[0].pooled
    for part in ranks[1:]:
        pooled = _add_pooled(pooled, part.pooled)
    chosen = _Winners(selected=winners.column, in_sample=winners.in_sample, out_of_sample=winners.out_of_sample,
                      rank=below + (equal + 1) / 2.0, t_statistic=winners.t_statistic)
    points = np.unique(winners.out_of_sample)
    result = _read_off(chosen, points, pooled, windows, configurations, partitions, requested, statistic, messages)
    for message in messages:
        warnings.warn(message, SweepAuditWarning, stacklevel=2)
    return result
