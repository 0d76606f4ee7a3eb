"""Tests of sweepaudit.methods.haircut.

Verified against an outside reference:
- haircut_sharpe Bonferroni: Harvey and Liu (2015) formulas written out with scipy, and the derived
  check (our computation, METHODS.md): annual SR 1.0, 120 months, 100 tests -> 0.448;
- haircut_sharpe Holm and BHY: statsmodels.stats.multitest.multipletests and slow literal loops of
  the published procedures (Holm 1979; Benjamini and Yekutieli 2001, Theorem 1.3);
- the Benjamini and Hochberg (1995) worked example: BH rejects 4 of 15 at 0.05 (through
  multipletests 'fdr_bh', the routine family the haircut uses), and BY rejects 3 (our hand
  computation with c(15) = 3.3182).

- the closed form of the adjusted p-values (unseen tests padded with p = 1, computed without
  allocating them) against multipletests on the explicitly padded vector, and the harmonic number
  c(M) by digamma (scipy) against the direct sum.

Internal consistency only: padding of unseen tests, the cap when p-values underflow, signs, the
memory a huge declared test count takes (tracemalloc).
"""

from __future__ import annotations

import math
import tracemalloc

import numpy as np
import pytest
from scipy import special, stats
from statsmodels.stats.multitest import multipletests

from sweepaudit.errors import InputError
from sweepaudit.methods.haircut import _harmonic, adjusted_pvalues, haircut_sharpe

# Benjamini and Hochberg (1995), section 4 worked example: 15 p-values.
BH_1995 = np.array(
    [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528, 0.759, 1.0]
)


def sharpes_from_pvalues(pvalues, observations):
    """Per-window Sharpe ratios whose two-sided p-values are ``pvalues`` (t = SR sqrt(T))."""
    return stats.norm.isf(np.asarray(pvalues) / 2) / math.sqrt(observations)


def literal_holm(pvalues):
    """Holm (1979) step-down adjusted p-values, one loop per test."""
    m = len(pvalues)
    order = sorted(range(m), key=lambda i: pvalues[i])
    adjusted = [0.0] * m
    running = 0.0
    for rank, i in enumerate(order):
        running = max(running, min(1.0, (m - rank) * pvalues[i]))
        adjusted[i] = running
    return adjusted


def literal_by(pvalues):
    """Benjamini and Yekutieli (2001) step-up adjusted p-values with c(m) = sum 1/j, one loop per test."""
    m = len(pvalues)
    c = sum(1.0 / j for j in range(1, m + 1))
    order = sorted(range(m), key=lambda i: pvalues[i])
    adjusted = [0.0] * m
    running = 1.0
    for rank in range(m - 1, -1, -1):
        i = order[rank]
        running = min(running, m * c * pvalues[i] / (rank + 1))
        adjusted[i] = min(running, 1.0)
    return adjusted


def test_bonferroni_derived_check():
    """Harvey and Liu (2015) with Bonferroni; derived check (METHODS.md): annual SR 1.0 from 120
    monthly returns, 100 tests: t = 3.1623, p = 0.001565, p_adj = 0.1565, t_adj = 1.4168,
    haircut SR = 1.4168 * sqrt(12/120) = 0.448."""
    result = haircut_sharpe(1 / math.sqrt(12), observations=120, tests=100, periods_per_year=12)
    assert round(result.bonferroni.sharpe_annualized, 3) == 0.448
    assert result.t_statistic == pytest.approx(math.sqrt(10), rel=1e-12)
    assert result.sharpe_annualized == pytest.approx(1.0)
    assert result.bonferroni.haircut == pytest.approx(1 - 0.448, abs=5e-4)


def test_bonferroni_formula_by_hand():
    """p = 2 (1 - Phi(t)), p_adj = min(M p, 1), t_adj = Phi^-1(1 - p_adj / 2), SR = t_adj / sqrt(T)."""
    sr, n, tests = 0.15, 250, 20
    t = sr * math.sqrt(n)
    p = 2 * (1 - stats.norm.cdf(t))
    p_adj = min(tests * p, 1.0)
    t_adj = stats.norm.ppf(1 - p_adj / 2)
    result = haircut_sharpe(sr, observations=n, tests=tests)
    assert result.pvalue == pytest.approx(p, rel=1e-9)
    assert result.bonferroni.pvalue == pytest.approx(p_adj, rel=1e-9)
    assert result.bonferroni.sharpe == pytest.approx(t_adj / math.sqrt(n), rel=1e-9)
    assert result.bonferroni.sharpe_annualized is None and result.sharpe_annualized is None


