"""The command line: parse options, call audit(), render, map the verdict to an exit code.

Exit status: 0 go, 1 no-go, 2 bad input or usage (or any failure that left no verdict).

Every failure is one line on standard error, ``sweepaudit: error: ...``, with control characters
shown as escapes; no traceback (``SWEEPAUDIT_TRACEBACK=1`` shows one for an unexpected error).
The outputs of a run are one transaction (:mod:`sweepaudit.render.files`): rendered in memory,
staged beside their targets, committed together, then the terminal text, then the ledger record;
a failure anywhere rolls them back, so exit status 2 means no output changed and no record added.

Policy: ``--policy PATH`` or else the ``[tool.sweepaudit]`` table of the nearest pyproject.toml
(see :func:`sweepaudit.policy.discover_policy`). ``--resamples``, ``--quick`` and ``--confidence``
override the policy's values for this run; the JSON ``settings`` block shows the values used, the
``policy`` block the policy as read.
"""

from __future__ import annotations

import functools
import inspect
import os
import shlex
import sys
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from enum import Enum
from pathlib import Path
from typing import Annotated, Any, Optional

import typer
import typer.core
from rich.console import Console

from . import validate
from ._version import __version__
from .api import audit, inspect as inspect_input
from .baseline import read_baseline
from .calibration import calibrate_sweep
from .document import calibration_document
from .errors import SweepAuditError
from .gate import trials_to_count
from .ledger import MAX_TRIALS
from .policy import policy_from_mapping, policy_to_toml, resolve_policy
from .read import LoadOptions, load_sweep
from .render.calibration import calibration_text
from .render.files import FileStep, Transaction, check_target, write_terminal
from .render.inspect import inspection_text
from .render.json import dumps
from .render.junit import audit_to_junit
from .render.report import check_report_path, figures_folder, render_report, stage_report
from .render.safe import visible
from .render.terminal import terminal_text
from .results import AuditResult, AuditSettings, Evidence
from .sweep import Sweep

EXIT_GO, EXIT_NO_GO, EXIT_BAD_INPUT = 0, 1, 2


def _error_line(message: object) -> None:
    """The one line a failure prints on standard error (control characters shown as escapes)."""
    print(f"sweepaudit: error: {visible(message)}", file=sys.stderr, flush=True)


class _OneLineErrors(typer.core.TyperGroup):
    """The command group, with every failure turned into one line on standard error.

    Usage errors (an unknown option, a value of the wrong type) keep their exit status (2) and
    name the option; an unexpected exception, which would otherwise print a traceback, becomes
    ``sweepaudit: error: internal error: ...`` with exit status 2 (``SWEEPAUDIT_TRACEBACK=1``
    lets it through for debugging). Help requested by giving no arguments is shown as usual.
    """

    def main(self, args=None, prog_name=None, complete_var=None, standalone_mode=True, **extra):
        if not standalone_mode:
            return super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        try:
            code = super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        except Exception as exc:  # noqa: BLE001 - the last line of defence against a traceback
            sys.exit(_usage_or_internal(exc))
        sys.exit(code if isinstance(code, int) else EXIT_GO)


def _usage_or_internal(exc: Exception) -> int:
    """Print the one line for an exception that reached the top; return the exit status."""
    if type(exc).__name__ == "NoArgsIsHelpError":
        exc.show()  # type: ignore[attr-defined]
        return int(getattr(exc, "exit_code", EXIT_BAD_INPUT))
    if hasattr(exc, "format_message") and hasattr(exc, "exit_code"):  # a usage error of the parser
        context = getattr(exc, "ctx", None)
        hint = f" (see {context.command_path} --help)" if context is not None else ""
        _error_line(exc.format_message() + hint)
        return int(exc.exit_code)
    if os.environ.get("SWEEPAUDIT_TRACEBACK"):
        raise exc
    detail = f"{type(exc).__name__}: {exc}" if str(exc) else type(exc).__name__
    _error_line(f"internal error, nothing was written: {detail[:500]} (set SWEEPAUDIT_TRACEBACK=1 to see where)")
    return EXIT_BAD_INPUT


