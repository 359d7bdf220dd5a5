"""The manifest's JSON Schema and the docs' key tables, made from the one definition.

``cvfit/schemas/series.schema.json`` is :func:`schema_text`; the part of docs/manifest.md
between :data:`DOC_BEGIN` and :data:`DOC_END` is :func:`docs_table`.
``python scripts/manifest_reference.py`` writes both; ``tests/test_manifest_schema.py``
fails when either file differs from what the definition gives. :func:`json_schema` and
:func:`markdown_rows` turn any :class:`~cvfit.io.manifest_spec.Table` into its schema and
its docs rows.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from typing import Any

from cvfit.io import manifest_technique, manifest_variables
from cvfit.io.manifest import DEFINITION
from cvfit.io.manifest_spec import NO_DEFAULT, Key, Table, phrase, toml_text

__all__ = [
    "DOC_BEGIN",
    "DOC_END",
    "schema",
    "schema_text",
    "docs_table",
    "json_schema",
    "markdown_rows",
]

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
    # files (as tables or in a files table, not both) or E½ tables (or both); the
    # technique's settings as TECHNIQUE_SETTINGS says
    files_table = {"required": ["series"], "properties": {"series": {"required": ["files_table"]}}}
    across = {
        "anyOf": [{"required": ["voltammogram"]}, {"required": ["point"]}, files_table],
        "allOf": [{"not": {"allOf": [{"required": ["voltammogram"]}, files_table]}}]
        + manifest_variables.schema_conditions()
        + manifest_technique.schema_conditions(),
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


# --- JSON Schema --------------------------------------------------------------------------


def _range_schema(key: Key) -> dict[str, Any]:
    out: dict[str, Any] = {}
    if key.low is not None:
        out["exclusiveMinimum" if key.open_low else "minimum"] = _json_number(key.low)
    if key.high is not None:
        out["exclusiveMaximum" if key.open_high else "maximum"] = _json_number(key.high)
    return out


def _json_number(x: float) -> int | float:
    return int(x) if float(x).is_integer() else x


def _key_schema(key: Key) -> dict[str, Any]:
    kind = key.kind
    unit = f" [{key.unit}]" if key.unit else ""
    out: dict[str, Any] = {"description": key.meaning + unit}
    if kind in ("number", "integer"):
        out |= {"type": kind} | _range_schema(key)
        if key.nonzero:
            out["not"] = {"const": 0}
    elif kind == "text":
        out["type"] = "string"
        if key.required or key.nonempty:
            out["minLength"] = 1
    elif kind == "flag":
        out["type"] = "boolean"
    elif kind == "choice":
        out |= {"type": "string", "enum": [*key.choices, *key.aliases]}
    elif kind == "choices":
        out |= {"type": "array", "items": {"type": "string", "enum": list(key.choices)}}
    elif kind == "numbers":
        out |= {"type": "array", "minItems": 1, "items": {"type": "number"}}
    elif kind == "window":
        out |= {"type": "array", "minItems": 2, "maxItems": 2, "items": {"type": "number"}}
    elif kind == "column":
        out["oneOf"] = [{"type": "string", "minLength": 1}, {"type": "integer", "minimum": 0}]
    else:  # cycle
        out["oneOf"] = [{"type": "integer", "minimum": 1}, {"const": "last"}]
    if key.default is not NO_DEFAULT and key.default is not None and not key.default_text:
        default = key.default
        out["default"] = list(default) if isinstance(default, tuple) else default
    return out


def _object_schema(table: Table, shared: set[str]) -> dict[str, Any]:
    props: dict[str, Any] = {}
    for key in table.all_keys:
        props[key.name] = {"$ref": f"#/$defs/{key.name}"} if key.name in shared else (
            _key_schema(key))  # fmt: skip
    out: dict[str, Any] = {
        "description": table.meaning,
        "type": "object",
        "additionalProperties": False,
    }
    required = [k.name for k in table.all_keys if k.required]
    if required:
        out["required"] = required
    out["properties"] = props
    needs = {k.name: [k.needs] for k in table.all_keys if k.needs}
    if needs:
        out["dependentRequired"] = needs
    return out


def json_schema(
    tables: tuple[Table, ...],
    *,
    title: str,
    description: str,
    across: Mapping[str, Any] | None = None,
) -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of a manifest made of *tables*, as the document
    :mod:`tomllib` reads. Keys of a table included by others are ``$defs`` (one
    description each); unknown keys are refused everywhere. *across*: top-level schema
    words (``anyOf``, ``allOf``) for conditions that tie tables together."""
    shared_tables = {id(t): t for table in tables for t in table.includes}
    shared = {k.name for t in shared_tables.values() for k in t.keys}
    properties: dict[str, Any] = {}
    for table in tables:
        obj = _object_schema(table, shared)
        if table.array:
            properties[table.name] = {
                "description": f"One table per entry ([[{table.name}]]), any order.",
                "type": "array",
                "minItems": 1,
                "items": obj,
            }
        else:
            properties[table.name] = obj
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": "https://cvfit.invalid/schemas/series.schema.json",
        "title": title,
        "description": description,
        "type": "object",
        "additionalProperties": False,
        "required": [t.name for t in tables if t.required],
        "$defs": {k.name: _key_schema(k) for t in shared_tables.values() for k in t.keys},
        "properties": properties,
        **(across or {}),
    }


# --- docs/manifest.md ---------------------------------------------------------------------


def _doc_default(key: Key) -> str:
    if key.default_text:
        return key.default_text
    if key.default is NO_DEFAULT or key.default is None:
        return "—"
    return f"`{toml_text(key.default)}`"


def _doc_value(key: Key) -> str:
    kind = key.kind
    if kind in ("number", "integer", "numbers", "window", "cycle"):
        words = phrase(key).replace("a finite ", "").replace("a ", "", 1)
        words = words.replace('"last"', '`"last"`').replace("e.g. [4.2]", "e.g. `[4.2]`")
    elif kind in ("choice", "choices"):
        names = [*key.choices, *key.aliases]
        words = ("list of " if kind == "choices" else "") + ", ".join(
            f"`{toml_text(c)}`" for c in names
        )
    else:
        words = phrase(key).replace("a ", "", 1)
    return words.replace("|", "\\|")


def markdown_rows(table: Table) -> list[str]:
    """The rows of the docs' key table for *table*: table, key, value, meaning, default."""
    label = f"`[[{table.name}]]`" if table.array else f"`[{table.name}]`"
    rows = []
    for k, key in enumerate(table.keys):
        required = " (required)" if key.required else ""
        needs = f" (needs `{key.needs}`)" if key.needs else ""
        meaning = (key.meaning + required + needs).replace("|", "\\|")
        rows.append(
            f"| {label if k == 0 else ''} | `{key.name}` | {_doc_value(key)} | {meaning} "
            f"| {_doc_default(key)} |"
        )
    for included in table.includes:
        rows.append(
            f"| | any `[{included.name}]` key | as there | overrides the series-wide "
            f"`[{included.name}]` setting for this entry | the `[{included.name}]` value |"
        )
    return rows
