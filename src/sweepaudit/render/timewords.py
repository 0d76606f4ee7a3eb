"""The words on the time structure of the evidence, shared by the terminal and the report.

One sentence says what the walk-forward record and the decay test mean together, from the audit JSON
document's ``results.walk_forward`` and ``results.stability`` blocks and the policy's level; every
number in it is a figure of those blocks, formatted by :mod:`sweepaudit.format`.
"""

from __future__ import annotations

from ..format import pct, sig

__all__ = ["period_name", "time_sentence"]


def period_name(index: int) -> str:
    """The name of a third of the record."""
    return ("first", "middle", "last")[index] + " third"


def _annual(block: dict, key: str, ppy) -> str:
    """A mean as a percentage, a year when the periods per year are known, else per window."""
    value = block.get(key + "_annualized") if ppy else None
    if isinstance(value, dict):
        value = value.get("estimate")
    if value is None:
        value = block[key]["estimate"] if isinstance(block[key], dict) else block[key]
        return f"{pct(value)} per window"
    return f"{pct(value)} a year"


def _decay_clause(stability: dict, level: float, ppy) -> str:
    change = stability["change"]
    recent, early = stability["recent"], stability["early"]
    figures = f"{_annual(recent, 'mean', ppy)} in the recent period against {_annual(early, 'mean', ppy)} before it"
    if change["pvalue"] is not None and change["pvalue"] <= level:
        return f"the edge has faded ({figures}, a fall beyond chance at the {sig(level, 6)} level)"
    if change["difference"] < 0:
        return f"the edge earned less of late but not beyond chance ({figures})"
    return f"the edge shows no sign of fading ({figures})"


def _walk_clause(walk: dict, level: float, ppy) -> str:
    earned = _annual(walk, "mean", ppy)
    test = walk["test"]
    if test["pvalue"] is not None and test["pvalue"] <= level:
        return f"re-picking the winner as the windows came would have earned {earned} out of sample, above zero beyond chance"
    return f"re-picking the winner as the windows came earned {earned} out of sample, not clearly above zero"


def time_sentence(doc: dict) -> str | None:
    """One sentence on what the time structure means; None when the audit examined neither part."""
    results = doc["results"]
    stability, walk = results.get("stability"), results.get("walk_forward")
    level = float((doc.get("policy") or {}).get("significance", 0.05))
    ppy = doc["input"].get("periods_per_year")
    clauses = []
    if stability:
        clauses.append(_decay_clause(stability, level, ppy))
    if walk:
        clauses.append(_walk_clause(walk, level, ppy))
    if not clauses:
        return None
    text = "; ".join(clauses)
    return "Over time, " + text + "."