app = typer.Typer(
    cls=_OneLineErrors,
    name="sweepaudit",
    help="Audit a trading strategy's parameter sweep: is the winner's edge real, or selection luck?",
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
    pretty_exceptions_show_locals=False,
    rich_markup_mode=None,
)


class LayoutChoice(str, Enum):
    auto = "auto"
    long = "long"
    wide = "wide"


class UnitsChoice(str, Enum):
    fraction = "fraction"
    percent = "percent"
    bps = "bps"


class WindowsChoice(str, Enum):
    weekly = "weekly"
    monthly = "monthly"
    quarterly = "quarterly"


class BootstrapChoice(str, Enum):
    stationary = "stationary"
    circular = "circular"
    moving_block = "moving-block"


class IntervalChoice(str, Enum):
    studentized = "studentized"
    percentile = "percentile"
    basic = "basic"


def _version(value: bool) -> None:
    if value:
        typer.echo(f"sweepaudit {__version__}")
        raise typer.Exit(EXIT_GO)


@app.callback()
def _root(
    version: Annotated[
        bool, typer.Option("--version", callback=_version, is_eager=True, help="Print the version and exit.")
    ] = False,
) -> None:
    """Audit a parameter sweep before committing money to its best configuration.

    Exit status: 0 go, 1 no-go, 2 bad input or usage.
    """


def _fail(message: str) -> typer.Exit:
    _error_line(message)
    return typer.Exit(EXIT_BAD_INPUT)


def _for_report(step, path: Path, *args) -> Any:
    """A report step whose error names the --report option (the library's names the path)."""
    try:
        return step(path, *args)
    except SweepAuditError as exc:
        raise SweepAuditError(f"--report: {exc}") from None


def _real(path: object) -> str:
    # os.path.realpath, unlike Path.resolve, does not raise on a symbolic-link loop
    return os.path.realpath(os.fspath(path))  # type: ignore[arg-type]


Outputs = list[tuple[str, Path]]  # (what, path): "JSON file", "JUnit file", "report"


def _check_distinct(outputs: Outputs, inputs: dict[str, object]) -> None:
    """Refuse an output that would overwrite an input (the sweep, a ledger, ...) or another output."""
    seen: dict[str, str] = {}
    for what, value in inputs.items():
        if value is not None and str(value) != "-":
            seen[_real(value)] = what
    for what, path in outputs:
        if path is None:
            continue
        key = _real(path)
        if key in seen:
            raise SweepAuditError(f"the {what} {path} would overwrite the {seen[key]}; give another file name")
        seen[key] = what


@contextmanager
def _progress(quiet: bool, label: str) -> Iterator[tuple[Optional[Callable[[int, int], None]], Callable[[], None]]]:
    """A progress callback drawing a bar on stderr for long runs, and a function that ends the bar
    (before the terminal output is written); no bar when quiet or when stderr is not a terminal."""
    console = Console(stderr=True)
    if quiet or not console.is_terminal:
        yield None, lambda: None
        return
    from rich.progress import BarColumn, Progress, TextColumn, TimeRemainingColumn

    bar = Progress(TextColumn(label), BarColumn(), TextColumn("{task.completed:,}/{task.total:,}"),
                   TimeRemainingColumn(), console=console, transient=True)
    task = {"id": None}

    def update(done: int, total: int) -> None:
        if task["id"] is None:
            task["id"] = bar.add_task(label, total=total)
        bar.update(task["id"], completed=done)

    bar.start()
    try:
        yield update, bar.stop
    finally:
        bar.stop()


def _count(text: Optional[str], option: str) -> Optional[int]:
    """A count given on the command line: a whole number, also written as 1e6 or 1_000_000."""
    if text is None:
        return None
    try:
        value: object = int(text)
    except ValueError:
        value = validate.finite_number(text, option)
    return validate.whole_number(value, option, minimum=1, maximum=MAX_TRIALS, accept_float=True,
                                 what=f"a whole number from 1 to {MAX_TRIALS:,}")


# ---------------------------------------------------------------------------------------------
# the input options, declared once and shared by `audit`, `calibrate` and `inspect`


