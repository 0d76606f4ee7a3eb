"""The seeded simulation behind the design of the two time checks (``walk_forward``, ``edge_decay``).

The validation study (``benchmarks/calibration.py``) audits 200 sweeps per scenario in full; here the
two tests alone run on many more sweeps (1,000 by default), set up exactly as the audit sets them up
(the family's median AR(1) coefficient, the family-stress rule, a quarter of the windows as warm-up,
halves for the decay test), so their rates are measured to about +-0.7 points at 5%:

* the walk-forward test's pass rate on null families (every pass a false alarm) with no guard, with
  the persistence guard only, and with both guards (persistence and stress charges);
* the decay test's flag rate on the selected (best full-sample Sharpe ratio) configuration of null
  families and of constant edges (every flag a false alarm), and on the dead edge (power).

All data are synthetic. Writes docs/time_structure.md unless --print.

    python benchmarks/time_structure_study.py               # 1,000 sweeps per family
    python benchmarks/time_structure_study.py --sweeps 200 --print
"""

from __future__ import annotations

import argparse
import math
import os
import shlex
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "src"))

from sweepaudit.methods.longrun import long_run_variance  # noqa: E402
from sweepaudit.methods.stability import edge_stability  # noqa: E402
from sweepaudit.methods.tails import family_stress  # noqa: E402
from sweepaudit.methods.walkforward import default_warmup, walk_forward  # noqa: E402
from sweepaudit.simulate import (  # noqa: E402
    simulate_autoregressive,
    simulate_crashes,
    simulate_dead_edge,
    simulate_dependent_grid,
    simulate_grid_plateau,
    simulate_leveraged,
    simulate_normal,
)

LEVEL = 0.05

NULLS = {
    "grid (N = 100, T = 208)": lambda rng: simulate_dependent_grid(rng, 100, 208),
    "grid, AR(1) phi = 0.5": lambda rng: simulate_dependent_grid(rng, 100, 208, phi=0.5),
    "grid, AR(1) phi = 0.7, T = 520": lambda rng: simulate_dependent_grid(rng, 100, 520, phi=0.7),
    "grid, multivariate Student-t": lambda rng: simulate_dependent_grid(rng, 100, 208, shocks="student_t"),
    "grid, GARCH and AR(1) phi = 0.3": lambda rng: simulate_dependent_grid(rng, 100, 208, clustering=True, phi=0.3),
    "leveraged (N = 100, T = 208)": lambda rng: simulate_leveraged(rng, 100, 208),
    "crashes (N = 100, T = 260)": lambda rng: simulate_crashes(rng, 100, 260),
    "independent AR(1) phi = 0.3 (N = 50, T = 260)": lambda rng: simulate_autoregressive(rng, 50, 260),
    "independent normal (N = 10, T = 52)": lambda rng: simulate_normal(rng, 10, 52),
}
CONSTANT_EDGES = {
    "plateau, Sharpe 1.5": lambda rng: simulate_grid_plateau(rng, 100, 208, annual_sharpe=1.5),
    "plateau, Sharpe 2, AR(1) phi = 0.3": lambda rng: simulate_grid_plateau(rng, 100, 208, phi=0.3),
    "plateau, Sharpe 2, AR(1) phi = 0.5": lambda rng: simulate_grid_plateau(rng, 100, 208, phi=0.5),
}
DEAD = {
    "dead edge (Sharpe 3 in the first half)": lambda rng: simulate_dead_edge(rng, 100, 208),
    "dead edge, AR(1) phi = 0.3": lambda rng: simulate_dead_edge(rng, 100, 208, phi=0.3),
}


def walk_forward_passes(x: np.ndarray) -> tuple[bool, bool, bool]:
    """Whether the walk-forward test passes with no guard, the persistence guard, and both guards."""
    warmup = default_warmup(x.shape[0])
    phi = float(np.median(long_run_variance(x).ar_coefficient))
    stress = family_stress(x, selected=0)
    bare = walk_forward(x, selected=0, warmup=warmup)
    persistence = walk_forward(x, selected=0, warmup=warmup, persistence=phi)
    both = walk_forward(x, selected=0, warmup=warmup, persistence=phi, stress=stress)
    return tuple(w.pvalue <= LEVEL for w in (bare, persistence, both))


