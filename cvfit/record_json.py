"""The one JSON encoder of cvfit's records (results.json, plan.json and the HTML report's
``data-*`` values): finite numbers only, keys in the record's own order, UTF-8 text as is."""

from __future__ import annotations

import json
from typing import Any

__all__ = ["record_json"]


def record_json(data: Any, *, indent: int | None = 2) -> str:
    """The JSON text of a record (no trailing newline).

    Raises
    ------
    ValueError
        When the record holds NaN or ±Infinity, which JSON cannot carry (a reader would
        meet a non-standard token); callers turn it into their own one-line error.
    """
    return json.dumps(data, indent=indent, allow_nan=False, ensure_ascii=False)
