"""The fast reading paths held equal to the general ones.

* pyarrow's CSV reader (``sweepaudit.read.fastcsv``) against pandas' C parser, the general path
  (forced by making ``arrow_table`` decline): the same table (columns, dtypes, values, missing
  cells, bit for bit: both parsers round decimal text to the nearest float64) or the same error;
  then the same Sweep, or the same one-line error naming the same file, column and row, on varied
  long and wide sweeps (separators, a decimal comma, dates of both orders, missing cells, repeated
  and shuffled rows, parameters of numbers and of text).
* The long builder's run-by-run factorisation against pandas' own factorisation of the whole
  parameter columns (``pd.MultiIndex.from_frame(...).factorize()``, the reference), and every built
  matrix against the values the test itself wrote (a literal oracle).

Internal consistency only (two paths of this project, and pandas as the reference factoriser).
"""

from __future__ import annotations

import contextlib
import itertools
from pathlib import Path
from unittest import mock

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from sweepaudit.errors import SweepAuditError
from sweepaudit.read import LoadOptions, formats, load_sweep, read_table
from sweepaudit.read.build import _configurations, first_occurrences
from sweepaudit.read.checks import _counter_like
from sweepaudit.read import fastcsv
from sweepaudit.read.fastcsv import arrow_table
from sweepaudit.read.formats import NA_TOKENS

SETTINGS = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


@pytest.fixture(autouse=True)
def _fast_path_for_small_files():
    """pyarrow's reader for files of any size here (it is left to pandas under 1 MiB), so that the
    small files of these tests take the fast path."""
    with mock.patch.object(fastcsv, "MIN_BYTES", 0):
        yield


@contextlib.contextmanager
def _general_path():
    """pandas' parser for every text file, as before pyarrow's reader was used."""
    with mock.patch.object(formats, "arrow_table", lambda *args: None):
        yield


def _outcome(read, *args, **kwargs):
    """What ``read`` gives, or the error it raises (type and one-line message)."""
    try:
        return read(*args, **kwargs)
    except SweepAuditError as exc:
        return _Refused(type(exc), str(exc), exc.path, exc.column, exc.row)


class _Refused(tuple):
    """An error as (type, message, file, column, row)."""

    def __new__(cls, *fields):
        return super().__new__(cls, fields)


def _assert_same_table(fast, general):
    if isinstance(general, _Refused) or isinstance(fast, _Refused):
        assert fast == general
        return
    frame, label, digest = fast
    assert (label, digest) == general[1:]
    assert list(frame.columns) == list(general[0].columns)
    assert frame.dtypes.tolist() == general[0].dtypes.tolist()
    pd.testing.assert_frame_equal(frame, general[0], check_exact=True)
    assert frame.attrs == general[0].attrs


def _assert_same_sweep(fast, general):
    if isinstance(general, _Refused) or isinstance(fast, _Refused):
        assert fast == general
        return
    assert np.array_equal(fast.returns, general.returns)
    assert fast.configurations == general.configurations
    pd.testing.assert_frame_equal(fast.parameters, general.parameters, check_exact=True)
    assert fast.windows == general.windows
    if general.dates is None:
        assert fast.dates is None
    else:
        assert fast.dates.equals(general.dates)
    assert fast.notes == general.notes
    assert fast.reading == general.reading
    assert (fast.periods_per_year, fast.sha256, fast.layout) == (general.periods_per_year, general.sha256,
                                                                 general.layout)


# ---------------------------------------------------------------------------------------------
# the parser: cells of every kind pandas and pyarrow might read differently

