"""The policy: every threshold the verdict uses, in one frozen dataclass.

Defaults come from the literature where it has one and are labelled "common practice" where they
are a rule of thumb. Each field's metadata holds its help text (used by ``sweepaudit policy``) and
its valid range (used by validation).

Policy files (TOML, read with the standard library's ``tomllib``):

- ``--policy PATH``: a TOML file. When it has a ``[tool.sweepaudit]`` table (a ``pyproject.toml``)
  that table is the policy; otherwise its top-level keys are.
- otherwise :func:`discover_policy` looks for a ``pyproject.toml`` with a ``[tool.sweepaudit]``
  table in the current directory and then in each parent. The search stops at the first such
  table, at a directory that contains ``.git`` (checked, then the search ends: the repository's
  root) and at the filesystem root. No table found: the defaults.
"""

from __future__ import annotations

import json
import math
import textwrap
import tomllib
from dataclasses import dataclass, field, fields, replace
from pathlib import Path
from typing import Any

from . import validate
from .errors import InputError, PolicyError
from .readfile import explained, read_bytes

__all__ = [
    "Policy",
    "DEFAULT_POLICY",
    "LoadedPolicy",
    "policy_from_mapping",
    "load_policy_file",
    "discover_policy",
    "resolve_policy",
    "policy_to_toml",
    "CHECK_IDS",
]

#: Every check of the verdict, in the order the verdict runs and shows them. Written out here (the
#: verdict registers one function per id; a test keeps the two in step) so that validating a
#: policy never needs the verdict or the audit.
CHECK_IDS: tuple[str, ...] = (
    "enough_windows",
    "plausible_returns",
    "mean_interval",
    "deflated_sharpe",
    "track_record",
    "baseline_drift",
    "overfitting",
    "data_snooping",
    "family_tails",
    "walk_forward",
    "edge_decay",
    "parameter_surface",
)

#: Keys of earlier policies that were replaced: the message says what to write instead.
_REPLACED_KEYS = {
    "snooping_studentize": (
        "snooping_studentize was replaced by snooping_scale (\"long-run\", \"bootstrap\" or \"none\"; "
        "true meant \"bootstrap\", false \"none\"); the default is now \"long-run\" (README: data-snooping tests)"
    ),
}


