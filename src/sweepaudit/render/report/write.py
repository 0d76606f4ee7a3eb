"""Writing a report: the format from the file suffix, path checks, and transactional writing.

Everything is rendered in memory first, then staged and committed with the other outputs (see
:mod:`sweepaudit.render.files`): an error at any step leaves no partial report and every earlier
file as it was. Messages name the path; the command line adds its option's name.

A Markdown report keeps its figures in the folder ``<stem>_figures/`` beside it, under names unique
to their content (``sharpe_ranking.<12 hex>.svg``), and lists the files it wrote in the manifest
``<stem>_figures/.sweepaudit-figures.json``. Writing a new version adds its figures beside the
previous ones, then replaces the .md (the switch from one version to the next is that one rename),
and only then removes the previous version's figures: those listed in the manifest, unchanged since
written (same SHA-256), and not used by the new version. Other files in the folder (a sweep, a
ledger, notes, figures of an older sweepaudit without a manifest) are never touched, a file of the
folder's name is never replaced, and a kill -9 at any moment leaves either the old report with all
its figures or the new one with all of its own.
"""

from __future__ import annotations

import fcntl
import hashlib
import json
import os
import re
import stat
from dataclasses import dataclass, field
from pathlib import Path
from typing import Literal

from ...errors import InputError, OutputError
from ...readfile import MiB, describe, read_bytes
from ...results import FigureMaterial
from ..files import FileStep, Transaction, check_target, hidden_name, new_hidden_file, remove_stale
from .markdown import render_markdown
from .sections import build_report

__all__ = [
    "REPORT_FORMATS",
    "MANIFEST",
    "RenderedReport",
    "report_format",
    "check_report_path",
    "figures_folder",
    "figure_file_name",
    "render_report",
    "stage_report",
    "write_report",
]

ReportFormat = Literal["markdown", "html"]
REPORT_FORMATS: dict[str, ReportFormat] = {".md": "markdown", ".html": "html"}

#: The list of figure files sweepaudit wrote into a report's figures folder.
MANIFEST = ".sweepaudit-figures.json"
_MANIFEST_SCHEMA = "sweepaudit.figures/1"
_FIGURE_NAME = re.compile(r"[a-z][a-z0-9_]*\.[0-9a-f]{12}\.svg")
_SHA256 = re.compile(r"[0-9a-f]{64}")


def report_format(path: str | os.PathLike) -> ReportFormat:
    """The report format from the file suffix (.md or .html); InputError for any other."""
    suffix = Path(path).suffix.lower()
    if suffix not in REPORT_FORMATS:
        raise InputError(
            f"cannot tell the format of {str(path)!r} from its suffix {suffix or '(none)'!r}; "
            "use a file name ending in .md (Markdown) or .html (HTML)"
        )
    return REPORT_FORMATS[suffix]


def figures_folder(path: str | os.PathLike) -> Path:
    """Where a Markdown report's figures go: ``<stem>_figures/`` beside the .md file."""
    target = Path(path)
    return target.with_name(f"{target.stem}_figures")


def figure_file_name(name: str, svg: bytes) -> str:
    """A figure's file name, unique to its content: ``<name>.<first 12 hex of its SHA-256>.svg``."""
    return f"{name}.{hashlib.sha256(svg).hexdigest()[:12]}.svg"


def check_report_path(path: str | os.PathLike) -> None:
    """Validate a report path before the audit runs: known suffix, writable folder, regular file;
    for Markdown, a figures folder that is a folder (or absent) with a valid manifest (or none)."""
    fmt = report_format(path)
    target = check_target(path, "report")
    if fmt == "markdown":
        _manifest(_figures_dir(figures_folder(target)))


def _figures_dir(folder: Path) -> Path | None:
    """``folder`` when it is a folder, None when absent; InputError for anything else."""
    try:
        mode = os.stat(folder).st_mode
    except FileNotFoundError:
        if os.path.islink(folder):
            raise InputError(f"the report's figures folder {folder} is a broken symbolic link") from None
        return None
    except OSError as exc:
        raise InputError(f"cannot use the report's figures folder {folder}: {describe(exc)}") from None
    if not stat.S_ISDIR(mode):
        raise InputError(
            f"the report's figures go in a folder {folder}, but a file of that name exists; "
            "move it or choose another report name (sweepaudit never replaces it)"
        )
    return folder