CELLS = [
    "0.5", "-0.25", "1e-05", "1E5", "2.5e+3", ".5", "5.", "-0", "007", "12", "-3", "inf", "-inf", "Infinity",
    "+5", "+0.5", "NAN", "Nan", "-nan", "0x10", "9223372036854775808", "-9223372036854775809", "1e400",
    "true", "False", "TRUE", "2024-01-05", "2024-01-05 16:00", "12:30", "05/01/2024", "abc", "x y", "a_b",
    "1_000", "1,234.5", "0.1234567890123456789", "", "NA", "N/A", "NaN", "nan", "null", "NULL", "None",
    " 0.5", "0.5 ", '"0.5"', '"a,b"', '""',
]
_float_text = st.floats(allow_nan=False, allow_infinity=False, width=64).map(repr)
_fixed_text = st.floats(min_value=-1.0, max_value=1.0).map(lambda v: f"{v:.8f}")
_cell = st.one_of(st.sampled_from(CELLS), _float_text, _fixed_text, st.integers(-10**20, 10**20).map(str))


def _column(kind: str, n: int):
    """A column mostly of one kind (so that numeric columns stay numeric), with odd cells mixed in."""
    common = {"float": st.one_of(_float_text, _fixed_text), "int": st.integers(-10**6, 10**6).map(str),
              "text": st.sampled_from(["fast", "slow", "cfg_1", "b"]), "date": st.sampled_from(["2024-01-05", "2024-02-09"])}[kind]
    return st.lists(st.one_of(common, common, common, _cell), min_size=n, max_size=n)


@st.composite
def _text_files(draw):
    sep = draw(st.sampled_from([",", ";", "\t", "|"]))
    n_rows = draw(st.integers(1, 6))
    kinds = draw(st.lists(st.sampled_from(["float", "int", "text", "date"]), min_size=1, max_size=4))
    columns = [draw(_column(kind, n_rows)) for kind in kinds]
    header = [f"c{k}" for k in range(len(kinds))]
    header[-1] = draw(st.sampled_from([header[-1]] * 8 + ["", "c0", " c9"]))  # blank, repeated, space-led
    lines = [sep.join(header)] + [sep.join(col[r] for col in columns) for r in range(n_rows)]
    text = "\n".join(lines) + draw(st.sampled_from(["\n", "", "\r\n"]))
    text = text.replace("\n", draw(st.sampled_from(["\n", "\r\n", "\r"])))
    return draw(st.sampled_from([b"", b"\xef\xbb\xbf"])) + text.encode(), sep


@SETTINGS
@given(case=_text_files())
def test_pyarrow_reads_the_table_pandas_reads(tmp_path: Path, case):
    data, sep = case
    path = tmp_path / ("sweep.tsv" if sep == "\t" else "sweep.csv")
    path.write_bytes(data)
    with _general_path():
        general = _outcome(read_table, str(path))
    _assert_same_table(_outcome(read_table, str(path)), general)


