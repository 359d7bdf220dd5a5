"""schemas/series.schema.json and docs/manifest.md are what the one definition of the keys
gives, and the schema and load_manifest accept and reject the same manifests."""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import jsonschema
import pytest

from cvfit.errors import InputError
from cvfit.io import load_manifest
from cvfit.io.manifest import (
    DEFINITION,
    ENTRY_KEYS,
    FIT_KEYS,
    REVERSIBILITY_KEYS,
    SERIES_KEYS,
    TABLES,
)
from cvfit.io.manifest_reference import DOC_BEGIN, DOC_END, docs_table, schema_text
from cvfit.io.manifest_standard import INTERNAL_STANDARD_KEYS
from cvfit.io.manifest_technique import TECHNIQUE_KEYS, TECHNIQUE_SETTINGS
from cvfit.io.manifest_variables import MODELS, POINT_KEYS
from cvfit.io.options import IMPORT_KEYS

ROOT = Path(__file__).resolve().parents[1]
SCHEMA_PATH = ROOT / "schemas" / "series.schema.json"
SCHEMA = json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))
VALIDATOR = jsonschema.Draft202012Validator(SCHEMA)

BASE = '[series]\nelectrons = 1\n\n[[voltammogram]]\nfile = "a.csv"\nligand_M = 0.0\n'

DPV = BASE.replace("electrons = 1", 'electrons = 1\ntechnique = "dpv"') + (
    "[technique]\npulse_amplitude_V = -0.05\npulse_width_s = 0.05\nstep_V = 0.005\n"
)
SWV = BASE.replace("electrons = 1", 'electrons = 1\ntechnique = "swv"') + (
    "[technique]\namplitude_V = 0.025\nfrequency_Hz = 25\nstep_V = 0.005\n"
)

GOOD = {
    "minimal": BASE,
    "full": """
[series]
title = "t"
temperature_C = 37
electrons = 2
metal_total_M = 5e-4
E_half_free_V = -0.41
E_half_free_stderr_V = 0.0005
reference_electrode = "SCE"
[import]
potential_column = "E/V"
current_column = 1
time_column = "t/s"
potential_unit = "mV"
current_unit = "µA"
anodic_current = "negative"
delimiter = "\\t"
decimal = ","
cycle = "last"
[fit]
model = "lingane"
max_complexes = 8
exclude_non_nernstian = false
[reversibility]
n_delta_Ep_margin_V = 0.02
n_peak_width_margin_V = 0.015
current_ratio_margin = 0.1
[[voltammogram]]
file = "a.csv"
ligand_M = 0
scan_rate_V_s = 0.2
label = "free"
cycle = 3
delimiter = "whitespace"
[[voltammogram]]
file = "b.csv"
ligand_M = 1e-3
current_unit = "nA"
potential_column = 0
""",
    "temperature_edges": BASE.replace("electrons = 1", "electrons = 1\ntemperature_C = 0"),
    "tab_word": BASE + 'delimiter = "tab"\n',
    # JSON Schema counts 2.0 as an integer; so does the loader.
    "integral_floats": BASE.replace("electrons = 1", "electrons = 2.0") + "cycle = 2.0\n",
    "ph_series": '[series]\nelectrons = 1\n[fit]\nmodel = "proton"\nmax_protons = 2\n'
    '[[voltammogram]]\nfile = "a.csv"\npH = 4\n[[voltammogram]]\nfile = "b.csv"\npH = 7\n',
    "temperature_series": '[series]\nelectrons = 1\nreference_at = "constant_temperature"\n'
    '[fit]\nmodel = "temperature"\n[[voltammogram]]\nfile = "a.csv"\nligand_M = 0.1\n'
    "temperature_C = 15\n",
    "points_only": "[series]\nelectrons = 1\n[[point]]\nligand_M = 0\nE_half_V = 0.1\n"
    "[[point]]\nligand_M = 0.01\nE_half_V = -0.1\nE_half_stderr_V = 0.001\nlabel = 'x'\n",
    "points_and_files": BASE + "[[point]]\nligand_M = 0.01\nE_half_V = -0.1\n",
    "ph_points": '[series]\nelectrons = 1\n[fit]\nmodel = "proton"\n[[point]]\npH = 3\n'
    "E_half_V = 0.2\n",
    "cv_named": BASE.replace("electrons = 1", 'electrons = 1\ntechnique = "cv"'),
    "dpv": DPV,
    "dpv_full": DPV.replace(
        "[technique]",
        '[technique]\nperiod_s = 0.5\npulse_current_column = "ip"\nbase_current_column = 2',
    ),
    "swv": SWV,
    "wave": BASE.replace("electrons = 1", 'electrons = 1\ntechnique = "wave"')
    + "rotation_rate_rpm = 900\n",
}

