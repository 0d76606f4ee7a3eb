"""The ordinary text file read by pyarrow's CSV reader, to the table pandas' parser gives.

A long sweep of 1,000 configurations over 2,000 windows is two million rows; pyarrow's reader
parses them in about half the time of pandas' C parser reading the same bytes from memory
(``benchmarks/read_speed.py``). It is used
only where it gives the very table :func:`sweepaudit.read.formats.read_table` would get from pandas
(the same columns, dtypes, values and missing cells), so every later detection and message is the
same; :func:`arrow_table` returns None for anything else and pandas reads the file:

* a pandas whose text columns are not pyarrow-backed ``str`` (before pandas 3: object columns,
  where pyarrow's table would put None for pandas' NaN);
* a file under 1 MiB or of more than 32 columns (a wide file), where pandas' parser is as quick
  or quicker (:data:`MIN_BYTES`, :data:`MAX_COLUMNS`);
* a decimal comma or a thousands separator (pandas' options for them have no exact counterpart);
* a quote character (quoted fields may hold line breaks or numbers pandas reads as numbers);
* whitespace beside a separator or a line break, a tab in a file not separated by tabs, a vertical
  tab, form feed or NUL byte (pandas skips leading and trailing whitespace around numbers and
  initial spaces around every field; pyarrow keeps them);
* a hexadecimal-looking ``0x`` (pyarrow reads ``0x10`` as 16);
* a blank, repeated or space-led header cell, or a blank first line;
* any column pyarrow reads as other than whole numbers, floating-point numbers or text (true /
  false cells, which pandas reads as booleans; an all-missing column), a floating-point column
  holding NaN that was not one of the missing-value tokens (``NAN``: text to pandas), or a
  floating-point column of whole numbers only or holding a number of magnitude 2**63 or more (``+5``
  and integers beyond 64 bits are floats to pyarrow, integers or text to pandas; an infinity too);
* anything pyarrow refuses (a ragged row, bytes that are not UTF-8): pandas then words the error.

Columns pyarrow would read as dates, times or timestamps (pandas never does) are read as text.
pyarrow parses on its own thread pool (the cores of the machine); unlike BLAS threads, its workers
sleep rather than spin while they wait, so a busy machine does not make the threads slower than
one thread (measured on the 2-core machine, 2 million rows beside two busy loops: 0.21 s on
pyarrow's threads, 0.29 s on one thread, 0.40 s with pandas' parser; the whole reader under load:
``benchmarks/read_speed.py --busy 2``).

pyarrow's default pool keeps the memory a parse frees for reuse (and pandas' text columns live
in it whichever parser read them): :func:`arrow_table` hands the parse's blocks back when it is
done and :func:`release_table_memory` the table's once the loader has dropped it. Without that the
process kept about 120 MB more after reading the 2 million rows, and the audit after it ran up to
0.5 s slower in 7 (10,000 resamples, interleaved runs).
"""

from __future__ import annotations

import sys

import numpy as np
import pandas as pd

__all__ = ["arrow_table", "release_table_memory"]

#: Bytes of the head of the file whose column types pick the columns to read as text.
SAMPLE_BYTES = 65_536
#: pyarrow's reader pays per column of every block it parses, pandas' does not: a wide file is
#: read by pandas (measured: 520 windows x 2,000 configurations, 11 MiB, 0.43 s against pandas'
#: 0.24 s for the whole reader; about 2 million cells in 33 columns 0.091 s against 0.103 s, in 65
#: columns the same 0.100 s). A long file has a few columns: windows, parameters, values.
MAX_COLUMNS = 32
#: Below this size pandas' parser is as quick (1.3 MiB: 10.2 ms against 10.6 ms) and importing
#: pyarrow's CSV module alone costs about 17 ms.
MIN_BYTES = 1 << 20
_BOM = b"\xef\xbb\xbf"
_READABLE = ("int64", "double", "string", "large_string")
#: Integers this large (or infinities) make pandas' parser read a column of numbers as text or as
#: unsigned integers, where pyarrow's reads floats.
_BEYOND_INT64 = 2.0**63
_TEXT_TYPES = ("date32[day]", "date64[ms]", "time32[s]", "time32[ms]", "time64[us]", "time64[ns]")


