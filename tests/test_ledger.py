"""Tests of the trial ledger (sweepaudit.ledger, ``--ledger``): fingerprint, counting, records, locking.

Counting: hand-worked ledgers for each rule (the same grid on more data, widening and narrowing,
strategy labels, old records by fingerprint and identified by it, generated names), and the drift
end to end (a 12-setting grid on a record that grows by a year counts 12 each time, and its deflated
probability equals the one an audit without a ledger reports).

Outside references:
- ``sweep_fingerprint`` against a literal re-implementation of its documented definition with
  ``struct`` and ``hashlib`` (a slow oracle built from the definition, not from our output).
- Concurrent appends against the invariant that an exclusive lock serialises the read-count-append
  cycle (every count seen exactly once).
The messages and the CLI wiring are internal consistency.
"""

from __future__ import annotations

import hashlib
import json
import multiprocessing
import struct
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from sweepaudit.errors import InputError
from sweepaudit.ledger import (
    LedgerEntry,
    ledger_record,
    open_ledger,
    parse_ledger,
    read_ledger,
    grid_digest,
    sweep_fingerprint,
    tally_note,
    tally_trials,
)
from sweepaudit.read import load_sweep

from .helpers import run, synthetic_returns, write_wide


def _literal_fingerprint(matrix, names):
    # The documented definition, written out with struct, one number at a time.
    columns = sorted(range(len(names)), key=lambda k: names[k])
    h = hashlib.sha256()
    h.update(b"sweepaudit.ledger/1\n")
    h.update(f"{len(matrix)}x{len(names)}\n".encode())
    h.update(json.dumps([names[k] for k in columns], ensure_ascii=False).encode() + b"\n")
    for row in matrix:
        for k in columns:
            h.update(struct.pack("<d", 0.0 if row[k] == 0 else float(row[k])))
    return h.hexdigest()

def test_fingerprint_matches_its_definition():
    x = synthetic_returns(windows=12)
    x[0, 0] = -0.0
    names = ["b=é", "a=1", 'c="2"']
    assert sweep_fingerprint(x, names) == _literal_fingerprint(x.tolist(), names)
    assert sweep_fingerprint(x[:, [2, 0, 1]], [names[2], names[0], names[1]]) == sweep_fingerprint(x, names)
    x[0, 0] = 0.0
    assert sweep_fingerprint(x, names) == _literal_fingerprint(x.tolist(), names)

def test_fingerprint_is_the_same_across_file_formats(tmp_path):
    x = synthetic_returns(windows=40)
    names = ["lookback=10", "lookback=20", "lookback=30"]
    wide = write_wide(tmp_path / "s.csv", x, names)
    frame = pd.read_csv(wide)
    frame.to_parquet(tmp_path / "s.parquet", index=False)
    long = frame.melt(id_vars="week_ending", var_name="lookback", value_name="excess_return")
    long["lookback"] = long["lookback"].str.replace("lookback=", "").astype(int)
    long.to_csv(tmp_path / "long.csv", index=False)
    write_wide(tmp_path / "reordered.csv", x[:, ::-1], names[::-1])
    prints = set()
    for path in (wide, tmp_path / "s.parquet", tmp_path / "long.csv", tmp_path / "reordered.csv"):
        s = load_sweep(str(path))
        prints.add(sweep_fingerprint(s.returns, s.configurations))
    assert len(prints) == 1
    y = x.copy()
    y[5, 1] += 1e-9
    assert sweep_fingerprint(y, names) not in prints
    assert sweep_fingerprint(x, ["lookback=10", "lookback=20", "lookback=31"]) not in prints

def _entry(line, fp, n):
    return LedgerEntry(line, fp, n, {})

def test_tally_counts_distinct_fingerprints():
    a, b, c = "a" * 64, "b" * 64, "c" * 64
    entries = (_entry(1, a, 10), _entry(2, b, 30), _entry(3, a, 10))
    t = tally_trials(entries, fingerprint=c, configurations=5)
    assert (t.trials, t.new_sweep, t.sweeps_before, t.sweeps_recorded, t.records) == (45, True, 2, 3, 3)
    t = tally_trials(entries, fingerprint=a, configurations=10)
    assert (t.trials, t.new_sweep, t.sweeps_recorded) == (40, False, 2)  # re-audit adds nothing
    assert tally_trials((), fingerprint=a, configurations=7).trials == 7

