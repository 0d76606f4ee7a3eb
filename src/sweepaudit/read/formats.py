"""Reading the bytes of a sweep: CSV, TSV or Parquet files, or CSV on standard input."""

from __future__ import annotations

import csv
import hashlib
import io
import re
import sys
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError
from ..readfile import GiB, check_regular, explained, read_bytes, read_stream
from .fastcsv import arrow_table
from .options import LoadOptions

__all__ = ["NA_TOKENS", "SWEEP_FILE_LIMIT", "read_table"]

#: The most bytes a sweep (or benchmark) file may hold: the whole file is read into memory and
#: parsed there, so a larger one could not be audited on a machine of ordinary memory anyway.
SWEEP_FILE_LIMIT = 4 * GiB

NA_TOKENS = ["", "NA", "N/A", "NaN", "nan", "null", "NULL", "None"]
_KINDS = {".csv": "csv", ".txt": "csv", ".tsv": "tsv", ".tab": "tsv", ".parquet": "parquet", ".pq": "parquet"}


def read_table(path: str, options: LoadOptions | None = None) -> tuple[pd.DataFrame, str, str]:
    """Read a CSV, TSV or Parquet file (``-``: CSV or TSV from standard input).

    Returns the table, a label for messages and the SHA-256 of the bytes read. Text files: the
    separator and decimal mark are ``options``' or detected (:func:`_text_conventions`); numbers
    written with a thousands separator are refused unless ``options.thousands`` names it.
    """
    options = options or LoadOptions()
    if path == "-":
        label = "<stdin>"
        kind = "csv"
        data = _input_bytes(label, lambda: read_stream(sys.stdin.buffer, limit=SWEEP_FILE_LIMIT, where=label))
    else:
        label = str(path)
        _check_regular(path, label)
        suffix = Path(path).suffix.lower()
        if suffix not in _KINDS:
            raise InputError(
                f"unreadable format {suffix or '(no suffix)'!r}: use .csv, .tsv or .parquet", path=label
            )
        kind = _KINDS[suffix]
        data = _input_bytes(label, lambda: read_bytes(path, limit=SWEEP_FILE_LIMIT))
    digest = hashlib.sha256(data).hexdigest()
    if not data or data.isspace():  # data.strip() would copy the whole input
        raise InputError("empty input: no header and no data rows", path=label)
    frame = _parse(data, kind, label, options)
    frame.columns = [str(c).strip() for c in frame.columns]
    if len(frame) == 0:
        raise InputError("empty input: a header but no data rows", path=label)
    dupes = frame.columns[frame.columns.duplicated()].tolist()
    if dupes:
        raise InputError("the header repeats this column name", path=label, column=dupes[0])
    refuse_grouped_numbers(frame, label, frame.attrs.get("reading", {}))
    return frame, label, digest


def _check_regular(path: str, label: str) -> None:
    """A missing file, a folder, a device or a FIFO is refused before its suffix is looked at."""
    _explained(lambda: check_regular(path), label)


def _input_bytes(label: str, read: Callable[[], bytes]) -> bytes:
    """The bytes ``read`` returns; its OSError (device, FIFO, permission, loop, size) as one line."""
    return _explained(read, label)


def _explained(action: Callable, label: str):
    return explained(action, lambda message: InputError(message, path=label), missing="no such file",
                     folder="is a directory, not a sweep file", other="cannot read it")


def _parse(data: bytes, kind: str, label: str, options: LoadOptions) -> pd.DataFrame:
    """The table in ``data``; a repeated or empty header cell is kept as written. The reading
    (kind, separator, decimal mark, index columns) is recorded in ``frame.attrs["reading"]``."""
    try:
        if kind == "parquet":
            return _parquet(data)
        sep, decimal = _text_conventions(data, kind, options)
        common = dict(sep=sep, skipinitialspace=True, encoding="utf-8-sig")
        # pandas renames a repeated header name ("a", "a.1"); read the header as written.
        header = pd.read_csv(io.BytesIO(data), header=None, nrows=1, dtype=str, keep_default_na=False, **common).iloc[0]
        frame = None
        if decimal == "." and options.thousands is None:
            # The ordinary file: pyarrow's reader, when it gives the very table pandas would.
            frame = arrow_table(data, sep, list(header), NA_TOKENS)
        if frame is None:
            frame = pd.read_csv(
                io.BytesIO(data), na_values=NA_TOKENS, keep_default_na=False, decimal=decimal,
                thousands=options.thousands, **common,
            )
        if len(header) == len(frame.columns):
            # Empty header cells keep pandas' "Unnamed: k" names.
            frame.columns = [h if h.strip() else c for h, c in zip(header, frame.columns)]
        frame.attrs["reading"] = {"kind": "tsv" if sep == "\t" else kind, "separator": sep, "decimal": decimal,
                                  "thousands": options.thousands}
        return frame
    except (ValueError, pd.errors.ParserError, UnicodeDecodeError, OSError) as exc:
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise InputError(f"unreadable {kind.upper()} file ({first})", path=label) from None
    except Exception as exc:  # pyarrow raises its own types for corrupt Parquet files
        raise InputError(f"unreadable {kind.upper()} file ({type(exc).__name__})", path=label) from None


