"""Tests of the JUnit file (sweepaudit.render.junit, ``--junit``).

Outside reference: the XML structure against the attributes CI test-report readers expect of the
JUnit XML format written by the Ant JUnit task (testsuites / testsuite with tests, failures, errors,
skipped, time; testcase with classname, name; failure with message) -- from memory of that format,
parsed with ``xml.etree``. The CLI wiring is internal consistency.
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET

import pytest

from sweepaudit.render.junit import audit_to_junit

from ..helpers import run, synthetic_returns, write_wide


def _junit_doc(small_results):
    doc = json.loads(json.dumps(small_results.document))
    doc["selected"]["configuration"] = 'band<1.5 & "wide"'  # characters XML must escape
    doc["checks"] = [
        {"id": "enough_windows", "passed": True, "required": True, "value": 60.0, "threshold": 36.0, "reason": "long enough"},
        {"id": "mean_interval", "passed": False, "required": True, "value": -0.001, "threshold": 0.0,
         "reason": "interval <reaches> zero & below"},
        {"id": "baseline_drift", "passed": False, "required": False, "value": 0.2, "threshold": 0.1, "reason": "drifted"},
    ]
    doc["verdict"] = "no-go"
    return doc

def test_junit_structure_counts_and_messages(small_results):
    doc = _junit_doc(small_results)
    root = ET.fromstring(audit_to_junit(doc, elapsed=1.25))
    assert root.tag == "testsuites"
    suites = root.findall("testsuite")
    assert len(suites) == 1
    suite = suites[0]
    for element in (root, suite):
        assert {"tests", "failures", "errors", "skipped", "time"} <= set(element.attrib)
        assert (element.get("tests"), element.get("failures"), element.get("errors"), element.get("skipped")) == \
            ("3", "1", "0", "1")
        assert float(element.get("time")) == pytest.approx(1.25)
    assert suite.get("name") == "sweepaudit"
    assert "T" in suite.get("timestamp") and not suite.get("timestamp").endswith("Z")
    cases = suite.findall("testcase")
    assert [c.get("name") for c in cases] == ["enough_windows", "mean_interval", "baseline_drift"]
    assert {c.get("classname") for c in cases} == {"sweepaudit.checks"}
    assert all(float(c.get("time")) >= 0 for c in cases)
    assert cases[0].find("failure") is None and cases[0].find("system-out").text.startswith("long enough")
    failure = cases[1].find("failure")
    assert failure.get("message") == "interval <reaches> zero & below"
    skipped = cases[2].find("skipped")
    assert cases[2].find("failure") is None and skipped.get("message") == "advisory: drifted"
    props = {p.get("name"): p.get("value") for p in suite.find("properties")}
    assert props["verdict"] == "no-go"
    assert props["selected_configuration"] == 'band<1.5 & "wide"'
    assert props["policy_source"] == "defaults"

def test_cli_junit_written_atomically_and_matches_the_json(tmp_path):
    sweep = write_wide(tmp_path / "sweep.csv", synthetic_returns())
    out, xml = tmp_path / "audit.json", tmp_path / "reports" / "checks.xml"
    xml.parent.mkdir()
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--json", str(out), "--junit", str(xml)])
    doc = json.loads(out.read_text())
    assert result.exit_code == (0 if doc["verdict"] == "go" else 1)
    suite = ET.parse(xml).getroot().find("testsuite")
    assert [c.get("name") for c in suite.findall("testcase")] == [c["id"] for c in doc["checks"]]
    required_failures = sum(1 for c in doc["checks"] if c["required"] and not c["passed"])
    assert int(suite.get("failures")) == required_failures
    assert sorted(p.name for p in xml.parent.iterdir()) == ["checks.xml"]  # no temporary file left

def test_cli_junit_folder_missing_is_exit_2(tmp_path):
    sweep = write_wide(tmp_path / "sweep.csv", synthetic_returns())
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--junit", str(tmp_path / "nope" / "x.xml")])
    assert result.exit_code == 2 and "JUnit file" in result.stderr