@dataclass(frozen=True)
class SweepInput:
    """The sweep a command reads and how: the shared input options, parsed.

    Attributes
    ----------
    path : str
        The SWEEP argument (``-`` for standard input).
    options : LoadOptions
        How to read it.
    select : str or None
        The configuration to judge instead of the highest full-sample Sharpe ratio.
    """

    path: str
    options: LoadOptions
    select: str | None

    def load(self) -> Sweep:
        return load_sweep(self.path, self.options)

    def words(self, path: str) -> list[str]:
        """``path`` and the input options that differ from the defaults, as command words."""
        words = [path if path != "<stdin>" else "-"]
        defaults = LoadOptions()
        for name in ("layout", "window_column", "value_column", "benchmark", "benchmark_file", "units",
                     "periods_per_year", "date_format", "windows", "separator", "decimal", "thousands"):
            value = getattr(self.options, name)
            if value != getattr(defaults, name):
                words += [f"--{name.replace('_', '-')}", _SEPARATOR_WORDS.get(str(value), str(value))
                          if name == "separator" else str(value)]
        if self.options.parameter_columns:
            words += ["--parameter-columns", ",".join(self.options.parameter_columns)]
        if self.options.common_windows:
            words.append("--common-windows")
        if self.options.date_order != "auto":
            words.append(f"--{self.options.date_order}")
        return words


#: --separator accepts these words for characters awkward to type in a shell.
_SEPARATOR_WORDS = {"\t": "tab", ";": "semicolon", ",": "comma", "|": "pipe"}


def _option(name: str, annotation, default=inspect.Parameter.empty) -> inspect.Parameter:
    return inspect.Parameter(name, inspect.Parameter.POSITIONAL_OR_KEYWORD, default=default, annotation=annotation)


_INPUT_OPTIONS = (
    _option("sweep_path", Annotated[str, typer.Argument(
        metavar="SWEEP", help="CSV, TSV or Parquet file; - reads CSV or TSV from standard input.")]),
    _option("layout", Annotated[LayoutChoice, typer.Option(help="Input layout; auto detects it.")], LayoutChoice.auto),
    _option("window_column", Annotated[Optional[str], typer.Option(
        help="Column holding the window (date or label).")], None),
    _option("value_column", Annotated[Optional[str], typer.Option(
        help="Long layout: column holding the excess return.")], None),
    _option("parameter_columns", Annotated[Optional[str], typer.Option(
        help="Long layout: comma-separated columns naming a configuration.")], None),
    _option("benchmark", Annotated[Optional[str], typer.Option(
        help="Inputs are raw strategy returns: subtract this benchmark column (wide) or configuration (long).")], None),
    _option("benchmark_file", Annotated[Optional[str], typer.Option(
        help="Inputs are raw strategy returns: subtract the benchmark series in this file.")], None),
    _option("units", Annotated[UnitsChoice, typer.Option(help="Units of the returns in the file.")], UnitsChoice.fraction),
    _option("periods_per_year", Annotated[Optional[float], typer.Option(
        help="Windows per year (e.g. 52 for weekly); inferred from dated windows otherwise.")], None),
    _option("common_windows", Annotated[bool, typer.Option(
        "--common-windows", help="Keep only the windows every configuration covers.")], False),
    _option("day_first", Annotated[bool, typer.Option(
        "--day-first", help="Window dates like 05/01/2024 are DD/MM/YYYY.")], False),
    _option("month_first", Annotated[bool, typer.Option(
        "--month-first", help="Window dates like 05/01/2024 are MM/DD/YYYY.")], False),
    _option("date_format", Annotated[Optional[str], typer.Option(
        help="strptime format of the window dates, e.g. %d.%m.%Y.")], None),
    _option("windows", Annotated[Optional[WindowsChoice], typer.Option(
        help="Compound finer (e.g. daily) returns into these windows; strategy and benchmark separately.")], None),
    _option("separator", Annotated[Optional[str], typer.Option(
        help="Field separator of a text file: comma, semicolon, tab, pipe (or the character); detected otherwise.")],
        None),
    _option("decimal", Annotated[Optional[str], typer.Option(
        help="Decimal mark of a text file: . or , (detected otherwise).")], None),
    _option("thousands", Annotated[Optional[str], typer.Option(
        help="Thousands separator in the numbers (e.g. . for 1.234,56); refused unless given.")], None),
    _option("select", Annotated[Optional[str], typer.Option(
        help="Judge this configuration instead of the highest full-sample Sharpe ratio.")], None),
)