def arrow_table(data: bytes, sep: str, header: list[str], na_tokens: list[str]) -> pd.DataFrame | None:
    """The table in ``data`` as pandas' parser reads it, or None when pyarrow cannot give that table.

    Parameters
    ----------
    data : bytes
        The whole file (a UTF-8 byte order mark is skipped, as pandas' ``utf-8-sig`` does).
    sep : str
        The field separator; the decimal mark is a point and no thousands separator is read.
    header : list of str
        The header cells as written (pandas' reading of the first line).
    na_tokens : list of str
        The cells read as missing (pandas' ``na_values`` without its defaults).

    Returns
    -------
    pandas.DataFrame or None
        Columns named as ``header``, of the dtypes pandas' parser would give them.
    """
    if not _arrow_text() or len(data) < MIN_BYTES or len(header) > MAX_COLUMNS or not _plain_text(data, sep) \
            or not _plain_header(header):
        return None
    import pyarrow as pa
    import pyarrow.csv as pcsv

    buffer = pa.py_buffer(data)
    if data.startswith(_BOM):
        buffer = buffer.slice(len(_BOM))
    parse = pcsv.ParseOptions(delimiter=sep)
    try:
        text = _text_columns(buffer, parse, na_tokens)
        if text is None:
            return None
        convert = pcsv.ConvertOptions(null_values=na_tokens, strings_can_be_null=True,
                                      column_types={c: pa.string() for c in text})
        table = pcsv.read_csv(pa.BufferReader(buffer), parse_options=parse, convert_options=convert)
    except (pa.ArrowException, ValueError, OSError):
        return None
    try:
        if table.num_rows == 0 or table.column_names != list(header) or not _same_numbers(table):
            return None
        return table.to_pandas()
    finally:
        del table
        pa.default_memory_pool().release_unused()  # the parse's blocks (see the module's notes)


def _arrow_text() -> bool:
    """pandas keeps text in pyarrow-backed ``str`` columns (pandas 3), as pyarrow's table converts
    to; an older pandas' object columns would hold None where pandas' parser puts NaN."""
    text = pd.Series(["a"]).dtype
    return isinstance(text, pd.StringDtype) and text.storage == "pyarrow" and text.na_value is not pd.NA


def _plain_text(data: bytes, sep: str) -> bool:
    """No byte that pandas' parser reads differently from pyarrow's (see the module's list).

    Single bytes are looked for first (a fast scan); pairs only when their first byte occurs."""
    start = len(_BOM) if data.startswith(_BOM) else 0  # no slice: it would copy the whole file
    if data[start:start + 1] in (b"", b" ", b"\t", b"\n", b"\r") or data.endswith((b" ", b"\t")):
        return False
    if any(b in data for b in (b'"', b"\x00", b"\x0b", b"\x0c")) or (sep != "\t" and b"\t" in data):
        return False
    rows = max(data.find(b"\n"), 0)  # hexadecimal cells: the header may hold an x, the rows seldom do
    if (data.find(b"x", rows) >= 0 or data.find(b"X", rows) >= 0) and (b"0x" in data or b"0X" in data):
        return False
    if b" " in data:
        separator = sep.encode()
        return not any(b in data for b in (b" " + separator, separator + b" ", b" \n", b"\n ", b" \r", b"\r "))
    return True


def _plain_header(header: list[str]) -> bool:
    return all(h.strip() and h == h.strip() for h in header) and len(set(header)) == len(header)


def _text_columns(buffer, parse, na_tokens: list[str]) -> list[str] | None:
    """The columns whose first cells pyarrow reads as dates or times (text to pandas), or None when
    one reads as true / false (booleans to pandas) or a sampled type is none pyarrow might give."""
    import pyarrow as pa
    import pyarrow.csv as pcsv

    head = buffer.slice(0, min(buffer.size, SAMPLE_BYTES)).to_pybytes()
    if buffer.size > SAMPLE_BYTES:
        head = head[: max(head.rfind(b"\n"), head.rfind(b"\r")) + 1]
    sample = pcsv.read_csv(pa.BufferReader(pa.py_buffer(head)), parse_options=parse,
                           convert_options=pcsv.ConvertOptions(null_values=na_tokens, strings_can_be_null=True),
                           read_options=pcsv.ReadOptions(use_threads=False))
    text = []
    for field in sample.schema:
        kind = str(field.type)
        if kind in _TEXT_TYPES or kind.startswith("timestamp"):
            text.append(field.name)
        elif kind not in _READABLE and kind != "null":
            return None
    return text


def _same_numbers(table) -> bool:
    """Every column one pandas would read alike: whole numbers, text, or floating-point numbers
    that hold no NaN of their own, not only whole numbers and none beyond 64-bit integers (see the
    module's list)."""
    for column in table.columns:
        kind = str(column.type)
        if kind not in _READABLE or (kind == "double" and not _plain_floats(column)):
            return False
    return True


def _plain_floats(column) -> bool:
    """A floating-point column pandas reads as the same floats (pyarrow's kernels: no copy)."""
    import pyarrow.compute as pc

    if column.null_count == len(column) or pc.any(pc.is_nan(column)).as_py():
        return False
    extremes = pc.min_max(column)
    if max(abs(extremes["min"].as_py()), abs(extremes["max"].as_py())) >= _BEYOND_INT64:
        return False
    head = column.slice(0, 1_000).drop_null().to_numpy()
    if np.any(head != np.round(head)):
        return True  # returns: a fraction among the first cells already
    return not pc.all(pc.equal(column, pc.round(column))).as_py()


def release_table_memory() -> None:
    """Return the memory pyarrow's default pool kept after a table was read and dropped.

    pandas' text columns live in that pool whichever parser read them, and the pool keeps what is
    freed for reuse; the audit after the read runs beside it. A no-op when pyarrow was not imported.
    """
    pa = sys.modules.get("pyarrow")
    if pa is not None:
        pa.default_memory_pool().release_unused()
