"""Tests of the one number formatter (sweepaudit.format).

Internal consistency only: each style's exact strings, which the JSON's reasons, the terminal, the
JUnit file, the calibration output and the reports have always used.
"""

from __future__ import annotations

import numpy as np

from sweepaudit import format as f


def test_report_figures():
    assert f.figure(0.123456) == "0.1235"
    assert f.figure(10000) == "10,000"
    assert f.figure(np.int64(10000)) == "10,000"
    assert f.figure(None) == "n/a"
    assert f.figure(True) == "yes" and f.figure(np.bool_(False)) == "no"
    assert f.figure(-0.00012346) == "-0.0001235"
    assert f.figure(1.5e-7) == "1.5e-07"
    assert f.figure(float("nan")) == "n/a" and f.figure(float("inf")) == "n/a"
    assert f.figure(0.0) == "0" and f.figure(-0.0) == "0"


def test_terminal_figures_and_reasons():
    assert f.fmt(None) == "-"
    assert f.fmt(1234567) == "1,234,567"
    assert f.fmt(0.000123456) == "0.0001235" and f.fmt(2.5, 3) == "2.5"
    assert f.sig(1234.5678) == "1235" and f.sig(42.0, 6) == "42" and f.sig(0.05, 6) == "0.05"


def test_probabilities_and_percentages():
    assert f.prob(None) == "-" and f.prob(0.04567) == "0.0457" and f.prob(1) == "1.0000"
    assert f.pct(0.0123) == "1.23%" and f.pct(None) == "-" and f.pct(None, missing="n/a") == "n/a"
    assert f.pct(0.95) == "95%" and f.pct(0.123456, 4) == "12.35%"
    assert f.pct_fixed(0.0412) == "4.1%" and f.pct_fixed(0.0412, 2) == "4.12%"
    assert f.level(0.95) == "95%" and f.level(0.975) == "97.5%" and f.level(0.05) == "5%"


def test_junit_numbers_and_rates():
    assert f.xml_number(None) == "null" and f.xml_number(0.123456789) == "0.123457" and f.xml_number(36) == "36"
    assert f.rate(0.04, 0.0139) == "4.0% ± 1.4%"
    assert f.rate(None, None) == "n/a" and f.rate(0.5, None) == "n/a"
