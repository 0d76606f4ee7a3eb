"""Compare an audit with an earlier one (a baseline): what moved, which checks changed state, and
whether a gated figure worsened by more than the policy allows. Pure work on JSON dicts.

Both audits are compared through their JSON documents (schema ``sweepaudit.audit/1``), so a
baseline written by an older sweepaudit works as long as it keeps the keys.

Every numeric leaf under ``results`` present in both documents is compared, plus each check's
``value`` (key ``checks.<id>.value``). Lists of per-configuration blocks are keyed by the
configuration name (``results.bootstrap.configurations[<name>].mean.low``), other lists by position.

The gated figures (the only ones that can fail the ``baseline_drift`` check) are listed in
:data:`GATED_FIGURES`, each with the direction that is better and the policy field that sets its
margin. A gated key missing from either document does not gate.
"""

from __future__ import annotations

import json
import math
from dataclasses import replace
from pathlib import Path
from typing import Any

from ._version import AUDIT_SCHEMA
from .errors import InputError
from .readfile import explained, read_bytes
from .results import BaselineComparison, CheckChange, FigureMove, GatedFigure, GatedMove

__all__ = [
    "GATED_FIGURES",
    "read_baseline",
    "numeric_leaves",
    "compare_results",
    "compare_checks",
    "compare_with_baseline",
]

GATED_FIGURES: tuple[GatedFigure, ...] = (
    GatedFigure(
        "results.bootstrap.selected.mean.low",
        "the lower end of the selected configuration's mean excess return interval",
        True,
        "baseline_interval_margin",
        "interval_width",
    ),
    GatedFigure(
        "results.bootstrap.selected.sharpe.low",
        "the lower end of the selected configuration's Sharpe ratio interval",
        True,
        "baseline_interval_margin",
        "interval_width",
    ),
    GatedFigure(
        "results.sharpe.deflated.probability",
        "the deflated Sharpe probability",
        True,
        "baseline_probability_margin",
    ),
    GatedFigure(
        "results.overfitting.probability_of_overfitting",
        "the probability of backtest overfitting",
        False,
        "baseline_probability_margin",
    ),
    GatedFigure("results.snooping.spa.pvalue", "the SPA p-value", False, "baseline_pvalue_margin"),
    GatedFigure(
        "results.snooping.reality_check.pvalue", "the reality check p-value", False, "baseline_pvalue_margin"
    ),
)


#: The most bytes a baseline audit JSON may hold (an audit of 100,000 configurations is about 200 MB).
BASELINE_FILE_LIMIT = 1 << 30
#: The deepest nesting a baseline may have (an audit document is about 6 levels deep).
BASELINE_DEPTH_LIMIT = 64


def read_baseline(path: str | Path) -> dict[str, Any]:
    """Read and check an earlier audit JSON.

    Raises
    ------
    InputError
        Naming the file, when it cannot be read (missing, a folder, a device, unreadable, larger
        than :data:`BASELINE_FILE_LIMIT`), is not UTF-8 JSON, is nested deeper than
        :data:`BASELINE_DEPTH_LIMIT`, or is not a ``sweepaudit.audit/1`` document with ``results``
        and ``checks``.
    """
    where = str(path)
    data = explained(lambda: read_bytes(path, limit=BASELINE_FILE_LIMIT), lambda m: InputError(m, path=where),
                     missing="baseline file does not exist", folder="baseline is a folder, not an audit JSON file",
                     other="cannot read the baseline")
    document = _parse_json(data, where)
    if not isinstance(document, dict):
        raise InputError("the baseline must be an audit JSON object", path=where)
    schema = document.get("schema")
    if schema != AUDIT_SCHEMA:
        raise InputError(
            f"the baseline's schema is {schema!r}, expected {AUDIT_SCHEMA!r}: pass a file written by "
            "sweepaudit audit --json",
            path=where,
        )
    if not isinstance(document.get("results"), dict) or not isinstance(document.get("checks"), list):
        raise InputError("the baseline has no 'results' object or no 'checks' list", path=where)
    return document


def _parse_json(data: bytes, where: str) -> Any:
    """JSON text -> objects, every failure one message naming the file."""
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(f"the baseline is not UTF-8 text (byte offset {exc.start})", path=where) from None
    try:
        document = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(
            f"the baseline is not JSON (line {exc.lineno}, column {exc.colno}: {exc.msg})", path=where
        ) from None
    except RecursionError:
        raise InputError("the baseline is not an audit JSON: it is nested too deeply", path=where) from None
    except ValueError as exc:  # an integer of more digits than Python converts
        raise InputError(f"the baseline is not usable JSON ({str(exc).split(':')[0]})", path=where) from None
    if _depth(document) > BASELINE_DEPTH_LIMIT:
        raise InputError(
            f"the baseline is not an audit JSON: it is nested more than {BASELINE_DEPTH_LIMIT} levels deep",
            path=where,
        )
    return document


def _depth(value: Any) -> int:
    """How deeply lists and objects nest (without recursion, so any depth can be measured)."""
    deepest, stack = 0, [(value, 1)]
    while stack:
        item, depth = stack.pop()
        if isinstance(item, (dict, list)):
            deepest = max(deepest, depth)
            if depth <= BASELINE_DEPTH_LIMIT:
                stack.extend((v, depth + 1) for v in (item.values() if isinstance(item, dict) else item))
    return deepest


