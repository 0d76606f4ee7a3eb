"""Tests of configuration identity (sweepaudit.names, Sweep.configuration_keys, Sweep.index_of).

Internal consistency only (the key is our own definition, documented in the module and the README):
the key against hand-written expected strings for each rule of the definition, the matching of
``--select`` / ``select=`` requests, and the nearest names listed when nothing matches.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from sweepaudit import load_sweep
from sweepaudit.errors import InputError
from sweepaudit.names import configuration_key, nearest_names, parameter_value, parse_parameters


@pytest.mark.parametrize(
    ("value", "key"),
    [
        ("1.50", "1.5"), (1.5, "1.5"), ("21", "21"), ("21.0", "21"), (21.0, "21"), ("2.1e1", "21"),
        (np.int64(21), "21"), (np.float64(0.25), "0.25"), ("-0.0", "0"), (0.1 + 0.2, "0.30000000000000004"),
        (1e20, "1e+20"), (True, "true"), (np.bool_(False), "false"), ("TRUE", "true"), ("fast", "fast"),
        ("  fast   lane ", "fast lane"), ("nan", "nan"), ("inf", "inf"), ("0x10", "0x10"),
    ],
)
def test_parameter_values_in_key_form(value, key):
    assert parameter_value(value) == key


def test_the_key_sorts_parameters_and_writes_numbers_as_numbers():
    assert configuration_key("train_days=21, entry_z=1.5") == "entry_z=1.5, train_days=21"
    assert configuration_key("entry_z = 1.50 ,train_days=21.0") == "entry_z=1.5, train_days=21"
    assert configuration_key("x", {"lookback": np.int64(20), "band": 1.0}) == "band=1, lookback=20"
    # Case matters; a name without parameters is its name with white space made one space.
    assert configuration_key("Lookback=20") != configuration_key("lookback=20")
    assert configuration_key("  momentum   fast ") == "momentum fast"
    # A part that is not name=value (a decimal comma, a bare word) leaves the name as it is.
    assert configuration_key("a=1,5") == "a=1,5"
    assert parse_parameters("a=1,5") is None and parse_parameters("a=1, a=2") is None
    assert parse_parameters("a=, b=2") is None and parse_parameters("a=b=c") is None


def _grid_sweep():
    rng = np.random.default_rng(5)
    dates = pd.date_range("2020-01-03", periods=60, freq="W-FRI")
    columns = pd.MultiIndex.from_product([[21, 42, 63], [1.0, 1.5, 2.0]], names=["train_days", "entry_z"])
    return load_sweep(pd.DataFrame(rng.normal(0, 0.01, (60, 9)), index=dates, columns=columns))


@pytest.mark.parametrize(
    "request_",
    ["train_days=42, entry_z=1.5", "entry_z=1.5, train_days=42", "entry_z=1.50,train_days=42",
     " train_days = 42.0 ,  entry_z=1.5 ", "entry_z=3/2".replace("3/2", "1.5") + ", train_days=4.2e1"],
)
def test_select_matches_in_any_order_and_spacing(request_):
    sweep = _grid_sweep()
    assert sweep.configurations[sweep.index_of(request_)] == "train_days=42, entry_z=1.5"


def test_no_match_lists_the_nearest_names():
    sweep = _grid_sweep()
    with pytest.raises(InputError) as info:
        sweep.index_of("entry_z=1.5")  # one parameter of two: the three with entry_z=1.5 come first
    message = str(info.value)
    assert message.startswith("no configuration named 'entry_z=1.5' in the sweep")
    nearest = message.split("nearest: ")[1]
    assert nearest.count("entry_z=1.5") == 3 and "\n" not in message
    with pytest.raises(InputError, match=r"nearest: 'train_days=21, entry_z=\d\.\d'"):
        sweep.index_of("train_days=21, entry_z=9")  # the right train_days, a value not in the grid
    with pytest.raises(InputError, match="nearest"):
        sweep.index_of("entry_z=1.5, train_days=42, band=2")  # a parameter too many matches nothing


def test_nearest_names_ranks_shared_values_then_similarity():
    names = ["lookback=10, band=1", "lookback=20, band=1", "lookback=20, band=2", "other"]
    keys = [configuration_key(n) for n in names]
    # Sharing band=2 ranks first; then the most similar key.
    assert nearest_names("band=2, lookback=30", names, keys, limit=2) == ["lookback=20, band=2", "lookback=10, band=1"]
    assert nearest_names("lookback=20", names, keys)[:2] == ["lookback=20, band=1", "lookback=20, band=2"]
    assert nearest_names("lookback=20", names, keys, limit=3)[2] != "other"
    assert len(nearest_names("zzz", names, keys, limit=3)) == 3


def test_configurations_sharing_a_key_are_keyed_by_name():
    x = np.random.default_rng(1).normal(0, 0.01, (40, 3))
    sweep = load_sweep(x, configurations=["lookback=20", "lookback=20.0", "lookback=30"], periods_per_year=52)
    assert sweep.configuration_keys == ("lookback=20", "lookback=20.0", "lookback=30")
    assert sweep.index_of("lookback=20.0") == 1  # the exact name always wins
    with pytest.raises(InputError, match=r"^'lookback=20.00' matches 2 configurations by its values: 'lookback=20', "
                                         r"'lookback=20.0'; give the exact name$"):
        sweep.index_of("lookback=20.00")  # ambiguous as a value: refused, not guessed


def test_a_long_file_with_parameter_columns_keys_by_its_table(tmp_path):
    rows = [(d, z, days, 0.001 * k) for k, (z, days) in enumerate([(1.5, 21), (2.0, 21)])
            for d in range(1, 41)]
    frame = pd.DataFrame(rows, columns=["window", "entry_z", "train_days", "excess_return"])
    frame["excess_return"] += np.random.default_rng(2).normal(0, 0.01, len(frame))
    frame.to_csv(tmp_path / "long.csv", index=False)
    sweep = load_sweep(str(tmp_path / "long.csv"))
    assert sweep.configurations == ("entry_z=1.5, train_days=21", "entry_z=2.0, train_days=21")
    assert sweep.configuration_keys == ("entry_z=1.5, train_days=21", "entry_z=2, train_days=21")
    assert sweep.index_of("train_days=21, entry_z=2") == 1
