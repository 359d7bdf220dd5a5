"""results.json writer."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from cvfit.pipeline.results import SeriesResult

from .atomic import atomic_write_text

__all__ = ["results_to_json", "write_results_json"]


def results_to_json(result: SeriesResult | dict[str, Any]) -> str:
    """Serialise a result to the results.json text (stable key order, no NaN)."""
    data = result.to_dict() if isinstance(result, SeriesResult) else result
    return json.dumps(data, indent=2, allow_nan=False, ensure_ascii=False) + "\n"


def write_results_json(result: SeriesResult, path: str | Path) -> Path:
    """Write results.json atomically; returns the path."""
    path = Path(path)
    atomic_write_text(path, results_to_json(result))
    return path