BAD = {
    "no_series": '[[voltammogram]]\nfile = "a.csv"\nligand_M = 0.0\n',
    "no_voltammogram": "[series]\nelectrons = 1\n",
    "empty_voltammogram_list": "voltammogram = []\n[series]\nelectrons = 1\n",
    "unknown_top": BASE + "[extra]\nx = 1\n",
    "unknown_series_key": BASE.replace("electrons = 1", "electrons = 1\nelectrode = 'x'"),
    "unknown_entry_key": BASE + "ligand_mM = 1\n",
    "unknown_import_key": BASE + "[import]\nsep = ','\n",
    "unknown_fit_key": BASE + "[fit]\nmodels = 'lingane'\n",
    "unknown_rev_key": BASE + "[reversibility]\nratio = 0.1\n",
    "electrons_zero": BASE.replace("electrons = 1", "electrons = 0"),
    "electrons_float": BASE.replace("electrons = 1", "electrons = 1.5"),
    "electrons_string": BASE.replace("electrons = 1", 'electrons = "1"'),
    "electrons_missing": BASE.replace("electrons = 1", "title = 'x'"),
    "hot": BASE.replace("electrons = 1", "electrons = 1\ntemperature_C = 100.5"),
    "negative_ligand": BASE.replace("ligand_M = 0.0", "ligand_M = -1e-6"),
    "ligand_string": BASE.replace("ligand_M = 0.0", "ligand_M = '0'"),
    "ligand_missing": BASE.replace("ligand_M = 0.0", ""),
    "file_missing": BASE.replace('file = "a.csv"', ""),
    "file_empty": BASE.replace('"a.csv"', '""'),
    "scan_rate_zero": BASE + "scan_rate_V_s = 0\n",
    "metal_zero": BASE.replace("electrons = 1", "electrons = 1\nmetal_total_M = 0"),
    "stderr_negative": BASE.replace(
        "electrons = 1", "electrons = 1\nE_half_free_V = 0.1\nE_half_free_stderr_V = -1"
    ),
    "stderr_alone": BASE.replace("electrons = 1", "electrons = 1\nE_half_free_stderr_V = 0.1"),
    "bad_model": BASE + "[fit]\nmodel = 'cubic'\n",
    "max_complexes_9": BASE + "[fit]\nmax_complexes = 9\n",
    "exclude_string": BASE + "[fit]\nexclude_non_nernstian = 'yes'\n",
    "margin_zero": BASE + "[reversibility]\ncurrent_ratio_margin = 0\n",
    "bad_unit": BASE + "current_unit = 'amp'\n",
    "bad_potential_unit": BASE + "[import]\npotential_unit = 'uV'\n",
    "bad_sign": BASE + "anodic_current = 'cathodic'\n",
    "bad_delimiter": BASE + "delimiter = '|'\n",
    "bad_decimal": BASE + "[import]\ndecimal = ';'\n",
    "cycle_zero": BASE + "cycle = 0\n",
    "cycle_word": BASE + "cycle = 'first'\n",
    "column_negative": BASE + "potential_column = -1\n",
    "column_empty": BASE + "current_column = ''\n",
    "label_number": BASE + "label = 3\n",
    "title_number": BASE.replace("electrons = 1", "electrons = 1\ntitle = 3"),
    "max_protons_5": BASE + "[fit]\nmax_protons = 5\n",
    "reference_at_word": BASE.replace("electrons = 1", "electrons = 1\nreference_at = 'warm'"),
    "entry_too_hot": BASE + "temperature_C = 120\n",
    "point_without_E_half": BASE + "[[point]]\nligand_M = 0.01\n",
    "point_without_ligand": BASE + "[[point]]\nE_half_V = 0.1\n",
    "ph_point_without_pH": '[series]\nelectrons = 1\n[fit]\nmodel = "proton"\n[[point]]\n'
    "E_half_V = 0.2\n",
    "point_zero_stderr": BASE
    + "[[point]]\nligand_M = 0.01\nE_half_V = 0.1\nE_half_stderr_V = 0\n",
    "point_unknown_key": BASE + "[[point]]\nligand_M = 0.01\nE_half_V = 0.1\nsigma = 1\n",
    "points_with_global": BASE + "[fit]\nglobal = true\n[[point]]\nligand_M = 0.01\n"
    "E_half_V = 0.1\n",
    "technique_unknown": BASE.replace("electrons = 1", 'electrons = 1\ntechnique = "npv"'),
    "technique_table_for_cv": BASE + "[technique]\nstep_V = 0.005\n",
    "dpv_without_table": BASE.replace("electrons = 1", 'electrons = 1\ntechnique = "dpv"'),
    "dpv_missing_width": DPV.replace("pulse_width_s = 0.05\n", ""),
    "dpv_zero_amplitude": DPV.replace("pulse_amplitude_V = -0.05", "pulse_amplitude_V = 0"),
    "dpv_swv_key": DPV + "frequency_Hz = 25\n",
    "dpv_unknown_key": DPV + "pulse_height_V = 0.05\n",
    "dpv_global": DPV + "[fit]\nglobal = true\n",
    "swv_missing_frequency": SWV.replace("frequency_Hz = 25\n", ""),
    "swv_negative_amplitude": SWV.replace("amplitude_V = 0.025", "amplitude_V = -0.025"),
    "swv_dpv_key": SWV + "period_s = 0.5\n",
    "wave_with_setting": BASE.replace("electrons = 1", 'electrons = 1\ntechnique = "wave"')
    + "[technique]\nstep_V = 0.005\n",
    "rotation_zero": BASE + "rotation_rate_rpm = 0\n",
    "column_blank": SWV + 'forward_current_column = ""\n',
}


