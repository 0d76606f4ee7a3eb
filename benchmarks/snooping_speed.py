"""Speed and memory of the data-snooping tests against arch's SPA and StepM on the same synthetic sweep.

Ours: drawing the stationary-bootstrap resamples, the shared resampled moments, then the audit's one
fused pass (``snooping_block`` over column blocks + ``snooping_from_blocks``): the reality check, the
SPA and StepM each under the three scales. References: ``arch.bootstrap.SPA(...).compute()`` and
``arch.bootstrap.StepM(...).compute()``, each alone with the same number of resamples on the same
data, in the same process (run once each: they are slow).

Usage (from the worktree root)::

    PYTHONPATH=src /work/main/.venv/bin/python benchmarks/snooping_speed.py            # full
    PYTHONPATH=src /work/main/.venv/bin/python benchmarks/snooping_speed.py --quick    # small

The data are synthetic: correlated normal excess returns, five configurations with an edge.
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import time
import tracemalloc

import numpy as np

from sweepaudit.engine import free_cores
from sweepaudit.methods.longrun import long_run_variance
from sweepaudit.methods.snooping import COLUMN_BLOCK, snooping_block, snooping_from_blocks, stored_further_pass
from sweepaudit.resample import draw_resamples, moment_chunk, resampled_moments

BLOCK_LENGTH = 10


def synthetic_sweep(windows: int, configurations: int, seed: int = 20) -> np.ndarray:
    """Synthetic excess returns (not market data): a common factor plus noise; five configurations
    have edges of 0.05 to 0.25 standard deviations per window, so StepM takes several steps."""
    rng = np.random.default_rng(seed)
    common = rng.standard_normal((windows, 1))
    x = 0.6 * common + 0.8 * rng.standard_normal((windows, configurations))
    x[:, :5] += np.array([0.25, 0.2, 0.15, 0.1, 0.05])
    return x * 0.01


def run_ours(x: np.ndarray, count: int, seed: int = 1) -> tuple[float, dict]:
    start = time.perf_counter()
    t, n = x.shape
    resamples = draw_resamples(t, count=count, block_length=BLOCK_LENGTH, seed=seed)
    moments = resampled_moments(x, resamples, chunk=moment_chunk(t), threads=free_cores())
    mean = x.mean(axis=0)
    blocks = [snooping_block(moments.mean[:, a:a + COLUMN_BLOCK], mean[a:a + COLUMN_BLOCK], t, start=a)
              for a in range(0, n, COLUMN_BLOCK)]
    rc, spa, step = snooping_from_blocks(mean, t, blocks, long_run=long_run_variance(x), level=0.05,
                                         further=stored_further_pass(moments.mean))
    elapsed = time.perf_counter() - start
    return elapsed, {
        "reality_check_p": rc.pvalue,
        "spa_p (long-run)": (spa["long-run"].pvalue_lower, spa["long-run"].pvalue, spa["long-run"].pvalue_upper),
        "stepm (long-run)": step["long-run"].significant[:10],
        "stepm_steps": step["long-run"].steps,
    }


def run_ours_means_only(x: np.ndarray, count: int, seed: int = 1) -> float:
    """As :func:`run_ours`, but computing only the resampled means the snooping tests read.

    In an audit the second moments are computed anyway for the confidence intervals; this line
    shows what the snooping tests themselves cost. The engine's weights are used unchanged.
    """
    start = time.perf_counter()
    t, n = x.shape
    resamples = draw_resamples(t, count=count, block_length=BLOCK_LENGTH, seed=seed)
    mean = np.empty((count, n))
    done = 0
    for weights in resamples.weight_chunks(moment_chunk(t)):
        np.matmul(weights, x, out=mean[done : done + len(weights)])
        done += len(weights)
    mean /= t
    blocks = [snooping_block(mean[:, a:a + COLUMN_BLOCK], x[:, a:a + COLUMN_BLOCK].mean(axis=0), t, start=a)
              for a in range(0, n, COLUMN_BLOCK)]
    snooping_from_blocks(x.mean(axis=0), t, blocks, long_run=long_run_variance(x), level=0.05,
                         further=stored_further_pass(mean))
    return time.perf_counter() - start


def median_time(x: np.ndarray, count: int, repeats: int) -> tuple[float, list[float]]:
    times = [run_ours(x, count, seed=r)[0] for r in range(repeats)]
    return statistics.median(times), times


def ours_peak_memory(x: np.ndarray, count: int) -> float:
    """Peak traced allocation (MB) of one run of ours; numpy reports its buffers to tracemalloc."""
    tracemalloc.start()
    run_ours(x, count)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return peak / 2**20


def run_arch(x: np.ndarray, count: int, seed: int = 1) -> tuple[float, dict]:
    from arch.bootstrap import SPA

    start = time.perf_counter()
    spa = SPA(np.zeros(x.shape[0]), -x, block_size=BLOCK_LENGTH, reps=count, seed=seed)
    spa.compute()
    elapsed = time.perf_counter() - start
    return elapsed, dict(spa.pvalues)


def run_arch_stepm(x: np.ndarray, count: int, seed: int = 1) -> tuple[float, int]:
    from arch.bootstrap import StepM

    start = time.perf_counter()
    step = StepM(np.zeros(x.shape[0]), -x, size=0.05, block_size=BLOCK_LENGTH, reps=count, seed=seed)
    step.compute()
    return time.perf_counter() - start, len(step.superior_models)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="200 configurations x 500 windows, 2,000 resamples")
    parser.add_argument("--repeats", type=int, default=3, help="runs of ours per size (median quoted)")
    parser.add_argument("--skip-arch", action="store_true", help="do not run arch's SPA")
    parser.add_argument("--skip-scaling", action="store_true", help="do not time 2N, 2T, 2B")
    args = parser.parse_args()
    n, t, b = (200, 500, 2_000) if args.quick else (1_000, 2_000, 10_000)

    x = synthetic_sweep(t, n)
    print(f"load average at start: {os.getloadavg()[0]:.1f} (machine: {os.cpu_count()} cores)")
    print(f"synthetic sweep: N = {n} configurations, T = {t} windows, B = {b} resamples, "
          f"stationary bootstrap, mean block {BLOCK_LENGTH}")
    _, figures = run_ours(x, b)
    print(f"ours: {figures}")
    ours, runs = median_time(x, b, args.repeats)
    print(f"ours (draw + moments + reality check + SPA + StepM): median {ours:.2f} s "
          f"of {args.repeats} runs {[round(v, 2) for v in runs]}")
    means_only = statistics.median(run_ours_means_only(x, b, seed=r) for r in range(args.repeats))
    print(f"ours with resampled means only (no second moments): median {means_only:.2f} s")
    peak = ours_peak_memory(x, b)
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"ours peak traced memory: {peak:.0f} MB; process max RSS so far: {rss:.0f} MB")

    if not args.skip_scaling:
        for label, (nn, tt, bb) in {
            "2N": (2 * n, t, b),
            "2T": (n, 2 * t, b),
            "2B": (n, t, 2 * b),
        }.items():
            xx = synthetic_sweep(tt, nn)
            med, runs = median_time(xx, bb, args.repeats)
            print(f"ours at {label} (N={nn}, T={tt}, B={bb}): median {med:.2f} s, "
                  f"x{med / ours:.2f} the base time")

    if not args.skip_arch:
        elapsed, pvalues = run_arch(x, b)
        print(f"arch SPA alone (one run): {elapsed:.1f} s, p-values {pvalues}")
        print(f"ratio arch SPA / ours (all seven: reality check, SPA and StepM under three scales): "
              f"{elapsed / ours:.1f}x; with means only: {elapsed / means_only:.1f}x")
        stepm_seconds, found = run_arch_stepm(x, b)
        print(f"arch StepM alone (one run): {stepm_seconds:.1f} s, {found} superior models")
        print(f"ratio arch SPA + StepM / ours: {(elapsed + stepm_seconds) / ours:.1f}x")
    print(f"load average at end: {os.getloadavg()[0]:.1f}")


if __name__ == "__main__":
    main()
