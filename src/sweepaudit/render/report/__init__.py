"""The audit report a researcher attaches to a research memo: one section model, two formats.

``model`` (Figure, Table, Section, Report), ``sections`` (one function per block of the audit JSON,
:func:`build_report`), ``plots`` (the figures, from :class:`~sweepaudit.results.FigureMaterial`),
``markdown`` and ``html`` (the two layouts, ``templates/``), ``write`` (format detection, path
checks, atomic writing).
"""

from .model import Figure, Report, Section, Table
from .sections import build_report
from .write import REPORT_FORMATS, check_report_path, figures_folder, report_format, write_report

__all__ = [
    "Figure",
    "Report",
    "Section",
    "Table",
    "build_report",
    "REPORT_FORMATS",
    "check_report_path",
    "figures_folder",
    "report_format",
    "write_report",
]
