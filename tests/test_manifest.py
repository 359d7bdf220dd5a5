"""The series manifest: values, defaults, merging, and one-line errors with file/line/key."""

from __future__ import annotations

import textwrap

import pytest

from cvfit.errors import InputError
from cvfit.io import FitSettings, ImportOptions, Manifest, SeriesSettings, load_manifest
from cvfit.reversibility_criteria import ReversibilityCriteria

FILES = ("t0.csv", "t1.csv", "t2.csv")

GOOD = """\
[series]
title = "Invented test series"
temperature_C = 20.0
electrons = 2
metal_total_M = 1.0e-4
reference_electrode = "Ag/AgCl"

[import]
delimiter = ";"
decimal = ","
current_unit = "uA"

[fit]
model = "stepwise"
max_complexes = 3

[reversibility]
current_ratio_margin = 0.2

[[voltammogram]]
file = "t0.csv"
ligand_M = 0.0
scan_rate_V_s = 0.05

[[voltammogram]]
file = "t1.csv"
ligand_M = 0.001
current_unit = "nA"
anodic_current = "negative"
label = "1 mM"

[[voltammogram]]
file = "sub/../t2.csv"
ligand_M = 1e-2
cycle = 2
"""


def _manifest(tmp_path, text: str, name: str = "series.toml"):
    for f in FILES:
        (tmp_path / f).write_text("E/V,I/A\n", encoding="utf-8")
    (tmp_path / "sub").mkdir(exist_ok=True)
    p = tmp_path / name
    p.write_text(textwrap.dedent(text), encoding="utf-8")
    return p


def _fails(tmp_path, text: str) -> InputError:
    p = _manifest(tmp_path, text)
    with pytest.raises(InputError) as info:
        load_manifest(p)
    err = info.value
    assert err.source == str(p)
    assert "\n" not in str(err)
    return err


def _line_of(text: str, needle: str, occurrence: int = 1) -> int:
    lines = textwrap.dedent(text).splitlines()
    hits = [k + 1 for k, ln in enumerate(lines) if needle in ln]
    return hits[occurrence - 1]


def test_good_manifest(tmp_path):
    m = load_manifest(_manifest(tmp_path, GOOD))
    assert isinstance(m, Manifest)
    assert m.folder == tmp_path.resolve()
    assert m.series == SeriesSettings(
        title="Invented test series",
        temperature_C=20.0,
        electrons=2,
        metal_total_M=1e-4,
        reference_electrode="Ag/AgCl",
    )
    assert m.series.temperature_K == pytest.approx(293.15)
    assert m.fit == FitSettings(model="stepwise", max_complexes=3, exclude_non_nernstian=True)
    assert m.reversibility == ReversibilityCriteria(current_ratio_margin=0.2)
    assert m.import_options == ImportOptions(delimiter=";", decimal=",", current_unit="uA")
    v0, v1, v2 = m.voltammograms
    assert [v.file for v in m.voltammograms] == [tmp_path.resolve() / f for f in FILES]
    assert v2.name == "sub/../t2.csv"
    assert (v0.ligand_M, v1.ligand_M, v2.ligand_M) == (0.0, 0.001, 0.01)
    assert (v0.scan_rate_V_s, v1.scan_rate_V_s) == (0.05, None)
    assert v1.label == "1 mM" and v0.label is None
    assert v0.import_options == m.import_options
    assert v1.import_options == ImportOptions(
        delimiter=";", decimal=",", current_unit="nA", anodic_current="negative"
    )
    assert v2.import_options.cycle == 2 and v2.import_options.current_unit == "uA"


def test_defaults(tmp_path):
    m = load_manifest(
        _manifest(
            tmp_path,
            '[series]\nelectrons = 1\n[[voltammogram]]\nfile = "t0.csv"\nligand_M = 0\n',
            name="my_series.toml",
        )
    )
    assert m.series.title == "my_series" and m.series.temperature_C == 25.0
    assert m.fit == FitSettings() and m.reversibility == ReversibilityCriteria()
    assert m.import_options == ImportOptions()
    assert m.voltammograms[0].ligand_M == 0.0


def test_manifest_missing(tmp_path):
    with pytest.raises(InputError, match="manifest not found") as info:
        load_manifest(tmp_path / "absent.toml")
    assert info.value.source == str(tmp_path / "absent.toml")


