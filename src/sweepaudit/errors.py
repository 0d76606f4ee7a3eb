"""One family of exceptions and warnings for the whole library.

The library raises; only the command-line interface catches, prints one line and exits with 2.
"""

from __future__ import annotations

__all__ = [
    "SweepAuditError",
    "InputError",
    "DegenerateDataError",
    "PolicyError",
    "OutputError",
    "SweepAuditWarning",
]


class SweepAuditError(Exception):
    """Base class of every error sweepaudit raises on purpose."""


class InputError(SweepAuditError, ValueError):
    """Input that cannot be audited: a file, a column or a cell that breaks a rule.

    Parameters
    ----------
    message : str
        What is wrong and, where possible, how to fix it.
    path, column, row : optional
        Where the problem is. ``row`` is 1-based and counts data rows after the header, the way a
        spreadsheet user would count them.
    index : optional
        In-memory data: the row's index label (a date, say), shown beside the row.
    """

    def __init__(
        self,
        message: str,
        *,
        path: str | None = None,
        column: str | None = None,
        row: int | None = None,
        index: str | None = None,
    ) -> None:
        self.path = path
        self.column = column
        self.row = row
        self.index = index
        self.detail = message
        where = []
        if path is not None:
            where.append(str(path))
        if column is not None:
            where.append(f"column {column!r}")
        if row is not None:
            where.append(f"row {row}" + (f" (index {index})" if index is not None else ""))
        prefix = ", ".join(where)
        super().__init__(f"{prefix}: {message}" if prefix else message)


class DegenerateDataError(InputError):
    """Data that parses but cannot support the statistics (constant series, too few windows)."""


class PolicyError(SweepAuditError, ValueError):
    """A policy file or option that breaks a rule (unknown key, value out of range)."""


class OutputError(SweepAuditError):
    """An output (a file, the report's figures, standard output) that could not be written; the
    outputs written before it are left as they were."""


class SweepAuditWarning(UserWarning):
    """Something the user should know that does not stop the audit."""
