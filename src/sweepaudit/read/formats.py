"""Reading the bytes of a sweep: CSV, TSV or Parquet files, or CSV on standard input."""

from __future__ import annotations

import hashlib
import io
import sys
from pathlib import Path

import pandas as pd

from ..errors import InputError

__all__ = ["NA_TOKENS", "read_table"]

NA_TOKENS = ["", "NA", "N/A", "NaN", "nan", "null", "NULL", "None"]
_KINDS = {".csv": "csv", ".txt": "csv", ".tsv": "tsv", ".tab": "tsv", ".parquet": "parquet", ".pq": "parquet"}


def read_table(path: str) -> tuple[pd.DataFrame, str, str]:
    """Read a CSV, TSV or Parquet file (``-``: CSV from standard input).

    Returns the table, a label for messages and the SHA-256 of the bytes read.
    """
    if path == "-":
        data = sys.stdin.buffer.read()
        label = "<stdin>"
        kind = "csv"
    else:
        p = Path(path)
        label = str(path)
        if not p.exists():
            raise InputError("no such file", path=label)
        if p.is_dir():
            raise InputError("is a directory, not a sweep file", path=label)
        suffix = p.suffix.lower()
        if suffix not in _KINDS:
            raise InputError(
                f"unreadable format {suffix or '(no suffix)'!r}: use .csv, .tsv or .parquet", path=label
            )
        kind = _KINDS[suffix]
        data = p.read_bytes()
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