def _sweep_input(sweep_path, layout, window_column, value_column, parameter_columns, benchmark, benchmark_file,
                 units, periods_per_year, common_windows, day_first, month_first, date_format, windows, separator,
                 decimal, thousands, select) -> SweepInput:
    if day_first and month_first:
        raise SweepAuditError("give either --day-first or --month-first, not both")
    separator_names = {word: char for char, word in _SEPARATOR_WORDS.items()}
    options = LoadOptions(
        layout=layout.value,
        window_column=window_column,
        value_column=value_column,
        parameter_columns=tuple(c.strip() for c in parameter_columns.split(",")) if parameter_columns else None,
        benchmark=benchmark,
        benchmark_file=benchmark_file,
        units=units.value,
        periods_per_year=periods_per_year,
        common_windows=common_windows,
        date_order="day-first" if day_first else "month-first" if month_first else "auto",
        date_format=date_format,
        windows=windows.value if windows is not None else None,
        separator=separator_names.get(separator, separator),
        decimal=decimal,
        thousands=thousands,
    )
    return SweepInput(sweep_path, options, select)


def sweep_input(command: Callable[..., None]) -> Callable[..., None]:
    """Give a command the input options; it receives them parsed as ``inputs: SweepInput``.

    The options are added in front of the command's own in its ``__signature__``, which is what
    typer reads, so both commands declare them once, with one help text.
    """
    own = [p for p in inspect.signature(command, eval_str=True).parameters.values() if p.name != "inputs"]

    @functools.wraps(command)
    def with_inputs(**values):
        shared = {p.name: values.pop(p.name) for p in _INPUT_OPTIONS}
        try:
            inputs = _sweep_input(**shared)
        except SweepAuditError as exc:
            raise _fail(str(exc)) from None
        return command(inputs=inputs, **values)

    with_inputs.__signature__ = inspect.Signature([*_INPUT_OPTIONS, *own])  # type: ignore[attr-defined]
    return with_inputs


