"""Calibration by simulation: how often does the verdict say go when it should not, and when it should?

Two kinds of evidence:

* Families of synthetic sweeps with known truth (the simulators of :mod:`sweepaudit.simulate`,
  re-exported here). Null families have no configuration with an edge, so every "go" is a false
  go; alternatives plant an edge of a known annualized Sharpe ratio, so the go rate is the power.
  :func:`calibrate_verdict` runs the full audit on many of them.
* Null sweeps shaped like the user's own (:func:`null_like`): the same windows and configurations,
  the same dependence across configurations and time, the edge removed. :func:`calibrate_sweep`
  measures this sweep's false-go rate under the active policy, and the power against an edge of a
  size the user names.

Every audit gathers its evidence once (:func:`sweepaudit.audit.gather_evidence`, on the shared
engine's resamples) and the verdict decides once; this module draws no bootstrap weights of its own.

References
----------
Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.
Politis, D. N. and White, H. (2004). Automatic block-length selection for the dependent bootstrap.
    Econometric Reviews 23(1), 53-70 (with the Patton, Politis and White 2009 correction).
Clopper, C. J. and Pearson, E. S. (1934). The use of confidence or fiducial limits illustrated in
    the case of the binomial. Biometrika 26(4), 404-413.
Hansen, P. R. (2005). A test for superior predictive ability. JBES 23(4), 365-380 (size and power
    of data-snooping tests judged by simulation, as here).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Iterator, Sequence
from dataclasses import dataclass, replace
from typing import get_args

import numpy as np

from . import simulate, validate
from .audit import gather_evidence
from .errors import InputError
from .methods.snooping import bonferroni_max_t
from .policy import DEFAULT_POLICY, Policy
from .engine import InProcess, executor_for
from .resample import GENERATION_GROUP, Resamples, automatic_block_length, draw_resamples
from .results import AuditSettings, BlockSeries, CheckRate, Rate, SweepCalibration, VerdictCalibration
from .simulate import *  # noqa: F403  (re-exported: the calibration study's families and simulators)
from .simulate import DEFAULT_PERIODS_PER_YEAR, per_window_edge
from .read import sweep_from_array
from .sweep import Sweep
from .verdict import decide

__all__ = [
    "BlockSeries",
    "Rate",
    "CheckRate",
    "VerdictCalibration",
    "NullSweeps",
    "SweepCalibration",
    "binomial_rate",
    "calibrate_verdict",
    "null_like",
    "calibrate_sweep",
    *simulate.__all__,  # re-exported: the README imports the simulators from here
]

BLOCK_SERIES: tuple[str, ...] = get_args(BlockSeries)

# --------------------------------------------------------------------------------------------
# Binomial rates with Monte Carlo error


def binomial_rate(events: int, trials: int) -> Rate:
    """Rate, Monte Carlo standard error and exact one-sided 95% bounds of a binomial count.

    Clopper and Pearson (1934): the upper bound is the 0.95 quantile of Beta(events + 1,
    trials - events), the lower bound the 0.05 quantile of Beta(events, trials - events + 1).
    """
    events = validate.whole_number(events, "events", minimum=0)
    trials = validate.whole_number(trials, "trials", minimum=0)
    if events > trials:
        raise InputError(f"events must not exceed trials; got {events} of {trials}")
    if trials == 0:
        nan = float("nan")
        return Rate(0, 0, nan, nan, nan, nan)
    from scipy import stats  # here: an audit never needs scipy.stats, whose import costs about a second

    p = events / trials
    upper = 1.0 if events == trials else float(stats.beta.ppf(0.95, events + 1, trials - events))
    lower = 0.0 if events == 0 else float(stats.beta.ppf(0.05, events, trials - events + 1))
    return Rate(events, trials, p, math.sqrt(p * (1 - p) / trials), upper, lower)


# --------------------------------------------------------------------------------------------
# Running the audit on many sweeps


def _audit_seeds(seed: int, count: int) -> np.ndarray:
    # One independent child seed per sweep, so sweep i's audit does not depend on how many ran.
    children = np.random.SeedSequence(seed).spawn(count)
    return np.array([int(c.generate_state(1, dtype=np.uint32)[0]) for c in children], dtype=np.int64)


def _run_audits(
    sweeps: Iterable[Sweep],
    *,
    count: int,
    audit_seeds: np.ndarray,
    settings: AuditSettings,
    policy: Policy,
    planted: Sequence[int] | None,
    seed: int,
    progress: Callable[[int], None] | None,
    executor=None,
    shared: NullSweeps | None = None,
) -> VerdictCalibration:
    decisions, selected, outcomes, required, yardstick = _audit_each(
        sweeps, count, audit_seeds, settings, policy, progress, executor, shared
    )
    ids = tuple(required)
    failed = np.full((count, len(ids)), np.nan)
    for i, row in enumerate(outcomes):
        for j, cid in enumerate(ids):
            if cid in row:
                failed[i, j] = float(row[cid])
    checks = tuple(
        CheckRate(cid, required[cid], binomial_rate(int(np.nansum(failed[:, j])), int(np.isfinite(failed[:, j]).sum())))
        for j, cid in enumerate(ids)
    )
    planted_rate = None
    if planted is not None:
        planted_rate = binomial_rate(int(np.isin(selected, list(planted)).sum()), count)
    return VerdictCalibration(
        sweeps=count, go=binomial_rate(int(decisions.sum()), count), checks=checks, decisions=decisions,
        check_ids=ids, check_failed=failed, selected=selected, planted_selected=planted_rate,
        audit_seeds=audit_seeds, resamples=settings.resamples if settings.resamples is not None else policy.resamples,
        policy=policy, seed=seed, yardstick=binomial_rate(int(yardstick.sum()), count), yardstick_decisions=yardstick,
    )


def _audit_each(sweeps, count, audit_seeds, settings, policy, progress, executor=None, shared=None):
    """Audit each sweep (its own seed) and decide its verdict: decisions, selections, check failures.

    ``executor`` (:func:`sweepaudit.engine.executor_for`) runs the audits, each a task of its own
    (Dask workers, or in process); the figures do not depend on where they ran. With ``shared`` (a
    :class:`NullSweeps`), each of ``sweeps`` is ``(rows, column, edge)`` for its ``sweep_at``, so a
    task carries indices and the real sweep reaches each worker once.
    """
    decisions = np.zeros(count, dtype=bool)
    yardstick = np.zeros(count, dtype=bool)
    selected = np.zeros(count, dtype=np.int64)
    outcomes: list[dict[str, bool]] = []
    required: dict[str, bool] = {}
    work = ((sweep, replace(settings, seed=int(audit_seeds[i])), policy)
            for i, sweep in zip(range(count), sweeps))
    for i, (decision, rejected, index, outcome, kinds) in enumerate((executor or InProcess()).each(_one_audit, work, shared)):
        decisions[i], yardstick[i], selected[i] = decision, rejected, index
        outcomes.append(outcome)
        for cid, is_required in kinds.items():
            required.setdefault(cid, is_required)
        if progress is not None:
            progress(len(outcomes))
    if len(outcomes) != count:
        raise InputError(f"the simulation yielded {len(outcomes)} sweeps; {count} were asked for")
    return decisions, selected, outcomes, required, yardstick


def _one_audit(work: tuple, shared: NullSweeps | None = None) -> tuple[bool, bool, int, dict[str, bool], dict[str, bool]]:
    """One simulated sweep's audit and verdict, reduced to what the rates count (a pure task)."""
    sweep, settings, policy = work
    if shared is not None:
        sweep = shared.sweep_at(*sweep)
    evidence = gather_evidence(sweep, settings=settings, policy=policy, verdict_only=True)
    verdict = decide(evidence, policy)
    return (verdict.decision == "go", bool(bonferroni_max_t(sweep.returns, level=policy.significance).rejected),
            int(evidence.selected_index), {c.id: not c.passed for c in verdict.checks},
            {c.id: c.required for c in verdict.checks})


