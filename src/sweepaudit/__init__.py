"""sweepaudit: audit a trading strategy's parameter sweep before money is committed to it.

Public API (stable names):

- :func:`load_sweep`, :class:`LoadOptions`, :class:`Sweep`, :func:`sweep_from_array`
- :func:`inspect` (-> :class:`Inspection`: how an input is read, without an audit)
- :func:`audit` (-> :class:`AuditResult`: the :class:`Evidence`, the :class:`Verdict`, the JSON
  document, and the ways to show them: a short repr, a notebook view, the report, the figures),
  :class:`AuditSettings`, :class:`Policy`
- :func:`calibrate` (-> :class:`CalibrationResult`: the false-go rate and the power of the verdict
  on sweeps shaped like this one)
- :func:`draw_resamples`, :func:`resampled_moments` (the shared resampling engine)
- :func:`probabilistic_sharpe`, :func:`deflated_sharpe`, :func:`expected_max_sharpe`,
  :func:`minimum_track_record`, :func:`sharpe_inference`, :func:`effective_trials`,
  :func:`haircut_sharpe`
- :func:`cscv`, :func:`overfitting_diagnosis` (probability of backtest overfitting)
- :func:`reality_check`, :func:`superior_predictive_ability`, :func:`stepwise_superior`
"""

from ._version import __version__
from .api import AuditResult, CalibrationResult, audit, calibrate, inspect
from .errors import (
    DegenerateDataError,
    InputError,
    PolicyError,
    SweepAuditError,
    SweepAuditWarning,
)
from .methods.bootstrap_ci import bootstrap_intervals
from .methods.cscv import cscv
from .methods.deflation import deflated_sharpe, effective_trials, expected_max_sharpe
from .methods.haircut import haircut_sharpe
from .methods.inference import sharpe_inference
from .methods.overfitting import overfitting_diagnosis
from .methods.sharpe import minimum_track_record, probabilistic_sharpe
from .methods.snooping import reality_check, stepwise_superior, superior_predictive_ability
from .policy import DEFAULT_POLICY, Policy
from .read import LoadOptions, load_sweep, sweep_from_array
from .resample import Resamples, draw_resamples, resampled_moments
from .results import AuditSettings, Evidence, Inspection, Verdict
from .sweep import Sweep

# The result type's name before the verdict left the evidence; kept so existing imports work.
AuditResults = AuditResult

__all__ = [
    "__version__",
    "AuditResult",
    "AuditResults",
    "CalibrationResult",
    "calibrate",
    "Evidence",
    "Verdict",
    "AuditSettings",
    "audit",
    "inspect",
    "Inspection",
    "DegenerateDataError",
    "InputError",
    "PolicyError",
    "SweepAuditError",
    "SweepAuditWarning",
    "LoadOptions",
    "load_sweep",
    "bootstrap_intervals",
    "cscv",
    "overfitting_diagnosis",
    "reality_check",
    "stepwise_superior",
    "superior_predictive_ability",
    "haircut_sharpe",
    "deflated_sharpe",
    "expected_max_sharpe",
    "minimum_track_record",
    "probabilistic_sharpe",
    "effective_trials",
    "sharpe_inference",
    "DEFAULT_POLICY",
    "Policy",
    "Resamples",
    "draw_resamples",
    "resampled_moments",
    "Sweep",
    "sweep_from_array",
]