def test_corrupted_ledger_line_is_reported_and_nothing_is_lost(tmp_path):
    ledger = tmp_path / "trials.jsonl"
    good = json.dumps(ledger_record(fingerprint="a" * 64, configurations=4, windows=60, selected="x",
                                    verdict="go", input_path="x.csv", trials=4))
    content = (good + "\n\n" + good + "\n" + '{"fingerprint": "ab", "configurations": 3}\n' + good + "\n").encode()
    ledger.write_bytes(content)
    sweep = write_wide(tmp_path / "a.csv", synthetic_returns())
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--ledger", str(ledger)])
    assert result.exit_code == 2
    assert str(ledger) in result.stderr and "line 4 of the trial ledger" in result.stderr
    assert ledger.read_bytes() == content

@pytest.mark.parametrize(
    ("line", "fragment"),
    [
        (b"{oops", "not JSON"),
        (b"[1]", "not a JSON object"),
        (b"\xff\xfe", "not UTF-8"),
        (b'{"fingerprint": "' + b"A" * 64 + b'", "configurations": 2}', "64 lowercase hex"),
        (b'{"fingerprint": "' + b"a" * 64 + b'", "configurations": 0}', "whole number from 1 to"),
        (b'{"fingerprint": "' + b"a" * 64 + b'", "configurations": true}', "whole number from 1 to"),
        (b'{"fingerprint": "' + b"a" * 64 + b'", "configurations": 1' + b"0" * 30 + b"}",
         "configurations must be a whole number from 1 to 1000000000000000"),
    ],
)
def test_ledger_line_messages(line, fragment):
    good = b'{"fingerprint": "' + b"b" * 64 + b'", "configurations": 2}'
    with pytest.raises(InputError) as info:
        parse_ledger(good + b"\n" + line + b"\n", path="trials.jsonl")
    assert str(info.value).startswith("trials.jsonl: line 2 of the trial ledger") and fragment in str(info.value)

def test_append_after_a_line_without_newline(tmp_path):
    ledger = tmp_path / "trials.jsonl"
    ledger.write_text('{"fingerprint": "' + "a" * 64 + '", "configurations": 2}')  # hand edited, no final newline
    with open_ledger(ledger) as book:
        assert book.tally(fingerprint="b" * 64, configurations=3).trials == 5
        book.append(ledger_record(fingerprint="b" * 64, configurations=3, windows=9, selected="s",
                                  verdict="go", input_path="p", trials=5))
    assert [e.configurations for e in read_ledger(ledger)] == [2, 3]

def test_ledger_folder_missing_is_exit_2(tmp_path):
    sweep = write_wide(tmp_path / "a.csv", synthetic_returns())
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--ledger", str(tmp_path / "no" / "t.jsonl")])
    assert result.exit_code == 2 and "folder" in result.stderr

def _append_many(path, worker, count, configurations):
    for k in range(count):
        fingerprint = hashlib.sha256(f"{worker}-{k}".encode()).hexdigest()
        with open_ledger(path) as book:
            tally = book.tally(fingerprint=fingerprint, configurations=configurations)
            time.sleep(0.001)  # widen the window between read and append
            book.append(ledger_record(fingerprint=fingerprint, configurations=configurations, windows=10,
                                      selected=f"w{worker}", verdict="go", input_path="p", trials=tally.trials))

def test_concurrent_appends_are_serialised(tmp_path):
    path = str(tmp_path / "trials.jsonl")
    workers, each, n = 4, 12, 3
    context = multiprocessing.get_context("fork")
    processes = [context.Process(target=_append_many, args=(path, w, each, n)) for w in range(workers)]
    for p in processes:
        p.start()
    for p in processes:
        p.join(60)
        assert p.exitcode == 0
    lines = Path(path).read_text().splitlines()
    assert len(lines) == workers * each
    records = [json.loads(line) for line in lines]  # every line parses
    # Under the lock each cycle saw every earlier record: the counts are n, 2n, ..., each exactly once.
    assert sorted(r["trials"] for r in records) == [n * (k + 1) for k in range(workers * each)]
    assert len(read_ledger(path)) == workers * each