def _manifest(folder: Path | None) -> dict[str, str] | None:
    """The figure files (name -> SHA-256) the manifest of ``folder`` lists; None without one."""
    if folder is None:
        return None
    where = folder / MANIFEST
    try:
        data = read_bytes(where, limit=16 * MiB)
    except FileNotFoundError:
        return None
    except OSError as exc:
        raise InputError(f"cannot read {where}: {describe(exc)}") from None
    try:
        document = json.loads(data.decode("utf-8"))
        files = document["files"] if document.get("schema") == _MANIFEST_SCHEMA else None
    except (ValueError, TypeError, AttributeError, KeyError, RecursionError):
        files = None
    if not isinstance(files, dict) or not all(
        isinstance(k, str) and _FIGURE_NAME.fullmatch(k) and isinstance(v, str) and _SHA256.fullmatch(v)
        for k, v in files.items()
    ):
        raise InputError(f"{where} is not a list of figures written by sweepaudit; move it away")
    return dict(files)


def _hidden_backup(name: str) -> str:
    return hidden_name(name, "bak")


def _write_manifest(folder: Path, report: str, files: dict[str, str]) -> None:
    text = json.dumps({"schema": _MANIFEST_SCHEMA, "report": report, "files": dict(sorted(files.items()))},
                      indent=2, ensure_ascii=True) + "\n"
    os.replace(new_hidden_file(folder, MANIFEST, text.encode("ascii")), folder / MANIFEST)


def _identity(path: Path) -> tuple[int, int]:
    st = os.lstat(path)
    return st.st_dev, st.st_ino


def _sha256_of(path: Path) -> str | None:
    """The SHA-256 of a regular file (not followed through a link), None otherwise."""
    try:
        if not stat.S_ISREG(os.lstat(path).st_mode):
            return None
        return hashlib.sha256(read_bytes(path, limit=256 * MiB)).hexdigest()
    except OSError:
        return None


@dataclass(frozen=True)
class RenderedReport:
    """A report rendered in memory: its text and (Markdown) its figure files by name."""

    path: Path
    text: str
    figures: dict[str, bytes] = field(default_factory=dict)


def render_report(path: str | os.PathLike, doc: dict, material: FigureMaterial | None = None) -> RenderedReport:
    """The report for ``path`` (its format from the suffix), fully rendered in memory."""
    fmt = report_format(path)
    report = build_report(doc, material)
    target = Path(path)
    if fmt == "html":
        from .html import render_html  # here: jinja2's import is only paid when an HTML report is written

        return RenderedReport(target, render_html(report))
    files = {f.name: figure_file_name(f.name, f.svg) for f in report.figures}
    text = render_markdown(report, figures_dir=figures_folder(target).name, file_names=files)
    return RenderedReport(target, text, {files[f.name]: f.svg for f in report.figures})