@pytest.mark.skipif(not fastcsv._arrow_text(), reason="pandas before 3 keeps text in object columns: pandas reads")
def test_pyarrow_reads_the_ordinary_file_and_declines_the_rest():
    """The fast path is taken on an ordinary file (so the equality tests above test it), and each
    input it cannot read as pandas does is handed back (None)."""
    header = ["week", "lookback", "band", "excess_return"]
    ordinary = b"week,lookback,band,excess_return\n2024-01-05,5,a,0.01\n2024-01-12,5,a,-0.02\n"
    frame = arrow_table(ordinary, ",", header, NA_TOKENS)
    assert frame is not None
    assert frame.dtypes.tolist()[1:3] == [np.dtype("int64"), pd.Series(["a"]).dtype]
    assert frame["week"].tolist() == ["2024-01-05", "2024-01-12"]  # text, not pyarrow's dates
    declined = {
        "quotes": b'week,lookback,band,excess_return\n2024-01-05,5,"a",0.01\n',
        "space after a separator": b"week,lookback,band,excess_return\n2024-01-05, 5,a,0.01\n",
        "space before a line break": b"week,lookback,band,excess_return\n2024-01-05,5,a,0.01 \n",
        "tab in a comma file": b"week,lookback,band,excess_return\n2024-01-05,5,a\t,0.01\n",
        "form feed": b"week,lookback,band,excess_return\n2024-01-05,\x0c5,a,0.01\n",
        "hexadecimal": b"week,lookback,band,excess_return\n2024-01-05,0x5,a,0.01\n",
        "hexadecimal, carriage returns": b"week,lookback,band,excess_return\r2024-01-05,0x5,a,0.01\r",
        "booleans": b"week,lookback,band,excess_return\n2024-01-05,5,true,0.01\n",
        "NaN not a token": b"week,lookback,band,excess_return\n2024-01-05,5,a,NAN\n2024-01-12,5,a,0.5\n",
        "whole floats": b"week,lookback,band,excess_return\n2024-01-05,+5,a,0.01\n",
        "beyond 64-bit integers": b"week,lookback,band,excess_return\n2024-01-05,5,a,9223372036854775808\n"
                                  b"2024-01-12,5,a,-0.5\n",
        "all missing": b"week,lookback,band,excess_return\n2024-01-05,5,,0.01\n",
        "ragged row": b"week,lookback,band,excess_return\n2024-01-05,5,a\n",
        "blank first line": b"\nweek,lookback,band,excess_return\n2024-01-05,5,a,0.01\n",
        "no data rows": b"week,lookback,band,excess_return\n",
        "bytes not UTF-8": b"week,lookback,band,excess_return\n2024-01-05,5,\xff,0.01\n",
    }
    for why, data in declined.items():
        assert arrow_table(data, ",", header, NA_TOKENS) is None, why
    assert arrow_table(ordinary, ",", ["week", "lookback", "band", "week"], NA_TOKENS) is None  # repeated name
    wide = ["week"] + [f"c{k}" for k in range(fastcsv.MAX_COLUMNS)]
    wide_file = (",".join(wide) + "\n" + ",".join(["2024-01-05"] + ["0.01"] * fastcsv.MAX_COLUMNS) + "\n").encode()
    assert arrow_table(wide_file, ",", wide, NA_TOKENS) is None
    assert arrow_table(wide_file, ",", wide[:-1], NA_TOKENS) is None  # the header must be the file's
    narrow_file = (",".join(wide[:-1]) + "\n" + ",".join(["2024-01-05"] + ["0.01"] * (fastcsv.MAX_COLUMNS - 1))
                   + "\n").encode()
    assert arrow_table(narrow_file, ",", wide[:-1], NA_TOKENS) is not None
    with mock.patch.object(fastcsv, "MIN_BYTES", len(ordinary) + 1):
        assert arrow_table(ordinary, ",", header, NA_TOKENS) is None


# ---------------------------------------------------------------------------------------------
# whole sweeps: long and wide, every detection


def _window_labels(form: str, t: int, shuffle_seed: int) -> list[str]:
    days = pd.date_range("2023-01-06", periods=t, freq="7D")
    if form == "iso":
        return [d.strftime("%Y-%m-%d") for d in days]
    if form == "day-first":
        return [d.strftime("%d/%m/%Y") for d in days]
    if form == "month-first":
        return [d.strftime("%m/%d/%Y") for d in days]
    return [str(k + 1) for k in range(t)]  # counters, ordered numerically


@st.composite
def _sweeps(draw):
    layout = draw(st.sampled_from(["long", "wide"]))
    sep = draw(st.sampled_from([",", ";", "\t", "|"]))
    decimal = draw(st.sampled_from([".", ","])) if sep != "," else "."
    form = draw(st.sampled_from(["iso", "day-first", "month-first", "counter"]))
    t = draw(st.integers(8, 14))
    n = draw(st.integers(1, 5))
    params = draw(st.sampled_from(["numbers", "text", "id"]))
    order = draw(st.sampled_from(["by configuration", "by window", "shuffled"]))
    defect = draw(st.sampled_from(["none", "none", "missing cell", "repeated row", "not a number", "missing value"]))
    seed = draw(st.integers(0, 2**16))
    return dict(layout=layout, sep=sep, decimal=decimal, form=form, t=t, n=n, params=params, order=order,
                defect=defect, seed=seed)