def test_a_failed_append_leaves_no_partial_line_and_a_retract_takes_the_record_back(tmp_path, monkeypatch):
    import errno
    import os

    ledger = tmp_path / "trials.jsonl"
    first = ledger_record(fingerprint="a" * 64, configurations=3, windows=60, selected="x", verdict="go",
                          input_path="s.csv", trials=3)
    with open_ledger(ledger) as book:
        book.append(first)
    content = ledger.read_bytes()
    real = os.write

    def short_then_full(fd, data):  # a disk that fills up midway through the record
        if len(data) > 20:
            return real(fd, bytes(data[:20]))
        raise OSError(errno.ENOSPC, "No space left on device")

    second = {**first, "fingerprint": "b" * 64}
    with open_ledger(ledger) as book:
        monkeypatch.setattr(os, "write", short_then_full)
        with pytest.raises(InputError, match="cannot append to the trial ledger .*no space left.*left as it was"):
            book.append(second)
        monkeypatch.setattr(os, "write", real)
    assert ledger.read_bytes() == content
    with open_ledger(ledger) as book:
        book.append(second)
        assert len(ledger.read_bytes().splitlines()) == 2
        book.retract()  # an output failed after the record
    assert ledger.read_bytes() == content and [e.fingerprint for e in read_ledger(ledger)] == ["a" * 64]


def test_the_ledger_is_ascii_so_printing_it_cannot_drive_a_terminal(tmp_path):
    ledger = tmp_path / "trials.jsonl"
    record = ledger_record(fingerprint="a" * 64, configurations=3, windows=60, selected="x\x1b]8;;\u202e",
                           verdict="go", input_path="s\udcff.csv", trials=3)
    with open_ledger(ledger) as book:
        book.append(record)
    data = ledger.read_bytes()
    assert data.isascii() and b"\x1b" not in data
    assert read_ledger(ledger)[0].record["selected"] == "x\x1b]8;;\u202e"


# ---------------------------------------------------------------------------------------------
# counting trials: a trial is a configuration of a strategy


def _keys(n, start=0, name="lookback"):
    return tuple(f"band=1, {name}={k}" for k in range(start, start + n))


def _named(line, fp, keys, strategy=None):
    record = {"fingerprint": fp, "configurations": len(keys), "configurations_tried": list(keys), "strategy": strategy}
    return LedgerEntry(line, fp, len(keys), record)


def _old(line, fp, n):
    # A record as sweepaudit wrote it before the ledger counted configurations.
    record = {"schema": "sweepaudit.ledger/1", "fingerprint": fp, "configurations": n, "windows": 208,
              "date": "2026-01-09T12:00:00Z", "selected": "lookback=20", "verdict": "no-go", "trials": n,
              "version": "0.1.0", "input": "sweep.csv"}
    return LedgerEntry(line, fp, n, record)


A, B, C = "a" * 64, "b" * 64, "c" * 64


def test_the_same_grid_on_more_data_adds_no_trials():
    t = tally_trials((_named(1, A, _keys(12)),), fingerprint=B, configurations=12, keys=_keys(12))
    assert (t.trials, t.trials_before, t.trials_added, t.new_sweep, t.by_configuration) == (12, 12, 0, True, True)
    t = tally_trials((), fingerprint=A, configurations=12, keys=_keys(12))
    assert (t.trials, t.trials_before, t.trials_added) == (12, 0, 12)


def test_widening_adds_only_the_new_configurations_and_narrowing_none():
    ledger = (_named(1, A, _keys(12)),)
    t = tally_trials(ledger, fingerprint=B, configurations=18, keys=_keys(18))
    assert (t.trials, t.trials_added) == (18, 6)
    ledger += (_named(2, B, _keys(18)),)
    t = tally_trials(ledger, fingerprint=C, configurations=6, keys=_keys(6, start=3))
    assert (t.trials, t.trials_added) == (18, 0)
    t = tally_trials(ledger, fingerprint=C, configurations=4, keys=_keys(4, start=16))  # two beyond 17
    assert (t.trials, t.trials_added) == (20, 2)


