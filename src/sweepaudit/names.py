"""Configuration names: the key that identifies a configuration, and the names nearest a request.

A configuration is identified by its parameter values, not by how its name happens to be written:
``"train_days=21, entry_z=1.5"`` and ``"entry_z=1.50,train_days=21"`` are the same configuration.
The trial ledger counts trials by this key and ``--select`` (``select=``) matches by it.

Key definition (``configuration_key``), fixed because ledgers store it:

* with parameters (from the sweep's parameter table, or read off a name made only of
  ``name=value`` parts separated by commas): the pairs ``name=value`` sorted by parameter name
  (Python string order) and joined by ``", "``;
* a value that reads as a finite number is written as a number: a whole number without a decimal
  point (``21``, also for ``21.0``, ``2.1e1``), any other in Python's shortest round-trip form
  (``1.5`` for ``1.50``); ``true``/``false`` for booleans (any case); any other value as written,
  with runs of white space made one space;
* without parameters: the name, with runs of white space made one space and the ends stripped.

Names are case-sensitive: ``Lookback=20`` is another parameter than ``lookback=20``.
"""

from __future__ import annotations

import difflib
import math
import re
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

__all__ = ["configuration_key", "parse_parameters", "parameter_value", "nearest_names"]

_PAIR = re.compile(r"\s*([^=,]+?)\s*=\s*([^=,]*?)\s*")
_SPACE = re.compile(r"\s+")


def _spaced(text: str) -> str:
    return _SPACE.sub(" ", text).strip()


def parameter_value(value: Any) -> str:
    """One parameter value in its key form: numbers as numbers, booleans as ``true``/``false``."""
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    text = _spaced(str(value))
    if text.lower() in ("true", "false"):
        return text.lower()
    try:
        number = float(value) if isinstance(value, (float, np.floating)) else float(text)
    except ValueError:
        return text
    if not math.isfinite(number):
        return text
    if number.is_integer() and abs(number) < 2**53:
        return str(int(number))
    return repr(number)


def parse_parameters(name: str) -> dict[str, str] | None:
    """The ``{parameter: value}`` pairs of a name made only of ``name=value`` parts, or None.

    A name with a part that is not ``name=value`` (``"momentum fast"``, ``"a=1,5"``), or that names
    one parameter twice, has no pairs.
    """
    pairs: dict[str, str] = {}
    for part in name.split(","):
        m = _PAIR.fullmatch(part)
        if m is None or not m.group(2) or m.group(1) in pairs:
            return None
        pairs[_spaced(m.group(1))] = m.group(2)
    return pairs


def configuration_key(name: str, parameters: Mapping[str, Any] | None = None) -> str:
    """The key that identifies a configuration (see the module notes for the definition).

    Parameters
    ----------
    name : str
        The configuration's name.
    parameters : mapping, optional
        Its parameter values (a row of the sweep's parameter table); read off the name when absent.
    """
    pairs = dict(parameters) if parameters is not None and len(parameters) else parse_parameters(name)
    if not pairs:
        return _spaced(name)
    return ", ".join(f"{_spaced(str(p))}={parameter_value(v)}" for p, v in sorted(pairs.items(), key=lambda kv: str(kv[0])))


def nearest_names(request: str, names: Sequence[str], keys: Sequence[str], *, limit: int = 5) -> list[str]:
    """The names closest to a request that matched none.

    When the request gives ``name=value`` pairs, the configurations sharing the most of them come
    first (a request that names some of the parameters, or misses one value); then, and to break
    ties, the most similar keys by ``difflib``'s ratio.
    """
    wanted = parse_parameters(request) or {}
    given = {_spaced(p): parameter_value(v) for p, v in wanted.items()}
    matcher = difflib.SequenceMatcher(b=configuration_key(request), autojunk=False)
    ranked = []
    for k, key in enumerate(keys):
        have = parse_parameters(key) or {}
        matcher.set_seq1(key)
        ranked.append((-sum(have.get(p) == v for p, v in given.items()), -matcher.ratio(), k))
    ranked.sort()
    return [names[k] for _, _, k in ranked[:limit]]
