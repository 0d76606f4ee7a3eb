"""The audit of a sweep whose ``B x N`` resampled moments exceed the memory budget: every method from
small per-block summaries, on the in-process or the Dask executor.

:mod:`sweepaudit.audit` calls these steps in order when it streams. Each pass runs one pure task per
block of configurations (``engine``: in process, or on Dask workers) and combines what comes back:

1. ``first_pass`` (returns only): each configuration's mean, Sharpe ratio, long-run variance and
   higher moments, the block's share of the average series, of the correlation Gram matrix, of the
   family-stress counts, the family sample's columns and each CSCV split's best configuration in
   the block.
2. ``resampled_pass`` (the block's resampled moments, from the same resamples regenerated from the
   seed): its intervals, each configuration's bootstrap variance, the data-snooping maxima per
   resample (and the largest draws StepM's later steps need), and the selected configuration's
   bootstrap distributions.
3. ``cscv_ranks`` (returns only): how each block's out-of-sample values rank against every split's
   winner, and the pooled values for the dominance figures.
4. ``further`` (resampled, rarely): StepM's exact maxima when a step has rejected every kept draw of
   some resample.

Memory: the per-configuration summaries (a few hundred bytes each), one block's temporaries (set by
the budget) and the per-resample or per-window vectors; never ``B x N``.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from .engine import BlockPlan
from .methods.bootstrap_ci import bootstrap_intervals
from .methods.cscv import (
    combine_winners,
    cscv_block_ranks,
    cscv_block_winners,
    cscv_from_blocks,
    cscv_layout,
)
from .methods.deflation import correlation_gram_block, effective_trials_from_gram
from .methods.inference import Family
from .methods.longrun import block_length_of_sample, family_sample, long_run_variance
from .methods.sharpe import return_moments
from .methods.snooping import FurtherPass, block_maximum, snooping_block
from .methods.tails import family_stress_from_blocks, stress_block
from .resample import Resamples
from .results import BootstrapIntervals, CscvBlockWinners, CscvResult, FamilyStress, LongRunVariance, SnoopingBlock

__all__ = ["Stream", "FirstPass", "ResampledPass"]

#: Configurations the family block length examines (as :func:`~sweepaudit.methods.longrun.family_block_length`).
SAMPLE = 256


@dataclass(frozen=True, eq=False)
class FirstPass:
    """The sweep's per-configuration figures and family sums, combined over the blocks."""

    mean: np.ndarray
    sharpe: np.ndarray
    long_run: LongRunVariance
    moment_sharpe: np.ndarray
    skewness: np.ndarray
    kurtosis: np.ndarray
    average: np.ndarray
    sample: np.ndarray
    sample_columns: np.ndarray
    gram: np.ndarray
    z_sum: np.ndarray
    below: np.ndarray
    total: np.ndarray
    median: np.ndarray
    scale: np.ndarray
    winners: CscvBlockWinners | None


@dataclass(frozen=True, eq=False)
class ResampledPass:
    """The intervals, bootstrap variances, snooping blocks and the selected distributions."""

    intervals: BootstrapIntervals
    variance: np.ndarray
    snooping: list[SnoopingBlock]


def _first_task(block, start, *, sample_columns, partitions, statistic, threshold):
    """Pass 1 on one block (returns only)."""
    n = block.shape[1]
    mean = block.mean(axis=0)
    moments = return_moments(block)
    inside = sample_columns[(sample_columns >= start) & (sample_columns < start + n)]
    gram, z_sum = correlation_gram_block(block)
    below, total, median, scale = stress_block(block, threshold=threshold)
    return dict(
        mean=mean, sharpe=mean / block.std(axis=0, ddof=1), long_run=long_run_variance(block),
        moment_sharpe=np.asarray(moments.sharpe), skewness=np.asarray(moments.skewness),
        kurtosis=np.asarray(moments.kurtosis), row_sum=block.sum(axis=1), sample=block[:, inside - start],
        sample_columns=inside, gram=gram, z_sum=z_sum, below=below, total=total, median=median, scale=scale,
        winners=None if partitions is None else cscv_block_winners(block, partitions=partitions, statistic=statistic,
                                                                   start=start),
    )


