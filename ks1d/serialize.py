"""Strict JSON for every result ks1d writes.

JSON has no NaN or Infinity; Python's :mod:`json` writes them anyway unless told
not to, and strict parsers then reject the file.  :func:`plain` turns results
(dataclasses with ``to_dict``, numpy scalars and arrays, tuples, nested
containers) into plain JSON values with every non-finite number as ``null``;
:func:`dumps` writes them with ``allow_nan=False``, so a stray NaN fails loudly
here instead of producing invalid JSON downstream.
"""
from __future__ import annotations

import dataclasses
import json
import math
from typing import Any

import numpy as np


def plain(value: Any) -> Any:
    """A JSON-ready copy of ``value``: numpy → Python, non-finite floats → None, tuples → lists."""
    if hasattr(value, "to_dict") and not isinstance(value, type):
        return plain(value.to_dict())
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, np.ndarray):
        return [plain(v) for v in value.tolist()]
    if isinstance(value, (np.floating, np.integer, np.bool_)):
        value = value.item()
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {str(k): plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, set, frozenset)):
        return [plain(v) for v in value]
    return value


def dumps(value: Any, **kwargs) -> str:
    """Strict JSON text of ``value`` (see :func:`plain`)."""
    return json.dumps(plain(value), allow_nan=False, **kwargs)
