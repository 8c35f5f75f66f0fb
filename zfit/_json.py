"""JSON text of zfit's contracts: the one serialiser every writer uses.

Every JSON file zfit writes (``zfit.identify/1``, ``zfit.step/1``,
``zfit.info/1``, ``zfit.plan/1``, the lot files) goes through `json_text`, so
that all of them are strict JSON (RFC 8259 has no NaN or Infinity: a value
that is not finite is written as ``null``) in one layout.
"""

from __future__ import annotations

import json
import math

__all__ = ["json_text", "finite_or_none"]


def finite_or_none(value):
    """Return `value` with every non-finite float inside it replaced by None.

    Dicts, lists and tuples are walked (tuples become lists, as JSON has no
    tuple); other values are returned as they are.
    """
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {k: finite_or_none(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [finite_or_none(v) for v in value]
    return value


def json_text(data) -> str:
    """Return `data` as strict JSON text, indented by two, ending in a newline.

    Parameters
    ----------
    data : dict or list
        Plain Python values (dict, list, str, int, float, bool, None).

    References
    ----------
    .. [1] T. Bray (ed.), "The JavaScript Object Notation (JSON) Data
       Interchange Format", RFC 8259, 2017 (section 6: numbers are finite).
    """
    return json.dumps(finite_or_none(data), indent=2, allow_nan=False) + "\n"
