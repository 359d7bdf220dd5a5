"""The JSON Schemas ship inside the package (cvfit/schemas, read through importlib
resources); the repository's top-level schemas/ is the same folder."""

from __future__ import annotations

import json
import tomllib
from importlib import resources
from pathlib import Path

import jsonschema
import pytest

from cvfit.report.results_json import SCHEMA_FILES, load_schema

ROOT = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize("name", sorted(SCHEMA_FILES))
def test_schema_is_read_from_the_package_resources(name):
    packaged = resources.files("cvfit") / "schemas" / SCHEMA_FILES[name]
    assert packaged.is_file()
    schema = load_schema(name)
    jsonschema.Draft202012Validator.check_schema(schema)
    top = ROOT / "schemas" / SCHEMA_FILES[name]
    assert json.loads(top.read_text(encoding="utf-8")) == schema
    with pytest.raises(ValueError, match="no schema"):
        load_schema("manifest")  # type: ignore[arg-type]


def test_the_bundled_demo_validates_against_the_packaged_schemas():
    demo = resources.files("cvfit") / "data" / "demo" / "series.toml"
    jsonschema.Draft202012Validator(load_schema("series")).validate(
        tomllib.loads(demo.read_text(encoding="utf-8"))
    )
    results = ROOT / "example_runs" / "demo" / "results" / "results.json"
    data = json.loads(results.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator(load_schema("results")).validate(data)


def _no_duplicates(pairs):
    keys = [k for k, _ in pairs]
    repeated = sorted({k for k in keys if keys.count(k) > 1})
    assert not repeated, f"keys given twice in one object: {repeated}"
    return dict(pairs)


@pytest.mark.parametrize("path", sorted((ROOT / "cvfit" / "schemas").glob("*.json")))
def test_no_schema_gives_a_key_twice(path):
    """A key written twice in one object is legal JSON, but the first copy is silently
    lost (a merge once left results.schema.json with voltammogram keys twice)."""
    json.loads(path.read_text(encoding="utf-8"), object_pairs_hook=_no_duplicates)