def _resampled_task(block, moments, start, *, confidence, method, selected):
    """Pass 2 on one block: intervals, bootstrap variances, snooping maxima, selected distributions."""
    intervals = bootstrap_intervals(block, moments, confidence=confidence, method=method)
    inside = start <= selected < start + block.shape[1]
    k = selected - start
    return dict(
        mean=intervals.mean, sharpe=intervals.sharpe,
        degenerate=~np.isfinite(intervals.sharpe_distribution).all(axis=1),
        snooping=snooping_block(moments.mean, block.mean(axis=0), block.shape[0], start=start),
        selected=(intervals.mean_distribution[:, k].copy(), intervals.sharpe_distribution[:, k].copy()) if inside else None,
        confidence=intervals.confidence, method=intervals.method,
        scale=(intervals.mean_standard_error, intervals.sharpe_standard_error, intervals.degrees_of_freedom),
    )


def _further_task(block, moments, start, *, keep, centre, scale):
    cols = slice(start, start + block.shape[1])
    if not keep[cols].any():
        return np.full(moments.mean.shape[0], -np.inf)
    return block_maximum(moments.mean, centre[cols], scale[cols], keep[cols])


def _winners_task(block, start, *, partitions, statistic):
    return cscv_block_winners(block, partitions=partitions, statistic=statistic, start=start)


def _ranks_task(block, start, *, partitions, statistic, target, points, pooled_size):
    return cscv_block_ranks(block, partitions=partitions, statistic=statistic, target=target, points=points,
                            pooled_size=pooled_size)


