"""Tests of ``sweepaudit.read``: ``load_sweep`` and ``read_table`` (files -> Sweep).

``load_sweep`` and ``read_table`` are checked against something outside the project:

* every expected matrix, name, window order and excess return is rebuilt here from the values the
  test itself wrote to the file (a literal oracle), never from the loader's output;
* row numbers in error messages are checked against the written file itself: data row ``r`` is
  line ``r + 1`` of the file (the header is line 1), and that line holds the bad cell;
* periods per year: the calendar (252 trading days, 52 weeks, 12 months, 4 quarters a year) is
  common practice for annualizing.

Internal consistency only: the layout-detection rules (what auto picks for a given file) and the
wording of the messages (we assert the parts a user needs: file,
column, row, the count and the fix suggested).
"""

from __future__ import annotations

import hashlib
import io
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.read import LoadOptions, load_sweep, read_table
from sweepaudit.sweep import MIN_WINDOWS

WEEKS = [d.date().isoformat() for d in pd.date_range("2023-01-06", periods=12, freq="7D")]


def _long_rows(configs: dict[tuple, str], windows, seed=0):
    """Rows (window, *parameters, value) and the expected {config: {window: value}}."""
    rng = np.random.default_rng(seed)
    rows, expected = [], {}
    for params, name in configs.items():
        for w in windows:
            v = round(float(rng.normal(0.001, 0.02)), 6)
            rows.append((w, *params, v))
            expected.setdefault(name, {})[w] = v
    return rows, expected


def _write_csv(path: Path, header, rows, sep=",") -> Path:
    lines = [sep.join(header)] + [sep.join(str(x) for x in r) for r in rows]
    path.write_text("\n".join(lines) + "\n")
    return path


def _line_of_row(path: Path, row: int) -> str:
    """The text of data row ``row`` (1-based, header not counted) as it is in the file."""
    return path.read_text().splitlines()[row]


def _expected_matrix(expected, names, windows):
    return np.array([[expected[n][w] for n in names] for w in windows])


GRID = {(lb, band): f"lookback={lb}, band={band}" for lb in (10, 20) for band in (1.5, 2.5)}


# ---------------------------------------------------------------------------------------------
# layouts


def test_long_with_several_parameter_columns(tmp_path):
    rows, expected = _long_rows(GRID, WEEKS)
    path = _write_csv(tmp_path / "s.csv", ["window", "lookback", "band", "excess_return"], rows)
    s = load_sweep(str(path))
    assert s.layout == "long"
    assert set(s.configurations) == set(GRID.values())
    assert s.windows == tuple(WEEKS)
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, WEEKS))
    # The parameter table keeps numbers as numbers.
    assert list(s.parameters.columns) == ["lookback", "band"]
    assert pd.api.types.is_integer_dtype(s.parameters["lookback"])
    assert pd.api.types.is_float_dtype(s.parameters["band"])
    for (lb, band), name in GRID.items():
        assert s.parameters.loc[name, "lookback"] == lb
        assert s.parameters.loc[name, "band"] == band
    assert s.path == str(path) and s.units == "fraction"
    assert len(s.sha256) == 64 and s.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()


def test_long_with_a_single_configuration_id_column(tmp_path):
    configs = {("alpha",): "alpha", ("beta",): "beta", ("gamma",): "gamma"}
    rows, expected = _long_rows(configs, WEEKS, seed=1)
    path = _write_csv(tmp_path / "s.csv", ["date", "config", "excess_return"], rows)
    s = load_sweep(str(path))
    assert s.layout == "long"
    assert s.configurations == ("alpha", "beta", "gamma")
    assert list(s.parameters.columns) == []
    assert list(s.parameters.index) == ["alpha", "beta", "gamma"]
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, WEEKS))


def _wide_frame(names, windows, seed=2):
    rng = np.random.default_rng(seed)
    values = np.round(rng.normal(0.001, 0.02, size=(len(windows), len(names))), 6)
    return pd.DataFrame(values, columns=names, index=pd.Index(windows, name="date")), values


def test_wide_with_parameter_names(tmp_path):
    names = list(GRID.values())
    frame, values = _wide_frame(names, WEEKS)
    path = tmp_path / "w.csv"
    frame.to_csv(path)
    s = load_sweep(str(path))
    assert s.layout == "wide"
    assert s.configurations == tuple(names)
    assert s.windows == tuple(WEEKS)
    np.testing.assert_array_equal(s.returns, values)
    assert list(s.parameters.columns) == ["lookback", "band"]
    assert pd.api.types.is_integer_dtype(s.parameters["lookback"])
    assert pd.api.types.is_float_dtype(s.parameters["band"])
    assert s.parameters.loc["lookback=20, band=1.5", "band"] == 1.5