def decay_flagged(x: np.ndarray) -> bool:
    k = int(np.argmax(x.mean(axis=0) / x.std(axis=0, ddof=1)))
    return edge_stability(x[:, k]).pvalue <= LEVEL


def rate(events: int, sweeps: int) -> str:
    p = events / sweeps
    return f"{100 * p:.1f} ± {100 * math.sqrt(p * (1 - p) / sweeps):.1f}"


def run(sweeps: int, seed: int) -> list[str]:
    lines = ["## The walk-forward test on null families (pass rate, %: every pass is a false alarm)", "",
             "| family | no guard | persistence guard | persistence and stress guards (the audit) |",
             "|---|---:|---:|---:|"]
    for i, (name, simulate) in enumerate(NULLS.items()):
        counts = np.zeros(3, dtype=int)
        for s in range(sweeps):
            counts += walk_forward_passes(simulate(np.random.default_rng([seed, i, s])))
        lines.append(f"| {name} | " + " | ".join(rate(int(c), sweeps) for c in counts) + " |")
        print(lines[-1], file=sys.stderr, flush=True)
    lines += ["", "## The decay test on the best configuration (flag rate, %)", "",
              "| family | truth | flagged |", "|---|---|---:|"]
    groups = ((NULLS, "no edge (a flag is a false alarm)"), (CONSTANT_EDGES, "constant edge (a flag is a false alarm)"),
              (DEAD, "edge died halfway (a flag is power)"))
    for g, (family, truth) in enumerate(groups):
        for i, (name, simulate) in enumerate(family.items()):
            if family is NULLS and "N = 10," in name:
                continue  # 52 windows: the thirds are too short for the decay figures
            flagged = sum(decay_flagged(simulate(np.random.default_rng([seed, 100 + 10 * g + i, s])))
                          for s in range(sweeps))
            lines.append(f"| {name} | {truth} | {rate(flagged, sweeps)} |")
            print(lines[-1], file=sys.stderr, flush=True)
    return lines


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--sweeps", type=int, default=1000)
    ap.add_argument("--seed", type=int, default=20261217)
    ap.add_argument("--print", action="store_true", help="print instead of writing docs/time_structure.md")
    args = ap.parse_args()
    start = time.perf_counter()
    body = run(args.sweeps, args.seed)
    minutes = (time.perf_counter() - start) / 60
    command = " ".join(shlex.quote(w) for w in ["python", "benchmarks/time_structure_study.py", "--sweeps",
                                                str(args.sweeps), "--seed", str(args.seed)])
    text = "\n".join([
        "# The time checks alone: guards and rates", "",
        "Generated by `benchmarks/time_structure_study.py`; do not edit by hand. All sweeps are synthetic.", "",
        f"- Command: `{command}`",
        f"- {args.sweeps} simulated sweeps per family; {minutes:.1f} minutes on {os.cpu_count()} cores "
        f"(load average {os.getloadavg()[0]:.1f} at the end).",
        f"- Level {LEVEL:g}; ± is the Monte Carlo standard error sqrt(p (1 - p) / sweeps).",
        "- The tests are set up as the audit sets them up: a quarter of the windows as warm-up, all earlier "
        "windows, the family's median AR(1) coefficient, the family-stress rule; the decay test on the "
        "configuration with the best full-sample Sharpe ratio, recent half against the half before.",
        "", *body, ""])
    if args.print:
        print(text)
    else:
        (ROOT / "docs" / "time_structure.md").write_text(text)
        print(f"wrote docs/time_structure.md in {minutes:.1f} minutes", file=sys.stderr)


if __name__ == "__main__":
    main()
