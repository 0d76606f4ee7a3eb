"""The audit JSON as text: the document (:mod:`sweepaudit.document`) serialised deterministically."""

from __future__ import annotations

import json

__all__ = ["dumps"]


def dumps(document: dict) -> str:
    """Serialise deterministically (same audit, same bytes): indented, UTF-8 kept, no NaN."""
    return json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