def _write_sweep(folder: Path, case: dict) -> tuple[Path, dict]:
    """The sweep file of ``case`` and the values written: {(configuration key, window label): value}."""
    rng = np.random.default_rng(case["seed"])
    windows = _window_labels(case["form"], case["t"], case["seed"])
    configs = [(5 * (k // 2 + 1), ["a", "b"][k % 2] if case["params"] == "text" else 0.5 + k % 2) for k in range(case["n"])]
    values = {(c, w): float(np.round(rng.normal(0.001, 0.02), 6)) for c in configs for w in windows}
    sep, dec = case["sep"], case["decimal"]

    def number(v):
        return f"{v:.6f}".replace(".", dec)

    if case["layout"] == "long":
        header = ["week", "id"] if case["params"] == "id" else ["week", "lookback", "band"]
        header.append("excess_return")
        keys = list(itertools.product(configs, windows))
        if case["order"] == "by window":
            keys = [(c, w) for w in windows for c in configs]
        elif case["order"] == "shuffled":
            keys = [keys[i] for i in rng.permutation(len(keys))]
        rows = []
        for c, w in keys:
            ident = [f"cfg{c[0]}{c[1]}"] if case["params"] == "id" else [str(c[0]), str(c[1]).replace(".", dec)]
            rows.append([w, *ident, number(values[c, w])])
    else:
        header = ["week"] + [f"cfg{c[0]}{c[1]}" for c in configs]
        rows = [[w] + [number(values[c, w]) for c in configs] for w in windows]
        if case["order"] == "shuffled":
            rows = [rows[i] for i in rng.permutation(len(rows))]
    if case["defect"] == "missing cell" and len(rows) > 1:
        rows[len(rows) // 2][-1] = ""
        if case["layout"] == "long":
            del rows[len(rows) // 2]
    elif case["defect"] == "repeated row":
        rows.insert(len(rows) // 2 + 1, list(rows[len(rows) // 3]))
    elif case["defect"] == "not a number":
        rows[-1][-1] = "n/a?"
    elif case["defect"] == "missing value":
        rows[0][-1] = "NA"
    path = folder / ("sweep.tsv" if sep == "\t" else "sweep.csv")
    path.write_text("\n".join(sep.join(r) for r in [header, *rows]) + "\n")
    return path, values


def _options(case: dict) -> dict:
    options = {}
    if case["form"] in ("day-first", "month-first"):
        options["date_order"] = case["form"]
    if case["decimal"] == ",":
        options["decimal"] = ","
    return options


@SETTINGS
@given(case=_sweeps(), common=st.booleans())
def test_the_same_sweep_or_the_same_error_on_both_paths(tmp_path: Path, case, common):
    path, values = _write_sweep(tmp_path, case)
    options = LoadOptions(common_windows=common, **_options(case))
    with _general_path():
        general = _outcome(load_sweep, str(path), options)
    fast = _outcome(load_sweep, str(path), options)
    _assert_same_sweep(fast, general)
    if isinstance(fast, _Refused) or case["defect"] != "none":
        return
    # The literal oracle: every cell the value this test wrote, in time order.
    windows = _window_labels(case["form"], case["t"], case["seed"])
    column = {name: k for k, name in enumerate(fast.configurations)}
    assert fast.returns.shape == (case["t"], case["n"])
    for (config, window), value in values.items():
        name = (f"cfg{config[0]}{config[1]}" if case["params"] == "id" or case["layout"] == "wide"
                else f"lookback={config[0]}, band={config[1]}")
        assert fast.returns[windows.index(window), column[name]] == value


# ---------------------------------------------------------------------------------------------
# the long builder's factorisation


@st.composite
def _parameter_frames(draw):
    n = draw(st.integers(1, 60))
    kinds = draw(st.lists(st.sampled_from(["int", "float", "text", "signed zero"]), min_size=1, max_size=3))
    pools = {"int": [1, 2, 3, 20], "float": [0.5, 1.5, 2.0], "text": ["a", "b", "lookback"], "signed zero": [0.0, -0.0, 1.0]}
    columns = {}
    for k, kind in enumerate(kinds):
        pool = pools[kind]
        picks = draw(st.lists(st.integers(0, len(pool) - 1), min_size=n, max_size=n))
        if draw(st.booleans()):  # runs: each value repeated, as a long file lists a configuration's windows
            picks = sorted(picks)
        columns[f"p{k}"] = pd.Series([pool[i] for i in picks], dtype=object if kind == "text" else None)
    frame = pd.DataFrame(columns)
    if "text" in kinds:
        frame = frame.astype({f"p{k}": pd.Series(["a"]).dtype for k, kind in enumerate(kinds) if kind == "text"})
    return frame


@settings(max_examples=150, deadline=None)
@given(frame=_parameter_frames())
def test_run_factorisation_is_pandas_factorisation(frame):
    params = list(frame.columns)
    try:
        codes, names, _, first_rows = _configurations(frame, params, "<test>")
    except SweepAuditError as exc:  # -0.0 and 0.0 print alike only if pandas kept both apart
        assert "print the same configuration name" in str(exc)
        return
    reference, combos = pd.MultiIndex.from_frame(frame[params]).factorize()
    assert np.array_equal(codes, reference)
    assert len(names) == len(combos)
    assert np.array_equal(first_rows, pd.Series(np.arange(len(frame))).groupby(reference).first().to_numpy())


@settings(max_examples=100, deadline=None)
@given(codes=st.lists(st.integers(0, 6), min_size=0, max_size=80))
def test_first_occurrences_of_factorised_codes(codes):
    factorised, _ = pd.factorize(pd.Series(codes, dtype=np.int64))
    expected = pd.Series(factorised).drop_duplicates().index.to_numpy()
    assert np.array_equal(first_occurrences(factorised), expected)


def test_repeated_row_named_by_the_filled_cell_count(tmp_path: Path):
    """A repeated (configuration, window) pair in a long file of runs: the second occurrence's row."""
    lines = ["week,lookback,excess_return"]
    weeks = [d.strftime("%Y-%m-%d") for d in pd.date_range("2024-01-05", periods=10, freq="7D")]
    rng = np.random.default_rng(3)
    for lb in (5, 10):
        lines += [f"{w},{lb},{rng.normal(0, 0.02):.6f}" for w in weeks]
    lines.insert(15, lines[13])  # data row 13 repeated as data row 15
    path = tmp_path / "sweep.csv"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(SweepAuditError) as caught:
        load_sweep(str(path))
    assert caught.value.row == 15 and "duplicate row" in str(caught.value)
    assert path.read_text().splitlines()[15] == path.read_text().splitlines()[13]


@settings(max_examples=100, deadline=None)
@given(matrix=st.lists(st.lists(st.sampled_from([0.0, 1.0, 2.0, 3.0, -1.0, 0.5, 202401.0, 202402.0]), min_size=4,
                                max_size=4), min_size=1, max_size=6).map(np.array))
def test_counters_found_among_whole_columns_only(matrix):
    """The guard's counters: every column of whole numbers that only rises or only falls, written out."""
    expected = np.zeros(matrix.shape[1], dtype=bool)
    for k in range(matrix.shape[1]):
        column = matrix[:, k]
        steps = np.diff(column)
        expected[k] = (len(column) > 1 and bool(np.all(column == np.round(column)))
                       and (bool(np.all(steps >= 0) and np.any(steps > 0)) or bool(np.all(steps <= 0) and np.any(steps < 0))))
    assert np.array_equal(_counter_like(matrix), expected)
