"""Tests of the argument validators (sweepaudit.validate).

Internal consistency only: every validator accepts what its rule allows, returns it normalised, and
refuses the rest with the one message shape "<name> must <rule>; got <value>", naming the argument
the caller passed (a Python argument or, from the command line, an option).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from sweepaudit import validate
from sweepaudit.errors import DegenerateDataError, InputError


def message(fn, *args, **kwargs) -> str:
    with pytest.raises(InputError) as info:
        fn(*args, **kwargs)
    return str(info.value)


def test_numbers():
    assert validate.finite_number(np.float32(1.5), "x") == 1.5 and type(validate.finite_number(2, "x")) is float
    assert message(validate.finite_number, "zero", "benchmark") == "benchmark must be a finite number; got 'zero'"
    assert message(validate.finite_number, math.nan, "sharpe") == "sharpe must be a finite number; got nan"
    assert message(validate.finite_number, True, "sharpe") == "sharpe must be a finite number; got True"
    assert validate.positive_number(52, "periods_per_year") == 52.0
    for bad in (0, -4, math.inf, "a", None):
        assert message(validate.positive_number, bad, "volatility") == f"volatility must be positive and finite; got {bad!r}"
    assert validate.non_negative_number(0, "v") == 0.0
    assert message(validate.non_negative_number, -0.1, "v") == "v must be non-negative; got -0.1"
    assert validate.at_least(2, "observations", 2) == 2.0
    assert message(validate.at_least, 1, "trials", 1.5) == "trials must be at least 1.5; got 1"
    assert message(validate.at_least, 1, "n", 2, what="2 windows") == "n must be at least 2 windows; got 1"


def test_levels_and_shares():
    assert validate.probability(0.95, "confidence") == 0.95
    for bad in (0, 1, 1.5, -0.1, "high", math.nan, True):
        assert message(validate.probability, bad, "level") == f"level must lie strictly between 0 and 1; got {bad!r}"
    assert validate.unit_interval(0, "share") == 0.0 and validate.unit_interval(1, "share") == 1.0
    assert message(validate.unit_interval, 1.5, "share") == "share must be a number in [0, 1]; got 1.5"
    assert message(validate.unit_interval, False, "share") == "share must be a number in [0, 1]; got False"


def test_whole_numbers():
    assert validate.whole_number(np.int64(3), "n", minimum=1) == 3
    assert validate.whole_number(4.0, "trials", accept_float=True) == 4
    assert message(validate.whole_number, 4.0, "n") == "n must be a whole number; got 4.0"
    assert message(validate.whole_number, 7.5, "trials", accept_float=True) == "trials must be a whole number; got 7.5"
    assert message(validate.whole_number, True, "n", minimum=0) == "n must be a whole number of at least 0; got True"
    assert message(validate.whole_number, 0, "sweeps", minimum=1) == "sweeps must be a whole number of at least 1; got 0"
    assert message(validate.whole_number, 10, "lags", minimum=0, maximum=9) == (
        "lags must be a whole number from 0 to 9; got 10")
    assert message(validate.whole_number, 1, "partitions", minimum=2, what="an even number of at least 2") == (
        "partitions must be an even number of at least 2; got 1")
    assert message(validate.whole_number, 3, "--sweeps", minimum=5) == "--sweeps must be a whole number of at least 5; got 3"


def test_periods_per_year_and_choices():
    assert validate.periods_per_year(None) is None and validate.periods_per_year(52) == 52.0
    assert message(validate.periods_per_year, 0) == "periods_per_year must be positive and finite; got 0"
    assert message(validate.periods_per_year, math.inf, "periods per year") == (
        "periods per year must be positive and finite; got inf")
    assert validate.choice("basic", "method", ("percentile", "basic")) == "basic"
    assert message(validate.choice, "bca", "method", ("percentile", "basic")) == (
        "method must be one of percentile, basic; got 'bca'")
    assert message(validate.choice, None, "units", ("fraction",)) == "units must be one of fraction; got None"


def test_returns_matrix():
    x = validate.returns_matrix([[1, 2], [3, 4.5]])
    assert x.dtype == np.float64 and x.shape == (2, 2)
    assert message(validate.returns_matrix, [["a"]]) == (
        "returns must be a numeric T x N matrix (windows x configurations); got list")
    assert message(validate.returns_matrix, np.zeros(5)) == (
        "returns must be a 2-D T x N matrix (windows x configurations); got shape (5,) "
        "(reshape a single configuration to (T, 1))")
    assert message(validate.returns_matrix, np.zeros((2, 2, 2))) == (
        "returns must be a 2-D T x N matrix (windows x configurations); got shape (2, 2, 2)")
    assert message(validate.returns_matrix, np.zeros((5, 1)), min_configurations=2) == (
        "returns must hold at least 2 configuration(s); got 1")
    with pytest.raises(DegenerateDataError, match=r"^returns must hold at least 2 windows; got 1$"):
        validate.returns_matrix(np.zeros((1, 3)))
    bad = np.zeros((6, 3))
    bad[5, 2], bad[9 % 6, 0] = np.nan, np.inf
    assert message(validate.returns_matrix, bad) == (
        "returns must be finite; got 2 NaN or infinite value(s), the first at window 3, configuration 0 (0-based)")


def test_returns_series_and_constants():
    assert validate.returns_series([1, 2, 3]).shape == (3,)
    assert validate.returns_series(np.ones((3, 2)), matrix=True).shape == (3, 2)
    assert message(validate.returns_series, np.ones((3, 2))) == "returns must be 1-D (windows); got shape (3, 2)"
    assert message(validate.returns_series, np.ones((3, 2, 1)), "series", matrix=True) == (
        "series must be 1-D (windows) or 2-D (windows x configurations); got shape (3, 2, 1)")
    assert message(validate.returns_series, [1.0, np.nan, 2.0]) == (
        "returns must be finite; got 1 NaN or infinite value(s), the first at window 1 (0-based)")
    x = np.column_stack([np.arange(5.0), np.full(5, 0.3)])
    with pytest.raises(DegenerateDataError, match=r"^returns has constant columns \(0-based indices 1\); their "
                                                  r"Sharpe ratio is undefined: drop them before the audit$"):
        validate.nonconstant(x, x.std(axis=0), "returns", undefined="Sharpe ratio is undefined")
    with pytest.raises(DegenerateDataError, match="^series is constant; its autocorrelations are undefined$"):
        validate.nonconstant(np.full(4, 2.0), np.float64(0.0), "series", undefined="autocorrelations are undefined")
    validate.nonconstant(x[:, :1], x[:, :1].std(axis=0), "returns", undefined="Sharpe ratio is undefined")  # no error


def test_index_and_generator():
    assert validate.column_index(np.int64(2), "selected", 3) == 2
    assert message(validate.column_index, 3, "selected", 3) == "selected must be a column index from 0 to 2; got 3"
    assert message(validate.column_index, True, "selected", 3) == "selected must be a column index from 0 to 2; got True"
    g = np.random.default_rng(0)
    assert validate.generator(g) is g
    assert message(validate.generator, 0) == (
        "rng must be a numpy.random.Generator (numpy.random.default_rng(seed)); got int")