def _write(tmp_path, text: str) -> Path:
    for name in ("a.csv", "b.csv"):
        (tmp_path / name).write_text("E/V,I/A\n", encoding="utf-8")
    p = tmp_path / "m.toml"
    p.write_text(text, encoding="utf-8")
    return p


def _schema_ok(text: str) -> bool:
    return VALIDATOR.is_valid(tomllib.loads(text))


def _loader_ok(path: Path) -> bool:
    try:
        load_manifest(path)
    except InputError:
        return False
    return True


def test_schema_is_valid_2020_12():
    jsonschema.Draft202012Validator.check_schema(SCHEMA)
    assert SCHEMA["$schema"].endswith("2020-12/schema")


@pytest.mark.parametrize("name", sorted(GOOD))
def test_good_manifests_agree(tmp_path, name):
    assert _schema_ok(GOOD[name])
    assert _loader_ok(_write(tmp_path, GOOD[name]))


def test_integral_floats_become_ints(tmp_path):
    m = load_manifest(_write(tmp_path, GOOD["integral_floats"]))
    assert m.series.electrons == 2 and isinstance(m.series.electrons, int)
    assert m.voltammograms[0].import_options.cycle == 2


@pytest.mark.parametrize("name", sorted(BAD))
def test_bad_manifests_agree(tmp_path, name):
    assert not _schema_ok(BAD[name]), name
    assert not _loader_ok(_write(tmp_path, BAD[name])), name


def _objects(node):
    if isinstance(node, dict):
        if node.get("type") == "object":
            yield node
        for value in node.values():
            yield from _objects(value)
    elif isinstance(node, list):
        for value in node:
            yield from _objects(value)


def test_every_object_is_closed_and_documented():
    objects = list(_objects(SCHEMA))
    assert len(objects) == len(TABLES) + 1  # the manifest and each of its tables
    for obj in objects:
        assert obj["additionalProperties"] is False
        assert obj["description"]
    for key, prop in SCHEMA["$defs"].items():
        assert prop["description"], key