def test_wide_with_plain_names_has_no_parameters(tmp_path):
    frame, values = _wide_frame(["fast", "slow", "lookback=5"], WEEKS)
    path = tmp_path / "w.csv"
    frame.to_csv(path)
    s = load_sweep(str(path))
    assert s.configurations == ("fast", "slow", "lookback=5")
    assert list(s.parameters.columns) == []
    np.testing.assert_array_equal(s.returns, values)


def test_wide_without_a_window_column(tmp_path):
    frame, values = _wide_frame(["a", "b", "c"], WEEKS)
    path = tmp_path / "w.csv"
    frame.to_csv(path, index=False)
    s = load_sweep(str(path))
    assert s.layout == "wide"
    assert s.configurations == ("a", "b", "c")
    assert s.windows == tuple(str(i) for i in range(1, len(WEEKS) + 1))
    assert s.dates is None
    assert s.periods_per_year is None and s.periods_source == "unknown"
    np.testing.assert_array_equal(s.returns, values)


def test_tsv(tmp_path):
    rows, expected = _long_rows(GRID, WEEKS, seed=3)
    path = _write_csv(tmp_path / "s.tsv", ["window", "lookback", "band", "excess_return"], rows, sep="\t")
    s = load_sweep(str(path))
    assert set(s.configurations) == set(GRID.values())
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, WEEKS))


def test_parquet_long_and_wide(tmp_path):
    rows, expected = _long_rows(GRID, WEEKS, seed=4)
    frame = pd.DataFrame(rows, columns=["window", "lookback", "band", "excess_return"])
    frame["window"] = pd.to_datetime(frame["window"])  # a real datetime column, as Parquet keeps it
    frame.to_parquet(tmp_path / "s.parquet")
    s = load_sweep(str(tmp_path / "s.parquet"))
    assert s.layout == "long"
    assert s.windows == tuple(WEEKS)
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, WEEKS))
    assert s.periods_per_year == 52

    wide, values = _wide_frame(["x", "y"], WEEKS)
    wide.reset_index().to_parquet(tmp_path / "w.parquet")
    w = load_sweep(str(tmp_path / "w.parquet"))
    assert w.layout == "wide" and w.configurations == ("x", "y")
    np.testing.assert_array_equal(w.returns, values)


class _FakeStdin:
    def __init__(self, data: bytes):
        self.buffer = io.BytesIO(data)


def test_csv_from_standard_input(monkeypatch, tmp_path):
    rows, expected = _long_rows(GRID, WEEKS, seed=5)
    path = _write_csv(tmp_path / "s.csv", ["window", "lookback", "band", "excess_return"], rows)
    monkeypatch.setattr("sys.stdin", _FakeStdin(path.read_bytes()))
    s = load_sweep("-")
    assert s.path == "<stdin>"
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, WEEKS))


def test_read_table_returns_frame_label_and_digest(tmp_path):
    path = _write_csv(tmp_path / "t.csv", ["a", "b"], [(1, 2.5), (3, 4.5)])
    frame, label, digest = read_table(str(path))
    assert list(frame.columns) == ["a", "b"] and len(frame) == 2
    assert label == str(path)
    assert digest == hashlib.sha256(path.read_bytes()).hexdigest()


# ---------------------------------------------------------------------------------------------
# flags override detection


def test_layout_flag_overrides_detection(tmp_path):
    # Every window appears once per configuration column: auto reads it as wide; forcing long
    # with the first numeric column as the value makes no sense, so force wide on a file auto
    # would read as long instead.
    rows, _ = _long_rows({("a",): "a", ("b",): "b"}, WEEKS)
    path = _write_csv(tmp_path / "s.csv", ["date", "config", "excess_return"], rows)
    with pytest.raises(InputError, match="appears twice"):
        load_sweep(str(path), LoadOptions(layout="wide"))
    assert load_sweep(str(path), LoadOptions(layout="long")).layout == "long"


def test_window_column_flag(tmp_path):
    # "obs" is numeric and has no window-like name: without the flag it is a configuration.
    frame, values = _wide_frame(["a", "b"], WEEKS)
    frame.insert(0, "obs", np.arange(101, 101 + len(WEEKS)))
    path = tmp_path / "w.csv"
    frame.to_csv(path, index=False)
    with pytest.raises(InputError, match=r"column 'obs': holds only whole numbers: it looks like a window"):
        load_sweep(str(path))
    # No option makes a counter returns: layout wide and any units still refuse it.
    for units in ("fraction", "percent", "bps"):
        with pytest.raises(InputError, match=r"column 'obs', row 1: looks like a counter or an index"):
            load_sweep(str(path), LoadOptions(layout="wide", units=units))
    s = load_sweep(str(path), LoadOptions(window_column="obs"))
    assert s.configurations == ("a", "b")
    assert s.windows == tuple(str(i) for i in range(101, 101 + len(WEEKS)))
    np.testing.assert_array_equal(s.returns, values)