def test_strategies_count_apart():
    ledger = (_named(1, A, _keys(12), strategy="carry"),)
    t = tally_trials(ledger, fingerprint=B, configurations=12, keys=_keys(12), strategy="momentum")
    assert (t.trials, t.trials_added) == (24, 12)
    assert t.strategies == (("carry", 12), ("momentum", 12))
    t = tally_trials(ledger, fingerprint=B, configurations=12, keys=_keys(12))  # unlabelled: a label of its own
    assert t.trials == 24 and t.strategies == ((None, 12), ("carry", 12))
    t = tally_trials(ledger, fingerprint=B, configurations=12, keys=_keys(12), strategy="carry")
    assert (t.trials, t.trials_added) == (12, 0)


def test_old_records_count_by_fingerprint_as_before():
    old = (_old(1, A, 12), _old(2, A, 12), _old(3, B, 12))  # the same data twice, then the grown record
    t = tally_trials(old, fingerprint=C, configurations=12, keys=_keys(12))
    # Two distinct old fingerprints (24, as the earlier versions counted) plus this sweep's 12.
    assert (t.trials, t.trials_before, t.trials_added) == (36, 24, 12)
    assert (t.fingerprint_records, t.fingerprint_trials) == (3, 24)
    assert "3 record(s) name no configurations and count by their data fingerprint: 24 trials" in tally_note(t)


def test_an_old_record_with_this_sweeps_data_is_this_sweep():
    old = (_old(1, A, 12), _old(2, B, 12))
    t = tally_trials(old, fingerprint=A, configurations=12, keys=_keys(12))
    # A is known now (this audit has its data and names): it adds nothing beyond these 12.
    assert (t.trials, t.trials_before, t.trials_added) == (24, 24, 0)
    assert t.fingerprint_trials == 12 and not t.new_sweep
    # A newer record naming configurations identifies an old one the same way.
    ledger = old + (_named(3, B, _keys(12)),)
    t = tally_trials(ledger, fingerprint=C, configurations=12, keys=_keys(12))
    assert (t.trials, t.fingerprint_trials) == (24, 12)


def test_generated_names_count_by_fingerprint():
    t = tally_trials((), fingerprint=A, configurations=5)
    assert (t.trials, t.by_configuration) == (5, False)
    unnamed = LedgerEntry(1, A, 5, {"fingerprint": A, "configurations": 5, "configurations_tried": None})
    assert tally_trials((unnamed,), fingerprint=B, configurations=5).trials == 10
    assert tally_trials((unnamed,), fingerprint=A, configurations=5).trials == 5
    assert "count by its data fingerprint" in tally_note(tally_trials((unnamed,), fingerprint=B, configurations=5))


def test_grids_are_listed_once_and_named_by_digest_after():
    keys = _keys(12)
    listed = _named(1, A, keys)
    by_digest = LedgerEntry(2, B, 12, {"fingerprint": B, "configurations": 12, "grid": grid_digest(keys)})
    t = tally_trials((listed, by_digest), fingerprint=C, configurations=12, keys=keys[::-1])
    assert (t.trials, t.trials_added, t.grid_recorded, t.grid) == (12, 0, True, grid_digest(keys))
    record = ledger_record(fingerprint=C, configurations=12, windows=9, selected="s", verdict="go", input_path="p",
                           trials=12, keys=keys, tally=t)
    assert record["configurations_tried"] is None and record["grid"] == grid_digest(keys)
    first = tally_trials((), fingerprint=C, configurations=12, keys=keys)
    assert ledger_record(fingerprint=C, configurations=12, windows=9, selected="s", verdict="go", input_path="p",
                         trials=12, keys=keys, tally=first)["configurations_tried"] == sorted(keys)
    # The listing line removed by hand: the record naming the grid counts by its fingerprint.
    t = tally_trials((by_digest,), fingerprint=C, configurations=12, keys=_keys(12, start=50))
    assert (t.trials, t.fingerprint_records, t.fingerprint_trials) == (24, 1, 12)


