"""Rewrite the manifest's JSON Schema and the key table of docs/manifest.md from the one
definition of the keys (cvfit/io/manifest_keys.py).

Run: ``python scripts/manifest_reference.py`` after adding or changing a key;
tests/test_manifest_schema.py fails until both files match the definition.
"""

from __future__ import annotations

from pathlib import Path

from cvfit.io.manifest_reference import DOC_BEGIN, DOC_END, docs_table, schema_text

ROOT = Path(__file__).resolve().parents[1]


def main() -> None:
    (ROOT / "cvfit" / "schemas" / "series.schema.json").write_text(schema_text(), encoding="utf-8")
    doc = ROOT / "docs" / "manifest.md"
    text = doc.read_text(encoding="utf-8")
    start, end = text.index(DOC_BEGIN), text.index(DOC_END) + len(DOC_END) + 1
    doc.write_text(text[:start] + docs_table() + text[end:], encoding="utf-8")
    print("wrote cvfit/schemas/series.schema.json and the key table of docs/manifest.md")


if __name__ == "__main__":
    main()