def _f(
    default,
    help: str,
    *,
    low=None,
    high=None,
    choices=None,
    low_open=False,
    high_open=False,
    source: str | None = None,
    check_ids: bool = False,
    even: bool = False,
    label: bool = False,
):
    return field(
        default=default,
        metadata={
            "help": help,
            "low": low,
            "high": high,
            "choices": choices,
            "low_open": low_open,
            "high_open": high_open,
            # Where the default comes from (a paper, "conventional", "common practice", ...).
            "source": source,
            # A list of check ids: validated against CHECK_IDS.
            "check_ids": check_ids,
            # A whole number that must be even.
            "even": even,
            # A name (validate.label): no default value to take the type from.
            "label": label,
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
    max_window_return, max_annualized_volatility : float
        Bounds of the ``plausible_returns`` check: the largest absolute excess return in one window
        (1.0, i.e. 100%) and the largest annualized volatility of excess returns (1.0, i.e. 100% a year).
    allow_implausible_returns : bool
        Let returns beyond those bounds pass the check (reported all the same).
    required : tuple of str
        Check ids that must pass for a go; a check (one of :data:`CHECK_IDS`) not listed is advisory.
    disabled : tuple of str
        Check ids left out entirely.
    memory_budget : int
        Working memory of an audit in MiB (beyond the sweep): the ``B x N`` resampled moments are
        kept at once within it, or the audit streams over blocks of configurations.
    listed_configurations : int
        Configurations whose intervals the audit JSON lists one by one (beyond it: the selected one,
        the best and the worst, and a summary of all).
    walk_forward_warmup, walk_forward_lookback : int
        The walk-forward record's first window and each pick's training windows (0: a quarter of the
        windows; all earlier windows).
    recent_share : float
        The share of the windows, at the end, that the ``edge_decay`` check compares with the rest.
    baseline_interval_margin, baseline_probability_margin, baseline_pvalue_margin : float
        How far a gated figure may worsen against a ``--baseline`` audit before the
        ``baseline_drift`` check fails (see :mod:`sweepaudit.baseline`).
    """

    significance: float = _f(
        0.05, "familywise level of the data-snooping tests, and the level of the walk_forward and edge_decay "
        "tests (conventional 5%)", low=0.0, high=0.5, low_open=True
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
    max_window_return: float = _f(
        1.0,
        "plausible_returns: the largest absolute excess return of any configuration in one window, as a "
        "fraction (1.0 = 100%)",
        low=0.0, high=1e6, low_open=True,
        source="sweepaudit's choice: a move of 100% or more in one window is a price level, a wrong unit "
        "or a strategy that lost everything, not an edge to judge",
    )
    max_annualized_volatility: float = _f(
        1.0,
        "plausible_returns: the largest annualized volatility of any configuration's excess returns "
        "(1.0 = 100% a year; judged when the periods per year are known)",
        low=0.0, high=1e6, low_open=True,
        source="sweepaudit's choice: broad equity indices run near 15-20% a year (from memory) and few "
        "strategies' excess returns exceed 60%; returns in percent read as fractions land near 100 times "
        "their real figure",
    )
    allow_implausible_returns: bool = _f(
        False,
        "plausible_returns: let returns beyond max_window_return or max_annualized_volatility pass (a "
        "leveraged or very volatile book); the check still reports them",
        source="sweepaudit's choice: off, so a wrong unit or a level read as returns cannot say go",
    )
    min_deflated_probability: float = _f(
        0.95,
        "lowest deflated Sharpe probability for a go",
        low=0.0, high=1.0, low_open=True, high_open=True,
        source="Bailey and Lopez de Prado (2014), the deflated Sharpe ratio paper's 0.95; used when "
        "deflation_threshold is \"fixed\"",
    )
    deflation_threshold: str = _f(
        "calibrated",
        "the deflated Sharpe check's bar: calibrated (the probability that makes it a test of size "
        "significance for the trials counted: 0.95 for one trial, about 0.77 for 100) or fixed "
        "(min_deflated_probability)",
        choices=("calibrated", "fixed"),
        source="sweepaudit's choice on simulation evidence: 0.95 against the expected maximum acts as a "
        "0.1-0.2% test for 100 trials (docs/validation.md)",
    )
    deflation_variance: str = _f(
        "null",
        "trial Sharpe variance of the deflation: null (no-edge sampling variance, 1/(T-1)) or "
        "empirical (across the sweep; deflates a shared real edge away, see README)",
        choices=("null", "empirical"),
        source="sweepaudit's choice on simulation evidence (README, docs/sharpe_variance.md)",
    )
    deflation_trials: str = _f(
        "declared",
        "trial count of the deflation: declared (configurations, --trials or the ledger) or effective",
        choices=("declared", "effective"),
        source="sweepaudit's choice: the declared count is conservative whatever the correlation",
    )
    sharpe_variance: str = _f(
        "long-run",
        "standard error of the probabilistic and deflated Sharpe ratios and the minimum track record: "
        "long-run (serial dependence counted, the iid figures shown beside) or iid (the published formula)",
        choices=("long-run", "iid"),
        source="sweepaudit's choice: under AR(1) windows the iid variance understates the truth by "
        "(1 + phi) / (1 - phi) (Lo 2002)",
    )
    track_record_confidence: float = _f(
        0.95,
        "confidence of the minimum track record length",
        low=0.5, high=1.0, high_open=True,
        source="Bailey and Lopez de Prado (2012), 0.95",
    )
    partitions: int = _f(
        16,
        "CSCV: number of contiguous blocks S (even) the windows are split into",
        low=2, high=20, even=True,
        source="Bailey, Borwein, Lopez de Prado and Zhu (2017) suggest 16",
    )
    overfitting_statistic: str = _f(
        "sharpe",
        "CSCV: statistic that ranks configurations in each half (sharpe or mean)",
        choices=("sharpe", "mean"),
        source="Bailey, Borwein, Lopez de Prado and Zhu (2017) use the Sharpe ratio",
    )
    max_probability_of_loss: float = _f(
        0.2,
        "overfitting check: the in-sample winner may lose money out of sample in at most this share of splits",
        low=0.0, high=1.0,
        source="sweepaudit's choice on simulation evidence (docs/overfitting_rule.md)",
    )
    max_probability_of_overfitting: float = _f(
        0.25,
        "overfitting check: PBO at or below this is 'robust'; above it with few losses is 'shared edge'",
        low=0.0, high=1.0,
        source="sweepaudit's choice on simulation evidence (docs/overfitting_rule.md)",
    )
    min_strength_share: float = _f(
        0.15,
        "overfitting check: share of splits whose in-sample winner beats the best-of-N noise level, "
        "which separates 'overfit' from 'no edge' when the winner loses out of sample",
        low=0.0, high=1.0,
        source="sweepaudit's choice on simulation evidence (docs/overfitting_rule.md)",
    )
    snooping_test: str = _f(
        "spa",
        "data-snooping p-value that gates: spa (Hansen's consistent p-value) or reality_check (White's)",
        choices=("spa", "reality_check"),
        source="Hansen (2005): the consistent SPA p-value is more powerful than the reality check",
    )
    snooping_scale: str = _f(
        "long-run",
        "how SPA and StepM put configurations on one scale: long-run (each one's t-ratio against its "
        "long-run standard deviation, read against Student's t), bootstrap (divided by the bootstrap "
        "standard deviation) or none; all three are always reported",
        choices=("long-run", "bootstrap", "none"),
        source="sweepaudit's choice on simulation evidence: long-run holds its level under serial "
        "dependence and sees a quiet edge among loud noise, which unscaled means miss (docs/validation.md)",
    )
    stress_threshold: float = _f(
        4.0,
        "family_tails check: a loss beyond this many robust standard deviations is a large loss",
        low=1.0, high=50.0,
        source="sweepaudit's choice: 4 robust standard deviations has probability 3e-5 for normal windows",
    )
    stress_share: float = _f(
        0.2,
        "family_tails check: a window is a stress window when at least this share of the configurations "
        "take a large loss in it",
        low=0.0, high=1.0, low_open=True,
        source="sweepaudit's choice (README: the family's tails)",
    )
    memory_budget: int = _f(
        768,
        "working memory of an audit in MiB, beyond the sweep itself: above it the audit streams over "
        "blocks of configurations (the same figures; README: scale and performance)",
        low=16, high=10**8,
        source="sweepaudit's choice: 768 MiB keeps 10,000 resamples of 1,500 configurations in memory, and an "
        "audit of 100,000 configurations x 2,000 windows under 3 GB with its returns",
    )
    listed_configurations: int = _f(
        10_000,
        "the audit JSON lists every configuration's intervals up to this many configurations; beyond it "
        "the selected one, the best and worst by Sharpe ratio (this many in all) and a summary",
        low=10, high=10**9,
        source="sweepaudit's choice: about 5 MB of JSON",
    )
    walk_forward_warmup: int = _f(
        0,
        "walk_forward check: windows before the first pick of the walk-forward record (0: automatic, a "
        "quarter of the windows; otherwise at least 2)",
        low=0, high=10**9,
        source="sweepaudit's choice: a quarter of the windows leaves three quarters as the out-of-sample "
        "record and rests the first picks on a year of a four-year weekly sweep",
    )
    walk_forward_lookback: int = _f(
        0,
        "walk_forward check: each pick looks at the trailing this many windows (0: all earlier windows; "
        "otherwise at least 2), as when a parameter is re-tuned on a rolling window",
        low=0, high=10**9,
        source="sweepaudit's choice: all earlier windows, the steadiest pick; set it to the training window "
        "of your own re-tuning",
    )
    recent_share: float = _f(
        0.5,
        "edge_decay check: share of the windows, at the end, that form the recent period compared with "
        "the windows before it (each period keeps at least 8 windows)",
        low=0.0, high=1.0, low_open=True, high_open=True,
        source="sweepaudit's choice on simulation evidence: the even split is the most powerful against a "
        "change in the middle of the record (docs/validation.md)",
    )
    required: tuple[str, ...] = _f(
        ("enough_windows", "plausible_returns", "mean_interval", "deflated_sharpe", "track_record", "overfitting",
         "data_snooping", "family_tails", "baseline_drift"),
        "checks that must pass for a go; the others are advisory",
        check_ids=True,
    )
    disabled: tuple[str, ...] = _f(
        (),
        "checks left out of the verdict, the report and the JUnit file (neither required nor advisory)",
        check_ids=True,
    )
    baseline_interval_margin: float = _f(
        0.5,
        "baseline gate: the lower ends of the selected configuration's mean and Sharpe intervals may "
        "fall by at most this fraction of the baseline interval's width (high - low)",
        low=0.0,
        high=100.0,
        source="sweepaudit's choice, a judgement call (not from the literature)",
    )
    baseline_probability_margin: float = _f(
        0.05,
        "baseline gate: the deflated Sharpe probability may fall, and the probability of "
        "overfitting rise, by at most this much (absolute)",
        low=0.0,
        high=1.0,
        source="sweepaudit's choice, a judgement call: five percentage points",
    )
    baseline_pvalue_margin: float = _f(
        0.02,
        "baseline gate: the data-snooping p-values (SPA, reality check) may rise by at most this "
        "much (absolute)",
        low=0.0,
        high=1.0,
        source="sweepaudit's choice, a judgement call: small against the conventional 5% level",
    )
    strategy: str | None = _f(
        None,
        "trial ledger: the strategy's label; a trial is a configuration of a strategy, so two strategies "
        "sharing a ledger count their configurations apart even when their names coincide (--strategy "
        "overrides it)",
        label=True,
    )

    def replace(self, **changes: Any) -> Policy:
        return policy_from_mapping({**_as_mapping(self), **changes})


def _as_mapping(policy: Policy) -> dict[str, Any]:
    return {f.name: getattr(policy, f.name) for f in fields(policy)}


def policy_from_mapping(values: dict[str, Any], *, source: str = "policy") -> Policy:
    """Build a validated Policy from a mapping (e.g. a parsed TOML table).

    Every message names ``source`` (the file, or the command-line option) and the key.
    """
    known = {f.name: f for f in fields(Policy)}
    for key in values:
        if key in _REPLACED_KEYS:
            raise PolicyError(f"{source}: {_REPLACED_KEYS[key]}")
        if key not in known:
            raise PolicyError(f"{source}: unknown key {key!r}; known keys are {', '.join(known)}")
    clean = {key: _checked(known[key], value, source) for key, value in values.items()}
    policy = replace(Policy(), **clean)
    for key, zero in (("walk_forward_warmup", "automatic"), ("walk_forward_lookback", "all earlier windows")):
        if getattr(policy, key) == 1:
            raise PolicyError(f"{source}: {key} must be 0 ({zero}) or at least 2: a Sharpe ratio needs "
                              "two windows; got 1")
    both = sorted(set(policy.required) & set(policy.disabled))
    if both:
        raise PolicyError(
            f"{source}: {', '.join(both)} cannot be both required and disabled; "
            "remove it from one of the two lists"
        )
    return policy


def _checked(f: Any, value: Any, source: str) -> Any:
    """One policy value, of the field's type and within its range."""
    key, meta, default = f.name, f.metadata, f.default
    if meta.get("label"):
        try:
            return None if value is None else validate.label(value, key)
        except InputError as exc:
            raise PolicyError(f"{source}: {exc}") from None
    if isinstance(default, bool):
        if not isinstance(value, bool):
            raise PolicyError(f"{source}: {key} must be true or false; got {value!r}")
    elif isinstance(default, int):
        if isinstance(value, bool) or not isinstance(value, int):
            raise PolicyError(f"{source}: {key} must be a whole number; got {value!r}")
        if meta.get("even") and value % 2:
            raise PolicyError(f"{source}: {key} must be an even whole number; got {value!r}")
    elif isinstance(default, float):
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise PolicyError(f"{source}: {key} must be a number; got {value!r}")
        if not math.isfinite(value):
            raise PolicyError(f"{source}: {key} must be a finite number; got {value!r}")
        value = float(value)
    elif isinstance(default, tuple):
        if not isinstance(value, (list, tuple)) or not all(isinstance(v, str) for v in value):
            raise PolicyError(f"{source}: {key} must be a list of check names; got {value!r}")
        value = tuple(value)
        if meta.get("check_ids"):
            _validate_check_ids(value, key=key, source=source)
    elif isinstance(default, str):
        if not isinstance(value, str):
            raise PolicyError(f"{source}: {key} must be a string; got {value!r}")
    if meta.get("choices") and value not in meta["choices"]:
        raise PolicyError(f"{source}: {key} must be one of {', '.join(meta['choices'])}; got {value!r}")
    _in_range(key, value, meta, source)
    return value


def _in_range(key: str, value: Any, meta: Any, source: str) -> None:
    low, high = meta.get("low"), meta.get("high")
    if low is not None and (value <= low if meta.get("low_open") else value < low):
        rel = ">" if meta.get("low_open") else ">="
        raise PolicyError(f"{source}: {key} must be {rel} {low}; got {value!r}")
    if high is not None and (value >= high if meta.get("high_open") else value > high):
        rel = "<" if meta.get("high_open") else "<="
        raise PolicyError(f"{source}: {key} must be {rel} {high}; got {value!r}")


def _validate_check_ids(names: tuple[str, ...], *, key: str, source: str) -> None:
    for name in names:
        if name not in CHECK_IDS:
            raise PolicyError(
                f"{source}: {key} names an unknown check {name!r}; known checks are {', '.join(CHECK_IDS)}"
            )
    seen: set[str] = set()
    for name in names:
        if name in seen:
            raise PolicyError(f"{source}: {key} lists {name!r} twice")
        seen.add(name)


DEFAULT_POLICY = Policy()


# --- policy files ---------------------------------------------------------------------------------


@dataclass(frozen=True)
class LoadedPolicy:
    """A policy and where it came from.

    Attributes
    ----------
    policy : Policy
    source : str
        The path of the file it was read from, or ``"defaults"``.
    """

    policy: Policy
    source: str


#: The most bytes a policy file may hold (a policy is a few dozen lines).
POLICY_FILE_LIMIT = 1 << 20


def _read_toml(path: Path) -> dict[str, Any]:
    data = explained(lambda: read_bytes(path, limit=POLICY_FILE_LIMIT), PolicyError,
                     missing=f"policy file {path} does not exist", folder=f"policy file {path} is a folder, not a TOML file",
                     other=f"cannot read policy file {path}")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise PolicyError(
            f"{path} is not UTF-8 text (byte 0x{data[exc.start]:02x} at offset {exc.start}); TOML files are UTF-8"
        ) from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise PolicyError(f"{path} is not valid TOML: {exc}") from None
    except RecursionError:
        raise PolicyError(f"{path} is not a policy: its arrays or tables are nested too deeply") from None


def _tool_table(document: dict[str, Any], path: Path) -> dict[str, Any] | None:
    tool = document.get("tool")
    if tool is None:
        return None
    if not isinstance(tool, dict):
        raise PolicyError(f"{path}: 'tool' must be a table")
    table = tool.get("sweepaudit")
    if table is not None and not isinstance(table, dict):
        raise PolicyError(f"{path}: tool.sweepaudit must be a table")
    return table


def load_policy_file(path: str | Path) -> LoadedPolicy:
    """Read a policy from a TOML file given with ``--policy``.

    A file with a ``[tool.sweepaudit]`` table (a ``pyproject.toml``) is read from that table; any
    other file from its top-level keys.
    """
    path = Path(path)
    document = _read_toml(path)
    if "tool" in document:
        table = _tool_table(document, path)
        if table is None:
            raise PolicyError(f"{path} has a [tool] table but no [tool.sweepaudit] table")
        where = f"{path} [tool.sweepaudit]"
    else:
        table, where = document, str(path)
    return LoadedPolicy(policy_from_mapping(table, source=where), str(path))


def discover_policy(start: str | Path | None = None) -> LoadedPolicy:
    """Find the policy for a run started in ``start`` (default: the current directory).

    Looks for ``pyproject.toml`` with a ``[tool.sweepaudit]`` table in ``start`` and then in each
    parent. Stops at the first table found, after checking a directory that contains ``.git`` (the
    repository root: the search does not leave the repository), and at the filesystem root.
    Without a table the defaults apply (source ``"defaults"``).
    """
    folder = Path(start if start is not None else Path.cwd()).resolve()
    for directory in (folder, *folder.parents):
        candidate = directory / "pyproject.toml"
        if candidate.is_file():
            table = _tool_table(_read_toml(candidate), candidate)
            if table is not None:
                policy = policy_from_mapping(table, source=f"{candidate} [tool.sweepaudit]")
                return LoadedPolicy(policy, str(candidate))
        if (directory / ".git").exists():
            break
    return LoadedPolicy(DEFAULT_POLICY, "defaults")


def resolve_policy(path: str | Path | None = None, *, start: str | Path | None = None) -> LoadedPolicy:
    """The policy a run applies: ``path`` when given, otherwise :func:`discover_policy`."""
    if path is not None:
        return load_policy_file(path)
    return discover_policy(start)


def _toml_value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        text = repr(value)
        # TOML floats need a fractional part or an exponent.
        return text if any(c in text for c in ".eE") else text + ".0"
    if isinstance(value, str):
        return json.dumps(value)  # a JSON string is a valid TOML basic string
    if isinstance(value, (tuple, list)):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{json.dumps(str(k))} = {_toml_value(v)}" for k, v in value.items()) + " }"
    raise TypeError(f"cannot write {value!r} as TOML")


def _range_text(meta: dict[str, Any]) -> str | None:
    if meta.get("choices"):
        return "one of " + ", ".join(json.dumps(c) for c in meta["choices"])
    low, high = meta.get("low"), meta.get("high")
    text = "value"
    if low is not None:
        text = f"{low} {'<' if meta.get('low_open') else '<='} {text}"
    if high is not None:
        text = f"{text} {'<' if meta.get('high_open') else '<='} {high}"
    return None if text == "value" else text


def policy_to_toml(policy: Policy | None = None) -> str:
    """The policy as commented TOML, ready to paste under ``[tool.sweepaudit]`` in a pyproject.toml
    or to save as a file for ``--policy``. Parsing it back gives the same policy."""
    policy = policy or DEFAULT_POLICY
    checks = CHECK_IDS
    lines = [
        "# sweepaudit policy. Paste under [tool.sweepaudit] in pyproject.toml, or save as a file",
        "# and pass it with --policy. Keys you leave out keep these defaults.",
        *textwrap.wrap(
            f"Checks: {', '.join(checks)}. A check neither required nor disabled is advisory: it is "
            "reported but does not change the verdict.",
            width=98, initial_indent="# ", subsequent_indent="# ",
        ),
        "",
    ]
    for f in fields(policy):
        meta = f.metadata
        lines += textwrap.wrap(meta.get("help", f.name), width=98, initial_indent="# ", subsequent_indent="#   ")
        if meta.get("source"):
            lines += textwrap.wrap(f"source: {meta['source']}", width=98, initial_indent="# ", subsequent_indent="#   ")
        rng = _range_text(meta)
        if rng:
            lines.append(f"# allowed: {rng}")
        value = getattr(policy, f.name)
        if value is None:
            # TOML has no null: an unset key is left out (shown commented) and keeps its default.
            lines.append(f"# {f.name} =    (not set; give a value to set it)")
        else:
            lines.append(f"{f.name} = {_toml_value(value)}")
        lines.append("")
    return "\n".join(lines)
