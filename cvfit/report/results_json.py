"""results.json writer, and the JSON Schemas shipped with the package."""

from __future__ import annotations

import json
from importlib import resources
from pathlib import Path
from typing import Any, Literal

from cvfit.pipeline.results import SeriesResult
from cvfit.record_json import record_json
from cvfit.report.atomic import atomic_write_text

__all__ = ["load_schema", "results_to_json", "write_results_json"]

#: File of each schema in the package's ``schemas`` folder (the repository's top-level
#: ``schemas/`` links to it).
SCHEMA_FILES = {"results": "results.schema.json", "series": "series.schema.json"}


def results_to_json(result: SeriesResult | dict[str, Any]) -> str:
    """Serialise a result to the results.json text (stable key order, no NaN)."""
    data = result.to_dict() if isinstance(result, SeriesResult) else result
    return record_json(data) + "\n"


def write_results_json(result: SeriesResult, path: str | Path) -> Path:
    """Write results.json atomically; returns the path."""
    path = Path(path)
    atomic_write_text(path, results_to_json(result))
    return path


def load_schema(name: Literal["results", "series"]) -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of results.json (``"results"``) or of the series
    manifest (``"series"``), read from the installed package."""
    if name not in SCHEMA_FILES:
        raise ValueError(f"no schema {name!r}; choose one of {sorted(SCHEMA_FILES)}")
    text = resources.files("cvfit").joinpath("schemas", SCHEMA_FILES[name]).read_text("utf-8")
    return json.loads(text)