def test_holm_and_bhy_against_statsmodels_and_literal_loops():
    """Every configuration of a sweep, against multipletests and the literal published procedures."""
    rng = np.random.default_rng(15)
    sharpes = rng.normal(0.05, 0.08, size=25)
    n = 180
    pvalues = 2 * stats.norm.sf(np.abs(sharpes) * math.sqrt(n))
    holm_reference = multipletests(pvalues, method="holm")[1]
    by_reference = multipletests(pvalues, method="fdr_by")[1]
    holm_literal = literal_holm(list(pvalues))
    by_literal = literal_by(list(pvalues))
    for index in range(sharpes.size):
        result = haircut_sharpe(sharpes, selected=index, observations=n)
        assert result.holm.pvalue == pytest.approx(holm_reference[index], rel=1e-12)
        assert result.bhy.pvalue == pytest.approx(by_reference[index], rel=1e-12)
        assert result.holm.pvalue == pytest.approx(holm_literal[index], rel=1e-12)
        assert result.bhy.pvalue == pytest.approx(by_literal[index], rel=1e-12)
        assert result.bonferroni.pvalue == pytest.approx(min(1.0, 25 * pvalues[index]), rel=1e-12)


def test_benjamini_hochberg_1995_example():
    """Benjamini and Hochberg (1995): BH rejects 4 of the 15 hypotheses at 0.05."""
    reject, _, _, _ = multipletests(BH_1995, alpha=0.05, method="fdr_bh")
    assert reject.sum() == 4
    assert list(np.flatnonzero(reject)) == [0, 1, 2, 3]


def test_by_on_the_1995_example_through_the_haircut():
    """BY on the same p-values (our hand computation): c(15) = 3.3182; p_(3) = 0.0019 <= 0.05 * 3 /
    (15 c) = 0.00301 but p_(4) = 0.0095 > 0.00402 and no later one passes: 3 rejections. Through the
    haircut: adjusted BHY p-values below 0.05 for exactly the first three."""
    n = 240
    sharpes = sharpes_from_pvalues(BH_1995[:-1], n)  # p = 1.0 maps to SR = 0
    sharpes = np.append(sharpes, 0.0)
    adjusted = [haircut_sharpe(sharpes, selected=i, observations=n).bhy.pvalue for i in range(15)]
    assert [a <= 0.05 for a in adjusted] == [True] * 3 + [False] * 12
    np.testing.assert_allclose(adjusted, literal_by(list(BH_1995)), rtol=1e-6)


def test_unseen_tests_are_padded_as_insignificant():
    """tests > configurations: the unseen tests get p = 1. Selected with the smallest p: Holm equals
    Bonferroni, BHY equals min(M c(M) p, 1) with M the declared tests (rank 1)."""
    n, tests = 120, 50
    sharpes = np.array([0.35, 0.1, -0.05])
    result = haircut_sharpe(sharpes, selected=0, observations=n, tests=tests)
    p = 2 * stats.norm.sf(0.35 * math.sqrt(n))
    c = sum(1 / j for j in range(1, tests + 1))
    assert result.tests == 50 and result.configurations == 3
    assert result.holm.pvalue == pytest.approx(result.bonferroni.pvalue, rel=1e-12)
    assert result.bonferroni.pvalue == pytest.approx(min(tests * p, 1.0), rel=1e-9)
    assert result.bhy.pvalue == pytest.approx(min(tests * c * p, 1.0), rel=1e-9)
    np.testing.assert_allclose(result.configuration_pvalues, 2 * stats.norm.sf(np.abs(sharpes) * math.sqrt(n)))


def test_haircut_never_raises_the_sharpe_ratio():
    """An adjustment never makes a result more significant: 0 <= haircut <= 1, |t_adj| <= |t|."""
    rng = np.random.default_rng(16)
    sharpes = rng.normal(0.1, 0.1, size=40)
    for index in range(40):
        result = haircut_sharpe(sharpes, selected=index, observations=100, tests=60, periods_per_year=12)
        for adjustment in (result.bonferroni, result.holm, result.bhy):
            assert 0.0 <= adjustment.pvalue <= 1.0
            assert adjustment.t_statistic <= abs(result.t_statistic) + 1e-12
            assert 0.0 <= adjustment.haircut <= 1.0
            assert adjustment.sharpe_annualized == pytest.approx(adjustment.sharpe * math.sqrt(12))
            assert math.copysign(1.0, adjustment.sharpe) == math.copysign(1.0, result.sharpe) or adjustment.sharpe == 0
        assert result.adjustment("holm") is result.holm


