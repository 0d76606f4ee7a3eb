"""Reading the bytes of a sweep: CSV, TSV or Parquet files, or CSV on standard input."""

from __future__ import annotations

import hashlib
import io
import sys
from collections.abc import Callable
from pathlib import Path

import pandas as pd

from ..errors import InputError
from ..readfile import GiB, check_regular, explained, read_bytes, read_stream

__all__ = ["NA_TOKENS", "SWEEP_FILE_LIMIT", "read_table"]

#: The most bytes a sweep (or benchmark) file may hold: the whole file is read into memory and
#: parsed there, so a larger one could not be audited on a machine of ordinary memory anyway.
SWEEP_FILE_LIMIT = 4 * GiB

NA_TOKENS = ["", "NA", "N/A", "NaN", "nan", "null", "NULL", "None"]
_KINDS = {".csv": "csv", ".txt": "csv", ".tsv": "tsv", ".tab": "tsv", ".parquet": "parquet", ".pq": "parquet"}


def read_table(path: str) -> tuple[pd.DataFrame, str, str]:
    """Read a CSV, TSV or Parquet file (``-``: CSV from standard input).

    Returns the table, a label for messages and the SHA-256 of the bytes read.
    """
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
    if not data.strip():
        raise InputError("empty input: no header and no data rows", path=label)
    frame = _parse(data, kind, label)
    frame.columns = [str(c).strip() for c in frame.columns]
    if len(frame) == 0:
        raise InputError("empty input: a header but no data rows", path=label)
    dupes = frame.columns[frame.columns.duplicated()].tolist()
    if dupes:
        raise InputError("the header repeats this column name", path=label, column=dupes[0])
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


def _parse(data: bytes, kind: str, label: str) -> pd.DataFrame:
    """The table in ``data``; a repeated or empty header cell is kept as written."""
    try:
        if kind == "parquet":
            return pd.read_parquet(io.BytesIO(data))
        sep = "\t" if kind == "tsv" else ","
        # pandas renames a repeated header name ("a", "a.1"); read the header as written.
        header = pd.read_csv(
            io.BytesIO(data), sep=sep, header=None, nrows=1, dtype=str, keep_default_na=False,
            skipinitialspace=True,
        ).iloc[0]
        frame = pd.read_csv(
            io.BytesIO(data), sep=sep, na_values=NA_TOKENS, keep_default_na=False, skipinitialspace=True,
        )
        if len(header) == len(frame.columns):
            # Empty header cells keep pandas' "Unnamed: k" names.
            frame.columns = [h if h.strip() else c for h, c in zip(header, frame.columns)]
        return frame
    except (ValueError, pd.errors.ParserError, UnicodeDecodeError, OSError) as exc:
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise InputError(f"unreadable {kind.upper()} file ({first})", path=label) from None
    except Exception as exc:  # pyarrow raises its own types for corrupt Parquet files
        raise InputError(f"unreadable {kind.upper()} file ({type(exc).__name__})", path=label) from None
