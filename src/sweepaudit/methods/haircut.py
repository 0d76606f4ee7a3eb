"""Haircut Sharpe ratio of Harvey and Liu (2015): the Sharpe ratio after a multiple-testing adjustment.

The selected configuration's t-statistic ``t = SR * sqrt(T)`` (per-window Sharpe ratio, T windows)
gives a two-sided p-value ``p = 2 (1 - Phi(|t|))``. Adjusting it for the number of tests (Bonferroni,
Holm, or Benjamini-Hochberg-Yekutieli) and mapping the adjusted p-value back,
``t_adj = Phi^-1(1 - p_adj / 2)``, gives the haircut Sharpe ratio ``t_adj / sqrt(T)`` per window.

The adjusted p-values are those of ``statsmodels.stats.multitest.multipletests`` (methods
'bonferroni', 'holm', 'fdr_by') on the N p-values padded with ``tests - N`` p-values of 1, computed
in closed form with the same floating-point operations: the padding never outranks a p-value below
1, so only the N supplied p-values, the count ``tests`` and the harmonic number ``c(tests)`` enter,
and memory stays O(N) however many trials are declared (``tests/methods/test_haircut.py`` checks
the equality against multipletests itself).

References
----------
Harvey, C. R. and Liu, Y. (2015). Backtesting. *Journal of Portfolio Management* 42(1), 13-28.

Harvey, C. R., Liu, Y. and Zhu, H. (2016). ... and the cross-section of expected returns. *Review
of Financial Studies* 29(1), 5-68.

Holm, S. (1979). A simple sequentially rejective multiple test procedure. *Scandinavian Journal of
Statistics* 6(2), 65-70.

Benjamini, Y. and Yekutieli, D. (2001). The control of the false discovery rate in multiple testing
under dependency. *Annals of Statistics* 29(4), 1165-1188.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special

from .. import validate
from ..errors import InputError
from ..results import HaircutAdjustment, HaircutSharpe
from .distributions import normal_isf, normal_sf

__all__ = ["haircut_sharpe", "adjusted_pvalues"]


_METHODS = ("bonferroni", "holm", "bhy")

# Up to this many tests the harmonic number c(M) is summed exactly as statsmodels sums it; beyond,
# c(M) = digamma(M + 1) + Euler's gamma (relative difference about 1e-16).
_SUMMED_HARMONIC = 1 << 20


def _validate(
    sharpes: object, selected: object, observations: object, tests: object, periods_per_year: object
) -> tuple[np.ndarray, int, int, int, float | None]:
    try:
        values = np.atleast_1d(np.asarray(sharpes, dtype=float))
    except (TypeError, ValueError):
        raise InputError(f"sharpes must be numeric per-window Sharpe ratios; got {sharpes!r}") from None
    if values.ndim != 1 or values.size < 1:
        raise InputError(f"sharpes must be a number or a non-empty 1-D array; got shape {values.shape}")
    if not np.all(np.isfinite(values)):
        raise InputError("sharpes must be finite; got non-finite values")
    if selected is None and values.size != 1:
        raise InputError(
            f"selected must name the judged configuration (0-based index) when {values.size} Sharpe ratios are given"
        )
    index = 0 if selected is None else validate.column_index(selected, "selected", values.size)
    n = validate.whole_number(observations, "observations", minimum=2)
    count = values.size
    if tests is not None:
        validate.whole_number(tests, "tests")
        count = int(validate.at_least(tests, "tests", values.size,
                                      what=f"the number of Sharpe ratios supplied ({values.size})"))
    return values, index, n, count, validate.periods_per_year(periods_per_year)


def _harmonic(m: int) -> float:
    """c(m) = sum_{j=1}^m 1/j, the Benjamini-Yekutieli (2001, Theorem 1.3) constant."""
    if m <= _SUMMED_HARMONIC:
        return float(np.sum(1.0 / np.arange(1, m + 1)))
    return float(special.digamma(m + 1.0) + np.euler_gamma)


def adjusted_pvalues(pvalues: np.ndarray, index: int, tests: int) -> dict[str, float]:
    """The Bonferroni, Holm and BY adjusted p-values of ``pvalues[index]`` among ``tests`` tests.

    Equal to ``multipletests(padded, method)[1][index]`` (statsmodels) with ``padded`` the p-values
    followed by ``tests - len(pvalues)`` ones, in closed form: sorted ascending, the padded ones
    come after every p-value below 1, Holm's running maximum of ``(M - j + 1) p_(j)`` and BY's
    running minimum from the top of ``p_(j) M c(M) / j`` (capped at 1) never need them.
    """
    n = pvalues.size
    order = np.argsort(pvalues, kind="stable")
    ranked = pvalues[order]
    rank = int(np.flatnonzero(order == index)[0])
    holm = np.maximum.accumulate(ranked[: rank + 1] * np.arange(tests, tests - rank - 1, -1))[rank]
    factor = np.arange(1, n + 1) / float(tests) / _harmonic(tests)
    by = np.minimum.accumulate((ranked[rank:] / factor[rank:])[::-1])[-1]
    raw = {"bonferroni": pvalues[index] * float(tests), "holm": holm, "bhy": by}
    return {method: min(float(value), 1.0) for method, value in raw.items()}


def _adjustment(method: str, adjusted: float, t_observed: float, observed: float, root: float,
                annual: float | None) -> HaircutAdjustment:
    """The selected configuration after one multiple-testing adjustment (its adjusted p-value)."""
    adjusted = min(max(adjusted, 0.0), 1.0)
    t_adjusted = min(float(normal_isf(adjusted / 2.0)), abs(t_observed))
    haircut_value = math.copysign(t_adjusted, observed) / root if observed != 0 else 0.0
    return HaircutAdjustment(
        method=method,  # type: ignore[arg-type]
        pvalue=adjusted,
        t_statistic=t_adjusted,
        sharpe=haircut_value,
        sharpe_annualized=None if annual is None else haircut_value * annual,
        haircut=None if observed == 0 else 1.0 - haircut_value / observed,
    )


def haircut_sharpe(
    sharpes: object,
    *,
    observations: int,
    selected: int | None = None,
    tests: int | None = None,
    periods_per_year: float | None = None,
) -> HaircutSharpe:
    """Haircut Sharpe ratio of the selected configuration under Bonferroni, Holm and BHY.

    Parameters
    ----------
    sharpes : float or array_like, shape (N,)
        Per-window Sharpe ratios: one number (the selected configuration alone) or every
        configuration of the sweep.
    observations : int
        Windows T behind each Sharpe ratio.
    selected : int, optional
        0-based index of the judged configuration in ``sharpes``; required when N > 1.
    tests : int, optional
        Tests to adjust for (declared trials); default N; fewer than N is an error.
    periods_per_year : float, optional
        For the annualized figures (``sqrt(q)`` scaling, as in Harvey and Liu's monthly
        ``t_adj * sqrt(12 / T)``).

    Returns
    -------
    HaircutSharpe

    Notes
    -----
    ``t = SR * sqrt(T)`` with per-window SR generalises Harvey and Liu's monthly
    ``SR_monthly * sqrt(T_months)``; it uses ``sqrt(T)``, not ``sqrt(T - 1)``, as they do.

    Bonferroni needs only the count: ``p_adj = min(tests * p, 1)``. Holm and BHY also depend on the
    other tests' p-values, taken from the supplied configurations' Sharpe ratios. When ``tests``
    exceeds the configurations supplied, each unseen test is given p-value 1 (assumed
    insignificant): it raises the test count in the adjustments but never outranks the selected
    configuration. Unseen tests more significant than the selected one would lower its Holm and
    BHY adjusted p-values, so this is the conservative choice: the Holm and BHY haircuts are then
    upper bounds (Holm equals Bonferroni when the selected configuration has the smallest
    p-value). Bonferroni is unaffected.
    """
    values, index, n, count, periods = _validate(sharpes, selected, observations, tests, periods_per_year)
    root = math.sqrt(n)
    t_values = values * root
    pvalues = np.minimum(2.0 * normal_sf(np.abs(t_values)), 1.0)
    observed = float(values[index])
    t_observed = float(t_values[index])
    annual = None if periods is None else math.sqrt(periods)

    pvalue = adjusted_pvalues(pvalues, index, count)
    adjusted = {m: _adjustment(m, pvalue[m], t_observed, observed, root, annual) for m in _METHODS}
    return HaircutSharpe(
        sharpe=observed, sharpe_annualized=None if annual is None else observed * annual, observations=n,
        periods_per_year=periods, tests=count, configurations=int(values.size), t_statistic=t_observed,
        pvalue=float(pvalues[index]), bonferroni=adjusted["bonferroni"], holm=adjusted["holm"], bhy=adjusted["bhy"],
        configuration_pvalues=pvalues,
    )
