"""What "what would change the verdict" costs: an audit with the sensitivity block against the same
audit without it, in the same process, and the share of the block that goes to the alternatives
that draw new resamples.

    python benchmarks/sensitivity_cost.py            # the demo sweep, 10,000 resamples, 3 repeats
    python benchmarks/sensitivity_cost.py --quick    # 1,000 resamples (``--quick``'s count)

Prints the median wall time of each, their ratio, each alternative's median cost and the load
average (a busy machine slows both sides alike; the ratio is what to quote).
"""

from __future__ import annotations

import argparse
import os
import sys
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from timing import median_seconds  # noqa: E402

from sweepaudit import AuditSettings, audit  # noqa: E402
from sweepaudit.audit import reassess  # noqa: E402
from sweepaudit.read import LoadOptions, load_sweep  # noqa: E402
from sweepaudit.sensitivity import ALTERNATIVE_RESAMPLES, CHOICES  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "fixtures" / "demo_edge_long.csv"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="1,000 resamples instead of 10,000")
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    sweep = load_sweep(str(DEMO), LoadOptions())
    settings = AuditSettings(seed=7, resamples=1_000 if args.quick else 10_000)
    without = median_seconds(lambda: audit(sweep, settings=settings, sensitivity=False), args.repeats)
    with_block = median_seconds(lambda: audit(sweep, settings=settings), args.repeats)
    print(f"sweep: {sweep.n_configurations} configurations x {sweep.n_windows} windows, "
          f"{settings.resamples:,} resamples; alternatives that resample draw {ALTERNATIVE_RESAMPLES:,}")
    print(f"audit without the sensitivity block: median {without:.2f} s")
    print(f"audit with it:                       median {with_block:.2f} s")
    print(f"ratio: {with_block / without:.2f}x (the block: {with_block - without:.2f} s)")
    ev = audit(sweep, settings=settings, sensitivity=False).evidence
    count = min(ALTERNATIVE_RESAMPLES, ev.resamples.count)
    for choice in CHOICES:
        for setting in choice.alternatives(ev):
            policy, fields = choice.change(ev, setting)
            fields = {**(fields or {}), **({"resamples": count} if choice.resampled else {})}
            changed = replace(ev.settings, **fields)
            cost = median_seconds(lambda: reassess(ev, policy=policy or ev.policy, settings=changed), args.repeats)
            print(f"  {choice.id + ':' + setting:<36} {cost * 1000:8.1f} ms")
    print(f"load average: {', '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
