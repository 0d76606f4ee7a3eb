"""The policy: every threshold the verdict uses, in one frozen dataclass.

Defaults come from the literature where it has one and are labelled "common practice" where they
are a rule of thumb. Each field's metadata holds its help text (used by ``sweepaudit policy``) and
its valid range (used by validation).
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields, replace
from typing import Any

from .errors import PolicyError

__all__ = ["Policy", "DEFAULT_POLICY", "policy_from_mapping"]


def _f(default, help: str, *, low=None, high=None, choices=None, low_open=False, high_open=False):
    return field(
        default=default,
        metadata={
            "help": help,
            "low": low,
            "high": high,
            "choices": choices,
            "low_open": low_open,
            "high_open": high_open,
        },
    )


@dataclass(frozen=True)
class Policy:
    """Thresholds of the go / no-go verdict.

    Attributes
    ----------
    significance : float
        Familywise level of the data-snooping tests and of StepM (5%, the conventional level).
    confidence : float
        Two-sided level of the bootstrap confidence intervals (95%, conventional).
    resamples : int
        Bootstrap resamples for a final audit (10,000; common practice for p-values near 1%).
    min_windows : int
        Minimum number of windows for any verdict (36: three years of monthly data, common practice
        for a manager's minimum track record).
    """

    significance: float = _f(
        0.05, "familywise level of the data-snooping tests (conventional 5%)", low=0.0, high=0.5, low_open=True
    )
    confidence: float = _f(
        0.95, "two-sided level of the bootstrap confidence intervals (conventional 95%)", low=0.5, high=1.0, high_open=True
    )
    resamples: int = _f(
        10_000, "bootstrap resamples for a final audit (common practice: 10,000)", low=100, high=10_000_000
    )
    min_windows: int = _f(
        36, "fewest windows that can support a verdict (common practice: three years of monthly data)", low=8, high=10**9
    )
    min_deflated_probability: float = _f(
        0.95,
        "lowest deflated Sharpe probability for a go (Bailey and Lopez de Prado 2014 use 0.95)",
        low=0.0, high=1.0, low_open=True, high_open=True,
    )
    deflation_variance: str = _f(
        "null",
        "trial Sharpe variance of the deflation: null (no-edge sampling variance, 1/(T-1)) or "
        "empirical (across the sweep; deflates a shared real edge away, see README)",
        choices=("null", "empirical"),
    )
    deflation_trials: str = _f(
        "declared",
        "trial count of the deflation: declared (configurations, --trials or the ledger) or effective",
        choices=("declared", "effective"),
    )
    track_record_confidence: float = _f(
        0.95,
        "confidence of the minimum track record length (Bailey and Lopez de Prado 2012 use 0.95)",
        low=0.5, high=1.0, high_open=True,
    )
    required: tuple[str, ...] = _f(
        ("enough_windows", "mean_interval", "deflated_sharpe", "track_record"),
        "checks that must pass for a go; the others are advisory",
    )

    def replace(self, **changes: Any) -> Policy:
        return policy_from_mapping({**_as_mapping(self), **changes})


def _as_mapping(policy: Policy) -> dict[str, Any]:
    return {f.name: getattr(policy, f.name) for f in fields(policy)}


def policy_from_mapping(values: dict[str, Any], *, source: str = "policy") -> Policy:
    """Build a validated Policy from a mapping (e.g. a parsed TOML table)."""
    known = {f.name: f for f in fields(Policy)}
    for key in values:
        if key not in known:
            raise PolicyError(f"{source}: unknown key {key!r}; known keys are {', '.join(known)}")
    clean: dict[str, Any] = {}
    for key, value in values.items():
        f = known[key]
        meta = f.metadata
        default = f.default
        if isinstance(default, bool):
            if not isinstance(value, bool):
                raise PolicyError(f"{source}: {key} must be true or false; got {value!r}")
        elif isinstance(default, int):
            if isinstance(value, bool) or not isinstance(value, int):
                raise PolicyError(f"{source}: {key} must be a whole number; got {value!r}")
        elif isinstance(default, float):
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise PolicyError(f"{source}: {key} must be a number; got {value!r}")
            value = float(value)
        elif isinstance(default, tuple):
            if not isinstance(value, (list, tuple)) or not all(isinstance(v, str) for v in value):
                raise PolicyError(f"{source}: {key} must be a list of check names; got {value!r}")
            value = tuple(value)
        elif isinstance(default, str):
            if not isinstance(value, str):
                raise PolicyError(f"{source}: {key} must be a string; got {value!r}")
        if meta.get("choices") and value not in meta["choices"]:
            raise PolicyError(f"{source}: {key} must be one of {', '.join(meta['choices'])}; got {value!r}")
        low, high = meta.get("low"), meta.get("high")
        if low is not None:
            bad = value <= low if meta.get("low_open") else value < low
            if bad:
                rel = ">" if meta.get("low_open") else ">="
                raise PolicyError(f"{source}: {key} must be {rel} {low}; got {value!r}")
        if high is not None:
            bad = value >= high if meta.get("high_open") else value > high
            if bad:
                rel = "<" if meta.get("high_open") else "<="
                raise PolicyError(f"{source}: {key} must be {rel} {high}; got {value!r}")
        clean[key] = value
    return replace(Policy(), **clean)


DEFAULT_POLICY = Policy()
