"""Tests of the one number formatter (sweepaudit.format).

Internal consistency only: each style's rule (percent for returns, fixed decimals for probabilities,
p-value floors, no ``-0``, no scientific notation in ordinary ranges, one missing mark) on exact
strings, and the properties that make one figure read the same everywhere (an interval's estimate
reads as the figure alone; a zero never has a sign). The p-value floor 1/(B + 1) is the usual
randomised p-value with the observed statistic counted (Davison and Hinkley 1997, eq. 4.11; from
memory).
"""

from __future__ import annotations

import math
import re

import numpy as np
from hypothesis import given
from hypothesis import strategies as st

from sweepaudit import format as f


def test_numbers_are_positional_with_significant_digits():
    assert f.number(0.123456) == "0.1235" and f.number(2.5) == "2.5" and f.number(2.749, 3) == "2.75"
    assert f.number(-0.00012346) == "-0.0001235"  # scientific notation only below one millionth
    assert f.number(1.5e-7) == "1.5e-07"
    assert f.number(12870.0) == "12,870" and f.number(123456.7) == "123,457" and f.number(1234.5) == "1,234"
    assert f.number(9.99996) == "10" and f.number(226.3) == "226.3" and f.number(30.0) == "30"


def test_missing_figures_read_n_a_in_every_style():
    for style in (f.number, f.whole, f.percent, f.probability, f.pvalue, f.level, f.figure):
        assert style(None) == "n/a"
    for bad in (float("nan"), float("inf"), -float("inf")):
        assert f.number(bad) == f.percent(bad) == f.probability(bad) == f.pvalue(bad) == "n/a"
    assert f.interval(None, None, None) == "n/a" and f.rate(None, 0.1) == "n/a"


def test_a_zero_never_has_a_sign():
    assert f.number(-0.0) == "0" and f.percent(-0.0) == "0%" and f.probability(-0.0) == "0.000"
    assert f.pvalue(-0.0) == "< 0.0001" and f.interval(-0.0, -0.0, -0.0) == "0 [0, 0]"
    assert f.pct_fixed(-0.00001) == "0.0%"


@given(st.floats(min_value=-1e14, max_value=1e14, allow_nan=False))
def test_no_minus_zero_and_no_scientific_notation_in_the_ordinary_range(x):
    for text in (f.number(x), f.statistic(x), f.percent(x / 100), f.probability(min(abs(x), 1.0)),
                 f.pvalue(min(abs(x), 1.0))):
        assert not re.fullmatch(r"-0(\.0*)?%?", text), text
        if abs(x) >= 1e-6 or x == 0:
            assert "e" not in text, text


def test_returns_are_percentages():
    assert f.percent(0.00256) == "0.256%" and f.percent(-0.000818) == "-0.0818%" and f.percent(0.133) == "13.3%"
    assert f.percent(1.0) == "100%" and f.percent(0.0123, 2) == "1.2%"
    # three significant digits shown as three, so the bounds of one interval read alike
    assert f.percent(0.51998) == "52.0%" and f.percent(0.0044) == "0.440%" and f.percent(0.2) == "20%"
    assert f.interval(0.367, 0.218, 0.51998, as_percent=True) == "36.7% [21.8%, 52.0%]"


def test_probabilities_have_three_fixed_decimals():
    assert f.probability(0.9918) == "0.992" and f.probability(0.2) == "0.200" and f.probability(1) == "1.000"
    assert f.probability(0.0009) == "0.001" and f.probability(0) == "0.000"
    assert f.probability(0.0004) == "< 0.001" and f.probability(0.99996) == "> 0.999"


def test_p_values_have_four_decimals_and_their_floor():
    assert f.pvalue(0.5045) == "0.5045" and f.pvalue(0.0123) == "0.0123" and f.pvalue(1.0) == "1.0000"
    assert f.pvalue(0.00005) == "< 0.0001"
    # B resamples: the smallest p-value is 1/(B + 1), shown as the power of ten above it.
    assert f.pvalue_floor(999) == 0.001 and f.pvalue_floor(None) is None
    assert f.pvalue(1 / 1001, f.pvalue_floor(1000)) == "< 0.001"
    assert f.pvalue(1 / 10001, f.pvalue_floor(10_000)) == "< 0.0001"
    assert f.pvalue(2 / 1001, f.pvalue_floor(1000)) == "0.0020"  # above the floor: the figure itself


