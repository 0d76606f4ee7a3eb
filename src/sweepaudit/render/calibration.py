"""Terminal output of ``sweepaudit calibrate``: formats the calibration JSON document only.

As for the audit (:mod:`sweepaudit.render.terminal`): every string passes through
:func:`~sweepaudit.render.safe.visible` and reaches rich only as ``Text``, never as markup.
"""

from __future__ import annotations

from rich.console import Console
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from ..format import level, number, pct_fixed, rate
from .safe import visible_document
from .terminal import offscreen_console, terminal_console

__all__ = ["render_calibration", "calibration_text"]


def _rate(block: dict | None) -> str:
    return "n/a" if block is None else rate(block["rate"], block["standard_error"])


def _check_table(document: dict) -> Table:
    power = document["power"]
    table = Table(title=Text("Failure rate of each check"), show_lines=False)
    table.add_column("check")
    table.add_column("required")
    table.add_column("null sweeps", justify="right")
    if power is not None:
        table.add_column("with the edge", justify="right")
    edged = {c["id"]: c for c in power["checks"]} if power is not None else {}
    for c in document["null"]["checks"]:
        row = [c["id"], "yes" if c["required"] else "advisory", _rate(c["failure"])]
        if power is not None:
            row.append(_rate(edged[c["id"]]["failure"]) if c["id"] in edged else "n/a")
        table.add_row(*(Text(cell) for cell in row))
    return table


def render_calibration(document: dict, console: Console | None = None) -> None:
    """Print the calibration: the false-go rate, the power, each check's failure rate."""
    console = console or terminal_console()
    document = visible_document(document)
    significance = document["policy"]["significance"]
    false_go = document["false_go"]

    def say(words: str, *, indent: int = 0) -> None:
        console.print(Padding(Text(words), (0, 0, 0, indent), expand=False))  # plain text, never markup

    say("Calibration")  # the user's strings come indented, on lines of their own
    say(
        f"{document['input']['path']} ({document['input']['windows']} windows x "
        f"{document['input']['configurations']} configurations), selected '{document['selected']['configuration']}'; "
        f"its own verdict: {document['observed_verdict']}.", indent=2,
    )
    say(
        f"False-go rate on {false_go['sweeps']} null sweeps shaped like this one: {_rate(false_go)} "
        f"(Monte Carlo standard error; 95% upper bound {pct_fixed(false_go['upper_95'])}), "
        f"against the policy's significance level of {level(significance)}."
    )
    power = document["power"]
    if power is not None:
        say(
            f"Power against an edge of annualized Sharpe ratio {number(power['edge_annualized_sharpe'], 6)} planted in the selected "
            f"configuration: {_rate(power['go'])}; the audit judged the edged configuration in "
            f"{_rate(power['planted_selected'])} of those sweeps."
        )
    yardstick = document["null"].get("bonferroni_max_t")
    if yardstick is not None:
        edged = power.get("bonferroni_max_t") if power is not None else None
        console.print(
            f"The plain Bonferroni max-t test on the same sweeps: {_rate(yardstick)} on the null sweeps"
            + (f", {_rate(edged)} with the edge" if edged is not None else "")
            + " (it ignores serial dependence; a verdict at least as powerful at no worse size is the aim)."
        )
    console.print(_check_table(document))
    if false_go["rate"] is not None and false_go["lower_95"] > significance:
        say(
            f"The false-go rate is above {level(significance)} beyond Monte Carlo error: under this policy the verdict "
            "says go too often on sweeps like this one."
        )
    if document["command"]:  # a calibration run from Python has no command line to show
        say("Reproduce:")
        say(document["command"], indent=2)


def calibration_text(document: dict) -> str:
    """The calibration's terminal output as text, rendered for standard output but not printed."""
    console = offscreen_console()
    render_calibration(document, console)
    return console.file.getvalue()
