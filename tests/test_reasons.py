"""Tests of the verdict's sentences (sweepaudit.verdict): one reason for every outcome of every check,
each CSCV diagnosis, and the verdict's one sentence.

Internal consistency only: each case is a real audit's evidence with the one result that decides
the case set by hand, and each reason is checked for its outcome's words, the figures it quotes
(formatted by sweepaudit.format, the one number formatter) and its hygiene: a full sentence, no
option values or snake_case words (``no_edge``, ``li_ji``), no sentence or clause said twice, no
``-0``, no scientific notation, no "configuration(s)".
The baseline gate's reasons are tested in tests/test_baseline.py.
"""

from __future__ import annotations

import re
from dataclasses import replace

import numpy as np
import pytest

from sweepaudit import AuditSettings, audit, sweep_from_array
from sweepaudit.format import interval, percent, probability, pvalue, statistic, whole
from sweepaudit.policy import Policy
from sweepaudit.results import Check, FamilyStress, Interval, OverfittingDiagnosis, PeakShape, TailTest, Verdict
from sweepaudit.verdict import CHECKS, MEASURES, summary

from .helpers import synthetic_returns


@pytest.fixture(scope="module")
def base():
    sweep = sweep_from_array(synthetic_returns(windows=60, edges=(0.012, 0.0, 0.0, 0.001)), periods_per_year=52)
    return audit(sweep, settings=AuditSettings(resamples=200, seed=1)).evidence


def _reason(check_id, evidence, policy=None, *, passed):
    c = CHECKS[check_id](evidence, policy or Policy(), None)
    assert c.passed is passed, c.reason
    _hygiene(c.reason)
    return c.reason


def _hygiene(text):
    assert text[0].isupper() or text[0] == "'", text
    assert text.endswith("."), text
    assert not re.search(r"\b[a-z]+_[a-z_]+\b", text.replace("allow_implausible_returns", "")), text
    assert "(s)" not in text and "  " not in text, text
    assert not re.search(r"(?<![\w.])-0(\.0+)?%?(?![\d.])", text), text
    assert not re.search(r"\de[-+]\d", text), text
    clauses = [c.strip().lower() for c in re.split(r"[.;:]\s|, and ", text) if len(c.strip()) > 12]
    assert len(clauses) == len(set(clauses)), text


def test_every_check_has_its_measure_in_words():
    assert set(MEASURES) == set(CHECKS)
    for m in MEASURES.values():
        assert m.kind in ("count", "windows", "return", "probability", "pvalue", "test_pvalue", "statistic", "number")
        assert m.passes_when in ("at least", "at most", "above", "below") and m.passed != m.failed


def test_enough_windows(base):
    assert "has 60 windows, at least the policy's minimum of 36" in _reason("enough_windows", base, passed=True)
    short = _reason("enough_windows", base, Policy(min_windows=100), passed=False)
    assert "only 60 windows, fewer than the policy's minimum of 100" in short and "too short" in short


def test_plausible_returns(base):
    p = base.sweep.plausibility
    ok = _reason("plausible_returns", base, passed=True)
    assert f"the largest is {percent(p.largest_window_return)}" in ok and "annualized volatility" in ok
    unknown = replace(base, sweep=sweep_from_array(base.sweep.returns))
    assert "volatility not judged" in _reason("plausible_returns", unknown, passed=True)
    big = _reason("plausible_returns", base, Policy(max_window_return=0.01), passed=False)
    assert f"moves {percent(p.largest_window_return)}" in big and "--units" in big
    loud = _reason("plausible_returns", base, Policy(max_annualized_volatility=0.01), passed=False)
    assert f"annualized volatility of {percent(p.largest_volatility_annualized)}" in loud
    allowed = _reason("plausible_returns", base, Policy(max_window_return=0.01, allow_implausible_returns=True),
                      passed=True)
    assert allowed.startswith("Implausible returns allowed by the policy")


def _mean(evidence, low):
    k = evidence.selected_index
    mean = list(evidence.intervals.mean)
    mean[k] = Interval(0.004, low, 0.009)
    return replace(evidence, intervals=replace(evidence.intervals, mean=tuple(mean)))


