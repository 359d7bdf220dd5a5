"""The manifest's JSON Schema and the docs' key tables, made from the one definition.

``cvfit/schemas/series.schema.json`` is :func:`schema_text`; the part of docs/manifest.md
between :data:`DOC_BEGIN` and :data:`DOC_END` is :func:`docs_table`.
``python scripts/manifest_reference.py`` writes both; ``tests/test_manifest_schema.py``
fails when either file differs from what the definition gives.
"""

from __future__ import annotations

import json
from typing import Any

from cvfit.io import manifest_technique, manifest_variables
from cvfit.io.manifest import DEFINITION
from cvfit.io.manifest_spec import json_schema, markdown_rows

__all__ = ["DOC_BEGIN", "DOC_END", "schema", "schema_text", "docs_table"]

DOC_BEGIN = "<!-- key table: made by scripts/manifest_reference.py, do not edit -->"
DOC_END = "<!-- end of the key table -->"
_TITLE = "cvfit series manifest"
_DESCRIPTION = (
    "TOML manifest of one voltammetric titration series, shown here as the JSON document "
    "tomllib produces. Potentials in V, currents in A, concentrations in mol/L, scan rates "
    "in V/s, temperature in °C. Unknown keys are rejected everywhere. Made from "
    "cvfit/io/manifest_keys.py; do not edit."
)


def schema() -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of the series manifest."""
    # files or E½ tables (or both); the technique's settings as TECHNIQUE_SETTINGS says
    across = {
        "anyOf": [{"required": ["voltammogram"]}, {"required": ["point"]}],
        "allOf": manifest_variables.schema_conditions() + manifest_technique.schema_conditions(),
    }
    return json_schema(DEFINITION, title=_TITLE, description=_DESCRIPTION, across=across)


def schema_text() -> str:
    """The schema file's text."""
    return json.dumps(schema(), ensure_ascii=False, indent=2) + "\n"


def docs_table() -> str:
    """The key table of docs/manifest.md, with its two marker lines."""
    head = ["| table | key | value | meaning | default |", "|---|---|---|---|---|"]
    rows = [row for table in DEFINITION for row in markdown_rows(table)]
    return "\n".join([DOC_BEGIN, *head, *rows, DOC_END]) + "\n"
