"""User strings made safe to show: no control character, escape sequence or direction override in a
configuration name, parameter name or file name reaches an output as such.

:func:`visible` is the one function every renderer applies to every string that came from the
user's data or command line (through :func:`visible_document`, which applies it to every string
of a document before a renderer reads it). It replaces each character that could act instead of
being read, with a visible escape in Python's notation:

* C0 controls, DEL and C1 controls (``\\x00``-``\\x1f``, ``\\x7f``-``\\x9f``): ESC starts ANSI and
  OSC 8 hyperlink sequences, CSI (``\\x9b``) is a one-byte ESC ``[``, NUL ends C strings, CR and
  LF (shown ``\\r``, ``\\n``) start a new line that could forge one of the tool's own;
* the line and paragraph separators U+2028 and U+2029;
* the bidirectional controls (U+061C, U+200E, U+200F, U+202A-U+202E, U+2066-U+2069), which
  reorder the text displayed after them;
* U+FEFF, U+FFF9-U+FFFB (invisible format characters) and U+FFFE, U+FFFF (not characters: XML
  1.0 refuses them);
* lone surrogates, which stand for bytes of a file name that are not UTF-8 (shown as the byte,
  ``\\xff``).

Everything else, accents and other scripts included, is kept. Markup is the renderers' business:
the terminal never parses a user string as rich markup (it builds ``Text`` objects), jinja2
escapes HTML, and the Markdown renderer escapes Markdown.
"""

from __future__ import annotations

import re
from typing import Any

__all__ = ["visible", "visible_document", "UNSAFE"]

UNSAFE = re.compile(
    "[\x00-\x1f\x7f-\x9f\u061c\u200e\u200f\u2028\u2029\u202a-\u202e\u2066-\u2069"
    "\ufeff\ufff9-\ufffb\ufffe\uffff\ud800-\udfff]"
)
_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}


def _escape(match: re.Match[str]) -> str:
    char = match.group()
    code = ord(char)
    if char in _NAMED:
        return _NAMED[char]
    if 0xDC80 <= code <= 0xDCFF:  # a byte that is not UTF-8, kept by the surrogateescape handler
        return f"\\x{code - 0xDC00:02x}"
    return f"\\x{code:02x}" if code <= 0xFF else f"\\u{code:04x}"


def visible(text: object) -> str:
    """``text`` as a string whose every character shows as itself (see the module notes)."""
    return UNSAFE.sub(_escape, str(text))


def visible_document(value: Any) -> Any:
    """A copy of a JSON-like document with :func:`visible` applied to every string, keys included."""
    if isinstance(value, str):
        return visible(value)
    if isinstance(value, dict):
        return {visible_document(k): visible_document(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [visible_document(v) for v in value]
    return value