def test_schema_keys_match_loader_keys():
    props = SCHEMA["properties"]
    assert set(props) == set(TABLES)
    assert set(props["series"]["properties"]) == set(SERIES_KEYS)
    assert set(props["import"]["properties"]) == set(IMPORT_KEYS)
    assert set(props["fit"]["properties"]) == set(FIT_KEYS)
    assert set(props["reversibility"]["properties"]) == set(REVERSIBILITY_KEYS)
    assert set(props["voltammogram"]["items"]["properties"]) == set(ENTRY_KEYS)
    assert set(props["internal_standard"]["properties"]) == set(INTERNAL_STANDARD_KEYS)
    assert set(props["point"]["items"]["properties"]) == set(POINT_KEYS)
    assert set(props["fit"]["properties"]["model"]["enum"]) == set(MODELS)
    assert set(props["technique"]["properties"]) == set(TECHNIQUE_KEYS)


def test_schema_file_is_the_definitions():
    # made by scripts/manifest_reference.py; a key added to the definition changes it
    assert SCHEMA_PATH.read_text(encoding="utf-8") == schema_text(), (
        "run python scripts/manifest_reference.py"
    )


def test_docs_key_table_is_the_definitions():
    text = (ROOT / "docs" / "manifest.md").read_text(encoding="utf-8")
    start, end = text.index(DOC_BEGIN), text.index(DOC_END) + len(DOC_END) + 1
    assert text[start:end] == docs_table(), "run python scripts/manifest_reference.py"


def test_every_loader_default_is_in_the_schema():
    # defaults are read from the records: what the loader fills in is what the schema says
    from cvfit.io import FitSettings

    fit = SCHEMA["properties"]["fit"]["properties"]
    assert fit["max_complexes"]["default"] == FitSettings().max_complexes
    assert fit["global"]["default"] is FitSettings().global_fit
    assert SCHEMA["$defs"]["cycle"]["default"] == "last"


def _manifest_with(table: str, key: str) -> tuple[str, int]:
    """A valid manifest but for ``key = { x = 1 }`` (no key takes an inline table) in
    *table*, and the line it stands on."""
    technique = next((t for t, own in TECHNIQUE_SETTINGS.items() if key in own), "cv")
    text = {"dpv": DPV, "swv": SWV}.get(technique, BASE) if table == "technique" else BASE
    if table == "internal_standard":
        text = text.replace("electrons = 1\n", "electrons = 1\nanalyte_window_V = [0.0, 0.5]\n")
        text += "[internal_standard]\nwindow_V = [0.6, 0.9]\n"
    if table == "point":
        text += "[[point]]\nE_half_V = 0.1\nligand_M = 0.0\n"
    if table == "titration":
        text += "[titration]\nstart_volume_mL = 10.0\nmetal_M = 0.001\nligand_stock_M = 0.1\n"
    header = f"[[{table}]]\n" if table in ("voltammogram", "point") else f"[{table}]\n"
    if header not in text:
        text += header
    before, after = text.split(header, 1)
    # the key replaces the table's own line for it, if any, at the top of the table
    after = "".join(line for line in after.splitlines(True) if not line.startswith(f"{key} ="))
    if table == "series" and key == "title":
        after = after.replace('title = "t"\n', "")
    text = f"{before}{header}{key} = {{ x = 1 }}\n{after}"
    return text, before.count("\n") + 2


@pytest.mark.parametrize(
    ("table", "key"),
    [(t.name, k.name) for t in DEFINITION for k in t.keys],
    ids=lambda v: v,
)
def test_every_key_refuses_a_wrong_type_on_its_line(tmp_path, table, key):
    # every declared key reaches its check: the loader names the key and its line, the
    # schema refuses the same manifest
    text, line = _manifest_with(table, key)
    assert not _schema_ok(text)
    with pytest.raises(InputError) as err:
        load_manifest(_write(tmp_path, text))
    assert err.value.line == line, err.value.message
    assert key in err.value.message and "\n" not in err.value.message