# Longer than 60 lines: typer reads each option from the signature (about 45 lines of
# declarations); the body is about 30 lines, its checks and outputs in the functions below.
@app.command("audit", no_args_is_help=True)
@sweep_input
def audit_command(
    inputs: SweepInput,
    seed: Annotated[int, typer.Option(help="Seed of the resamples: same input and seed, same JSON.")] = 0,
    resamples: Annotated[
        Optional[int], typer.Option(help="Bootstrap resamples (default 10,000, the policy's).")
    ] = None,
    quick: Annotated[
        bool, typer.Option("--quick", help="1,000 resamples: a fast look, not a final audit.")
    ] = False,
    confidence: Annotated[Optional[float], typer.Option(help="Interval level (default 0.95).")] = None,
    bootstrap: Annotated[BootstrapChoice, typer.Option(help="Block bootstrap.")] = BootstrapChoice.stationary,
    block_length: Annotated[
        Optional[float], typer.Option(help="Fix the (mean) block length in windows; automatic otherwise.")
    ] = None,
    interval_method: Annotated[
        IntervalChoice,
        typer.Option(help="Bootstrap interval: studentized (the block bootstrap's shape, the long-run variance's width), percentile or basic."),
    ] = IntervalChoice.studentized,
    json_path: Annotated[Optional[Path], typer.Option("--json", help="Write the audit JSON here.")] = None,
    policy_path: Annotated[
        Optional[Path],
        typer.Option("--policy", help="Policy TOML file; default: [tool.sweepaudit] in the nearest pyproject.toml."),
    ] = None,
    junit_path: Annotated[
        Optional[Path], typer.Option("--junit", help="Write the checks as a JUnit XML file here.")
    ] = None,
    baseline_path: Annotated[
        Optional[Path],
        typer.Option("--baseline", help="An earlier audit JSON: report what moved and gate on worsening."),
    ] = None,
    ledger_path: Annotated[
        Optional[Path],
        typer.Option("--ledger", help="Trial ledger (JSON Lines): count every sweep audited so far as trials; append this one."),
    ] = None,
    trials: Annotated[
        Optional[str],
        typer.Option(metavar="N", help="Trials the deflated Sharpe ratio counts (at least the configurations, "
                     "at most 10^15; 1e6 is accepted); with --ledger the larger count wins."),
    ] = None,
    strategy: Annotated[
        Optional[str],
        typer.Option(help="The strategy's label in the trial ledger (a trial is a configuration of a strategy); "
                          "default: the policy's strategy key."),
    ] = None,
    report_paths: Annotated[
        Optional[list[Path]], typer.Option(
            "--report", help="Write the audit report here: .md (Markdown) or .html; repeat for several reports.")
    ] = None,
    sensitivity: Annotated[
        bool, typer.Option("--sensitivity/--no-sensitivity",
                           help="Re-decide the verdict under each reasonable alternative choice (what would change it).")
    ] = True,
    memory_budget: Annotated[
        Optional[int],
        typer.Option(help="Working memory in MiB (default 768, the policy's): beyond it the audit streams over "
                          "blocks of configurations, with the same figures."),
    ] = None,
    scheduler: Annotated[
        Optional[str],
        typer.Option(help="Dask scheduler address: run the blocks of configurations on that cluster "
                          "(default: $SWEEPAUDIT_SCHEDULER; none: in process)."),
    ] = None,
    workers: Annotated[
        Optional[int], typer.Option(help="Start a local Dask cluster of this many worker processes for the audit.")
    ] = None,
    quiet: Annotated[bool, typer.Option("--quiet", "-q", help="Print nothing; use the exit status.")] = False,
) -> None:
    """Audit the per-window excess returns of a parameter sweep and print a go / no-go verdict.

    Examples:

      sweepaudit audit sweep.csv --seed 7

      sweepaudit audit sweep.parquet --periods-per-year 52 --json audit.json

      cat sweep.csv | sweepaudit audit - --units percent --quick

      sweepaudit audit sweep.csv --policy policy.toml --junit checks.xml --baseline last.json --ledger trials.jsonl

      sweepaudit audit large.parquet --workers 2 --memory-budget 2048
    """
    started = time.perf_counter()
    outputs: Outputs = [(what, path) for what, path in (("JSON file", json_path), ("JUnit file", junit_path))
                        if path is not None] + [("report", path) for path in report_paths or ()]
    try:
        _check_audit_outputs(inputs, outputs, trial_ledger=ledger_path, baseline=baseline_path, policy_file=policy_path)
        if resamples is not None and quick:
            raise SweepAuditError("give either --resamples or --quick, not both")
        declared = _count(trials, "--trials")
        loaded = resolve_policy(policy_path)
        # Options that override the policy obey the policy's ranges (a 10% interval would make
        # mean_interval meaningless; a handful of resamples, every p-value coarse).
        for key, value in (("confidence", confidence), ("resamples", resamples)):
            if value is not None:
                policy_from_mapping({key: value}, source=f"--{key}")
        policy = loaded.policy
        if memory_budget is not None:
            policy = policy.replace(memory_budget=_option_budget(memory_budget))
        if workers is not None:
            validate.whole_number(workers, "--workers", minimum=1)
        if strategy is not None:
            validate.label(strategy, "--strategy")
        baseline_document = read_baseline(baseline_path) if baseline_path is not None else None
        sweep = inputs.load()
        if declared is not None:
            trials_to_count(sweep.n_configurations, declared=declared, name="--trials")
        settings = AuditSettings(
            seed=seed, resamples=1_000 if quick else resamples, confidence=confidence, bootstrap=bootstrap.value,
            block_length=block_length, interval_method=interval_method.value, selected=inputs.select,
        )
        with _progress(quiet, "resampling") as (progress, done):
            publish = functools.partial(_published, outputs=outputs, started=started, quiet=quiet, before_print=done)
            result = audit(
                sweep, settings=settings, policy=policy, policy_source=loaded.source,
                scheduler=scheduler, workers=workers,
                baseline=baseline_document, baseline_path=str(baseline_path) if baseline_path is not None else None,
                ledger=ledger_path, trials=declared, strategy=strategy, progress=progress, publish=publish,
                sensitivity=sensitivity,
                command=lambda evidence: reproduce_command(evidence, inputs.options, policy_source=loaded.source,
                                                           strategy=strategy, sensitivity=sensitivity),
            )
    except SweepAuditError as exc:
        raise _fail(str(exc)) from None
    raise typer.Exit(EXIT_GO if result.verdict.decision == "go" else EXIT_NO_GO)