def test_value_column_flag(tmp_path):
    rng = np.random.default_rng(6)
    rows, gross = [], {}
    for name in ("a", "b"):
        for w in WEEKS:
            g = round(float(rng.normal(0, 0.02)), 6)
            rows.append((w, name, g, round(g - 0.001, 6)))
            gross.setdefault(name, {})[w] = g
    path = _write_csv(tmp_path / "s.csv", ["date", "config", "gross", "net"], rows)
    # Otherwise every column but window and value names a configuration, "net" included.
    s = load_sweep(str(path), LoadOptions(value_column="gross", parameter_columns=("config",)))
    assert s.layout == "long" and s.configurations == ("a", "b")
    np.testing.assert_array_equal(s.returns, _expected_matrix(gross, s.configurations, WEEKS))


def test_parameter_columns_flag(tmp_path):
    rows, expected = _long_rows(GRID, WEEKS, seed=7)
    rows = [(w, lb, band, "grid-A", v) for (w, lb, band, v) in rows]
    path = _write_csv(tmp_path / "s.csv", ["window", "lookback", "band", "comment", "excess_return"], rows)
    # By default every other column names the configuration, the comment included.
    assert "lookback=10, band=1.5, comment=grid-A" in load_sweep(str(path)).configurations
    s = load_sweep(str(path), LoadOptions(parameter_columns=("lookback", "band")))
    assert set(s.configurations) == set(GRID.values())
    assert list(s.parameters.columns) == ["lookback", "band"]
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, WEEKS))


def test_unknown_flag_columns_are_named(tmp_path):
    rows, _ = _long_rows(GRID, WEEKS)
    path = _write_csv(tmp_path / "s.csv", ["window", "lookback", "band", "excess_return"], rows)
    with pytest.raises(InputError, match=r"window column 'when' not found; columns are window, lookback"):
        load_sweep(str(path), LoadOptions(window_column="when"))
    with pytest.raises(InputError, match=r"value column 'pnl_net' not found"):
        load_sweep(str(path), LoadOptions(value_column="pnl_net"))
    with pytest.raises(InputError, match=r"parameter column 'width' not found"):
        load_sweep(str(path), LoadOptions(parameter_columns=("lookback", "width")))


# ---------------------------------------------------------------------------------------------
# units and periods per year


@pytest.mark.parametrize("units, factor", [("fraction", 1.0), ("percent", 100.0), ("bps", 10_000.0)])
def test_units_scale_to_fractions(tmp_path, units, factor):
    frame, values = _wide_frame(["a", "b"], WEEKS)
    path = tmp_path / "w.csv"
    (frame * factor).to_csv(path)
    s = load_sweep(str(path), LoadOptions(units=units))
    assert s.units == units
    # 1% = 0.01 = 100 bps.
    np.testing.assert_allclose(s.returns, values, rtol=1e-12, atol=0)


def _dated_wide(tmp_path, dates) -> Path:
    frame, _ = _wide_frame(["a", "b"], [d.date().isoformat() for d in dates])
    path = tmp_path / "w.csv"
    frame.to_csv(path)
    return path


@pytest.mark.parametrize(
    "dates, per_year",
    [
        (pd.bdate_range("2023-01-02", periods=60), 252.0),  # business days (common practice: 252)
        (pd.date_range("2023-01-06", periods=30, freq="W-FRI"), 52.0),
        (pd.date_range("2020-01-31", periods=24, freq="ME"), 12.0),
        (pd.date_range("2018-03-31", periods=20, freq="QE"), 4.0),
    ],
    ids=["daily", "weekly", "monthly", "quarterly"],
)
def test_periods_per_year_inferred_from_dates(tmp_path, dates, per_year):
    s = load_sweep(str(_dated_wide(tmp_path, dates)))
    assert s.periods_per_year == per_year
    assert s.periods_source == "inferred"
    assert s.dates is not None and len(s.dates) == len(dates)


def test_periods_per_year_flag_wins(tmp_path):
    s = load_sweep(str(_dated_wide(tmp_path, pd.bdate_range("2023-01-02", periods=30))),
                   LoadOptions(periods_per_year=260))
    assert s.periods_per_year == 260 and s.periods_source == "given"


def test_periods_per_year_unknown_without_dates(tmp_path):
    labels = [f"w{i:02d}" for i in range(1, 13)]
    frame, _ = _wide_frame(["a", "b"], labels)
    frame.index.name = "window"
    frame.to_csv(tmp_path / "w.csv")
    s = load_sweep(str(tmp_path / "w.csv"))
    assert s.windows == tuple(labels)
    assert s.dates is None and s.periods_per_year is None and s.periods_source == "unknown"


@pytest.mark.parametrize("bad", [0, -52, float("nan"), float("inf")])
def test_periods_per_year_flag_must_be_positive_and_finite(tmp_path, bad):
    path = _dated_wide(tmp_path, pd.bdate_range("2023-01-02", periods=30))
    with pytest.raises(InputError, match=r"periods per year must be positive and finite; got"):
        load_sweep(str(path), LoadOptions(periods_per_year=bad))


# ---------------------------------------------------------------------------------------------
# time order


