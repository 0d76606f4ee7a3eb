"""How an audit and a calibration show themselves in Python: a short text (``repr``) and an HTML
block for notebooks (``_repr_html_``).

Formats the JSON documents only (``sweepaudit.audit/1``, ``sweepaudit.calibration/1``). Every string
that came from the user (configuration names, paths, reasons that quote them) passes through
:func:`~sweepaudit.render.safe.visible`, so no control character or direction override reaches a
terminal or a page as such, and in HTML through :func:`html.escape` as well. The HTML has no
script, no external resource and only inline styles (notebooks drop ``<style>`` blocks in
untrusted outputs). Both stay short whatever the sweep's size: the checks one line each, the key
figures, the caution; the configurations are counted, never listed.
"""

from __future__ import annotations

import html

from ..format import figure, level, pct_fixed, rate
from .figures import Figures, headline
from .safe import visible

__all__ = ["audit_summary", "audit_html", "calibration_summary", "calibration_html"]

#: Longest user string (a configuration name, a path) shown whole; longer ones are cut.
NAME_LIMIT = 80
#: Longest check reason shown whole in the text view (the HTML shows it whole).
REASON_LIMIT = 110

_GO, _NO_GO = "#1d6b3a", "#a4271f"
_CELL = "padding:2px 8px;text-align:left;vertical-align:top;border-bottom:1px solid #ddd"


def _cut(text: object, limit: int = NAME_LIMIT) -> str:
    shown = visible(text)
    return shown if len(shown) <= limit else shown[: limit - 3] + "..."


def _e(text: object, limit: int | None = None) -> str:
    """A user string for HTML: made visible, cut when a limit is given, escaped."""
    return html.escape(_cut(text, limit) if limit else visible(text), quote=True)


def _shape(doc: dict) -> str:
    inp = doc["input"]
    ppy = inp.get("periods_per_year")
    per_year = f", {figure(ppy)} per year" if ppy else ", periods per year unknown"
    return f"{inp['windows']:,} windows x {inp['configurations']:,} configurations{per_year}"


# ---------------------------------------------------------------------------------------------
# the audit


def _check_status(check: dict) -> str:
    if check["passed"]:
        return "pass"
    return "FAIL" if check["required"] else "fail (advisory)"


def audit_summary(doc: dict) -> str:
    """The short ``repr`` of an audit: verdict, input, selected configuration, one line per check,
    the trial count when a ledger or a declaration set it, and the caution."""
    verdict = "GO" if doc["verdict"] == "go" else "NO-GO"
    selected = doc["selected"]
    lines = [
        f"<sweepaudit audit: {verdict}>",
        f"input     {_cut(doc['input']['path'])}: {_shape(doc)}",
        f"selected  '{_cut(selected['configuration'])}' ({_cut(selected['rule'])})",
        "checks",
    ]
    width = max((len(c["id"]) for c in doc["checks"]), default=0)
    for c in doc["checks"]:
        lines.append(f"  {_check_status(c):<15} {c['id']:<{width}}  {_cut(c['reason'], REASON_LIMIT)}")
    trials = doc["settings"].get("trials")
    if trials is not None:
        ledger = doc.get("ledger")
        source = f" (ledger {_cut(ledger['path'])}: {ledger['trials_added']:,} added)" if ledger else ""
        lines.append(f"trials    {trials:,} counted by the deflated Sharpe ratio{source}")
    lines.append(doc["caution"])
    return "\n".join(lines)


def _verdict_panel(doc: dict) -> str:
    go = doc["verdict"] == "go"
    colour = _GO if go else _NO_GO
    selected = doc["selected"]
    return (
        f'<div style="border-left:6px solid {colour};padding:6px 12px;margin-bottom:8px">'
        f'<div style="font-size:1.4em;font-weight:bold;color:{colour}">{"GO" if go else "NO-GO"}</div>'
        f"<div>selected configuration: <code>{_e(selected['configuration'])}</code></div>"
        f'<div style="color:#555">chosen as: {_e(selected["rule"])}</div>'
        f'<div style="color:#555">{_e(doc["input"]["path"], NAME_LIMIT)}: {html.escape(_shape(doc))}</div>'
        "</div>"
    )


def _table(caption: str, header: tuple[str, ...], rows: list[tuple[str, ...]]) -> str:
    """A table whose cells are already escaped HTML."""
    head = "".join(f'<th style="{_CELL}">{html.escape(h)}</th>' for h in header)
    body = "".join("<tr>" + "".join(f'<td style="{_CELL}">{cell}</td>' for cell in row) + "</tr>" for row in rows)
    return (f'<table style="border-collapse:collapse;margin:6px 0">'
            f'<caption style="text-align:left;font-weight:bold">{html.escape(caption)}</caption>'
            f"<thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>")


