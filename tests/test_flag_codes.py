"""The flag catalogue (cvfit/flag_codes.py), the codes raised in the source, the results
schema's enum and docs/flags.md all list the same codes."""

from __future__ import annotations

import ast
import json
from pathlib import Path

import pytest

from cvfit.flag_codes import FLAG_CODES, render_markdown
from cvfit.flags import Flag

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "cvfit"


def _sources() -> dict[Path, str]:
    return {
        p: p.read_text(encoding="utf-8")
        for p in PACKAGE.rglob("*.py")
        if p.name != "flag_codes.py"
    }


def _flag_calls() -> list[tuple[str, ast.Call]]:
    """Every ``Flag(...)`` call in the package, with where it is."""
    calls = []
    for path, text in _sources().items():
        for node in ast.walk(ast.parse(text)):
            if isinstance(node, ast.Call) and getattr(node.func, "id", None) == "Flag":
                calls.append((f"{path.relative_to(ROOT)}:{node.lineno}", node))
    return calls


def _classification_codes() -> set[str]:
    """The codes the classification builds from its kinds (``CLASS_`` + kind)."""
    from cvfit.techniques.cv.screen.classification import CLASSES

    return {"CLASS_" + k.upper().replace("-", "_").replace(" ", "_") for k in CLASSES}


def test_every_literal_flag_code_in_the_source_is_catalogued_with_its_severity():
    seen = 0
    for where, call in _flag_calls():
        code = call.args[0] if call.args else None
        if not isinstance(code, ast.Constant):
            continue  # built from a variable: checked when the Flag is made
        seen += 1
        assert code.value in FLAG_CODES, f"{where}: {code.value} is not catalogued"
        severity = call.args[2] if len(call.args) > 2 else None
        for kw in call.keywords:
            if kw.arg == "severity":
                severity = kw.value
        if severity is None:
            assert "warning" in FLAG_CODES[code.value].severities, where
        elif isinstance(severity, ast.Constant):
            assert severity.value in FLAG_CODES[code.value].severities, where
    assert seen > 50


def test_every_catalogued_code_is_raised_somewhere():
    """No dead entries: each code appears as a string in the package (outside the
    catalogue), or is one the classification builds from its kinds."""
    text = "\n".join(_sources().values())
    built = _classification_codes()
    assert built <= set(FLAG_CODES)
    dead = [c for c in FLAG_CODES if c not in built and f'"{c}"' not in text]
    assert not dead, f"catalogued but never raised: {dead}"


def test_flag_refuses_an_uncatalogued_code_or_severity():
    assert Flag("LINE_CURVED", "curved").severity == "warning"
    with pytest.raises(ValueError, match="cvfit/flag_codes.py"):
        Flag("NOT_A_CATALOGUED_CODE", "no")
    with pytest.raises(ValueError, match="catalogued with severity error"):
        Flag("TOO_FEW_POINTS", "two points", "warning")
    with pytest.raises(ValueError, match="severity"):
        Flag("LINE_CURVED", "curved", "fatal")  # type: ignore[arg-type]
    assert Flag("BETA_UNDETERMINED", "beyond N", "info").severity == "info"


def test_results_schema_lists_the_catalogue_as_the_flag_code_enum():
    schema = json.loads((ROOT / "schemas" / "results.schema.json").read_text("utf-8"))
    assert schema["$defs"]["flag_code"]["enum"] == list(FLAG_CODES)
    ref = {"$ref": "#/$defs/flag_code"}
    assert schema["$defs"]["flag"]["properties"]["code"].items() >= ref.items()
    assert schema["$defs"]["classification"]["properties"]["code"].items() >= ref.items()


def test_docs_page_is_the_rendering_of_the_catalogue():
    page = (ROOT / "docs" / "flags.md").read_text(encoding="utf-8")
    assert page == render_markdown(), (
        "docs/flags.md is stale: python -m cvfit.flag_codes > docs/flags.md"
    )
    for code in FLAG_CODES:
        assert f"| `{code}` |" in page