def test_shuffled_long_file_is_sorted_in_time(tmp_path):
    rows, expected = _long_rows(GRID, WEEKS, seed=8)
    order = np.random.default_rng(9).permutation(len(rows))
    path = _write_csv(tmp_path / "s.csv", ["window", "lookback", "band", "excess_return"],
                      [rows[i] for i in order])
    s = load_sweep(str(path))
    assert s.windows == tuple(WEEKS)  # WEEKS is in calendar order
    assert list(s.dates) == list(pd.to_datetime(WEEKS))
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, WEEKS))


def test_shuffled_wide_file_is_sorted_in_time(tmp_path):
    frame, values = _wide_frame(["a", "b", "c"], WEEKS)
    order = np.random.default_rng(10).permutation(len(WEEKS))
    frame.iloc[order].to_csv(tmp_path / "w.csv")
    s = load_sweep(str(tmp_path / "w.csv"))
    assert s.windows == tuple(WEEKS)
    np.testing.assert_array_equal(s.returns, values)


def test_slash_separated_dates_are_dates(tmp_path):
    # 2023/01/06 is as much a date as 2023-01-06: sorted in time, weekly spacing inferred.
    frame, values = _wide_frame(["a", "b"], [w.replace("-", "/") for w in WEEKS])
    frame.iloc[::-1].to_csv(tmp_path / "w.csv")
    s = load_sweep(str(tmp_path / "w.csv"))
    assert s.windows == tuple(WEEKS)
    assert s.periods_per_year == 52
    np.testing.assert_array_equal(s.returns, values)


def test_numeric_windows_sort_numerically(tmp_path):
    windows = list(range(1, 13))  # as text "10" < "2"; as numbers 2 < 10
    rows, expected = _long_rows({("a",): "a", ("b",): "b"}, windows, seed=11)
    order = np.random.default_rng(12).permutation(len(rows))
    path = _write_csv(tmp_path / "s.csv", ["window", "config", "excess_return"], [rows[i] for i in order])
    s = load_sweep(str(path))
    assert s.windows == tuple(str(w) for w in windows)
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, windows))


# ---------------------------------------------------------------------------------------------
# raw returns and a benchmark


def test_benchmark_column_wide(tmp_path):
    frame, values = _wide_frame(["a", "b", "index"], WEEKS)
    frame.to_csv(tmp_path / "w.csv")
    s = load_sweep(str(tmp_path / "w.csv"), LoadOptions(benchmark="index"))
    assert s.configurations == ("a", "b")
    np.testing.assert_allclose(s.returns, values[:, :2] - values[:, [2]], rtol=0, atol=1e-15)
    assert any("benchmark" in n for n in s.notes)


def test_benchmark_configuration_long(tmp_path):
    configs = {("a",): "a", ("b",): "b", ("market",): "market"}
    rows, raw = _long_rows(configs, WEEKS, seed=13)
    path = _write_csv(tmp_path / "s.csv", ["date", "config", "return"], rows)
    s = load_sweep(str(path), LoadOptions(benchmark="market"))
    assert s.configurations == ("a", "b")
    assert list(s.parameters.index) == ["a", "b"]
    want = np.array([[raw[c][w] - raw["market"][w] for c in ("a", "b")] for w in WEEKS])
    np.testing.assert_allclose(s.returns, want, rtol=0, atol=1e-15)


def _benchmark_file(tmp_path, windows, seed=14) -> tuple[Path, dict]:
    rng = np.random.default_rng(seed)
    bench = {w: round(float(rng.normal(0.0005, 0.01)), 6) for w in windows}
    path = _write_csv(tmp_path / "bench.csv", ["date", "benchmark_return"], list(bench.items()))
    return path, bench


def test_benchmark_file_long(tmp_path):
    rows, raw = _long_rows(GRID, WEEKS, seed=15)
    path = _write_csv(tmp_path / "s.csv", ["window", "lookback", "band", "excess_return"], rows)
    # The benchmark file is shuffled: alignment is by window, not by position.
    shuffled = [WEEKS[i] for i in np.random.default_rng(16).permutation(len(WEEKS))]
    bpath, bench = _benchmark_file(tmp_path, shuffled)
    s = load_sweep(str(path), LoadOptions(benchmark_file=str(bpath)))
    want = np.array([[raw[c][w] - bench[w] for c in s.configurations] for w in WEEKS])
    np.testing.assert_allclose(s.returns, want, rtol=0, atol=1e-15)


def test_benchmark_file_wide(tmp_path):
    frame, values = _wide_frame(["a", "b"], WEEKS)
    frame.to_csv(tmp_path / "w.csv")
    bpath, bench = _benchmark_file(tmp_path, WEEKS + ["2030-01-04"])  # an extra window is harmless
    s = load_sweep(str(tmp_path / "w.csv"), LoadOptions(benchmark_file=str(bpath), units="fraction"))
    want = values - np.array([bench[w] for w in WEEKS])[:, None]
    np.testing.assert_allclose(s.returns, want, rtol=0, atol=1e-15)


