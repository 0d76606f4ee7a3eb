"""Tests of the trial ledger (sweepaudit.ledger, ``--ledger``): fingerprint, counting, records, locking.

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

import pandas as pd
import pytest

from sweepaudit.errors import InputError
from sweepaudit.ledger import (
    LedgerEntry,
    ledger_record,
    open_ledger,
    parse_ledger,
    read_ledger,
    sweep_fingerprint,
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