@pytest.mark.parametrize(
    ("extra", "fragment"),
    [
        ({"strategy": 3}, "strategy must be a string or null; got 3"),
        ({"grid": "ab"}, "grid must be 64 lowercase hex digits or null; got 'ab'"),
        ({"grid": "d" * 64, "configurations_tried": ["a", "b"]}, "grid is not the digest of configurations_tried"),
        ({"configurations_tried": "lookback=1"}, "configurations_tried must be a list of configuration keys"),
        ({"configurations_tried": [1, 2]}, "configurations_tried must be a list of configuration keys"),
        ({"configurations_tried": ["a"]}, "must list the record's 2 configurations once each; it lists 1 (1 distinct)"),
        ({"configurations_tried": ["a", "a"]}, "it lists 2 (1 distinct)"),
    ],
)
def test_malformed_trial_fields_name_the_line(extra, fragment):
    good = json.dumps({"fingerprint": A, "configurations": 2, "configurations_tried": ["a", "b"]}).encode()
    bad = json.dumps({"fingerprint": B, "configurations": 2, **extra}).encode()
    entries = parse_ledger(good + b"\n" + bad + b"\n", path="trials.jsonl")
    with pytest.raises(InputError) as info:
        tally_trials(entries, fingerprint=C, configurations=2, keys=("a", "c"), path="trials.jsonl")
    assert str(info.value).startswith("trials.jsonl: line 2 of the trial ledger") and fragment in str(info.value)


# ---------------------------------------------------------------------------------------------
# the drift, end to end: a 12-setting grid on a record that grows by a year


def _growing_grid(tmp_path):
    """SYNTHETIC long CSVs of one 3 x 4 grid over 4, 5 and 6 years of weekly windows."""
    rng = np.random.default_rng(11)
    weeks = 52 * 6
    dates = pd.date_range("2018-01-05", periods=weeks, freq="W-FRI").strftime("%Y-%m-%d")
    grid = [(z, d) for z in (1.0, 1.5, 2.0) for d in (21, 42, 63, 126)]
    shared = rng.normal(0, 0.01, weeks)
    frames = []
    for z, d in grid:
        values = 0.7 * shared + 0.7 * rng.normal(0, 0.01, weeks) + (0.0011 if (z, d) == (1.5, 21) else 0.0005)
        frames.append(pd.DataFrame({"week_ending": dates, "train_days": d, "entry_z": z, "excess_return": values}))
    frame = pd.concat(frames, ignore_index=True)
    paths = []
    for years in (4, 5, 6):
        path = tmp_path / f"sweep_{years}y.csv"
        frame[frame.week_ending <= dates[52 * years - 1]].to_csv(path, index=False)
        paths.append(path)
    return paths


def _audit_json(path, out, *extra):
    result = run(["audit", str(path), "--seed", "7", "--resamples", "200", "-q", "--json", str(out), *extra])
    assert result.exit_code in (0, 1), result.stderr
    return json.loads(out.read_text())


def test_a_growing_record_keeps_counting_its_twelve_configurations(tmp_path):
    ledger, out = tmp_path / "trials.jsonl", tmp_path / "audit.json"
    for k, path in enumerate(_growing_grid(tmp_path)):
        counted = _audit_json(path, out, "--ledger", str(ledger))
        alone = _audit_json(path, out)  # the same audit without a ledger counts the sweep's 12
        assert counted["ledger"]["trials_counted"] == 12 and counted["ledger"]["trials_added"] == (12 if k == 0 else 0)
        assert counted["ledger"]["new_sweep"] and counted["ledger"]["counted_by"] == "configuration"
        deflated = counted["results"]["sharpe"]["deflated"]
        assert deflated["trials"] == 12
        assert deflated["probability"] == pytest.approx(alone["results"]["sharpe"]["deflated"]["probability"], rel=1e-12)
    records = [json.loads(line) for line in ledger.read_text().splitlines()]
    assert len({r["fingerprint"] for r in records}) == 3  # each year's data stays in the audit trail
    # The grid is listed once, then named by its digest.
    assert records[0]["configurations_tried"][:2] == ["entry_z=1, train_days=126", "entry_z=1, train_days=21"]
    assert [r["configurations_tried"] is None for r in records] == [False, True, True]
    assert len({r["grid"] for r in records}) == 1 and records[0]["grid"] == grid_digest(records[0]["configurations_tried"])
    assert [r["trials_counted"] for r in records] == [12, 12, 12] and [r["windows"] for r in records] == [208, 260, 312]