def test_benchmark_file_with_undated_windows(tmp_path):
    labels = [f"w{i:02d}" for i in range(1, 13)]
    frame, values = _wide_frame(["a", "b"], labels)
    frame.index.name = "window"
    frame.to_csv(tmp_path / "w.csv")
    bpath, bench = _benchmark_file(tmp_path, labels)
    s = load_sweep(str(tmp_path / "w.csv"), LoadOptions(benchmark_file=str(bpath)))
    np.testing.assert_allclose(s.returns, values - np.array([bench[w] for w in labels])[:, None], atol=1e-15)


# ---------------------------------------------------------------------------------------------
# common windows


def _ragged_rows(drop: dict[str, list[str]], seed=17):
    configs = {(c,): c for c in ("a", "b", "c")}
    rows, expected = _long_rows(configs, WEEKS, seed=seed)
    rows = [r for r in rows if r[0] not in drop.get(r[1], [])]
    return rows, expected


def test_different_windows_are_refused_with_a_count_and_a_hint(tmp_path):
    rows, _ = _ragged_rows({"b": [WEEKS[3]], "c": [WEEKS[0], WEEKS[5]]})
    path = _write_csv(tmp_path / "s.csv", ["date", "config", "excess_return"], rows)
    with pytest.raises(InputError) as err:
        load_sweep(str(path))
    msg = str(err.value)
    assert "2 of 3 configurations" in msg
    assert f"only {len(WEEKS) - 3} windows are common" in msg
    assert "common_windows=True" in msg and "--common-windows" in msg  # the argument, and the option
    assert str(path) in msg


def test_common_windows_keeps_the_common_windows_with_a_note(tmp_path):
    dropped = {WEEKS[3], WEEKS[0], WEEKS[5]}
    rows, expected = _ragged_rows({"b": [WEEKS[3]], "c": [WEEKS[0], WEEKS[5]]})
    path = _write_csv(tmp_path / "s.csv", ["date", "config", "excess_return"], rows)
    s = load_sweep(str(path), LoadOptions(common_windows=True))
    kept = [w for w in WEEKS if w not in dropped]
    assert s.windows == tuple(kept)
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, kept))
    assert any(f"kept the {len(kept)} windows" in n and "dropped 3 windows" in n for n in s.notes)


@pytest.mark.parametrize(
    "header, configs",
    [
        (["date", "config", "gain"], {("a",): "a", ("b",): "b"}),
        (["date", "lookback", "excess_return"], {(10,): "lookback=10", (20,): "lookback=20"}),
    ],
    ids=["id-column", "parameter-column"],
)
def test_two_configurations_on_ragged_windows_are_long(tmp_path, header, configs):
    # Most windows appear only once here, yet the file is long: refused as ragged, not misread.
    rows, _ = _long_rows(configs, WEEKS, seed=23)
    second = list(configs)[1][0]
    rows = [r for r in rows if not (r[1] == second and r[0] in WEEKS[:3])]
    path = _write_csv(tmp_path / "s.csv", header, rows)
    with pytest.raises(InputError, match=r"1 of 2 configurations miss at least one of the 12 windows"):
        load_sweep(str(path))
    s = load_sweep(str(path), LoadOptions(common_windows=True))
    assert s.layout == "long" and s.windows == tuple(WEEKS[3:])


def test_common_windows_in_wide_layout(tmp_path):
    frame, values = _wide_frame(["a", "b"], WEEKS)
    frame.iloc[2, 1] = np.nan
    frame.to_csv(tmp_path / "w.csv")
    with pytest.raises(InputError, match="1 of 2 configurations"):
        load_sweep(str(tmp_path / "w.csv"))
    s = load_sweep(str(tmp_path / "w.csv"), LoadOptions(common_windows=True))
    assert s.windows == tuple(w for i, w in enumerate(WEEKS) if i != 2)
    np.testing.assert_array_equal(s.returns, np.delete(values, 2, axis=0))


# ---------------------------------------------------------------------------------------------
# single configuration


def test_single_configuration_loads_with_explicit_long_layout(tmp_path):
    rows, expected = _long_rows({("only",): "only"}, WEEKS, seed=18)
    path = _write_csv(tmp_path / "s.csv", ["date", "config", "excess_return"], rows)
    s = load_sweep(str(path), LoadOptions(layout="long"))
    assert s.configurations == ("only",)
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, ("only",), WEEKS))


@pytest.mark.parametrize(
    "header, configs",
    [
        (["date", "config", "excess_return"], {("only",): "only"}),
        (["date", "lookback", "band", "excess_return"], {(20, 1.5): "lookback=20, band=1.5"}),
    ],
    ids=["id-column", "parameter-columns"],
)
def test_single_configuration_long_is_detected(tmp_path, header, configs):
    # Every window appears once, as in a wide file; the value column's name and the constant
    # configuration columns say it is long.
    rows, expected = _long_rows(configs, WEEKS, seed=21)
    path = _write_csv(tmp_path / "s.csv", header, rows)
    s = load_sweep(str(path))
    assert s.layout == "long"
    assert s.configurations == tuple(configs.values())
    np.testing.assert_array_equal(s.returns, _expected_matrix(expected, s.configurations, WEEKS))


