"""Input that must not fool the verdict: dates, plausibility, raw or excess returns, aggregation,
spreadsheet exports, in-memory data and the inspect command.

Outside references:

* the data are the open data sets arch ships (``arch.data.sp500`` daily index prices,
  ``arch.data.frenchdata`` monthly factor returns in percent, ``arch.data.nasdaq``), built into
  SYNTHETIC moving-average sweeps by ``tests/read/arch_sweeps.py``; each test names its source;
* every expected matrix is rebuilt here with pandas from the data the test wrote (a literal
  oracle): the excess over a benchmark by subtraction, aggregated windows by pandas' own calendar
  resampling (``resample("ME")``, ``"W-FRI"``, ``"QE"``) and ``prod``, never from the reader's
  output;
* the calendar (12 months, 52 weeks, 4 quarters, 252 trading days a year) is common practice for
  annualizing; the ISO week calendar is ISO 8601 (Python's ``%G-W%V-%u`` is the oracle).

Internal consistency only: the wording of messages (we assert the file, the column, the row and the
hint a user needs) and the thresholds of the level guard (``read.checks.LEVEL_RATIO``).
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from sweepaudit import AuditSettings, DegenerateDataError, InputError, Policy, audit, inspect, load_sweep
from sweepaudit import sweep_from_array
from sweepaudit.cli import app
from sweepaudit.read import LoadOptions

from .arch_sweeps import daily_prices, factor_timing_sweep, moving_average_sweep

runner = CliRunner()
QUICK = AuditSettings(seed=1, resamples=200)


def run(*args, input=None):
    return runner.invoke(app, [str(a) for a in args], input=input)


def assert_one_line_error(result, *needles, outputs=()):
    """Exit 2, one line on stderr naming what ``needles`` say, no traceback, no output file."""
    assert result.exit_code == 2, (result.stdout, result.stderr)
    assert isinstance(result.exception, SystemExit)
    lines = result.stderr.splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("sweepaudit: error: ")
    for needle in needles:
        assert needle in lines[0], lines[0]
    assert "Traceback" not in result.output and result.stdout == ""
    for path in outputs:
        assert not path.exists()


@pytest.fixture(scope="module")
def weekly_sp500():
    """arch.data.sp500: the moving-average sweep's daily raw returns compounded by pandas into
    calendar weeks ending Friday (the oracle's own resampling), and the buy-and-hold benchmark."""
    strat, bench = moving_average_sweep("sp500")
    weekly = (1 + strat).resample("W-FRI").prod() - 1
    bh = (1 + bench).resample("W-FRI").prod() - 1
    return weekly.iloc[1:-1], bh.iloc[1:-1]


# ---------------------------------------------------------------------------------------------
# dates


def test_yyyymm_monthly_file_in_percent_reads_the_dates_not_a_configuration(tmp_path):
    # arch.data.frenchdata, monthly factor returns in percent with their YYYYMM numbers.
    sweep = factor_timing_sweep()
    path = tmp_path / "french.csv"
    sweep.to_csv(path, index=False)
    s = load_sweep(str(path), units="percent")
    assert "yyyymm" not in s.configurations and s.n_configurations == 6
    assert s.periods_per_year == 12 and s.reading["window_column"] == "yyyymm"
    first = str(sweep["yyyymm"].iloc[0])
    assert s.dates[0] == pd.Period(f"{first[:4]}-{first[4:]}", "M").end_time.normalize()
    np.testing.assert_allclose(s.returns, sweep.drop(columns="yyyymm").to_numpy() / 100, rtol=0, atol=1e-15)
    assert s.plausibility.largest_window_return < 1.0


def test_yyyymm_column_that_is_not_the_window_column_is_never_returns(tmp_path):
    # arch.data.frenchdata: the YYYYMM numbers under a name no window detection knows, last.
    sweep = factor_timing_sweep().rename(columns={"yyyymm": "obs"})
    sweep = sweep[[*sweep.columns[1:], "obs"]]
    sweep.insert(0, "label", [f"m{i}" for i in range(len(sweep))])
    path = tmp_path / "french.csv"
    sweep.to_csv(path, index=False)
    out = tmp_path / "a.json"
    for units in ("percent", "bps", "fraction"):
        result = run("audit", path, "--units", units, "--layout", "wide", "--json", out)
        assert_one_line_error(result, "french.csv", "column 'obs'", "row 1", "looks like dates (YYYYMM",
                              outputs=[out])


@pytest.mark.parametrize("writer", ["%d/%m/%Y", "%d.%m.%Y", "%m/%d/%Y"])
def test_day_first_and_month_first_dates_order_the_windows_as_iso_dates_do(tmp_path, weekly_sp500, writer):
    # arch.data.sp500 weekly windows: the same sweep written with ISO dates and DD/MM/YYYY (or
    # MM/DD/YYYY) gives the same matrix in the same order (a day above 12 tells the order).
    weekly, _ = weekly_sp500
    iso = weekly.copy()
    iso.index = iso.index.strftime("%Y-%m-%d")
    iso.index.name = "week"
    iso.to_csv(tmp_path / "iso.csv")
    other = weekly.copy()
    other.index = other.index.strftime(writer)
    other.index.name = "week"
    other.sample(frac=1.0, random_state=3).to_csv(tmp_path / "other.csv")  # shuffled rows
    a, b = load_sweep(str(tmp_path / "iso.csv")), load_sweep(str(tmp_path / "other.csv"))
    assert a.windows == b.windows and a.periods_per_year == b.periods_per_year == 52
    np.testing.assert_array_equal(a.returns, b.returns)
    assert b.reading["window_form"].startswith("day-first" if writer.startswith("%d") else "month-first")


def _ambiguous_monthly(tmp_path, fmt="%d/%m/%Y"):
    """arch.data.frenchdata months dated on their first day: no day above 12, so DD/MM and MM/DD
    both read validly."""
    sweep = factor_timing_sweep().iloc[:60]
    dates = pd.to_datetime(sweep["yyyymm"].astype(str), format="%Y%m")
    frame = sweep.drop(columns="yyyymm")
    frame.insert(0, "date", dates.dt.strftime(fmt))
    path = tmp_path / "ambiguous.csv"
    frame.to_csv(path, index=False)
    return path, dates, frame


def test_dates_valid_both_ways_are_refused_with_how_to_choose(tmp_path):
    path, dates, frame = _ambiguous_monthly(tmp_path)
    out = tmp_path / "a.json"
    result = run("audit", path, "--units", "percent", "--json", out)
    assert_one_line_error(result, "ambiguous.csv", "column 'date'", "row 1", "day-first", "month-first",
                          "--day-first or --month-first", outputs=[out])
    s = load_sweep(str(path), units="percent", date_order="day-first")
    assert list(s.dates) == list(dates)
    np.testing.assert_allclose(s.returns, frame.drop(columns="date").to_numpy() / 100, atol=1e-15)
    assert load_sweep(str(path), units="percent", date_format="%d/%m/%Y").windows == s.windows
    flipped = load_sweep(str(path), units="percent", date_order="month-first")
    assert flipped.windows != s.windows  # the other reading puts the windows in another order


def test_iso_dates_mixed_with_month_first_are_refused_at_the_row(tmp_path):
    path, _, frame = _ambiguous_monthly(tmp_path, "%Y-%m-%d")
    frame.loc[5, "date"] = "07/01/1929"
    frame.to_csv(path, index=False)
    result = run("audit", path, "--units", "percent")
    assert_one_line_error(result, "column 'date'", "row 6", "mixed date formats", "'07/01/1929'")
    assert path.read_text().splitlines()[6].startswith("07/01/1929")


def test_mixed_time_zone_offsets_are_refused_in_one_line(tmp_path, weekly_sp500):
    # arch.data.sp500 weekly windows stamped 16:00 New York time, one row in summer time.
    weekly, _ = weekly_sp500
    frame = weekly.iloc[:60].copy()
    stamps = [f"{d:%Y-%m-%d}T16:00:00-05:00" for d in frame.index]
    stamps[9] = stamps[9].replace("-05:00", "-04:00")
    frame.index = pd.Index(stamps, name="timestamp")
    frame.to_csv(tmp_path / "tz.csv")
    result = run("inspect", tmp_path / "tz.csv")
    assert_one_line_error(result, "tz.csv", "column 'timestamp'", "row 10", "mixed time-zone offsets", "-04:00")
    stamps[9] = stamps[9].replace("-04:00", "-05:00")
    frame.index = pd.Index(stamps, name="timestamp")
    frame.to_csv(tmp_path / "tz.csv")
    s = load_sweep(str(tmp_path / "tz.csv"))
    assert s.periods_per_year == 52 and "offset -05:00" in s.reading["window_form"]


@pytest.mark.parametrize(
    ("fmt", "ppy", "form"),
    [("%Y-%m", 12, "year-month"), ("%Y%m", 12, "YYYYMM"), ("%G-W%V", 52, "ISO week")],
)
def test_period_labels_are_dates_with_periods_per_year(tmp_path, fmt, ppy, form):
    # arch.data.frenchdata months (and arch.data.sp500 weeks) labelled as periods.
    if ppy == 12:
        sweep = factor_timing_sweep().iloc[:120]
        ends = pd.to_datetime(sweep["yyyymm"].astype(str), format="%Y%m") + pd.offsets.MonthEnd(0)
        values = sweep.drop(columns="yyyymm") / 100
    else:
        strat, _ = moving_average_sweep("sp500")
        values = ((1 + strat).resample("W-SUN").prod() - 1).iloc[1:-1]
        ends = pd.Series(values.index)
    frame = values.reset_index(drop=True)
    labels = pd.Series(ends).dt.strftime(fmt)
    frame.insert(0, "period", labels.to_numpy())
    frame.to_csv(tmp_path / "p.csv", index=False)
    s = load_sweep(str(tmp_path / "p.csv"))
    assert s.periods_per_year == ppy and s.periods_source == "inferred"
    assert form in s.reading["window_form"]
    assert s.windows[0] == labels.iloc[0]  # period labels are shown as written
    # ISO 8601 weeks end on Sunday; months on their last day (Python's strptime is the oracle).
    assert list(s.dates) == [pd.Timestamp(d).normalize() for d in ends]


def test_a_week_that_does_not_exist_is_refused():
    # ISO 8601: 2020 has 53 weeks, 2021 has 52 (Python's %G-W%V rolls a week 53 over silently).
    with pytest.raises(InputError, match=r"<array>, column 'window', row 2 \(index 2021-W53\): not a date"):
        sweep_from_array(np.random.default_rng(0).normal(0, 0.01, (3, 1)), dates=["2020-W53", "2021-W53", "2022-W01"])


def test_parquet_with_a_datetime_index_keeps_its_dates(tmp_path):
    # arch.data.sp500 daily returns of the moving-average rules, written by pandas with the index.
    strat, _ = moving_average_sweep("sp500")
    strat.index.name = "Date"
    strat.to_parquet(tmp_path / "s.parquet")
    s = load_sweep(str(tmp_path / "s.parquet"))
    assert s.windows[0] == strat.index[0].date().isoformat() and s.periods_per_year == 252
    assert s.reading["index_columns"] == ["Date"]
    np.testing.assert_array_equal(s.returns, strat.to_numpy())
    assert load_sweep(str(tmp_path / "s.parquet"), window_column="Date").windows == s.windows
    unnamed = strat.rename_axis(None)
    unnamed.to_parquet(tmp_path / "u.parquet")
    assert load_sweep(str(tmp_path / "u.parquet")).dates.equals(s.dates)


# ---------------------------------------------------------------------------------------------
# plausibility


def test_price_levels_and_equity_curves_are_never_returns(tmp_path):
    # arch.data.sp500 and arch.data.nasdaq closes, and the rules' cumulative equity curves.
    prices = pd.DataFrame({"spx_close": daily_prices("sp500"), "ndx_close": daily_prices("nasdaq")})
    strat, _ = moving_average_sweep("sp500")
    curves = (1 + strat).cumprod()
    for name, frame in (("prices", prices), ("equity", curves)):
        frame = frame.iloc[-500:].copy()
        frame.index = frame.index.strftime("%Y-%m-%d")
        frame.index.name = "date"
        frame.to_csv(tmp_path / f"{name}.csv")
        for units in ("fraction", "percent", "bps"):
            result = run("audit", tmp_path / f"{name}.csv", "--units", units, "--quick")
            assert_one_line_error(result, f"{name}.csv", f"column '{frame.columns[0]}'", "row 1",
                                  "looks like a price level or a cumulative equity curve")


def test_a_price_level_benchmark_is_refused(tmp_path, weekly_sp500):
    # arch.data.sp500: the strategies' weekly returns against the index *level* by mistake.
    weekly, _ = weekly_sp500
    frame = weekly.iloc[:200].copy()
    frame["index_level"] = daily_prices("sp500").reindex(frame.index, method="ffill").to_numpy()
    frame.index = frame.index.strftime("%Y-%m-%d")
    frame.index.name = "date"
    frame.to_csv(tmp_path / "b.csv")
    result = run("audit", tmp_path / "b.csv", "--benchmark", "index_level", "--units", "bps")
    assert_one_line_error(result, "b.csv", "column 'index_level'", "is the benchmark a price level")


def test_percent_read_as_fractions_fails_plausible_returns_on_the_first_screen(tmp_path):
    # arch.data.frenchdata in percent, audited without --units percent.
    sweep = factor_timing_sweep()
    sweep.to_csv(tmp_path / "f.csv", index=False)
    result = run("audit", tmp_path / "f.csv", "--quick", "--json", tmp_path / "a.json")
    assert result.exit_code == 1, result.output
    panel = result.stdout.split("Reasons")[0]
    assert "Implausible returns" in panel and "NO-GO" in panel
    doc = json.loads((tmp_path / "a.json").read_text())
    check = next(c for c in doc["checks"] if c["id"] == "plausible_returns")
    assert not check["passed"] and check["required"]
    top = np.abs(sweep.drop(columns="yyyymm").to_numpy()).max()
    assert check["value"] == pytest.approx(top) and doc["input"]["plausibility"]["largest_window_return"] == check["value"]


def test_the_policy_may_allow_implausible_returns_and_they_stay_on_the_first_screen():
    # arch.data.frenchdata in percent read as fractions, judged by the check alone.
    sweep = factor_timing_sweep()
    s = load_sweep(sweep, window_column="yyyymm")
    strict = audit(s, settings=QUICK, policy=Policy(required=("plausible_returns",)))
    assert strict.verdict.decision == "no-go"
    loose = audit(s, settings=QUICK, policy=Policy(required=("plausible_returns",), allow_implausible_returns=True))
    check = next(c for c in loose.verdict.checks if c.id == "plausible_returns")
    assert loose.verdict.decision == "go" and check.passed and check.reason.startswith("Implausible returns allowed")
    # In the right units the window bound holds, and the volatility bound judges the annualized figure.
    right = load_sweep(sweep, window_column="yyyymm", units="percent")
    vol = right.returns.std(axis=0, ddof=1).max() * np.sqrt(12)
    assert right.plausibility.largest_volatility_annualized == pytest.approx(vol)
    tight = audit(right, settings=QUICK, policy=Policy(required=("plausible_returns",), max_annualized_volatility=vol * 0.9))
    assert tight.verdict.decision == "no-go" and "annualized volatility" in tight.verdict.reasons[0]


# ---------------------------------------------------------------------------------------------
# raw or excess


def test_raw_returns_with_a_buy_and_hold_column(tmp_path, weekly_sp500):
    # arch.data.sp500: raw weekly returns of the rules and of buy-and-hold in one file.
    weekly, bh = weekly_sp500
    frame = weekly.assign(buy_and_hold=bh)
    frame.index = frame.index.strftime("%Y-%m-%d")
    frame.index.name = "date"
    frame.to_csv(tmp_path / "raw.csv")
    plain = load_sweep(str(tmp_path / "raw.csv"))
    assert "buy_and_hold" in plain.configurations
    assert any("named like a benchmark" in n and "--benchmark buy_and_hold" in n for n in plain.notes)
    assert any("no parameter table" in n and "'buy_and_hold' does not" in n for n in plain.notes)
    excess = load_sweep(str(tmp_path / "raw.csv"), benchmark="buy_and_hold")
    np.testing.assert_allclose(excess.returns, (weekly.to_numpy() - bh.to_numpy()[:, None]), atol=1e-15)
    assert list(excess.parameters.columns) == ["lookback"] and not any("benchmark" in n and "named" in n
                                                                      for n in excess.notes)


# ---------------------------------------------------------------------------------------------
# aggregation


@pytest.mark.parametrize(("rule", "pandas_rule", "ppy"), [("weekly", "W-FRI", 52), ("monthly", "ME", 12),
                                                          ("quarterly", "QE", 4)])
def test_daily_returns_compound_into_windows(tmp_path, rule, pandas_rule, ppy):
    # arch.data.sp500 daily raw returns; the oracle is pandas' calendar resampling.
    strat, bench = moving_average_sweep("sp500")
    strat, bench = strat.loc["2003-01-08":"2012-06-14"], bench.loc["2003-01-08":"2012-06-14"]
    frame = strat.assign(buy_and_hold=bench)
    frame.index = frame.index.strftime("%Y-%m-%d")
    frame.index.name = "date"
    frame.to_csv(tmp_path / "daily.csv")
    s = load_sweep(str(tmp_path / "daily.csv"), benchmark="buy_and_hold", windows=rule)
    grouped_s = (1 + strat).resample(pandas_rule).prod() - 1
    grouped_b = (1 + bench).resample(pandas_rule).prod() - 1
    counts = strat.iloc[:, 0].resample(pandas_rule).count()
    keep = np.ones(len(counts), dtype=bool)
    keep[0] = counts.iloc[0] >= 0.8 * counts.median()
    keep[-1] = counts.iloc[-1] >= 0.8 * counts.median()
    expected = (grouped_s.to_numpy() - grouped_b.to_numpy()[:, None])[keep]
    np.testing.assert_allclose(s.returns, expected, rtol=1e-12, atol=1e-15)
    assert s.periods_per_year == ppy and s.reading["aggregation"]["windows"] == rule
    assert len(s.reading["aggregation"]["partial_windows_dropped"]) == int((~keep).sum())
    # Windows are dated by their last input date.
    last = strat.index.to_series().resample(pandas_rule).max()[keep]
    assert s.windows == tuple(d.date().isoformat() for d in last)
    # Compounded excess is not excess compounded: the gap is real on these data (the README quotes
    # it for monthly windows over the whole sample).
    naive = (1 + strat.sub(bench, axis=0)).resample(pandas_rule).prod() - 1
    assert np.abs(naive.to_numpy()[keep] - s.returns).max() > 1e-3


def test_aggregating_excess_returns_without_a_benchmark_says_it_approximates(tmp_path):
    strat, bench = moving_average_sweep("sp500")
    frame = strat.sub(bench, axis=0).iloc[:800]
    frame.index = frame.index.strftime("%Y-%m-%d")
    frame.index.name = "date"
    frame.to_csv(tmp_path / "x.csv")
    s = load_sweep(str(tmp_path / "x.csv"), windows="monthly")
    assert any("only approximates" in n for n in s.notes)
    assert s.reading["aggregation"]["compounding"].startswith("excess returns compounded as given")


def test_aggregation_needs_dates_and_finer_returns(tmp_path):
    sweep = factor_timing_sweep()
    sweep.to_csv(tmp_path / "m.csv", index=False)
    assert_one_line_error(run("audit", tmp_path / "m.csv", "--units", "percent", "--windows", "monthly"),
                          "m.csv", "already monthly or coarser")
    sweep.drop(columns="yyyymm").to_csv(tmp_path / "n.csv", index=False)
    assert_one_line_error(run("audit", tmp_path / "n.csv", "--units", "percent", "--windows", "weekly"),
                          "n.csv", "needs dated windows")


# ---------------------------------------------------------------------------------------------
# a configuration that never invests


def test_a_configuration_that_never_invests_is_named_not_crashed():
    # arch.data.sp500 weekly returns and one column of zeros, through the library API.
    strat, _ = moving_average_sweep("sp500")
    x = ((1 + strat).resample("W-FRI").prod() - 1).iloc[1:200]
    x["lookback=999"] = 0.0
    with pytest.raises(DegenerateDataError, match=r"column 'lookback=999'.*is constant.*never invests"):
        audit(x, settings=QUICK)
    with pytest.raises(DegenerateDataError, match=r"never invests"):
        sweep_from_array(x.to_numpy(), configurations=list(x.columns))


# ---------------------------------------------------------------------------------------------
# spreadsheet exports


def test_semicolon_and_decimal_comma_exports_read_like_plain_csv(tmp_path, weekly_sp500):
    # arch.data.sp500 weekly returns as a European spreadsheet saves them.
    weekly, _ = weekly_sp500
    frame = weekly.iloc[:150].copy()
    frame.index = frame.index.strftime("%d.%m.%Y")
    frame.index.name = "Datum"
    frame.to_csv(tmp_path / "eu.csv", sep=";", decimal=",")
    frame.to_csv(tmp_path / "plain.csv")
    eu, plain = load_sweep(str(tmp_path / "eu.csv")), load_sweep(str(tmp_path / "plain.csv"))
    np.testing.assert_array_equal(eu.returns, plain.returns)
    assert eu.reading["separator"] == ";" and eu.reading["decimal"] == ","
    assert load_sweep(str(tmp_path / "eu.csv"), separator=";", decimal=",").windows == eu.windows
    frame.to_csv(tmp_path / "tab.tsv", sep="\t")
    result = run("inspect", "-", "--json", tmp_path / "i.json", input=(tmp_path / "tab.tsv").read_bytes())
    assert result.exit_code == 0, result.output
    assert json.loads((tmp_path / "i.json").read_text())["reading"]["separator"] == "\t"


def test_thousands_separators_are_refused_unless_named(tmp_path):
    # arch.data.frenchdata in basis points, written with thousands separators.
    sweep = factor_timing_sweep().iloc[:80]
    bps = sweep.drop(columns="yyyymm") * 100
    lines = ["month;" + ";".join(bps.columns)]
    for ym, row in zip(sweep["yyyymm"], bps.to_numpy()):
        lines.append(f"{ym};" + ";".join(f"{v:,.2f}".replace(",", "X").replace(".", ",").replace("X", ".") for v in row))
    (tmp_path / "k.csv").write_text("\n".join(lines) + "\n")
    big = next(i for i, line in enumerate(lines[1:], 1) if "." in line)
    result = run("audit", tmp_path / "k.csv", "--units", "bps")
    assert_one_line_error(result, "k.csv", f"row {big}", "thousands separator '.'", "--thousands")
    s = load_sweep(str(tmp_path / "k.csv"), units="bps", thousands=".")
    np.testing.assert_allclose(s.returns, np.round(bps.to_numpy(), 2) / 10_000, atol=1e-15)


# ---------------------------------------------------------------------------------------------
# in-memory data


def test_wide_dataframe_with_a_datetime_index_and_parameter_multiindex():
    # arch.data.sp500 weekly raw returns; columns a MultiIndex of (lookback, lag).
    strat, bench = moving_average_sweep("sp500")
    weekly = ((1 + strat).resample("W-FRI").prod() - 1).iloc[1:300]
    bh = ((1 + bench).resample("W-FRI").prod() - 1).iloc[1:300]
    cols = pd.MultiIndex.from_tuples([(int(c.split("=")[1]), 1) for c in weekly.columns], names=["lookback", "lag"])
    frame = pd.DataFrame(weekly.to_numpy(), index=weekly.index, columns=cols)
    before = frame.copy()
    s = load_sweep(frame)
    pd.testing.assert_frame_equal(frame, before)  # the caller's DataFrame is left as it was
    assert frame.index.name == "Date" and isinstance(frame.columns, pd.MultiIndex)
    assert s.configurations[0] == "lookback=10, lag=1" and s.periods_per_year == 52
    assert list(s.parameters.columns) == ["lookback", "lag"]
    assert pd.api.types.is_integer_dtype(s.parameters["lookback"])
    assert s.dates.equals(pd.DatetimeIndex(weekly.index))
    with_bench = weekly.assign(buy_and_hold=bh)
    result = audit(with_bench, benchmark="buy_and_hold", periods_per_year=52, settings=QUICK)
    np.testing.assert_allclose(result.sweep.returns, weekly.to_numpy() - bh.to_numpy()[:, None], atol=1e-15)
    assert result.document["input"]["periods_per_year"] == 52


def test_long_dataframe_and_array_with_dates():
    strat, _ = moving_average_sweep("sp500")
    weekly = ((1 + strat).resample("W-FRI").prod() - 1).iloc[1:120]
    long = weekly.rename_axis("week").reset_index().melt(id_vars="week", var_name="config", value_name="excess_return")
    a = load_sweep(long)
    assert a.layout == "long" and a.periods_per_year == 52
    assert list(a.parameters.columns) == ["lookback"]  # parsed from the id column's names
    np.testing.assert_array_equal(a.returns, weekly[list(a.configurations)].to_numpy())
    b = load_sweep(weekly.to_numpy(), dates=weekly.index.strftime("%d/%m/%Y"), configurations=list(weekly.columns))
    assert b.windows == a.windows and list(b.parameters.columns) == ["lookback"]
    assert inspect(weekly.to_numpy(), dates=weekly.index).periods_per_year == 52


def test_in_memory_errors_name_the_column_and_the_index_label():
    strat, _ = moving_average_sweep("sp500")
    weekly = ((1 + strat).resample("W-FRI").prod() - 1).iloc[1:60]
    bad = weekly.copy()
    bad.iloc[4, 2] = np.nan
    with pytest.raises(InputError, match=r"<DataFrame>: configurations cover different windows"):
        load_sweep(bad)
    texts = weekly.astype(object)
    texts.iloc[6, 1] = "n/a?"
    label = weekly.index[6].date().isoformat()
    with pytest.raises(InputError, match=rf"<DataFrame>, column 'lookback=20', row 7 \(index {label}\): not a number"):
        load_sweep(texts)
    with pytest.raises(InputError, match=r"unknown input option 'periods'"):
        audit(weekly, periods=52)


# ---------------------------------------------------------------------------------------------
# inspect


def test_inspect_prints_the_reading_and_writes_its_json(tmp_path, weekly_sp500):
    # arch.data.sp500 weekly raw returns with a buy-and-hold column, dates day-first.
    weekly, bh = weekly_sp500
    frame = weekly.assign(buy_and_hold=bh).iloc[:200]
    frame.index = frame.index.strftime("%d/%m/%Y")
    frame.index.name = "date"
    frame.to_csv(tmp_path / "raw.csv")
    result = run("inspect", tmp_path / "raw.csv", "--json", tmp_path / "i.json")
    assert result.exit_code == 0, result.output
    for needle in ("layout", "wide", "day-first", f"first {frame.index[0]} -> {weekly.index[0].date()}",
                   "52 (from the median spacing", "named like a benchmark", "Statistical evidence"):
        assert needle in " ".join(result.stdout.split()), needle
    doc = json.loads((tmp_path / "i.json").read_text())
    assert doc["schema"] == "sweepaudit.inspect/1" and doc["configurations"]["count"] == 7
    assert doc["reading"]["benchmark"] is None and doc["warnings"]
    assert not list(tmp_path.glob("*.jsonl"))  # nothing audited, nothing recorded
    result = run("inspect", tmp_path / "raw.csv", "--benchmark", "buy_and_hold", "--json", tmp_path / "j.json")
    assert json.loads((tmp_path / "j.json").read_text())["reading"]["benchmark"] == "column 'buy_and_hold'"
    (tmp_path / "bad.csv").write_text("date,a\n2020-01-03,0.1\n2020-13-10,0.2\n2020-01-17,0.3\n")
    assert_one_line_error(run("inspect", tmp_path / "bad.csv", "--json", tmp_path / "k.json"),
                          "bad.csv", "column 'date'", "row 2", outputs=[tmp_path / "k.json"])