def test_underflowing_pvalues_keep_the_observed_sharpe():
    """t = 2 * sqrt(1000) = 63: p underflows to 0; t_adj is capped at t, so nothing is cut."""
    result = haircut_sharpe(2.0, observations=1000, tests=10)
    assert result.pvalue == 0.0
    assert result.bonferroni.sharpe == pytest.approx(2.0)
    assert result.bonferroni.haircut == pytest.approx(0.0)


def test_zero_sharpe_has_no_haircut_fraction():
    result = haircut_sharpe(0.0, observations=50, tests=3)
    assert result.pvalue == 1.0 and result.bonferroni.sharpe == 0.0 and result.bonferroni.haircut is None


def test_haircut_errors():
    with pytest.raises(InputError, match=r"tests must be at least the number of Sharpe ratios supplied \(3\); got 2"):
        haircut_sharpe([0.1, 0.2, 0.3], selected=0, observations=50, tests=2)
    with pytest.raises(InputError, match=r"selected must name the judged configuration .* when 3 Sharpe ratios are given"):
        haircut_sharpe([0.1, 0.2, 0.3], observations=50)
    with pytest.raises(InputError, match=r"selected must be a column index from 0 to 2; got 3"):
        haircut_sharpe([0.1, 0.2, 0.3], selected=3, observations=50)
    with pytest.raises(InputError, match=r"observations must be a whole number of at least 2; got 1"):
        haircut_sharpe(0.1, observations=1)
    with pytest.raises(InputError, match=r"tests must be a whole number; got 2.5"):
        haircut_sharpe(0.1, observations=10, tests=2.5)
    with pytest.raises(InputError, match=r"periods_per_year must be positive and finite; got -12"):
        haircut_sharpe(0.1, observations=10, periods_per_year=-12)
    with pytest.raises(InputError, match=r"sharpes must be finite"):
        haircut_sharpe([0.1, float("nan")], selected=0, observations=10)
    with pytest.raises(InputError, match=r"method must be one of bonferroni, holm, bhy; got 'sidak'"):
        haircut_sharpe(0.1, observations=10).adjustment("sidak")


def test_closed_form_equals_statsmodels_on_the_padded_p_values():
    """adjusted_pvalues against multipletests on the explicitly padded vector (statsmodels, the
    outside reference): ties, p-values of exactly 1 and padding of every size, to 1e-12."""
    rng = np.random.default_rng(21)
    for case in range(24):  # statsmodels' Holm runs gc.collect() on every call: few, varied cases
        n = int(rng.integers(1, 40))
        pvalues = rng.uniform(0, 1, n) ** rng.uniform(0.5, 4)
        if case % 3 == 0:
            pvalues[rng.integers(0, n)] = 1.0
        if case % 4 == 0 and n > 2:
            pvalues[1] = pvalues[0]
        tests = n + (int(rng.integers(0, 5_000)) if case % 2 else 0)
        padded = np.concatenate([pvalues, np.ones(tests - n)])
        reference = {m: multipletests(padded, method=sm)[1]
                     for m, sm in (("bonferroni", "bonferroni"), ("holm", "holm"), ("bhy", "fdr_by"))}
        for index in range(n):
            got = adjusted_pvalues(pvalues, index, tests)
            for method, value in got.items():
                assert value == pytest.approx(reference[method][index], rel=1e-12, abs=1e-300)


def test_the_harmonic_number_beyond_the_summed_range():
    """c(M) by digamma (scipy) against the direct sum, on both sides of the switch (2**20)."""
    for m in (2**20, 2**20 + 1, 3 * 2**20):
        direct = float(np.sum(1.0 / np.arange(1, m + 1)))
        assert _harmonic(m) == pytest.approx(direct, rel=1e-13)


def test_a_huge_declared_trial_count_needs_no_memory_per_trial():
    """600 million and 10**15 declared tests: instant, and as the formulas say (Bonferroni p * M;
    Holm equals Bonferroni for the smallest p; BHY p * M * c(M) with c(M) = digamma(M + 1) + gamma)."""
    sharpes = np.array([0.5, 0.1, -0.2])
    for tests in (600_000_000, 10**15):
        tracemalloc.start()
        result = haircut_sharpe(sharpes, selected=0, observations=400, tests=tests)
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        assert peak < 1_000_000  # bytes: nothing of size `tests` was allocated
        p = result.pvalue
        assert result.bonferroni.pvalue == pytest.approx(min(p * tests, 1.0), rel=1e-12)
        assert result.holm.pvalue == result.bonferroni.pvalue
        c = special.digamma(tests + 1.0) + np.euler_gamma
        assert result.bhy.pvalue == pytest.approx(min(p * tests * c, 1.0), rel=1e-12)