def _check_rows(doc: dict) -> list[tuple[str, ...]]:
    rows, f = [], Figures(doc)
    for i, c in enumerate(doc["checks"]):
        status = _check_status(c)
        colour = _GO if c["passed"] else (_NO_GO if c["required"] else "#8a6d1d")
        rows.append((
            f"<code>{html.escape(c['id'])}</code>",
            f'<span style="color:{colour};font-weight:bold">{html.escape(status)}</span>',
            "required" if c["required"] else "advisory",
            html.escape(f.styled(f"checks[{i}].value", c.get("value_kind"))),
            html.escape(f.styled(f"checks[{i}].threshold", c.get("value_kind"), threshold=True)),
            _e(c["reason"]),
        ))
    return rows


def audit_html(doc: dict) -> str:
    """The notebook view of an audit: the verdict panel, the key figures with their intervals,
    the checks table, the trial count and the caution."""
    figures = [(html.escape(label), html.escape(value)) for label, value in headline(doc)]
    level_words = f"{level(doc['settings']['confidence'])} interval" if doc["settings"].get("confidence") else ""
    parts = [
        '<div class="sweepaudit-audit" style="font-family:sans-serif;font-size:0.95em;max-width:62em">',
        _verdict_panel(doc),
        _table(f"Key figures: estimate [{level_words or 'interval'}]", ("figure", "value"), figures),
        _table("Checks", ("check", "result", "", "value", "threshold", "reason"), _check_rows(doc)),
    ]
    trials = doc["settings"].get("trials")
    if trials is not None:
        parts.append(f"<p>Trials counted by the deflated Sharpe ratio: {trials:,}.</p>")
    if doc.get("ledger") and doc["ledger"].get("note"):
        parts.append(f'<p style="color:#555">Trial ledger: {_e(doc["ledger"]["note"])}</p>')
    parts.append(f'<p style="color:#555;font-size:0.9em"><em>{html.escape(doc["caution"])}</em></p></div>')
    return "".join(parts)


# ---------------------------------------------------------------------------------------------
# the calibration


def _rate(block: dict | None) -> str:
    return "n/a" if block is None else rate(block["rate"], block["standard_error"])


def _calibration_lines(doc: dict) -> list[tuple[str, str]]:
    false_go, power = doc["false_go"], doc["power"]
    significance = doc["policy"]["significance"]
    lines = [
        ("false-go rate", f"{_rate(false_go)} on {false_go['sweeps']:,} null sweeps (95% upper bound "
                          f"{pct_fixed(false_go['upper_95'])}; the policy's level {level(significance)})"),
    ]
    if power is not None:
        lines.append(("power", f"{_rate(power['go'])} against an edge of annualized Sharpe "
                               f"{figure(power['edge_annualized_sharpe'])}"))
    lines.append(("its own verdict", doc["observed_verdict"]))
    return lines


def calibration_summary(doc: dict) -> str:
    """The short ``repr`` of a calibration: input, selected configuration, the false-go rate, the
    power, each check's failure rate on the null sweeps, and the caution."""
    lines = [
        "<sweepaudit calibration>",
        f"input           {_cut(doc['input']['path'])}: {doc['input']['windows']:,} windows x "
        f"{doc['input']['configurations']:,} configurations",
        f"selected        '{_cut(doc['selected']['configuration'])}'",
        *(f"{label:<15} {value}" for label, value in _calibration_lines(doc)),
        "check failures on the null sweeps",
    ]
    width = max((len(c["id"]) for c in doc["null"]["checks"]), default=0)
    for c in doc["null"]["checks"]:
        lines.append(f"  {c['id']:<{width}}  {_rate(c['failure'])}" + ("" if c["required"] else "  (advisory)"))
    if doc.get("caution"):
        lines.append(doc["caution"])
    return "\n".join(lines)


def calibration_html(doc: dict) -> str:
    """The notebook view of a calibration: the rates, each check's failure rates and the caution."""
    power = doc["power"]
    edged = {c["id"]: c for c in power["checks"]} if power is not None else {}
    rows = [(f"<code>{html.escape(c['id'])}</code>", "required" if c["required"] else "advisory",
             html.escape(_rate(c["failure"])), html.escape(_rate(edged[c["id"]]["failure"]) if c["id"] in edged else "n/a"))
            for c in doc["null"]["checks"]]
    summary = [(html.escape(label), html.escape(value)) for label, value in _calibration_lines(doc)]
    return "".join([
        '<div class="sweepaudit-calibration" style="font-family:sans-serif;font-size:0.95em;max-width:62em">',
        f"<div><strong>Calibration</strong> of <code>{_e(doc['input']['path'], NAME_LIMIT)}</code>, selected "
        f"<code>{_e(doc['selected']['configuration'])}</code></div>",
        _table("Rates", ("", ""), summary),
        _table("Failure rate of each check", ("check", "", "null sweeps", "with the edge"), rows),
        f'<p style="color:#555;font-size:0.9em"><em>{html.escape(doc.get("caution") or "")}</em></p></div>',
    ])