def test_a_ledger_of_the_earlier_format_keeps_working(tmp_path):
    ledger, out = tmp_path / "trials.jsonl", tmp_path / "audit.json"
    paths = _growing_grid(tmp_path)
    # The first two years as an earlier version recorded them: a fingerprint and a count only.
    lines = []
    for path in paths[:2]:
        s = load_sweep(str(path))
        lines.append(json.dumps({"schema": "sweepaudit.ledger/1", "fingerprint": sweep_fingerprint(s.returns, s.configurations),
                                 "configurations": 12, "windows": s.n_windows, "date": "2026-01-02T09:00:00Z",
                                 "selected": s.configurations[0], "verdict": "no-go", "trials": 12,
                                 "version": "0.1.0", "input": str(path)}))
    ledger.write_text("\n".join(lines) + "\n")
    doc = _audit_json(paths[2], out, "--ledger", str(ledger))
    block = doc["ledger"]
    assert (block["trials_counted"], block["fingerprint_records"], block["fingerprint_trials"]) == (36, 2, 24)
    assert "2 record(s) name no configurations and count by their data fingerprint: 24 trials" in block["note"]
    # Re-auditing the second year's data identifies that old record: it was these 12 configurations.
    doc = _audit_json(paths[1], out, "--ledger", str(ledger))
    assert (doc["ledger"]["trials_counted"], doc["ledger"]["fingerprint_trials"]) == (24, 12)
    assert len(read_ledger(ledger)) == 4


def test_the_strategy_label_from_the_option_and_the_policy(tmp_path):
    ledger, out = tmp_path / "trials.jsonl", tmp_path / "audit.json"
    path = _growing_grid(tmp_path)[0]
    policy = tmp_path / "policy.toml"
    policy.write_text('strategy = "meanrev-weekly"\n')
    doc = _audit_json(path, out, "--ledger", str(ledger), "--policy", str(policy))
    assert doc["ledger"]["strategy"] == "meanrev-weekly" and doc["ledger"]["trials_counted"] == 12
    doc = _audit_json(path, out, "--ledger", str(ledger), "--policy", str(policy), "--strategy", "carry-weekly")
    assert doc["ledger"]["trials_counted"] == 24 and doc["ledger"]["trials_added"] == 12
    assert doc["ledger"]["strategies"] == [{"strategy": "carry-weekly", "trials": 12},
                                           {"strategy": "meanrev-weekly", "trials": 12}]
    assert doc["reproduce"]["command"].endswith("--strategy carry-weekly")
    assert [r["strategy"] for r in map(json.loads, ledger.read_text().splitlines())] == ["meanrev-weekly", "carry-weekly"]


def test_arrays_without_names_count_by_fingerprint(tmp_path):
    from sweepaudit import audit, inspect

    ledger = tmp_path / "trials.jsonl"
    rng = np.random.default_rng(3)
    first, second = rng.normal(0, 0.01, (60, 3)), rng.normal(0, 0.01, (60, 3))
    assert inspect(first).reading["configuration_names"] == "generated"
    assert inspect(pd.DataFrame(first)).reading["configuration_names"] == "generated"  # columns 0, 1, 2
    assert inspect(first, configurations=["a", "b", "c"]).reading["configuration_names"] == "given"
    one = audit(first, periods_per_year=52, resamples=200, ledger=ledger)
    two = audit(second, periods_per_year=52, resamples=200, ledger=ledger)
    # config 1..3 of two different arrays are not the same trials: each array counts its own 3.
    assert one.document["ledger"]["counted_by"] == "fingerprint" and two.settings.trials == 6
    named = audit(second, configurations=["a", "b", "c"], periods_per_year=52, resamples=200, ledger=ledger)
    assert named.document["ledger"]["counted_by"] == "configuration" and named.settings.trials == 9
    assert [r.record["grid"] is None for r in read_ledger(ledger)] == [True, True, False]