def test_single_configuration_wide(tmp_path):
    frame, values = _wide_frame(["only"], WEEKS)
    frame.to_csv(tmp_path / "w.csv")
    s = load_sweep(str(tmp_path / "w.csv"))
    assert s.configurations == ("only",) and s.returns.shape == (len(WEEKS), 1)
    np.testing.assert_array_equal(s.returns, values)


# ---------------------------------------------------------------------------------------------
# errors: files


def test_missing_file(tmp_path):
    path = tmp_path / "nope.csv"
    with pytest.raises(InputError, match=rf"^{re.escape(str(path))}: no such file$"):
        load_sweep(str(path))


def test_directory(tmp_path):
    with pytest.raises(InputError, match=rf"^{re.escape(str(tmp_path))}: is a directory"):
        load_sweep(str(tmp_path))


@pytest.mark.parametrize("name", ["s.xlsx", "sweep"])
def test_unknown_suffix(tmp_path, name):
    path = tmp_path / name
    path.write_text("date,a\n2023-01-06,0.1\n")
    with pytest.raises(InputError, match=r"unreadable format .*use \.csv, \.tsv or \.parquet") as err:
        load_sweep(str(path))
    assert err.value.path == str(path)


def test_corrupt_parquet(tmp_path):
    path = tmp_path / "s.parquet"
    path.write_bytes(b"PAR1 this is not really parquet \x00\x01\x02")
    with pytest.raises(InputError, match=r"unreadable PARQUET file") as err:
        load_sweep(str(path))
    assert str(path) in str(err.value)


def test_empty_input_no_bytes(tmp_path):
    path = tmp_path / "s.csv"
    path.write_bytes(b"")
    with pytest.raises(InputError, match="empty input: no header and no data rows"):
        load_sweep(str(path))


def test_empty_input_header_only(tmp_path):
    path = tmp_path / "s.csv"
    path.write_text("date,config,excess_return\n")
    with pytest.raises(InputError, match="empty input: a header but no data rows"):
        load_sweep(str(path))


@pytest.mark.parametrize("header", ["date,a,b,a", "date,a, b ,b"])
def test_repeated_header_name_is_refused(tmp_path, header):
    # Two columns named alike would otherwise load as two configurations.
    rows = [(w, 0.01 * i, -0.02 * i, 0.003 * i) for i, w in enumerate(WEEKS)]
    path = _write_csv(tmp_path / "s.csv", header.split(","), rows)
    with pytest.raises(InputError, match="the header repeats this column name") as err:
        load_sweep(str(path))
    assert err.value.column == header.split(",")[-1].strip()


def test_byte_order_mark_and_empty_header_cells(tmp_path):
    # Spreadsheet exports start with a UTF-8 byte-order mark; "date" must still name the windows.
    frame, values = _wide_frame(["a", "b"], WEEKS)
    path = tmp_path / "w.csv"
    path.write_bytes(b"\xef\xbb\xbf" + frame.to_csv().encode())
    s = load_sweep(str(path))
    assert s.windows == tuple(WEEKS) and s.configurations == ("a", "b")
    np.testing.assert_array_equal(s.returns, values)
    # A trailing comma leaves an empty header cell: it keeps the name pandas gives it.
    text = "\n".join(line + "," for line in frame.to_csv().splitlines()) + "\n"
    path.write_text(text)
    assert list(read_table(str(path))[0].columns) == ["date", "a", "b", "Unnamed: 3"]


def test_empty_standard_input(monkeypatch):
    monkeypatch.setattr("sys.stdin", _FakeStdin(b""))
    with pytest.raises(InputError, match=r"^<stdin>: empty input"):
        load_sweep("-")


# ---------------------------------------------------------------------------------------------
# errors: cells


def _long_file_with(tmp_path, bad_row: int, bad_text: str) -> Path:
    """A valid long file whose data row ``bad_row`` (1-based) holds ``bad_text`` as its value."""
    rows, _ = _long_rows(GRID, WEEKS, seed=19)
    w, lb, band, _v = rows[bad_row - 1]
    rows[bad_row - 1] = (w, lb, band, bad_text)
    return _write_csv(tmp_path / "s.csv", ["window", "lookback", "band", "excess_return"], rows)


def _assert_row(path: Path, err: InputError, column: str, needle: str) -> None:
    assert err.column == column
    assert str(path) in str(err) and f"column {column!r}" in str(err) and f"row {err.row}" in str(err)
    # The reported row is the file's line holding the bad cell (header is not counted).
    assert _line_of_row(path, err.row).split(",")[-1] == needle