def _option_budget(mib: int) -> int:
    """``--memory-budget`` within the policy key's range."""
    policy_from_mapping({"memory_budget": mib}, source="--memory-budget")
    return mib


def _check_audit_outputs(inputs: SweepInput, outputs: Outputs, **files: Optional[Path]) -> None:
    """Every output writable, and none overwriting an input or another output."""
    for what, path in outputs:
        if what == "report":
            _for_report(check_report_path, path)
        else:
            check_target(path, what)
    _check_distinct(outputs, {"input sweep": inputs.path, "benchmark file": inputs.options.benchmark_file,
                              **{name.replace("_", " "): path for name, path in files.items()}})


def _wrote(written: list[str], quiet: bool) -> None:
    """``wrote PATH`` on standard error for each file written, once every output is in place."""
    if quiet:
        return
    try:
        for line in written:
            print(f"wrote {visible(line)}", file=sys.stderr, flush=True)
    except OSError:
        pass  # the files are written; a closed standard error changes nothing


@contextmanager
def _published(result: AuditResult, *, outputs: Outputs, started: float, quiet: bool,
               before_print: Callable[[], None]) -> Iterator[None]:
    """The audit's outputs as one transaction, around the ledger record (see :func:`sweepaudit.api.audit`).

    Everything is rendered in memory, then every file staged, then all committed; the record is
    appended inside this block; then the terminal text is written, then a ``wrote PATH`` line for
    each file on standard error. A failure at any point (the append, or standard output) rolls
    every file back and the record is taken back: the earlier outputs and the ledger stay as they
    were.
    """
    document = result.document
    rendered = {"JSON file": lambda path: dumps(document),
                "JUnit file": lambda path: audit_to_junit(document, elapsed=time.perf_counter() - started)}
    files = [(path, what, rendered[what](path)) for what, path in outputs if what != "report"]
    reports = [_for_report(render_report, path, document, result.figure_material)
               for what, path in outputs if what == "report"]
    terminal = None if quiet else terminal_text(document)
    written = []
    with Transaction() as staged:
        for report in reports:
            _for_report(stage_report, staged, report)
            figures = f" (and {len(report.figures)} figures in {figures_folder(report.path)})" if report.figures else ""
            written.append(f"{report.path}{figures}")
        for path, what, text in files:
            staged.add(FileStep(path, text, what=what))
            written.append(str(path))
        staged.commit()
        yield
        before_print()
        if terminal is not None:
            write_terminal(terminal)
    _wrote(written, quiet)


def reproduce_command(evidence: Evidence, options: LoadOptions, *, policy_source: str = "defaults",
                      strategy: str | None = None, sensitivity: bool = True) -> str:
    """The canonical command that reproduces every figure of this audit (output options left out;
    ``--strategy`` kept, since with a ledger it decides the trials counted)."""
    words = ["sweepaudit", "audit", *SweepInput(evidence.sweep.path, options, None).words(evidence.sweep.path)]
    if policy_source != "defaults":
        # A policy found in a pyproject.toml applies only from that folder: name it.
        words += ["--policy", policy_source]
    s = evidence.settings
    words += ["--seed", str(s.seed), "--resamples", str(evidence.resamples.count), "--confidence",
              f"{evidence.confidence:g}", "--bootstrap", evidence.resamples.kind]
    if s.block_length is not None:
        words += ["--block-length", f"{s.block_length:g}"]
    if s.interval_method != "studentized":
        words += ["--interval-method", s.interval_method]
    if s.selected is not None:
        words += ["--select", s.selected]
    if s.trials is not None:
        words += ["--trials", str(s.trials)]
    if strategy is not None:
        words += ["--strategy", strategy.strip()]
    if not sensitivity:
        words.append("--no-sensitivity")
    return " ".join(shlex.quote(w) for w in words)


