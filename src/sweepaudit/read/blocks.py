"""Wide Parquet sweeps read by blocks of configuration columns, so reading never holds the file's
bytes, a DataFrame of every column and the matrix at once.

A Parquet file stores each column apart, so a block of configuration columns (with the window and
index columns) is read on its own with pandas' Parquet reader and goes through exactly the steps of
:func:`sweepaudit.read.loader.load_sweep` (``_read``); its validated returns are copied into the
sweep's matrix. Every rule of those steps looks at one column at a time, except a few that look
across columns (windows common to all configurations, the hints, a parameter table built from the
names): when the blocks do not agree on them, when a block is not read as wide, or when any block
raises an error, the file is read whole by the usual path instead, so its messages and its figures
are exactly the usual ones. Peak memory is then the matrix and one block.
"""

from __future__ import annotations

import hashlib
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import SweepAuditError
from ..readfile import check_regular
from ..sweep import Sweep
from .formats import SWEEP_FILE_LIMIT
from .options import LoadOptions

__all__ = ["BLOCK_COLUMNS", "read_wide_parquet"]

#: Configuration columns read at once (about 32 MB of float64 at 2,000 windows).
BLOCK_COLUMNS = 2_000

Reader = Callable[[pd.DataFrame, str, "str | None", LoadOptions], Sweep]


def _digest(path: Path) -> str:
    sha = hashlib.sha256()
    with path.open("rb") as handle:
        for chunk in iter(lambda: handle.read(8 * 2**20), b""):
            sha.update(chunk)
    return sha.hexdigest()


def _frame(path: Path, columns: list[str]) -> pd.DataFrame:
    """Some columns of a Parquet file as :func:`sweepaudit.read.formats.read_table` would give them."""
    from .formats import parquet_frame

    frame = parquet_frame(pd.read_parquet(path, columns=columns))
    frame.columns = [str(c).strip() for c in frame.columns]
    return frame


def read_wide_parquet(path: str, opt: LoadOptions, read: Reader, *, block: int | None = None) -> Sweep | None:
    """The sweep of a wide Parquet file of more than ``block`` float configuration columns, read by
    blocks (of ``block`` columns, default :data:`BLOCK_COLUMNS`); None when the file is better read
    whole (see the module docstring).

    Every block is read with the file's columns that are not floats (the window column, an index)
    and the benchmark column, if one is named.
    """
    import pyarrow as pa
    import pyarrow.parquet as pq

    block = block or BLOCK_COLUMNS
    p = Path(path)
    try:
        # Only a regular file within the reader's size limit; anything else is the usual path's to refuse.
        check_regular(path)
        if p.stat().st_size > SWEEP_FILE_LIMIT:
            return None
        schema = pq.ParquetFile(p).schema_arrow
    except Exception:  # noqa: BLE001 - unreadable here: the usual path says why
        return None
    stored = (schema.pandas_metadata or {}).get("index_columns", [])
    index = [c for c in stored if isinstance(c, str)]  # a RangeIndex is stored as a description, no column
    if any(not isinstance(c, str) and c.get("kind") != "range" for c in stored):
        return None
    if opt.layout == "long" or opt.common_windows or len({n.strip() for n in schema.names}) != len(schema.names):
        return None
    floats = [n for n, t in zip(schema.names, schema.types) if pa.types.is_floating(t) and n not in index]
    fixed = [n for n in schema.names if n not in floats and n not in index]
    fixed += [n for n in floats if n == opt.benchmark]
    configurations = [n for n in floats if n != opt.benchmark]
    if len(configurations) <= block:
        return None
    try:
        return _read_blocks(p, opt, read, fixed, configurations, block)
    except SweepAuditError:
        return None


def _read_blocks(p: Path, opt: LoadOptions, read: Reader, fixed: list[str], configurations: list[str],
                 block: int) -> Sweep | None:
    """Each block read as a sweep of its own and copied into the one matrix at once (a block's
    returns are dropped before the next is read); None when the blocks disagree on what spans
    columns."""
    first: Sweep | None = None
    matrix = None
    names: list[str] = []
    tables = []
    for start in range(0, len(configurations), block):
        columns = configurations[start:start + block]
        part = read(_frame(p, fixed + columns), str(p), None, opt)
        first = first or part
        if (part.layout != "wide" or list(part.configurations) != [c.strip() for c in columns]
                or part.windows != first.windows or part.notes != first.notes
                or list(part.parameters.columns) != list(first.parameters.columns)):
            return None
        if matrix is None:
            matrix = np.empty((first.n_windows, len(configurations)))
        matrix[:, start:start + part.n_configurations] = part.returns
        names += part.configurations
        tables.append(part.parameters)
        del part
    return Sweep(
        returns=matrix, configurations=tuple(names), parameters=pd.concat(tables), windows=first.windows,
        dates=first.dates, periods_per_year=first.periods_per_year, periods_source=first.periods_source,
        frequency=first.frequency, units=first.units, layout=first.layout, path=first.path, sha256=_digest(p),
        notes=first.notes, reading=first.reading,
    )