def test_mean_interval(base):
    above = _reason("mean_interval", _mean(base, 0.0005), passed=True)
    assert "lies above zero: " + interval(0.004, 0.0005, 0.009, as_percent=True) + " a window" in above
    below = _reason("mean_interval", _mean(base, -0.0), passed=False)
    assert "reaches zero or below: 0.400% [0%, 0.900%] a window" in below and "earns nothing" in below


def _deflated(evidence, probability_, level):
    s = evidence.sharpe
    return replace(evidence, sharpe=replace(s, deflated=replace(s.deflated, probability=probability_),
                                            deflated_level=level))


@pytest.mark.parametrize("value, passed", [(0.9, True), (0.5, False)])
def test_deflated_sharpe_calibrated(base, value, passed):
    text = _reason("deflated_sharpe", _deflated(base, value, 0.8), passed=passed)
    assert f"The deflated Sharpe probability is {probability(value)}" in text
    assert "the calibrated level 0.800, which makes this check a 5% test for 4 trials" in text
    assert ("clears" in text) is passed and ("not clearly more" in text) is not passed
    assert statistic(base.sharpe.deflated.benchmark_sharpe) in text


@pytest.mark.parametrize("value, passed", [(0.96, True), (0.9, False)])
def test_deflated_sharpe_fixed(base, value, passed):
    text = _reason("deflated_sharpe", _deflated(base, value, 0.8), Policy(deflation_threshold="fixed"), passed=passed)
    assert "the policy's fixed level 0.950" in text and "calibrated" not in text


@pytest.mark.parametrize("need, passed", [(None, False), (40.0, True), (80.25, False)])
def test_track_record(base, need, passed):
    evidence = replace(base, sharpe=replace(base.sharpe, min_track_record_observations=need))
    text = _reason("track_record", evidence, passed=passed)
    if need is None:
        assert "not above zero, so no record, however long" in text
    else:
        assert f"minimum track record of {need:g} windows" in text and "60 windows" in text
        assert ("wait for more" in text) is not passed


def _diagnosis(case, loss, pbo, strength):
    return OverfittingDiagnosis(case, case in ("robust", "shared_edge"), pbo, loss, strength, 2.6, 0.25, 0.2, 0.15,
                                "the rule's own sentence")


@pytest.mark.parametrize("case, loss, pbo, strength, words", [
    ("robust", 0.05, 0.1, 0.9, "picking the in-sample winner holds up out of sample"),
    ("shared_edge", 0.1, 0.45, 0.4, "several configurations share the edge"),
    ("overfit", 0.45, 0.6, 0.3, "product of the selection"),
    ("no_edge", 0.55, 0.52, 0.05, "nothing in the sweep holds up out of sample"),
])
def test_overfitting_every_diagnosis(base, case, loss, pbo, strength, words):
    evidence = replace(base, overfitting_diagnosis=_diagnosis(case, loss, pbo, strength))
    text = _reason("overfitting", evidence, passed=case in ("robust", "shared_edge"))
    assert words in text and "the rule's own sentence" not in text
    assert not re.search(rf"\b{case.replace('_', ' ')}\b", text)  # the diagnosis in words, not by its name
    assert f"probability {'only ' if case == 'shared_edge' else ''}{probability(loss)}" in text
    assert f"the probability of overfitting is {probability(pbo)}" in text
    assert ("noise configurations" in text) is (case in ("overfit", "no_edge"))
    if case in ("overfit", "no_edge"):
        assert f"{percent(strength)} of splits" in text


def _snooping(evidence, *, p=None, kept=True, gating="spa"):
    sn = evidence.snooping
    spa = replace(sn.spa_long_run, pvalue=sn.spa_long_run.pvalue if p is None else p)
    k = evidence.selected_index
    stepm = replace(sn.stepm_long_run, significant=(k,) if kept else ())
    return replace(evidence, snooping=replace(sn, spa_long_run=spa, stepm_long_run=stepm, gating=gating))