def test_an_interval_reads_as_its_figures_alone():
    assert f.interval(0.00256, -0.000818, 0.00585, as_percent=True) == "0.256% [-0.0818%, 0.585%]"
    assert f.interval(0.1316, -0.02052, 0.3058) == "0.132 [-0.0205, 0.306]"
    assert f.interval(2.749, 1.503, 3.904) == "2.75 [1.50, 3.90]"
    assert f.interval(0.5, None, 1.0) == "0.500 [n/a, 1.00]"
    assert f.statistic(1.503) == "1.50" and f.statistic(-0.0) == "0" and f.statistic(12870.4) == "12,870"


@given(st.tuples(*(st.floats(min_value=-1e6, max_value=1e6, allow_nan=False),) * 3))
def test_an_interval_is_three_figures_each_as_alone(values):
    e, lo, hi = values
    assert f.interval(e, lo, hi) == f"{f.statistic(e)} [{f.statistic(lo)}, {f.statistic(hi)}]"
    assert f.interval(e, lo, hi, as_percent=True) == f"{f.percent(e)} [{f.percent(lo)}, {f.percent(hi)}]"


def test_levels_counts_rates_and_values_of_unknown_kind():
    assert f.level(0.95) == "95%" and f.level(0.975) == "97.5%" and f.level(0.05) == "5%"
    assert f.whole(1000) == "1,000" and f.whole(np.int64(42)) == "42"
    assert f.rate(0.04, 0.0139) == "4.0% ± 1.4%" and f.pct_fixed(0.0412, 2) == "4.12%"
    assert f.figure(True) == "yes" and f.figure(np.bool_(False)) == "no" and f.figure(10000) == "10,000"
    assert f.figure("text") == "text" and f.figure(0.123456) == "0.1235"


def test_a_checks_figure_takes_its_style():
    assert f.styled(0.004188, "return") == "0.419%" and f.styled(0.9918, "probability") == "0.992"
    assert f.styled(1 / 1001, "pvalue", floor=1 / 1001) == "< 0.001"
    assert f.styled(0.05, "pvalue", threshold=True) == "0.05"  # a significance level, not a p-value
    assert f.styled(208.0, "count") == "208" and f.styled(226.33, "windows") == "226.3"
    assert f.styled(4.4265, "statistic") == "4.43" and f.styled(2.7, "statistic") == "2.70"
    assert f.styled(0.0123456, "number") == "0.01235"


def test_the_earlier_names_are_the_same_styles():
    assert f.sig(0.123456) == f.number(0.123456) and f.fmt(3) == f.figure(3)
    assert f.prob(0.5) == f.probability(0.5) and f.pct(0.0123) == f.percent(0.0123)
    assert f.pct(None, missing="-") == "-" and f.xml_number(0.5) == f.figure(0.5)
    assert math.isclose(f.pvalue_floor(1), 0.5)


def test_only_resampled_pvalues_take_the_resampling_floor():
    """With B = 1,000 resamples a data-snooping p-value cannot go below 1/1001, so the smallest reads
    '< 0.001'; a t-test's p-value (the walk-forward and decay tests, the haircut) has no such floor
    and reads '< 0.0001' when it is that small (common practice: report a p-value only to the
    precision its method has)."""
    from sweepaudit.format import styled
    from sweepaudit.render.figures import Figures

    doc = {"settings": {"resamples": 1000},
           "results": {"snooping": {"pvalue_floor": 1 / 1001, "reality_check": {"pvalue": 1 / 1001}},
                       "walk_forward": {"test": {"pvalue": 3e-7}},
                       "stability": {"change": {"pvalue": 0.0004}}}}
    f = Figures(doc)
    assert f.pvalue("results.snooping.reality_check.pvalue") == "< 0.001"
    assert f.p_is("results.walk_forward.test.pvalue") == "p < 0.0001"
    assert f.pvalue("results.stability.change.pvalue") == "0.0004"
    assert styled(0.0004, "test_pvalue", floor=1 / 1001) == "0.0004"
    assert styled(0.0004, "pvalue", floor=1 / 1001) == "< 0.001"
    assert styled(0.05, "test_pvalue", threshold=True) == "0.05"
