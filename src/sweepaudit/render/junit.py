"""JUnit XML (``--junit PATH``): each check as a test case, for CI systems' test reports.

Formats the audit JSON document only. Layout::

    <testsuites name="sweepaudit" tests failures errors skipped time>
      <testsuite name="sweepaudit" tests failures errors skipped time timestamp>
        <properties> verdict, selected configuration, input, policy source, ... </properties>
        <testcase classname="sweepaudit.checks" name="<check id>" time="0">
          required check failed:  <failure message="<reason>" type="required">...</failure>
          advisory check failed:  <skipped message="advisory: <reason>"/>
          passed:                 <system-out><reason></system-out>
        </testcase>

An advisory failure is reported as skipped: CI test reports show it apart from passes without
marking the build red, which matches its meaning (reported, no effect on the verdict). ``errors``
is always 0: an audit that cannot run writes no JUnit file and exits with status 2.

Every string of the document passes through :func:`~sweepaudit.render.safe.visible` first, so a
name or file name with a control character still gives well-formed XML 1.0 (which has no escape
for most C0 controls) and CI logs that print the messages see no escape sequence.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from datetime import datetime, timezone

from .figures import Figures, check_rows
from .safe import visible_document

__all__ = ["audit_to_junit"]


def _properties(document: dict) -> dict:
    """The suite's properties: what was audited, how, and the verdict."""
    inp = document.get("input", {})
    settings = document.get("settings", {})
    ledger = document.get("ledger")
    values = {
        "verdict": document["verdict"],
        "preliminary": document.get("preliminary"),
        "selected_configuration": document["selected"]["configuration"],
        "selection_rule": document["selected"]["rule"],
        "input": inp.get("path"),
        "input_sha256": inp.get("sha256"),
        "configurations": inp.get("configurations"),
        "windows": inp.get("windows"),
        "policy_source": document.get("policy_source", "defaults"),
        "seed": settings.get("seed"),
        "resamples": settings.get("resamples"),
        "tool_version": document.get("tool", {}).get("version"),
    }
    if ledger:
        values["trials_used"] = ledger.get("trials_used")
    if document.get("sensitivity"):
        values["what_would_change_the_verdict"] = document["sensitivity"]["summary"]
    if document.get("baseline"):
        values["baseline"] = document["baseline"]["path"]
    return values


def audit_to_junit(document: dict, *, elapsed: float = 0.0, timestamp: datetime | None = None) -> str:
    """The audit document as a JUnit XML string.

    Parameters
    ----------
    document : dict
        The audit JSON document.
    elapsed : float
        Seconds the audit took (the suite's ``time``).
    timestamp : datetime, optional
        When the audit ran (default now); written in UTC without a zone suffix, as JUnit expects.
    """
    document = visible_document(document)
    checks = document["checks"]
    failures = sum(1 for c in checks if not c["passed"] and c["required"])
    skipped = sum(1 for c in checks if not c["passed"] and not c["required"])
    counts = {
        "tests": str(len(checks)),
        "failures": str(failures),
        "errors": "0",
        "skipped": str(skipped),
        "time": f"{elapsed:.3f}",
    }
    when = (timestamp or datetime.now(timezone.utc)).astimezone(timezone.utc).replace(tzinfo=None)
    root = ET.Element("testsuites", {"name": "sweepaudit", **counts})
    suite = ET.SubElement(
        root, "testsuite", {"name": "sweepaudit", **counts, "timestamp": when.isoformat(timespec="seconds")}
    )
    props = ET.SubElement(suite, "properties")
    for name, value in _properties(document).items():
        if value is not None:
            shown = ("true" if value else "false") if isinstance(value, bool) else str(value)
            ET.SubElement(props, "property", {"name": name, "value": shown})
    rows = {r.id: r for r in check_rows(Figures(document))}
    for c in checks:
        case = ET.SubElement(
            suite, "testcase", {"classname": "sweepaudit.checks", "name": c["id"], "time": "0"}
        )
        r = rows[c["id"]]
        figures = f"{r.measure}: {r.value} ({r.bar})"
        if c["passed"]:
            ET.SubElement(case, "system-out").text = f"{c['reason']} ({figures})"
        elif c["required"]:
            failure = ET.SubElement(case, "failure", {"message": c["reason"], "type": "required"})
            failure.text = f"{c['reason']}\n{figures}; verdict {document['verdict']}"
        else:
            ET.SubElement(case, "skipped", {"message": f"advisory: {c['reason']}"})
    ET.indent(root)
    return '<?xml version="1.0" encoding="utf-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"
