"""The audit report a researcher attaches to a research memo: one section model, two formats.

``model`` (Figure, Table, Section, Report), ``sections`` (one function per block of the audit JSON,
:func:`build_report`), ``plots`` (the figures, from :class:`~sweepaudit.results.FigureMaterial`),
``markdown`` and ``html`` (the two layouts, ``templates/``), ``write`` (format detection, path
checks, transactional writing of the report and its figures).
"""

from .model import Figure, Report, Section, Table
from .sections import build_report
from .write import (
    MANIFEST,
    REPORT_FORMATS,
    RenderedReport,
    check_report_path,
    figure_file_name,
    figures_folder,
    render_report,
    report_format,
    stage_report,
    write_report,
)

__all__ = [
    "Figure",
    "Report",
    "Section",
    "Table",
    "build_report",
    "MANIFEST",
    "REPORT_FORMATS",
    "RenderedReport",
    "check_report_path",
    "figure_file_name",
    "figures_folder",
    "render_report",
    "report_format",
    "stage_report",
    "write_report",
]