def test_toml_syntax_error_names_line(tmp_path):
    text = GOOD.replace("electrons = 2", "electrons = = 2")
    err = _fails(tmp_path, text)
    assert "TOML syntax error" in err.message and err.line == _line_of(text, "electrons")


def test_toml_error_at_end_of_document(tmp_path):
    text = GOOD + "ligand_M = [1\n"
    err = _fails(tmp_path, text)
    assert "at the end of the file" in err.message
    assert err.line == len(text.splitlines())


def test_not_utf8(tmp_path):
    p = tmp_path / "s.toml"
    p.write_bytes(b'[series]\ntitle = "\xff"\n')
    with pytest.raises(InputError, match="not UTF-8") as info:
        load_manifest(p)
    assert info.value.line == 2


@pytest.mark.parametrize(
    ("old", "new", "needle", "occurrence", "words"),
    [
        (
            "electrons = 2",
            "electron = 2",
            "electron = 2",
            1,
            ["series.electron", "unknown key 'electron' in [series]", "'electrons'"],
        ),
        (
            'label = "1 mM"',
            'lable = "1 mM"',
            "lable",
            1,
            ["voltammogram[2].lable", "[[voltammogram]] #2", "did you mean 'label'"],
        ),
        ('decimal = ","', 'decimals = ","', "decimals", 1, ["import.decimals", "'decimal'"]),
        ("max_complexes = 3", "max_complex = 3", "max_complex", 1, ["'max_complexes'"]),
        (
            "current_ratio_margin = 0.2",
            "ratio_margin = 0.2",
            "ratio_margin",
            1,
            ["reversibility.ratio_margin", "'current_ratio_margin'"],
        ),
        (
            "ligand_M = 1e-2",
            "ligand_mM = 1e-2",
            "ligand_mM",
            1,
            ["voltammogram[3].ligand_mM", "'ligand_M'"],
        ),
    ],
)
def test_unknown_keys_named_with_suggestion(tmp_path, old, new, needle, occurrence, words):
    text = GOOD.replace(old, new)
    err = _fails(tmp_path, text)
    assert err.line == _line_of(text, needle, occurrence)
    for w in words:
        assert w in str(err)


def test_unknown_top_level_table(tmp_path):
    err = _fails(tmp_path, GOOD + "\n[seires]\nx = 1\n")
    assert "unknown key 'seires'" in err.message and "'series'" in err.message


@pytest.mark.parametrize(
    ("old", "new", "keypath", "needle", "occurrence"),
    [
        ("electrons = 2\n", "", "series.electrons", "[series]", 1),
        ('file = "t1.csv"\n', "", "voltammogram[2].file", "[[voltammogram]]", 2),
        ("ligand_M = 1e-2\n", "", "voltammogram[3].ligand_M", "[[voltammogram]]", 3),
    ],
)
def test_missing_required_key(tmp_path, old, new, keypath, needle, occurrence):
    text = GOOD.replace(old, new)
    err = _fails(tmp_path, text)
    assert keypath in err.message and "required key is missing" in err.message
    assert err.line == _line_of(text, needle, occurrence) and err.key == keypath