def test_non_numeric_cell_names_the_row(tmp_path):
    path = _long_file_with(tmp_path, 17, "abc")
    with pytest.raises(InputError, match=r"not a number: 'abc'") as err:
        load_sweep(str(path))
    assert err.value.row == 17
    _assert_row(path, err.value, "excess_return", "abc")


def test_infinite_cell_names_the_row(tmp_path):
    path = _long_file_with(tmp_path, 5, "inf")
    with pytest.raises(InputError, match="infinite value") as err:
        load_sweep(str(path))
    assert err.value.row == 5
    _assert_row(path, err.value, "excess_return", "inf")


def test_missing_cell_names_the_row(tmp_path):
    path = _long_file_with(tmp_path, 30, "")
    with pytest.raises(InputError, match="missing value .*never filled") as err:
        load_sweep(str(path))
    assert err.value.row == 30
    _assert_row(path, err.value, "excess_return", "")


def test_non_numeric_cell_in_wide_layout(tmp_path):
    frame, _ = _wide_frame(["a", "b", "c"], WEEKS)
    frame = frame.astype(object)
    frame.iloc[6, 1] = "n/a?"
    path = tmp_path / "w.csv"
    frame.to_csv(path)
    with pytest.raises(InputError, match=r"not a number: 'n/a\?'") as err:
        load_sweep(str(path))
    assert err.value.column == "b" and err.value.row == 7
    assert _line_of_row(path, 7).split(",")[2] == "n/a?"


def test_duplicate_configuration_window_pair_names_the_second_row(tmp_path):
    rows, _ = _long_rows(GRID, WEEKS, seed=20)
    copy = rows[4]  # first occurrence at data row 5
    rows.insert(20, (copy[0], copy[1], copy[2], 0.0123))  # second occurrence at data row 21
    path = _write_csv(tmp_path / "s.csv", ["window", "lookback", "band", "excess_return"], rows)
    with pytest.raises(InputError, match="duplicate row for configuration") as err:
        load_sweep(str(path))
    assert err.value.row == 21
    assert f"window {copy[0]!r}" in str(err.value)
    assert f"'lookback={copy[1]}, band={copy[2]}'" in str(err.value)
    assert _line_of_row(path, 21).split(",")[:3] == [str(x) for x in copy[:3]]


def test_duplicate_window_in_wide_layout(tmp_path):
    frame, _ = _wide_frame(["a", "b"], WEEKS)
    frame = pd.concat([frame.iloc[:9], frame.iloc[[3]], frame.iloc[9:]])  # row 4 repeated as row 10
    path = tmp_path / "w.csv"
    frame.to_csv(path)
    with pytest.raises(InputError, match=rf"window '{WEEKS[3]}' appears twice") as err:
        load_sweep(str(path))
    assert err.value.column == "date" and err.value.row == 10
    assert _line_of_row(path, 10).startswith(WEEKS[3])


@pytest.mark.parametrize("bad", ["2023-13-45", "total"])
def test_a_bad_date_among_dates_names_the_row_wide(tmp_path, bad):
    frame, _ = _wide_frame(["a", "b"], WEEKS[:6] + [bad] + WEEKS[7:])
    path = tmp_path / "w.csv"
    frame.to_csv(path)
    with pytest.raises(InputError, match=rf"not a date: '{bad}'") as err:
        load_sweep(str(path))
    assert err.value.column == "date" and err.value.row == 7
    assert _line_of_row(path, 7).startswith(bad + ",")


def test_a_bad_date_among_dates_names_the_row_long(tmp_path):
    rows, _ = _long_rows(GRID, WEEKS, seed=22)
    # Rows are grouped by configuration; put the mistyped date in the second configuration's block
    # so that its first occurrence is data row 12 + 5 = 17.
    w, lb, band, v = rows[16]
    rows[16] = ("2023-02-30", lb, band, v)
    path = _write_csv(tmp_path / "s.csv", ["window", "lookback", "band", "excess_return"], rows)
    with pytest.raises(InputError, match=r"not a date: '2023-02-30'") as err:
        load_sweep(str(path))
    assert err.value.row == 17
    assert _line_of_row(path, 17).startswith("2023-02-30,")


def test_no_numeric_value_column(tmp_path):
    rows = [(w, c, "up") for w in WEEKS for c in ("a", "b")]
    path = _write_csv(tmp_path / "s.csv", ["date", "config", "label"], rows)
    with pytest.raises(InputError, match=r"no numeric value column found; name it with value_column "
                                         r"\(command line: --value-column\); columns are date, config, label"):
        load_sweep(str(path))


# ---------------------------------------------------------------------------------------------
# errors: degenerate data and options