@app.command("inspect", no_args_is_help=True)
@sweep_input
def inspect_command(
    inputs: SweepInput,
    json_path: Annotated[Optional[Path], typer.Option("--json", help="Write the inspection JSON here.")] = None,
    policy_path: Annotated[
        Optional[Path],
        typer.Option("--policy", help="Policy TOML file whose plausibility bounds to compare with; default as audit."),
    ] = None,
    quiet: Annotated[bool, typer.Option("--quiet", "-q", help="Print nothing; use the exit status.")] = False,
) -> None:
    """Read a sweep exactly as audit would and show how, without auditing it.

    Shows the layout, the window column with the first and last windows as written and as read,
    the periods per year and how they were found, the units, the value column, the configurations
    and their parameter table, the benchmark handling, the plausibility figures and every warning.
    Exit status: 0 readable, 2 not.

    Examples:

      sweepaudit inspect sweep.csv

      sweepaudit inspect export.csv --day-first --json reading.json

      cat sweep.tsv | sweepaudit inspect -
    """
    try:
        if json_path is not None:
            check_target(json_path, "JSON file")
        _check_distinct([("JSON file", json_path)] if json_path else [],
                        {"input sweep": inputs.path, "benchmark file": inputs.options.benchmark_file,
                         "policy file": policy_path})
        loaded = resolve_policy(policy_path)
        result = inspect_input(inputs.path, options=inputs.options, policy=loaded.policy)
        if inputs.select is not None:
            result.sweep.index_of(inputs.select)
        _json_and_terminal(json_path, result.document, None if quiet else inspection_text(result.document))
    except SweepAuditError as exc:
        raise _fail(str(exc)) from None
    raise typer.Exit(EXIT_GO)


def _json_and_terminal(json_path: Optional[Path], document: dict, terminal: Optional[str]) -> None:
    """A command's JSON file and terminal text as one transaction: the text is written once the
    file is in place, and a failure writing it puts the previous file back; then ``wrote PATH``
    on standard error (not when quiet: no terminal text)."""
    with Transaction() as staged:
        if json_path is not None:
            staged.add(FileStep(json_path, dumps(document), what="JSON file"))
        staged.commit()
        if terminal is not None:
            write_terminal(terminal)
    _wrote([str(json_path)] if json_path is not None else [], quiet=terminal is None)


@app.command("policy")
def policy_command(
    effective: Annotated[
        bool,
        typer.Option("--effective", help="Print the policy an audit started here would apply, not the defaults."),
    ] = False,
    policy_path: Annotated[
        Optional[Path], typer.Option("--policy", help="With --effective: read this policy file.")
    ] = None,
) -> None:
    """Print the default policy as commented TOML, ready to paste under [tool.sweepaudit].

    Unknown keys and out-of-range values in a policy file are errors (exit status 2).
    """
    try:
        if effective:
            loaded = resolve_policy(policy_path)
            typer.echo(f"# policy in effect, from: {visible(loaded.source)}")
            typer.echo(policy_to_toml(loaded.policy), nl=False)
        else:
            if policy_path is not None:
                raise SweepAuditError("--policy only goes with --effective")
            typer.echo(policy_to_toml(), nl=False)
    except SweepAuditError as exc:
        raise _fail(str(exc)) from None


# ---------------------------------------------------------------------------------------------
# calibrate: how often would this verdict say go on null sweeps shaped like this one?