def _is_number(value: Any) -> bool:
    if not isinstance(value, (int, float)) or isinstance(value, bool):
        return False
    try:
        return math.isfinite(value)
    except OverflowError:  # an integer beyond the float range
        return False


def _walk(value: Any, key: str, out: dict[str, float]) -> None:
    if _is_number(value):
        out[key] = float(value)
    elif isinstance(value, dict):
        for name, item in value.items():
            _walk(item, f"{key}.{name}", out)
    elif isinstance(value, list):
        for position, item in enumerate(value):
            label = item.get("configuration") if isinstance(item, dict) else None
            _walk(item, f"{key}[{label if isinstance(label, str) else position}]", out)


def _result_leaves(document: dict[str, Any]) -> dict[str, float]:
    out: dict[str, float] = {}
    _walk(document.get("results", {}), "results", out)
    return out


def _check_leaves(document: dict[str, Any]) -> dict[str, float]:
    return {
        f"checks.{c['id']}.value": float(c["value"])
        for c in document.get("checks", [])
        if isinstance(c, dict) and isinstance(c.get("id"), str) and _is_number(c.get("value"))
    }


def numeric_leaves(document: dict[str, Any]) -> dict[str, float]:
    """Every finite numeric figure under ``results`` and every check value, by dotted key."""
    return {**_result_leaves(document), **_check_leaves(document)}


def _lookup(document: dict[str, Any], dotted: str) -> Any:
    node: Any = document
    for part in dotted.split("."):
        if not isinstance(node, dict) or part not in node:
            return None
        node = node[part]
    return node


def _states(document: dict[str, Any]) -> dict[str, str]:
    return {
        c["id"]: ("passed" if c.get("passed") else "failed")
        for c in document.get("checks", [])
        if isinstance(c, dict) and isinstance(c.get("id"), str)
    }


def _moves(before: dict[str, float], after: dict[str, float]) -> tuple[FigureMove, ...]:
    return tuple(
        FigureMove(key, before[key], value, value - before[key])
        for key, value in after.items()
        if key in before and value != before[key]
    )


def _gated(before: dict[str, float], after: dict[str, float], baseline: dict[str, Any], policy: Any):
    gated = []
    for figure in GATED_FIGURES:
        if figure.key not in before or figure.key not in after:
            continue
        b, a = before[figure.key], after[figure.key]
        worsening = (b - a) if figure.higher_is_better else (a - b)
        margin = float(getattr(policy, figure.margin_field))
        allowed: float | None = margin
        if figure.scale == "interval_width":
            block = _lookup(baseline, figure.key.rsplit(".", 1)[0])
            low = block.get("low") if isinstance(block, dict) else None
            high = block.get("high") if isinstance(block, dict) else None
            allowed = margin * (high - low) if _is_number(low) and _is_number(high) else None
        exceeded = allowed is not None and worsening > allowed
        gated.append(GatedMove(figure, b, a, worsening, allowed, exceeded))
    return tuple(gated)


def compare_results(current: dict[str, Any], baseline: dict[str, Any], *, path: str, policy: Any) -> BaselineComparison:
    """Compare the ``results`` figures (and the selected configuration) of two audit documents.

    This is everything the ``baseline_drift`` check reads; the check changes come after the
    verdict with :func:`compare_checks`.

    Parameters
    ----------
    current, baseline : dict
        Audit JSON documents (schema ``sweepaudit.audit/1``); ``current`` needs only its
        ``results`` and ``selected`` blocks.
    path : str
        Where the baseline came from (reported).
    policy : Policy
        Supplies the margins named by :data:`GATED_FIGURES`.
    """
    before, after = _result_leaves(baseline), _result_leaves(current)
    selected_before = _lookup(baseline, "selected.configuration")
    selected_after = _lookup(current, "selected.configuration")
    return BaselineComparison(
        path=path,
        verdict_before=baseline.get("verdict") if isinstance(baseline.get("verdict"), str) else None,
        selected_before=selected_before if isinstance(selected_before, str) else None,
        selected_after=selected_after if isinstance(selected_after, str) else None,
        moved=_moves(before, after),
        checks_changed=(),
        gated=_gated(before, after, baseline, policy),
    )


def compare_checks(
    comparison: BaselineComparison, checks: list[dict[str, Any]], baseline: dict[str, Any]
) -> BaselineComparison:
    """Add the checks to a comparison: each check value that moved, and each change of state.

    ``checks`` are the current audit's checks as in its document (``{"id", "passed", "value"}``).
    The drift check itself is not compared: it only exists against a baseline.
    """
    current = {"checks": [c for c in checks if c.get("id") != "baseline_drift"]}
    old_states, new_states = _states(baseline), _states(current)
    ids = [i for i in dict.fromkeys([*old_states, *new_states]) if i != "baseline_drift"]
    changed = tuple(
        CheckChange(i, old_states.get(i, "absent"), new_states.get(i, "absent"))
        for i in ids
        if old_states.get(i, "absent") != new_states.get(i, "absent")
    )
    moved = comparison.moved + _moves(_check_leaves(baseline), _check_leaves(current))
    return replace(comparison, moved=moved, checks_changed=changed)


def compare_with_baseline(
    current: dict[str, Any],
    baseline: dict[str, Any],
    *,
    path: str,
    policy: Any,
) -> BaselineComparison:
    """Compare the audit document ``current`` with the ``baseline`` document: figures and checks."""
    figures = compare_results(current, baseline, path=path, policy=policy)
    return compare_checks(figures, list(current.get("checks", [])), baseline)