class FiguresStep:
    """A Markdown report's figures: staged into their folder, linked under their final names at
    commit, the previous version's removed at finish (see the module notes).

    The folder is locked (``flock``) from staging to finish, so two runs writing the same report
    take turns.
    """

    def __init__(self, folder: Path, report: str, figures: dict[str, bytes]) -> None:
        self.folder, self.report, self.figures = folder, report, figures
        self.created_folder = False
        self.lock: int | None = None
        self.previous: dict[str, str] | None = None
        self.wrote_manifest = False
        self.manifest_backup: Path | None = None
        self.staged: dict[str, Path] = {}
        self.linked: list[tuple[Path, tuple[int, int]]] = []
        try:
            self._stage()
        except (InputError, OSError) as exc:
            try:
                self.rollback()
            except OSError:
                pass  # what stays is hidden, ours, and removed by a later run
            if isinstance(exc, InputError):
                raise OutputError(str(exc)) from None
            raise OutputError(f"cannot write the report's figures in {folder}: {describe(exc)}") from None

    def _stage(self) -> None:
        if _figures_dir(self.folder) is None:
            os.mkdir(self.folder)
            self.created_folder = True
        self.lock = os.open(self.folder, os.O_RDONLY | os.O_DIRECTORY | os.O_CLOEXEC)
        fcntl.flock(self.lock, fcntl.LOCK_EX)
        remove_stale(self.folder)
        self.previous = _manifest(self.folder)
        listed = dict(self.previous or {})
        new = {}
        for name, data in self.figures.items():
            digest = hashlib.sha256(data).hexdigest()
            if not os.path.lexists(self.folder / name):
                new[name] = (data, digest)
            elif listed.get(name) != digest or _sha256_of(self.folder / name) != digest:
                raise InputError(f"{self.folder / name} exists and was not written by sweepaudit; move it away")
        # The manifest lists the new files before they exist: a kill from here on leaves nothing
        # unlisted, and a later run removes what the report in place does not use. The previous
        # manifest is kept as a hard link, so a rollback needs no disk space.
        if self.previous is not None:
            self.manifest_backup = self.folder / _hidden_backup(MANIFEST)
            os.link(self.folder / MANIFEST, self.manifest_backup)
        _write_manifest(self.folder, self.report, {**listed, **{n: d for n, (_, d) in new.items()}})
        self.wrote_manifest = True
        for name, (data, _) in new.items():
            self.staged[name] = new_hidden_file(self.folder, name, data)

    def commit(self) -> None:
        try:
            for name, temp in list(self.staged.items()):
                final = self.folder / name
                os.link(temp, final)  # never replaces a file that appeared meanwhile (EEXIST)
                self.linked.append((final, _identity(final)))
                os.unlink(temp)
                del self.staged[name]
        except OSError as exc:
            raise OutputError(f"cannot write the report's figures in {self.folder}: {describe(exc)}") from None

    def rollback(self) -> None:
        """Remove the figures this run added, restore the manifest, remove a folder it created."""
        try:
            for path in self.staged.values():
                os.unlink(path)
            for path, identity in self.linked:
                if _identity(path) == identity:
                    os.unlink(path)
            self.staged, self.linked = {}, []
            if self.wrote_manifest:
                if self.manifest_backup is not None:
                    os.replace(self.manifest_backup, self.folder / MANIFEST)
                    self.manifest_backup = None
                else:
                    os.unlink(self.folder / MANIFEST)
                self.wrote_manifest = False
            if self.manifest_backup is not None:
                os.unlink(self.manifest_backup)
                self.manifest_backup = None
            if self.created_folder:
                os.rmdir(self.folder)
        finally:
            self._unlock()

    def finish(self) -> None:
        """Remove the previous version's figures: listed, unchanged since written, not used now."""
        try:
            if self.manifest_backup is not None:
                os.unlink(self.manifest_backup)
                self.manifest_backup = None
            listed = _manifest(self.folder) or {}
            keep = {}
            for name, digest in listed.items():
                path = self.folder / name
                if name in self.figures:
                    keep[name] = digest
                elif _sha256_of(path) == digest:
                    os.unlink(path)
                # a listed file that is gone or was changed since is no longer ours to remove
            if keep != listed:
                _write_manifest(self.folder, self.report, keep)
        except (OSError, InputError):
            pass  # what stays is removed by the next version's finish
        finally:
            self._unlock()

    def _unlock(self) -> None:
        if self.lock is not None:
            os.close(self.lock)  # closing the descriptor releases the lock
            self.lock = None


def stage_report(outputs: Transaction, rendered: RenderedReport) -> None:
    """Stage a rendered report in ``outputs``: a Markdown report's figures, then the report file."""
    target = check_target(rendered.path, "report")
    if rendered.figures:
        folder = figures_folder(target)
        outputs.add(FiguresStep(folder, target.name, rendered.figures))
    outputs.add(FileStep(rendered.path, rendered.text, what="report"))


def write_report(path: str | os.PathLike, doc: dict, material: FigureMaterial | None = None) -> None:
    """Render the report fully in memory, then write it (and its figures) as one transaction.

    An error at any step leaves the disk as it was: no partial report, no new figure, and a
    previous report at ``path`` with all its figures.
    """
    check_report_path(path)
    rendered = render_report(path, doc, material)
    with Transaction() as outputs:
        stage_report(outputs, rendered)
        outputs.commit()
