"""The audit JSON as text: the document (:mod:`sweepaudit.document`) serialised deterministically."""

from __future__ import annotations

import json
import re

__all__ = ["dumps"]

# Kept as \u escapes although JSON allows them raw: C1 controls (some terminals obey them), line and
# paragraph separators, direction overrides and invisible format characters (they rearrange what
# a terminal or an editor shows), lone surrogates (bytes of a file name that are not UTF-8, which
# UTF-8 cannot encode). JSON readers get the same strings back.
_ESCAPED = re.compile("[\x7f-\x9f\u061c\u200e\u200f\u2028\u2029\u202a-\u202e\u2066-\u2069"
                      "\ufeff\ufff9-\ufffb\ufffe\uffff\ud800-\udfff]")


def dumps(document: dict) -> str:
    """Serialise deterministically (same audit, same bytes): indented, UTF-8 kept, no NaN, and no
    character that could act on a terminal rather than be shown (C0 controls are escaped by JSON
    itself, the others above by us)."""
    text = json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    return _ESCAPED.sub(lambda m: f"\\u{ord(m.group()):04x}", text)
