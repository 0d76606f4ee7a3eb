"""Tests of the wide Parquet reader by blocks of columns (sweepaudit.read.blocks).

Internal consistency only: a file read by blocks gives the very sweep the whole-file path gives
(matrix, names, parameters, windows, dates, notes, reading, digest), for a window column, a stored
DatetimeIndex, a benchmark column and a window column placed last; a file the blocks would read
differently (a missing value, mixed parameter names) is read whole, so its message is the usual one.
"""

import numpy as np
import pandas as pd
import pytest

from sweepaudit import load_sweep
from sweepaudit.errors import InputError
from sweepaudit.read import blocks, formats, loader
from sweepaudit.read.options import load_options


def _whole(path, **options):
    opt = load_options(None, options)
    frame, label, digest = formats.read_table(str(path), opt)
    return loader._read(frame, label, digest, opt)


def _files(tmp_path):
    rng = np.random.default_rng(0)
    t, n = 60, 23
    dates = pd.bdate_range("2020-01-02", periods=t)
    x = 0.01 * rng.standard_normal((t, n))
    cols = [f"lookback={i % 5 + 1}, band={i // 5 + 1}" for i in range(n)]
    frames = {
        "date_column": (pd.DataFrame(x, columns=cols).assign(date=dates.strftime("%Y-%m-%d"))[["date"] + cols], {}),
        "stored_index": (pd.DataFrame(x, columns=cols, index=pd.DatetimeIndex(dates, name="day")), {}),
        "benchmark": (pd.DataFrame(x, columns=cols).assign(date=dates.strftime("%Y-%m-%d"),
                                                           buy_hold=0.01 * rng.standard_normal(t)),
                      {"benchmark": "buy_hold", "periods_per_year": 252}),
        "window_last": (pd.DataFrame(x, columns=cols).assign(week=dates.strftime("%Y-%m-%d")), {}),
    }
    for name, (frame, options) in frames.items():
        path = tmp_path / f"{name}.parquet"
        frame.to_parquet(path)
        yield name, path, options


def test_blocks_give_the_whole_file_sweep(tmp_path, monkeypatch):
    monkeypatch.setattr(blocks, "BLOCK_COLUMNS", 7)
    for name, path, options in _files(tmp_path):
        by_blocks = blocks.read_wide_parquet(str(path), load_options(None, options), loader._read, block=7)
        assert by_blocks is not None, name
        whole = _whole(path, **options)
        np.testing.assert_array_equal(by_blocks.returns, whole.returns)
        for field in ("configurations", "windows", "notes", "reading", "sha256", "periods_per_year", "layout", "path"):
            assert getattr(by_blocks, field) == getattr(whole, field), (name, field)
        assert by_blocks.parameters.equals(whole.parameters)
        assert (by_blocks.dates is None and whole.dates is None) or by_blocks.dates.equals(whole.dates)


def test_a_file_the_blocks_would_read_differently_is_read_whole(tmp_path, monkeypatch):
    rng = np.random.default_rng(1)
    frame = pd.DataFrame(0.01 * rng.standard_normal((40, 20)), columns=[f"c{k}" for k in range(20)])
    frame.insert(0, "date", pd.bdate_range("2021-01-04", periods=40).strftime("%Y-%m-%d"))
    frame.iloc[5, 17] = np.nan  # a missing value in the third block of 7
    path = tmp_path / "gap.parquet"
    frame.to_parquet(path)
    assert blocks.read_wide_parquet(str(path), load_options(None, {}), loader._read, block=7) is None
    monkeypatch.setattr(blocks, "BLOCK_COLUMNS", 7)
    with pytest.raises(InputError) as by_blocks:
        load_sweep(path)
    with pytest.raises(InputError) as whole:
        _whole(path)
    assert str(by_blocks.value) == str(whole.value)
    assert "1 of 20 configurations" in str(whole.value)