@pytest.mark.parametrize("p, kept, passed", [(0.01, True, True), (0.2, True, False), (0.01, False, False)])
def test_data_snooping(base, p, kept, passed):
    text = _reason("data_snooping", _snooping(base, p=p, kept=kept), passed=passed)
    assert f"p = {pvalue(p)}" in text and "the policy's 0.05" in text
    assert (f"keeps {base.selected!r} among the 1 configuration that beat" in text) is kept
    assert ("0 configurations survive" in text) is (not kept)


def test_data_snooping_at_the_floor_and_on_the_reality_check(base):
    floor = 1 / (base.resamples.count + 1)
    text = _reason("data_snooping", _snooping(base, p=floor), passed=True)
    assert "gives p < 0.01," in text  # 200 resamples: the floor 1/201 rounds up to 0.01
    rc = _reason("data_snooping", _snooping(base, gating="reality_check"), passed=base.snooping.reality_check.pvalue <= 0.05)
    assert rc.startswith("White's reality check on each configuration's t-ratio")


def _tails(evidence, windows, escaped, passed):
    t = evidence.sweep.n_windows
    stress = FamilyStress(np.arange(windows), np.full(windows, -5.0), np.zeros(windows), np.zeros(windows), escaped,
                          np.zeros(t), 0.004, 0.003 if escaped else 0.004, 4.0, 0.2, True)
    return replace(evidence, tails=TailTest(stress, None if windows == 0 else 3.1, 2.5, passed))


@pytest.mark.parametrize("windows, escaped, passed, words", [
    (0, 0, True, "No window is a stress window"),
    (1, 0, True, "in its only stress window"),
    (3, 0, True, "in each of its 3 stress windows"),
    (3, 1, True, "still clears the selection-adjusted bar (3.10 against 2.50)"),
    (1, 1, False, "no longer clears the selection-adjusted bar (3.10 against 2.50)"),
])
def test_family_tails(base, windows, escaped, passed, words):
    text = _reason("family_tails", _tails(base, windows, escaped, passed), passed=passed)
    assert words in text and "at least 20% of the configurations lose more than 4 robust" in text
    if escaped:
        assert f"escaped {whole(escaped)} of the" in text and "goes from 0.400% to 0.300% a window" in text


@pytest.mark.parametrize("neighbours, isolated", [(4, False), (1, True), (3, True)])
def test_parameter_surface(base, neighbours, isolated):
    peak = PeakShape(0.3, 0.02, neighbours, 0.1, 2.8, isolated, False, 0.1)
    text = _reason("parameter_surface", replace(base, surface=peak), passed=not isolated)
    verb = "averages" if neighbours == 1 else "average"
    assert f"grid neighbour{'s' if neighbours != 1 else ''} {verb} a Sharpe ratio of 0.0200 a window" in text
    assert ("isolated peak among weak neighbours" in text) is isolated


def _verdict(*outcomes):
    checks = tuple(Check(cid, ok, 1.0, 1.0, "r", required=req) for cid, ok, req in outcomes)
    decision = "go" if all(c.passed for c in checks if c.required) else "no-go"
    return Verdict(decision, (), checks)


def test_the_verdict_in_one_sentence():
    go = summary(_verdict(("enough_windows", True, True), ("deflated_sharpe", True, True),
                          ("overfitting", True, True), ("data_snooping", True, True), ("mean_interval", True, True)))
    assert go == ("Go, with all 5 required checks passed: the Sharpe ratio beats what the search alone would produce, "
                  "the edge beats the luck of picking the best configuration and the in-sample winner holds up "
                  "out of sample.")
    one = summary(_verdict(("enough_windows", False, True), ("parameter_surface", False, False)))
    assert one == "No-go, with 1 of 1 required check failed: the record is too short to judge."
    two = summary(_verdict(("mean_interval", False, True), ("track_record", False, True), ("overfitting", True, True)))
    assert two == ("No-go, with 2 of 3 required checks failed: the mean excess return's interval reaches zero and the "
                   "record is shorter than its minimum track record.")
    assert summary(_verdict(("parameter_surface", True, False))).startswith("No-go: no required check ran")
    for text in (go, one, two):
        _hygiene(text)
