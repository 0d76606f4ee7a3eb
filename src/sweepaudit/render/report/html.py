"""The audit report as one self-contained HTML file (jinja2, autoescaping on).

Figures are embedded as base64 ``data:`` URIs and the stylesheet is inline, so the file needs no
other file and loads nothing from the network. The page carries no script. Every string from the
user (configuration names, file names) is escaped by jinja2's autoescaping, never marked safe.
"""

from __future__ import annotations

import base64
import re

from jinja2 import Environment, PackageLoader, StrictUndefined

from .model import STATES, Figure, Report

__all__ = ["render_html"]


# A cell that is one figure (right-aligned): 0.992, -4.3%, 12,870, < 0.001, 0.132 [-0.021, 0.306], n/a.
_NUMBER = re.compile(r"^([<>] )?-?[0-9][0-9,.]*(e[-+][0-9]+)?%?( \[[^\]]*\])?$|^n/a$")


#: A list of facts of more rows than this may break across printed pages (about a third of an A4
#: page at 7.8 pt; tables say so themselves: :attr:`Table.long`); a shorter one moves whole.
LONG_ROWS = 20


def _data_uri(fig: Figure) -> str:
    return "data:image/svg+xml;base64," + base64.b64encode(fig.svg).decode("ascii")


def _environment() -> Environment:
    env = Environment(
        loader=PackageLoader("sweepaudit.render.report", "templates"),
        autoescape=True,  # every template, whatever its name: user strings are never markup
        undefined=StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
    )
    env.filters["data_uri"] = _data_uri
    env.tests["number_like"] = lambda text: bool(_NUMBER.match(str(text)))
    env.globals["long_rows"] = LONG_ROWS
    env.globals["states"] = STATES
    return env


def render_html(report: Report) -> str:
    """The report as an HTML document (a string; the caller writes it atomically)."""
    return _environment().get_template("report.html.j2").render(report=report)
