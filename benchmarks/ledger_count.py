"""What counting trials by configuration costs, on a SYNTHETIC ledger of a weekly gate.

    python benchmarks/ledger_count.py [--records 260] [--configurations 2000] [--repeats 5]

Writes, in a temporary folder, a ledger as a weekly CI gate would leave it after ``--records``
audits of one grid of ``--configurations`` configurations on a record that grows each week (so
every record has new data and the same configurations), with the grid widened by a tenth halfway
through; the first tenth of the records are in the earlier format (a fingerprint and a count only),
the others list a grid's configurations the first time it appears and name it by digest after.
Then times, in this process:

* ``json``: reading the file and ``json.loads`` of every line (the floor: parsing alone);
* ``count``: :func:`sweepaudit.ledger.read_ledger` and :func:`sweepaudit.ledger.tally_trials`
  for one more audit of the widened grid (parsing, the record checks, the count);

and prints the medians, their ratio (count / json), the file size (and what it would be if every
record listed its grid), and the load average, so runs on a busy machine can be read for what they
are.
"""

from __future__ import annotations

import argparse
import hashlib
import json
import os
import tempfile
from pathlib import Path

from timing import median_seconds  # benchmarks/timing.py, beside this script

from sweepaudit.ledger import grid_digest, ledger_record, read_ledger, tally_trials
from sweepaudit.results import LedgerTally


def _grid(n: int) -> list[str]:
    return [f"band={b / 4:g}, lookback={5 * (k + 1)}" for k in range(max(n // 10, 1)) for b in range(1, 11)][:n]


def write_ledger(path: Path, records: int, configurations: int, *, list_every_time: bool = False) -> list[str]:
    """The ledger file as the audits would leave it; returns the widened grid's keys.

    The first tenth of the records are in the earlier format (a fingerprint and a count only); the
    others list a grid's keys the first time it appears and name it by digest after (or list it
    every time, to show what that would cost).
    """
    narrow, wide = _grid(configurations), _grid(configurations + configurations // 10)
    listed: set[str] = set()
    lines = []
    for week in range(records):
        keys = narrow if week < records // 2 else wide
        fingerprint = hashlib.sha256(f"week {week}".encode()).hexdigest()
        digest = grid_digest(keys)
        tally = LedgerTally(path=str(path), records=week, sweeps_before=week, fingerprint=fingerprint,
                            configurations=len(keys), new_sweep=True, trials=len(keys), grid=digest,
                            grid_recorded=digest in listed and not list_every_time)
        record = ledger_record(fingerprint=fingerprint, configurations=len(keys), windows=260 + week,
                               selected=keys[0], verdict="no-go", input_path="sweep.csv", trials=len(keys),
                               strategy="meanrev-weekly", keys=keys, tally=tally)
        if week < records // 10:  # written before the ledger counted configurations
            record = {k: record[k] for k in ("schema", "fingerprint", "configurations", "windows", "date",
                                              "selected", "verdict", "trials", "version", "input")}
        else:
            listed.add(digest)
        lines.append(json.dumps(record, separators=(",", ":")))
    path.write_text("\n".join(lines) + "\n")
    return wide


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--records", type=int, default=260)
    parser.add_argument("--configurations", type=int, default=2000)
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "trials.jsonl"
        keys = write_ledger(path, args.records, args.configurations)

        def parse_only():
            with open(path, "rb") as handle:
                return [json.loads(line) for line in handle if line.strip()]

        def count():
            entries = read_ledger(path)
            return tally_trials(entries, fingerprint="f" * 64, configurations=len(keys), keys=keys,
                                strategy="meanrev-weekly", path=str(path))

        tally = count()
        floor = median_seconds(parse_only, args.repeats)
        counted = median_seconds(count, args.repeats)
        size = path.stat().st_size
        every = Path(folder) / "every.jsonl"
        write_ledger(every, args.records, args.configurations, list_every_time=True)
        size_every = every.stat().st_size
    print(f"ledger: {args.records} records of {args.configurations:,} to {len(keys):,} configurations, "
          f"{size / 2**20:.2f} MiB ({size_every / 2**20:.1f} MiB if every record listed its grid); the count: "
          f"{tally.trials:,} trials ({tally.fingerprint_records} records by fingerprint adding "
          f"{tally.fingerprint_trials:,})")
    print(f"median of {args.repeats}: json {floor:.3f} s, count {counted:.3f} s, ratio {counted / floor:.2f}")
    print("load average: " + ", ".join(f"{x:.2f}" for x in os.getloadavg()))


if __name__ == "__main__":
    main()