# Longer than 60 lines: typer reads each option from the signature (about 25 lines) and the
# help from the docstring (about 12); the body is about 30 lines.
@app.command("calibrate", no_args_is_help=True)
@sweep_input
def calibrate_command(
    inputs: SweepInput,
    sweeps: Annotated[int, typer.Option(help="Null sweeps to audit (standard error of a 5% rate: 1.5% at 200).")] = 200,
    edge: Annotated[
        float, typer.Option(help="Annualized Sharpe ratio of the edge planted for the power estimate; 0 skips power.")
    ] = 1.0,
    resamples: Annotated[
        int,
        typer.Option(help="Bootstrap resamples per audit (1,000: sweep count, not resamples, limits the precision)."),
    ] = 1_000,
    seed: Annotated[int, typer.Option(help="Master seed of the null sweeps and of every audit.")] = 0,
    policy_path: Annotated[
        Optional[Path],
        typer.Option("--policy", help="Policy TOML file; default: [tool.sweepaudit] in the nearest pyproject.toml."),
    ] = None,
    trials: Annotated[
        Optional[str],
        typer.Option(metavar="N", help="Trials the deflated Sharpe ratio counts (at least the configurations), as for audit."),
    ] = None,
    json_path: Annotated[Optional[Path], typer.Option("--json", help="Write the calibration JSON here.")] = None,
    scheduler: Annotated[
        Optional[str], typer.Option(help="Dask scheduler address: run the audits on that cluster (default: $SWEEPAUDIT_SCHEDULER).")
    ] = None,
    workers: Annotated[
        Optional[int], typer.Option(help="Run the audits on a local Dask cluster of this many worker processes.")
    ] = None,
    quiet: Annotated[bool, typer.Option("--quiet", "-q", help="Print nothing.")] = False,
) -> None:
    """Estimate how often the verdict says go on null sweeps shaped like this one, and its power.

    Null sweeps keep this sweep's windows, configurations and dependence (each configuration
    demeaned, windows block-resampled jointly); the power sweeps add an edge to the selected
    configuration. Calibration is information, not a gate: exit 0 when it ran, 2 on bad input.

    Examples:

      sweepaudit calibrate sweep.csv --periods-per-year 52

      sweepaudit calibrate sweep.parquet --sweeps 500 --edge 0.5 --json calibration.json
    """
    try:
        if json_path is not None:
            check_target(json_path, "JSON file")
        _check_distinct([("JSON file", json_path)] if json_path else [],
                        {"input sweep": inputs.path, "benchmark file": inputs.options.benchmark_file,
                         "policy file": policy_path})
        validate.at_least(sweeps, "--sweeps", 1)
        validate.at_least(resamples, "--resamples", 1)
        validate.at_least(edge, "--edge", 0, what="0 (an annualized Sharpe ratio)")
        validate.whole_number(seed, "--seed", minimum=0)
        declared = _count(trials, "--trials")
        if workers is not None:
            validate.whole_number(workers, "--workers", minimum=1)
        loaded = resolve_policy(policy_path)
        sweep = inputs.load()
        if declared is not None:
            trials_to_count(sweep.n_configurations, declared=declared, name="--trials")  # the audit's own rule
        settings = AuditSettings(seed=seed, resamples=resamples, selected=inputs.select, trials=declared)
        with _progress(quiet, "auditing simulated sweeps") as (progress, done):
            result = calibrate_sweep(sweep, sweeps=sweeps, edge=edge, settings=settings, resamples=resamples,
                                     policy=loaded.policy, seed=seed, progress=progress,
                                     scheduler=scheduler, workers=workers)
        words = ["sweepaudit", "calibrate", *inputs.words(sweep.path)]
        if inputs.select is not None:
            words += ["--select", inputs.select]
        if policy_path is not None:
            words += ["--policy", str(policy_path)]
        if declared is not None:
            words += ["--trials", str(declared)]
        words += ["--sweeps", str(sweeps), "--edge", f"{edge:g}", "--resamples", str(resamples), "--seed", str(seed)]
        document = calibration_document(
            result, command=" ".join(shlex.quote(w) for w in words), policy_source=loaded.source
        )
        _json_and_terminal(json_path, document, None if quiet else calibration_text(document))
    except SweepAuditError as exc:
        raise _fail(str(exc)) from None
    raise typer.Exit(EXIT_GO)


def main() -> None:
    """Console-script entry point."""
    app()


if __name__ == "__main__":  # pragma: no cover
    main()