def _parquet(data: bytes) -> pd.DataFrame:
    """A Parquet file; index columns stored by pandas (a DatetimeIndex, say) become columns again,
    so a window index is found like any window column."""
    return parquet_frame(pd.read_parquet(io.BytesIO(data)))


def parquet_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """A frame pandas read from Parquet, its index columns made columns again (see :func:`_parquet`)."""
    index_columns: list[str] = []
    if not isinstance(frame.index, pd.RangeIndex) or frame.index.name is not None:
        names = [n if n is not None else ("date" if isinstance(frame.index, pd.DatetimeIndex) else "index")
                 for n in frame.index.names]
        frame.index.names = names
        index_columns = [str(n) for n in names]
        frame = frame.reset_index()
    frame.attrs["reading"] = {"kind": "parquet", "index_columns": index_columns}
    return frame


def _text_conventions(data: bytes, kind: str, options: LoadOptions) -> tuple[str, str]:
    """The separator and decimal mark: as given, else detected from the first lines.

    Separator: the candidate (tab, ``;``, ``,``, ``|``) that splits the first lines into the same
    number (two or more) of fields, the most fields winning. Decimal mark: a comma when the
    separator is not a comma and the cells written ``0,5`` outnumber those written ``0.5``
    (spreadsheet exports in many European locales).
    """
    sample = data[:65_536].decode("utf-8-sig", errors="replace")
    lines = [line for line in sample.splitlines()[:21] if line.strip()]
    if len(lines) > 1 and not sample.endswith(("\n", "\r")) and len(data) > 65_536:
        lines = lines[:-1]  # the last line may be cut
    sep = options.separator
    if sep is None:
        sep = "\t" if kind == "tsv" else ","
        best = 1
        for candidate in ("\t", ";", ",", "|"):
            counts = {len(row) for row in csv.reader(lines, delimiter=candidate)}
            if len(counts) == 1 and (n := counts.pop()) > best:
                sep, best = candidate, n
    decimal = options.decimal
    if decimal is None:
        decimal = "."
        if sep != ",":
            cells = [c.strip() for row in csv.reader(lines[1:], delimiter=sep) for c in row]
            commas = sum(bool(_COMMA_NUMBER.fullmatch(c)) for c in cells)
            dots = sum(bool(_DOT_NUMBER.fullmatch(c)) for c in cells)
            if commas > dots:
                decimal = ","
    return sep, decimal


_COMMA_NUMBER = re.compile(r"[+-]?(\d{1,3}(\.\d{3})+|\d+),\d+")
_DOT_NUMBER = re.compile(r"[+-]?(\d{1,3}(,\d{3})+|\d*)\.\d+")


def _grouped_pattern(decimal: str) -> re.Pattern:
    """A number written with a thousands separator (``1,234.5``, ``1.234,5``, ``1'234``, ``1 234``)."""
    groups = "[,'  _]" if decimal == "." else "[.'  _]"
    return re.compile(rf"[+-]?\d{{1,3}}({groups}\d{{3}})+({re.escape(decimal)}\d+)?")


def _grouped_cells(cells: np.ndarray, pattern: re.Pattern) -> np.ndarray:
    """Which of the distinct, non-missing ``cells`` read as a number with a thousands separator."""
    text = pd.Series(cells).dropna().astype(str).str.strip()
    return text.str.fullmatch(pattern.pattern).to_numpy(dtype=bool)


def refuse_grouped_numbers(frame: pd.DataFrame, label: str, reading: dict) -> None:
    """Refuse a text column holding numbers with a thousands separator the options did not name:
    read as text it would be refused as "not a number" with no hint, or (``1.234`` under a decimal
    comma) silently read as another number."""
    if reading.get("kind") == "parquet" or reading.get("thousands"):
        return
    pattern = _grouped_pattern(reading.get("decimal", "."))
    for column in frame.columns:
        values = frame[column]
        if pd.api.types.is_numeric_dtype(values) or pd.api.types.is_datetime64_any_dtype(values):
            continue
        # Unique cells only (a long file repeats each window and configuration label many times):
        # first whether any matches, then (rarely) which row holds the first that does.
        if not _grouped_cells(values.unique(), pattern).any():
            continue
        # drop_duplicates keeps each cell's first row.
        text = values.dropna().drop_duplicates().astype(str).str.strip()
        hits = text.str.fullmatch(pattern.pattern)
        if hits.any():
            p = int(np.flatnonzero(hits.to_numpy())[0])
            cell = text.iloc[p]
            mark = re.search(r"\d([^\d])\d{3}", cell).group(1)
            raise InputError(
                f"{cell!r} is written with a thousands separator {mark!r}; pass thousands={mark!r} "
                f"(command line: --thousands '{mark}') to read such numbers",
                path=label, column=str(column), row=int(text.index[p]) + 1,
            )
