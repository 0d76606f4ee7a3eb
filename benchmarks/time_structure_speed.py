"""What the evidence over time costs: the walk-forward picks and the replayed resamples, against floors.

On seeded synthetic sweeps (correlated normal excess returns, not market data), medians of ``--runs``
runs in one process:

* ``walk_forward_picks`` (every window's best training Sharpe ratio, from cumulative sums over blocks
  of configurations) against a floor: two ``numpy.cumsum`` passes over the T x N matrix, the least any
  O(T N) method must do; and, on a small sweep, against the literal loop that recomputes every
  window's training mean and standard deviation (the definition, O(T^2 N));
* the extra pass over the audit's resamples for the time structure's six part columns against the
  audit's own moments product (``weights @ returns`` for every configuration, the same resamples);
* the whole audit, and the share of it the time structure takes.

    python benchmarks/time_structure_speed.py               # N=1,000, T=2,000, B=10,000
    python benchmarks/time_structure_speed.py --quick       # N=200, T=500, B=2,000
    python benchmarks/time_structure_speed.py --large       # adds N=20,000, T=2,000 (picks only)
"""

from __future__ import annotations

import argparse
import os

import numpy as np
from timing import median_seconds

from sweepaudit import AuditSettings, audit, sweep_from_array
from sweepaudit.methods.bootstrap_ci import part_columns
from sweepaudit.methods.walkforward import walk_forward_picks
from sweepaudit.resample import draw_resamples, moment_chunk, resampled_moments


def returns(n: int, t: int, seed: int = 1) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return 0.01 * (0.6 * rng.standard_normal((t, 1)) + 0.8 * rng.standard_normal((t, n)))


def literal_picks(x: np.ndarray, warmup: int) -> np.ndarray:
    out = []
    for t in range(warmup, x.shape[0]):
        train = x[:t]
        out.append(int(np.argmax(train.mean(axis=0) / train.std(axis=0, ddof=1))))
    return np.array(out)


def picks_against_floors(n: int, t: int, runs: int) -> None:
    x = returns(n, t)
    warmup = t // 4
    picks = median_seconds(lambda: walk_forward_picks(x, warmup=warmup), runs)
    floor = median_seconds(lambda: (np.cumsum(x, axis=0), np.cumsum(x * x, axis=0)), runs)
    print(f"walk_forward_picks N={n:,} T={t:,}: median {picks:.3f} s; two cumsum passes {floor:.3f} s; "
          f"ratio x{picks / floor:.1f}")


def picks_against_literal_loop(runs: int) -> None:
    x = returns(100, 400)
    fast = median_seconds(lambda: walk_forward_picks(x, warmup=100), runs)
    slow = median_seconds(lambda: literal_picks(x, 100), runs)
    assert np.array_equal(walk_forward_picks(x, warmup=100), literal_picks(x, 100))
    print(f"walk_forward_picks N=100 T=400: {fast * 1e3:.2f} ms against the literal loop {slow * 1e3:.1f} ms "
          f"(x{slow / fast:.0f} faster, same picks)")


def replay_against_moments(n: int, t: int, b: int, runs: int) -> None:
    x = returns(n, t)
    resamples = draw_resamples(t, count=b, block_length=3.0, seed=5)
    own = x[:, 0]
    mask = np.arange(t) >= t // 4
    parts = part_columns([(own, mask), (own, ~mask), (own, mask)])
    main = median_seconds(lambda: resampled_moments(x, resamples, chunk=moment_chunk(t)), runs)
    extra = median_seconds(lambda: resampled_moments(parts, resamples, chunk=moment_chunk(t)), runs)
    print(f"moments of the {parts.shape[1]} part columns, N={n:,} T={t:,} B={b:,}: {extra:.3f} s against "
          f"{main:.3f} s for every configuration's moments (x{extra / main:.2f} of it)")


def time_structure_share(n: int, t: int, b: int, runs: int) -> None:
    """The whole audit, and the part of it the time structure takes (its calls repeated on the same sweep)."""
    from sweepaudit.audit import _time_intervals, _time_structure, gather_evidence

    sweep = sweep_from_array(returns(n, t), periods_per_year=52)
    settings = AuditSettings(seed=3, resamples=b)
    whole = median_seconds(lambda: audit(sweep, settings=settings), runs)
    evidence = gather_evidence(sweep, settings=settings)
    k = evidence.selected_index

    def time_structure():
        walk, st, _ = _time_structure(sweep, k, evidence.policy, evidence.long_run, evidence.tails)
        _time_intervals(sweep.returns[:, k], walk, st, evidence.resamples, evidence.confidence, "studentized")

    part = median_seconds(time_structure, runs)
    print(f"the whole audit N={n:,} T={t:,} B={b:,}: median {whole:.2f} s, of which the time structure "
          f"{part:.2f} s ({100 * part / whole:.1f}%)")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--large", action="store_true")
    ap.add_argument("--runs", type=int, default=5)
    args = ap.parse_args()
    n, t, b = (200, 500, 2000) if args.quick else (1000, 2000, 10_000)
    print(f"machine: {os.cpu_count()} cores; load average {os.getloadavg()[0]:.2f} at the start; "
          f"median of {args.runs} runs")
    picks_against_literal_loop(args.runs)
    picks_against_floors(n, t, args.runs)
    replay_against_moments(n, t, b, max(1, args.runs // 2))
    time_structure_share(n, t, b, max(1, args.runs // 2))
    if args.large:
        picks_against_floors(20_000, 2000, 2)
    print(f"load average {os.getloadavg()[0]:.2f} at the end")


if __name__ == "__main__":
    main()