def test_fewer_windows_than_the_minimum(tmp_path):
    windows = WEEKS[: MIN_WINDOWS - 1]
    frame, _ = _wide_frame(["a", "b"], windows)
    frame.to_csv(tmp_path / "w.csv")
    with pytest.raises(DegenerateDataError, match=rf"only {MIN_WINDOWS - 1} windows; the audit needs "
                                                  rf"at least {MIN_WINDOWS}"):
        load_sweep(str(tmp_path / "w.csv"))
    frame, _ = _wide_frame(["a", "b"], WEEKS[:MIN_WINDOWS])
    frame.to_csv(tmp_path / "w.csv")
    assert load_sweep(str(tmp_path / "w.csv")).n_windows == MIN_WINDOWS


def test_constant_configuration_is_named(tmp_path):
    frame, _ = _wide_frame(["a", "flat", "c"], WEEKS)
    frame["flat"] = 0.002
    frame.to_csv(tmp_path / "w.csv")
    with pytest.raises(DegenerateDataError, match=r"configuration 'flat' is constant \(every window = 0.002\)"):
        load_sweep(str(tmp_path / "w.csv"))


def test_missing_benchmark_column_or_configuration(tmp_path):
    frame, _ = _wide_frame(["a", "b"], WEEKS)
    frame.to_csv(tmp_path / "w.csv")
    with pytest.raises(InputError, match=r"benchmark column 'index' not found; columns are date, a, b"):
        load_sweep(str(tmp_path / "w.csv"), LoadOptions(benchmark="index"))
    rows, _ = _long_rows({("a",): "a", ("b",): "b"}, WEEKS)
    path = _write_csv(tmp_path / "s.csv", ["date", "config", "return"], rows)
    with pytest.raises(InputError, match=r"benchmark configuration 'market' not found among the 2 configurations"):
        load_sweep(str(path), LoadOptions(benchmark="market"))


def test_benchmark_cannot_be_the_window_column(tmp_path):
    frame, _ = _wide_frame(["a", "b"], WEEKS)
    frame.to_csv(tmp_path / "w.csv")
    with pytest.raises(InputError, match=r"the benchmark column 'date' is the window column"):
        load_sweep(str(tmp_path / "w.csv"), LoadOptions(benchmark="date"))


def test_benchmark_file_missing_windows(tmp_path):
    frame, _ = _wide_frame(["a", "b"], WEEKS)
    frame.to_csv(tmp_path / "w.csv")
    bpath, _ = _benchmark_file(tmp_path, [w for w in WEEKS if w not in (WEEKS[2], WEEKS[7])])
    with pytest.raises(InputError, match=rf"no benchmark value for window '{WEEKS[2]}' \(2 windows missing\)") as err:
        load_sweep(str(tmp_path / "w.csv"), LoadOptions(benchmark_file=str(bpath)))
    assert str(bpath) in str(err.value)


def test_invalid_units(tmp_path):
    frame, _ = _wide_frame(["a", "b"], WEEKS)
    frame.to_csv(tmp_path / "w.csv")
    with pytest.raises(InputError, match=r"units must be one of fraction, percent, bps; got 'percentage'"):
        load_sweep(str(tmp_path / "w.csv"), LoadOptions(units="percentage"))


def test_long_file_with_an_unnamed_window_column_is_refused_not_read_as_wide(tmp_path):
    # A long file whose window column has no window-like name ("t") would otherwise be read as
    # wide with row numbers as windows, auditing the window and parameter columns as configurations.
    rng = np.random.default_rng(2)
    rows = [(t, lb, f"{rng.normal(0, 0.01):.6f}") for lb in (5, 10, 20) for t in range(1, 61)]
    path = _write_csv(tmp_path / "t.csv", ["t", "lookback", "pnl"], rows)
    with pytest.raises(InputError, match=r"t.csv, column 't': holds only whole numbers"):
        load_sweep(str(path))
    s = load_sweep(str(path), LoadOptions(window_column="t", value_column="pnl"))
    assert s.layout == "long" and s.configurations == ("lookback=5", "lookback=10", "lookback=20")


def test_returns_of_100_percent_or_more_in_a_window_are_flagged(tmp_path):
    frame, _ = _wide_frame(["a", "b"], WEEKS)
    frame.iloc[3, 1] = 1.5
    path = tmp_path / "w.csv"
    frame.to_csv(path)
    s = load_sweep(str(path))
    # The verdict's plausible_returns check judges it (tests/test_verdict_plausible.py); the reader
    # keeps the figures: the largest move in one window and where it is.
    p = s.plausibility
    assert (p.largest_window_return, p.largest_window_configuration, p.largest_window) == (1.5, "b", WEEKS[3])


def test_periods_per_year_that_disagree_with_the_dates_are_flagged(tmp_path):
    frame, _ = _wide_frame(["a", "b"], WEEKS)
    path = tmp_path / "w.csv"
    frame.to_csv(path)
    s = load_sweep(str(path), LoadOptions(periods_per_year=12))
    assert s.periods_per_year == 12
    assert any("--periods-per-year 12 disagrees with the window dates, which look weekly (52 a year)" in n
               for n in s.notes)
    assert not load_sweep(str(path), LoadOptions(periods_per_year=52)).notes