@pytest.mark.parametrize(
    ("old", "new", "keypath", "needle", "words"),
    [
        (
            "ligand_M = 0.001",
            'ligand_M = "0.001"',
            "voltammogram[2].ligand_M",
            'ligand_M = "',
            "finite number",
        ),
        ("ligand_M = 0.001", "ligand_M = -0.001", "voltammogram[2].ligand_M", "-0.001", ">= 0"),
        (
            "scan_rate_V_s = 0.05",
            "scan_rate_V_s = 0",
            "voltammogram[1].scan_rate_V_s",
            "scan_rate_V_s",
            "positive",
        ),
        ("electrons = 2", "electrons = 0", "series.electrons", "electrons", "positive whole"),
        ("electrons = 2", "electrons = 1.5", "series.electrons", "electrons", "positive whole"),
        ("electrons = 2", "electrons = true", "series.electrons", "electrons", "positive whole"),
        (
            "temperature_C = 20.0",
            "temperature_C = 120",
            "series.temperature_C",
            "temperature",
            "0–100",
        ),
        (
            "temperature_C = 20.0",
            "temperature_C = -5",
            "series.temperature_C",
            "temperature",
            "0–100",
        ),
        (
            "metal_total_M = 1.0e-4",
            "metal_total_M = -1.0e-4",
            "series.metal_total_M",
            "metal_total_M",
            "positive",
        ),
        ('title = "Invented test series"', "title = 3", "series.title", "title", "text"),
        ('model = "stepwise"', 'model = "cubic"', "fit.model", "model", '"lingane"'),
        ("max_complexes = 3", "max_complexes = 0", "fit.max_complexes", "max_complexes", "1–8"),
        (
            "current_ratio_margin = 0.2",
            "current_ratio_margin = -1",
            "reversibility.current_ratio_margin",
            "current_ratio_margin",
            "positive",
        ),
        (
            "current_ratio_margin = 0.2",
            'current_ratio_margin = "x"',
            "reversibility.current_ratio_margin",
            "current_ratio_margin",
            "number",
        ),
        ('delimiter = ";"', 'delimiter = "|"', "import.delimiter", "delimiter", '"whitespace"'),
        (
            'current_unit = "nA"',
            'current_unit = "amps"',
            "voltammogram[2].current_unit",
            'current_unit = "amps"',
            '"nA" or "pA", got "amps"',
        ),
        ("cycle = 2", "cycle = 0", "voltammogram[3].cycle", "cycle = 0", "whole number"),
        ('label = "1 mM"', "label = 5", "voltammogram[2].label", "label", "text"),
    ],
)
def test_bad_values(tmp_path, old, new, keypath, needle, words):
    text = GOOD.replace(old, new)
    assert text != GOOD
    err = _fails(tmp_path, text)
    assert keypath in err.message and words in err.message
    assert err.line == _line_of(text, needle)


def test_stderr_without_value(tmp_path):
    err = _fails(
        tmp_path, GOOD.replace("electrons = 2", "electrons = 2\nE_half_free_stderr_V = 0.001")
    )
    assert "series.E_half_free_stderr_V" in err.message


def test_listed_file_missing_names_key_and_line(tmp_path):
    text = GOOD.replace('file = "sub/../t2.csv"', 'file = "t9.csv"')
    err = _fails(tmp_path, text)
    assert "voltammogram[3].file" in err.message and "'t9.csv' not found" in err.message
    assert err.line == _line_of(text, "t9.csv") and err.key == "voltammogram[3].file"


def test_duplicate_files(tmp_path):
    # the same file with the same cycle ("last" for both); another cycle of it would be fine
    text = GOOD.replace('file = "sub/../t2.csv"', 'file = "./t1.csv"').replace("cycle = 2\n", "")
    err = _fails(tmp_path, text)
    assert "listed twice" in err.message and "voltammogram[2]" in err.message
    assert "voltammogram[3].file" in err.message
    assert err.line == _line_of(text, "./t1.csv")


def test_good_entries_are_not_searched_for_line_numbers(tmp_path, monkeypatch):
    """Line numbers are looked up for messages only: searching the manifest text for every
    entry of a valid manifest made loading quadratic in the number of files."""
    from cvfit.io import manifest as manifest_module

    calls = []
    original = manifest_module._Locator.line

    def counted(self, *args, **kwargs):
        calls.append(args)
        return original(self, *args, **kwargs)

    monkeypatch.setattr(manifest_module._Locator, "line", counted)
    m = load_manifest(_manifest(tmp_path, GOOD))
    assert len(m.voltammograms) == 3
    assert calls == []


def test_no_voltammograms(tmp_path):
    text = GOOD.split("[[voltammogram]]")[0]
    assert "at least one file" in _fails(tmp_path, text).message


def test_single_bracket_voltammogram_table(tmp_path):
    err = _fails(
        tmp_path, '[series]\nelectrons = 1\n[voltammogram]\nfile = "t0.csv"\nligand_M = 0\n'
    )
    assert "double brackets" in err.message and err.line == 3


def test_missing_series_table(tmp_path):
    err = _fails(tmp_path, '[[voltammogram]]\nfile = "t0.csv"\nligand_M = 0\n')
    assert "[series]" in err.message