class Stream:
    """The passes of a streamed audit over ``returns`` (T x N), blocks as ``plan`` sets them, run
    by ``executor`` (:class:`~sweepaudit.engine.InProcess` or
    :class:`~sweepaudit.engine.cluster.DaskCluster`)."""

    def __init__(self, returns: np.ndarray, plan: BlockPlan, executor, *, partitions: int, statistic: str,
                 threshold: float, progress=None) -> None:
        self.returns = returns
        self.plan = plan
        self.executor = executor
        self.blocks = plan.blocks(returns.shape[1])
        self.requested = partitions
        self.statistic = statistic
        self.threshold = threshold
        self.progress = progress
        self.partitions, self.cscv_messages = cscv_layout(returns.shape[0], partitions=partitions, statistic=statistic)

    def _map(self, task, resamples: Resamples | None = None, progress=None):
        return self.executor.map(self.returns, self.blocks, task, resamples=resamples,
                                 keep_weights=self.plan.keep_weights, progress=progress)

    def first_pass(self) -> FirstPass:
        """Pass 1: per-configuration figures and the family's sums."""
        t, n = self.returns.shape
        columns = family_sample(n, 0, SAMPLE)  # the evenly spread part (the selected one is added later)
        if n > SAMPLE:
            columns = np.unique(np.linspace(0, n - 1, SAMPLE).round().astype(int))
        task = functools.partial(_first_task, sample_columns=columns, partitions=self.partitions,
                                 statistic=self.statistic, threshold=self.threshold)
        parts: dict[str, list] = {}
        sums: dict[str, np.ndarray] = {}
        winners = []
        for piece in self._map(task):
            for key in ("row_sum", "gram", "z_sum", "below", "total"):
                sums[key] = piece[key] if key not in sums else sums[key] + piece[key]
            for key in ("mean", "sharpe", "moment_sharpe", "skewness", "kurtosis", "median", "scale",
                        "sample", "sample_columns", "long_run"):
                parts.setdefault(key, []).append(piece[key])
            winners.append(piece["winners"])
        runs = parts["long_run"]
        long_run = LongRunVariance(*(np.concatenate([getattr(r, f) for r in runs]) for f in
                                     ("variance", "short_run_variance", "ar_coefficient", "bandwidth",
                                      "degrees_of_freedom")), windows=t)
        flat = {key: np.concatenate(parts[key]) for key in ("mean", "sharpe", "moment_sharpe", "skewness",
                                                             "kurtosis", "median", "scale", "sample_columns")}
        return FirstPass(
            long_run=long_run, average=sums["row_sum"][:, None] / n, sample=np.concatenate(parts["sample"], axis=1),
            gram=sums["gram"], z_sum=sums["z_sum"], below=sums["below"], total=sums["total"],
            winners=combine_winners(winners), **flat,
        )

    def block_length(self, first: FirstPass, selected: int, kind: str):
        """The family block length (:func:`~sweepaudit.methods.longrun.family_block_length`'s rule)."""
        columns = np.append(first.sample_columns, selected)
        examined = np.column_stack([first.sample, self.returns[:, selected]])
        unique, where = np.unique(columns, return_index=True)
        n = self.returns.shape[1]
        return block_length_of_sample(examined[:, where], unique, selected=selected,
                                      average=first.average if n > 1 else None, kind=kind)

    def family(self, first: FirstPass, selected: int) -> Family:
        """What the Sharpe inference needs of the whole sweep."""
        return Family(self.returns.shape[0], first.moment_sharpe, self.returns[:, selected],
                      float(first.skewness[selected]), float(first.kurtosis[selected]),
                      effective_trials_from_gram(first.gram, first.z_sum, self.returns.shape[1]))

    def stress(self, first: FirstPass, selected: int, share: float) -> FamilyStress:
        return family_stress_from_blocks(
            first.below, first.total, self.returns[:, selected], float(first.median[selected]),
            float(first.scale[selected]), configurations=self.returns.shape[1], threshold=self.threshold, share=share,
        )

    def resampled_pass(self, resamples: Resamples, *, confidence: float, method: str, selected: int) -> ResampledPass:
        """Pass 2: everything the resamples give, block by block."""
        n = self.returns.shape[1]
        task = functools.partial(_resampled_task, confidence=confidence, method=method, selected=selected)
        report = None if self.progress is None else (lambda stop: self.progress(round(resamples.count * stop / n), resamples.count))
        means, sharpes, variance, snooping, scales = [], [], [], [], []
        degenerate = np.zeros(resamples.count, dtype=bool)
        chosen = piece = None
        for piece in self._map(task, resamples, report):
            means += piece["mean"]
            sharpes += piece["sharpe"]
            degenerate |= piece["degenerate"]
            variance.append(piece["snooping"].variance_of_mean)
            snooping.append(piece["snooping"])
            scales.append(piece["scale"])
            chosen = piece["selected"] if piece["selected"] is not None else chosen
        mean_se, sharpe_se, nu = (None if part[0] is None else np.concatenate(part) for part in zip(*scales))
        intervals = BootstrapIntervals(
            mean=tuple(means), sharpe=tuple(sharpes), mean_distribution=chosen[0][:, None],
            sharpe_distribution=chosen[1][:, None], confidence=piece["confidence"], method=piece["method"],
            degenerate_resamples=int(degenerate.sum()), mean_standard_error=mean_se, sharpe_standard_error=sharpe_se,
            degrees_of_freedom=nu, distribution_columns=(selected,),
        )
        return ResampledPass(intervals, np.concatenate(variance), snooping)

    def further(self, resamples: Resamples) -> FurtherPass:
        """StepM's exact maxima over the configurations still in play, from one more resampled pass."""

        def further(keep: np.ndarray, centre: np.ndarray, scale: np.ndarray) -> np.ndarray:
            out = np.full(resamples.count, -np.inf)
            task = functools.partial(_further_task, keep=keep, centre=centre, scale=scale)
            for maxima in self._map(task, resamples):
                np.maximum(out, maxima, out=out)
            return out

        return further

    def cscv(self, first: FirstPass) -> CscvResult:
        """Pass 3 and CSCV's figures (the same as :func:`~sweepaudit.methods.cscv.cscv`)."""
        return self._ranked(first.winners)

    def cscv_alone(self) -> CscvResult:
        """CSCV by itself in two passes over the blocks (each split's winners, then the ranks): what
        a streamed audit's CSCV under another statistic or partition count needs, never ``T x N``
        temporaries."""
        task = functools.partial(_winners_task, partitions=self.partitions, statistic=self.statistic)
        return self._ranked(combine_winners(list(self._map(task))))

    def _ranked(self, winners: CscvBlockWinners) -> CscvResult:
        t, n = self.returns.shape
        target = winners.out_of_sample
        points = np.unique(target)
        task = functools.partial(_ranks_task, partitions=self.partitions, statistic=self.statistic, target=target,
                                 points=points, pooled_size=target.size * n)
        ranks = list(self._map(task))
        return cscv_from_blocks(winners, ranks, windows=t, configurations=n, partitions=self.partitions,
                                requested=self.requested, statistic=self.statistic, messages=self.cscv_messages)
