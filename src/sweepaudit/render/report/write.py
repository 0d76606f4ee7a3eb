"""Writing a report: the format from the file suffix, path checks, and atomic writing.

Everything is rendered in memory first, so an error midway leaves no partial report and no figures
folder; a Markdown report's figures are swapped in by rename before the .md is written atomically.
Messages name the path; the command line adds its option's name.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path
from typing import Literal

from ...errors import InputError
from ...results import FigureMaterial
from ..files import share, write_atomic
from .html import render_html
from .markdown import render_markdown
from .sections import build_report

__all__ = ["REPORT_FORMATS", "report_format", "check_report_path", "figures_folder", "write_report"]

ReportFormat = Literal["markdown", "html"]
REPORT_FORMATS: dict[str, ReportFormat] = {".md": "markdown", ".html": "html"}


def report_format(path: str | os.PathLike) -> ReportFormat:
    """The report format from the file suffix (.md or .html); InputError for any other."""
    suffix = Path(path).suffix.lower()
    if suffix not in REPORT_FORMATS:
        raise InputError(
            f"cannot tell the format of {str(path)!r} from its suffix {suffix or '(none)'!r}; "
            "use a file name ending in .md (Markdown) or .html (HTML)"
        )
    return REPORT_FORMATS[suffix]


def check_report_path(path: str | os.PathLike) -> None:
    """Validate a report path before the audit runs: known suffix, existing folder."""
    report_format(path)
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"cannot write {target}: folder {folder} does not exist")
    if target.is_dir():
        raise InputError(f"{target} is a folder; give a file name ending in .md or .html")


def figures_folder(path: str | os.PathLike) -> Path:
    """Where a Markdown report's figures go: ``<stem>_figures/`` beside the .md file."""
    target = Path(path)
    return target.with_name(f"{target.stem}_figures")


def write_report(path: str | os.PathLike, doc: dict, material: FigureMaterial | None = None) -> None:
    """Render the report fully in memory, then write it atomically (figures first for Markdown).

    An error while rendering leaves the disk untouched: no partial report, no figures folder, and a
    previous report at ``path`` stays as it was.
    """
    fmt = report_format(path)
    check_report_path(path)
    report = build_report(doc, material)
    target = Path(path)
    if fmt == "html":
        write_atomic(target, render_html(report))
        return
    folder = figures_folder(target)
    text = render_markdown(report, figures_dir=folder.name)
    try:
        _write_markdown(target, text, {f"{f.name}.svg": f.svg for f in report.figures}, folder)
    except OSError as exc:
        raise InputError(f"cannot write {target} and its figures in {folder}: {exc.strerror or exc}") from None


def _write_markdown(target: Path, text: str, files: dict[str, bytes], folder: Path) -> None:
    """Figures into a temporary folder, swapped in by rename; the .md written last, atomically."""
    parent = target.parent if str(target.parent) else Path(".")
    staging = Path(tempfile.mkdtemp(prefix=f".{folder.name}.", suffix=".tmp", dir=parent))
    old: Path | None = None
    try:
        for name, data in files.items():
            (staging / name).write_bytes(data)
            share(staging / name)
        share(staging, folder=True)
        if folder.exists():
            old = Path(tempfile.mkdtemp(prefix=f".{folder.name}.", suffix=".old", dir=parent))
            os.rmdir(old)
            os.replace(folder, old)
        os.replace(staging, folder)
        try:
            write_atomic(target, text)
        except BaseException:
            shutil.rmtree(folder, ignore_errors=True)
            if old is not None:
                os.replace(old, folder)
                old = None
            raise
    finally:
        shutil.rmtree(staging, ignore_errors=True)
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)