def _check_settings(settings: AuditSettings | None, resamples: int | None) -> AuditSettings:
    settings = settings or AuditSettings()
    if not isinstance(settings, AuditSettings):
        raise InputError(f"settings must be an AuditSettings; got {type(settings).__name__}")
    if resamples is not None:
        settings = replace(settings, resamples=validate.whole_number(resamples, "resamples", minimum=1))
    return settings


def calibrate_verdict(
    simulate: Callable[[np.random.Generator], np.ndarray],
    *,
    sweeps: int = 200,
    periods_per_year: float | None = DEFAULT_PERIODS_PER_YEAR,
    settings: AuditSettings | None = None,
    resamples: int | None = None,
    policy: Policy | None = None,
    seed: int = 0,
    planted: Sequence[int] | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> VerdictCalibration:
    """Run the full audit on ``sweeps`` simulated sweeps and count its verdicts.

    Parameters
    ----------
    simulate : callable
        ``simulate(rng) -> T x N array`` of fractional excess returns, e.g.
        ``lambda rng: simulate_normal(rng, 50, 260)``. Called once per sweep with its own generator.
    sweeps : int
        Number of simulated sweeps (Monte Carlo standard error of a 5% rate: 1.5% at 200).
    periods_per_year : float or None
        Passed to :func:`sweepaudit.sweep.sweep_from_array` (weekly windows by default).
    settings : AuditSettings, optional
        Audit knobs; each audit's ``seed`` is replaced by its own child seed.
    resamples : int, optional
        Bootstrap resamples per audit (overrides ``settings.resamples``; None keeps it, and then
        the policy's).
    policy : Policy, optional
        The active policy (default policy when None).
    seed : int
        Master seed: simulation and resample seeds of every sweep derive from it.
    planted : sequence of int, optional
        Columns carrying a planted edge; reports how often the audit judged one of them.
    progress : callable, optional
        ``progress(done, total)`` after each audit.

    Returns
    -------
    VerdictCalibration

    Notes
    -----
    Under a null family the go rate estimates the verdict's size, which should not exceed the
    policy's significance level; under an alternative it estimates power (Hansen 2005, section 4,
    judges data-snooping tests the same way).
    """
    if not callable(simulate):
        raise InputError(f"simulate must be a callable rng -> T x N array; got {type(simulate).__name__}")
    count = validate.whole_number(sweeps, "sweeps", minimum=1)
    seed = validate.whole_number(seed, "seed", minimum=0)
    settings = _check_settings(settings, resamples)
    policy = policy or DEFAULT_POLICY
    children = np.random.SeedSequence([int(seed), 0]).spawn(count)

    def generate() -> Iterator[Sweep]:
        for child in children:
            x = simulate(np.random.default_rng(child))
            yield sweep_from_array(x, periods_per_year=periods_per_year)

    return _run_audits(
        generate(),
        count=count,
        audit_seeds=_audit_seeds(int(seed), count),
        settings=settings,
        policy=policy,
        planted=planted,
        seed=int(seed),
        progress=(lambda done: progress(done, count)) if progress else None,
    )


# --------------------------------------------------------------------------------------------
# Null sweeps shaped like the user's own


@dataclass(frozen=True, eq=False)
class NullSweeps:
    """Null sweeps shaped like a real one: the same dependence, the edge removed.

    Attributes
    ----------
    sweep : Sweep
        The real sweep.
    centred : ndarray, shape (T, N)
        Its returns with every configuration's full-sample mean subtracted (no edge anywhere).
    resamples : Resamples
        Stationary-bootstrap resamples of the windows from the shared engine; resample b is null
        sweep b, the same window indices for every configuration.
    block_series : {"average", "selected"}
        The series the automatic block length was computed on.
    selected_index : int or None
        The configuration used when ``block_series`` is "selected".
    """

    sweep: Sweep
    centred: np.ndarray
    resamples: Resamples
    block_series: BlockSeries
    selected_index: int | None = None

    @property
    def count(self) -> int:
        return self.resamples.count

    @property
    def block_length(self) -> float:
        return self.resamples.block_length

    def rows(self, chunk: int = GENERATION_GROUP) -> Iterator[np.ndarray]:
        """Yield each null sweep's windows (indices into the real sweep's), in order."""
        for idx in self.resamples.index_chunks(chunk):
            yield from idx

    def arrays(self, chunk: int = GENERATION_GROUP) -> Iterator[np.ndarray]:
        """Yield the null sweeps as T x N arrays, in order (the same ones for any chunk size)."""
        for row in self.rows(chunk):
            # Whole rows are taken: every configuration sees the same windows, so the
            # cross-sectional dependence of the real sweep is kept (Politis and Romano 1994).
            yield self.centred[row]

    def sweep_at(self, rows: np.ndarray, column: int | None = None, edge: float = 0.0) -> Sweep:
        """The null sweep of these windows as a Sweep with the real sweep's labels, parameters and
        periods; with ``column``, ``edge`` added to that configuration (a power sweep)."""
        x = self.centred[rows]
        if column is not None:
            x[:, column] += edge
        return replace(self.sweep, returns=x, sha256=None, notes=(), path=f"null-like {self.sweep.path}")

    def sweeps(self, chunk: int = GENERATION_GROUP) -> Iterator[Sweep]:
        """Yield the null sweeps as Sweeps with the real sweep's labels, parameters and periods."""
        for row in self.rows(chunk):
            yield self.sweep_at(row)


def null_like(
    sweep: Sweep,
    *,
    count: int = 200,
    seed: int = 0,
    block_series: BlockSeries = "average",
    selected: int | str | None = None,
    block_length: float | None = None,
) -> NullSweeps:
    """Null sweeps shaped like ``sweep``: same windows, configurations and dependence, no edge.

    Each configuration is demeaned (its full-sample mean subtracted), then whole windows are
    resampled jointly across all configurations with the stationary bootstrap (Politis and Romano
    1994) of the shared engine, so serial dependence survives inside blocks and cross-sectional
    dependence survives because every configuration gets the same window indices.

    Parameters
    ----------
    sweep : Sweep
    count : int
        Number of null sweeps.
    seed : int
        Seed of the resamples.
    block_series : {"average", "selected"}
        Where the automatic block length (Politis and White 2004, via
        :func:`sweepaudit.resample.automatic_block_length`) is computed: on the cross-sectional
        average of the demeaned configurations (default: it carries the dependence the
        configurations share, and the null sweeps resample them all together), or on the
        ``selected`` configuration (the series the audit itself uses).
    selected : int or str, optional
        Column index or name of the configuration for ``block_series="selected"``.
    block_length : float, optional
        Fix the mean block length instead of choosing it automatically.
    """
    if not isinstance(sweep, Sweep):
        raise InputError(f"sweep must be a Sweep (see sweep_from_array); got {type(sweep).__name__}")
    count = validate.whole_number(count, "count", minimum=1)
    seed = validate.whole_number(seed, "seed", minimum=0)
    if block_series not in BLOCK_SERIES:
        raise InputError(f"block_series must be one of {', '.join(BLOCK_SERIES)}; got {block_series!r}")
    index = None
    if selected is not None:
        if isinstance(selected, str):
            index = sweep.index_of(selected)
        else:
            index = int(selected)
            if not 0 <= index < sweep.n_configurations:
                raise InputError(f"selected must lie in [0, {sweep.n_configurations}); got {selected}")
    if block_series == "selected" and index is None:
        raise InputError('block_series="selected" needs the selected configuration (selected=...)')
    centred = sweep.returns - sweep.returns.mean(axis=0)
    centred.setflags(write=False)
    if block_length is None:
        series = centred[:, index] if block_series == "selected" else centred.mean(axis=1)
        block = automatic_block_length(series, "stationary")
    else:
        block = float(block_length)
    resamples = draw_resamples(sweep.n_windows, count=count, kind="stationary", block_length=block, seed=int(seed))
    return NullSweeps(sweep, centred, resamples, block_series, index)


def calibrate_sweep(
    sweep: Sweep,
    *,
    sweeps: int = 200,
    edge: float = 1.0,
    settings: AuditSettings | None = None,
    resamples: int | None = 1_000,
    policy: Policy | None = None,
    seed: int = 0,
    block_series: BlockSeries = "average",
    progress: Callable[[int, int], None] | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
) -> SweepCalibration:
    """False-go rate of the verdict on null sweeps shaped like ``sweep``, and power against ``edge``.

    Parameters
    ----------
    sweep : Sweep
    sweeps : int
        Number of null sweeps (and as many power sweeps when ``edge`` > 0).
    edge : float
        Annualized Sharpe ratio of the edge planted in the configuration the audit selected in the
        real sweep; 0 skips the power estimate. Needs ``sweep.periods_per_year``.
    settings : AuditSettings, optional
        As for the real audit (``selected``, bootstrap, block length...); seeds are replaced.
    resamples : int or None
        Bootstrap resamples per audit; 1,000 by default (see Notes); None takes the settings' or
        policy's.
    policy : Policy, optional
    seed : int
        Master seed of the null sweeps and of every audit.
    block_series : {"average", "selected"}
        Series for the null sweeps' automatic block length (see :func:`null_like`).
    progress : callable, optional
        ``progress(done, total)`` after each audit (total = sweeps, or 2 * sweeps with an edge).
    scheduler, workers : optional
        Run the simulated sweeps' audits on a Dask cluster (a scheduler address, or a local cluster
        of this many worker processes), one task per audit; the figures are the same.

    Notes
    -----
    1,000 resamples per audit: the calibration's Monte Carlo error is dominated by the number of
    sweeps (standard error of a 5% rate: 1.5% at 200 sweeps), while a bootstrap p-value near 5%
    from 1,000 resamples has standard error sqrt(0.05 * 0.95 / 1000) = 0.7%, which only moves the
    rare borderline decision. 10,000 would cost ten times as long for little change.

    The power sweeps are the null sweeps plus the edge (common random numbers), so the difference
    between false-go rate and power is not blurred by different noise.
    """
    count, seed = _check_calibration(sweep, sweeps, edge, seed)
    settings = _check_settings(settings, resamples)
    policy = policy or DEFAULT_POLICY
    real = gather_evidence(sweep, settings=replace(settings, seed=seed), policy=policy)
    k = real.selected_index
    null_seed, audit_seed = (int(c.generate_state(1, dtype=np.uint32)[0]) for c in np.random.SeedSequence(seed).spawn(2))
    nulls = null_like(sweep, count=count, seed=null_seed, block_series=block_series, selected=k)
    seeds = _audit_seeds(audit_seed, count)
    total = count * (2 if edge > 0 else 1)
    executor = executor_for(scheduler, workers)
    try:
        # Each task names its sweep by its windows; the real sweep travels to each worker once.
        null = _run_audits(
            ((rows, None, 0.0) for rows in nulls.rows()), count=count, audit_seeds=seeds, settings=settings,
            policy=policy, planted=None, shared=nulls,
            seed=seed, progress=(lambda done: progress(done, total)) if progress else None, executor=executor,
        )
        power = per_window = None
        if edge > 0:
            sd = float(nulls.centred[:, k].std(ddof=1))
            per_window = per_window_edge(float(edge), float(sweep.periods_per_year), sd) if sd > 0 else 0.0
            power = _run_audits(
                ((rows, k, per_window) for rows in nulls.rows()), count=count, audit_seeds=seeds,
                settings=settings, policy=policy, shared=nulls,
                planted=[k], seed=seed, progress=(lambda done: progress(count + done, total)) if progress else None,
                executor=executor,
            )
    finally:
        executor.close()
    return SweepCalibration(
        sweep=sweep, observed=decide(real, policy).decision, selected_index=k, configuration=sweep.configurations[k],
        null=null, power=power, edge_annual_sharpe=float(edge), edge_per_window=per_window,
        null_block_length=nulls.block_length, block_series=block_series, sweeps=count, resamples=null.resamples,
        seed=seed,
    )


def _check_calibration(sweep: Sweep, sweeps: int, edge: float, seed: int) -> tuple[int, int]:
    if not isinstance(sweep, Sweep):
        raise InputError(f"sweep must be a Sweep (see sweep_from_array); got {type(sweep).__name__}")
    count = validate.whole_number(sweeps, "sweeps", minimum=1)
    if not (isinstance(edge, (int, float)) and math.isfinite(edge) and edge >= 0):
        raise InputError(f"edge must be a non-negative annualized Sharpe ratio; got {edge!r}")
    if edge > 0 and not sweep.periods_per_year:
        raise InputError(
            "the power estimate needs the periods per year to turn the annualized edge into a "
            "per-window mean: load the sweep with periods per year (or dated windows), or set the edge "
            "to 0 to skip power"
        )
    return count, validate.whole_number(seed, "seed", minimum=0)
