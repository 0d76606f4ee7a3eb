"""Reading a CSCV result: does the in-sample winner's out-of-sample edge hold, and why (not)?

The probability of backtest overfitting (Bailey, Borwein, Lopez de Prado and Zhu 2017) measures
whether picking the in-sample winner beats picking a configuration at random out of sample. It sits
near 1/2 both when nothing has an edge and when many configurations share one, so it cannot decide
alone; :func:`overfitting_diagnosis` adds the probability of an out-of-sample loss and the in-sample
strength of the winners (docs/overfitting_rule.md).

References
----------
Bailey, D. H., Borwein, J. M., Lopez de Prado, M. and Zhu, Q. J. (2017). The probability of backtest
overfitting. *Journal of Computational Finance* 20(4), 39-69.
"""

from __future__ import annotations

import numpy as np
from scipy import special

from .. import validate
from ..errors import InputError
from ..format import percent, probability
from ..results import CscvResult, OverfittingCase, OverfittingDiagnosis

__all__ = ["overfitting_diagnosis"]


def overfitting_diagnosis(
    result: CscvResult,
    *,
    max_probability_of_overfitting: float = 0.25,
    max_probability_of_loss: float = 0.2,
    min_strength_share: float = 0.15,
) -> OverfittingDiagnosis:
    """Read a CSCV result: is the in-sample winner's out-of-sample edge real, and why (not)?

    Parameters
    ----------
    result : CscvResult
        Output of :func:`cscv`.
    max_probability_of_overfitting : float, default 0.25
        PBO at or below which the winner counts as ranking well out of sample ("robust");
        above it, a passing sweep is "shared_edge". Chosen from the simulation in
        ``benchmarks/overfitting_rule_study.py``.
    max_probability_of_loss : float, default 0.2
        Largest share of splits in which the winner may lose out of sample and still pass.
        Chosen from the same simulation (pure noise stays above it).
    min_strength_share : float, default 0.15
        Share of splits with an in-sample winner beyond the noise maximum above which a failing
        sweep is "overfit" rather than "no_edge".

    Returns
    -------
    OverfittingDiagnosis

    Notes
    -----
    The rule (docs/overfitting_rule.md; why PBO alone cannot decide: the module docstring):

    1. ``probability_of_loss <= max_probability_of_loss``: passed; ``robust`` when
       ``probability_of_overfitting <= max_probability_of_overfitting``, else ``shared_edge``.
    2. Otherwise failed; ``overfit`` when the share of splits whose in-sample winner has a
       t-statistic above ``Phi^-1(0.95 ** (1 / N))`` (95% quantile of the best of N independent
       noise configurations; correlated configurations reach less, so this errs towards
       ``no_edge``) is at least ``min_strength_share``, else ``no_edge``.
    """
    if not isinstance(result, CscvResult):
        raise InputError(f"result must be a CscvResult from cscv(); got {type(result).__name__}")
    for name, value in (("max_probability_of_overfitting", max_probability_of_overfitting),
                        ("max_probability_of_loss", max_probability_of_loss),
                        ("min_strength_share", min_strength_share)):
        validate.unit_interval(value, name)
    pbo = result.probability_of_overfitting
    loss = result.probability_of_loss
    strength_threshold = float(special.ndtri(0.95 ** (1.0 / result.configurations)))
    strength = float(np.mean(result.in_sample_t_statistic > strength_threshold))
    case, reason = _case(pbo, loss, strength, result.configurations,
                         max_probability_of_overfitting, max_probability_of_loss, min_strength_share)
    return OverfittingDiagnosis(
        case=case,
        passed=case in ("robust", "shared_edge"),
        probability_of_overfitting=pbo,
        probability_of_loss=loss,
        in_sample_strength_share=strength,
        strength_threshold=strength_threshold,
        max_probability_of_overfitting=float(max_probability_of_overfitting),
        max_probability_of_loss=float(max_probability_of_loss),
        min_strength_share=float(min_strength_share),
        reason=reason,
    )


def _case(pbo, loss, strength, configurations, max_pbo, max_loss, min_strength) -> tuple[OverfittingCase, str]:
    """The rule's case and the sentence quoting its figures and thresholds."""
    p, share = probability, percent
    if loss <= max_loss:
        if pbo <= max_pbo:
            return "robust", (f"the in-sample winner loses money out of sample with probability {p(loss)} (at most "
                              f"{p(max_loss)} allowed) and PBO is {p(pbo)} (at most {p(max_pbo)})")
        return "shared_edge", (f"the in-sample winner loses money out of sample with probability only {p(loss)} (at "
                               f"most {p(max_loss)} allowed) although PBO is {p(pbo)} (above {p(max_pbo)}): several "
                               "configurations appear to share the edge, so picking the winner adds little")
    if strength >= min_strength:
        return "overfit", (f"the in-sample winner stands out beyond the best of {configurations} "
                           f"noise configurations in {share(strength)} of splits (at least "
                           f"{share(min_strength)}) but loses money out of sample with probability {p(loss)} "
                           f"(more than {p(max_loss)}); PBO is {p(pbo)}")
    return "no_edge", (f"the in-sample winner loses money out of sample with probability {p(loss)} (more than "
                       f"{p(max_loss)}) and stands out beyond the best of {configurations} noise configurations in "
                       f"only {share(strength)} of splits (below {share(min_strength)}); PBO is {p(pbo)}")
