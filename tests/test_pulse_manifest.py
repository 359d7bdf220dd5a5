"""``[series] technique`` and ``[technique]``: settings loaded, and every bad one a one-line
error naming the key (and its line)."""

from __future__ import annotations

from pathlib import Path

import pytest
from clirun import assert_clean_error, run_cli

from cvfit.errors import InputError
from cvfit.io import load_manifest
from cvfit.io.manifest_technique import TECHNIQUE_SETTINGS, TECHNIQUES
from cvfit.techniques import TECHNIQUE_NAMES, technique_of

DPV = """[series]
electrons = 1
technique = "dpv"

[technique]
pulse_amplitude_V = -0.05
pulse_width_s = 0.05
step_V = 0.005

[[voltammogram]]
file = "a.csv"
ligand_M = 0.0
"""


def _write(tmp_path: Path, text: str) -> Path:
    (tmp_path / "a.csv").write_text("E/V,I/A\n", encoding="utf-8")
    p = tmp_path / "series.toml"
    p.write_text(text, encoding="utf-8")
    return p


def test_the_manifest_and_the_techniques_name_the_same_techniques():
    assert set(TECHNIQUES) == set(TECHNIQUE_NAMES) == set(TECHNIQUE_SETTINGS)


def test_dpv_settings_are_loaded(tmp_path):
    m = load_manifest(_write(tmp_path, DPV + "rotation_rate_rpm = 400\n"))
    assert m.series.technique == "dpv" and technique_of(m).name == "dpv"
    assert m.technique.pulse_amplitude_V == -0.05 and m.technique.period_s is None
    assert m.voltammograms[0].rotation_rate_rpm == 400.0


def test_cv_stays_the_default(tmp_path):
    text = DPV.replace('technique = "dpv"\n', "").split("[technique]")[0]
    m = load_manifest(
        _write(tmp_path, text + '[[voltammogram]]\nfile = "a.csv"\nligand_M = 0.0\n')
    )
    assert m.series.technique == "cv" and m.technique.name == "cv"


@pytest.mark.parametrize(
    ("change", "key", "line"),
    [
        (lambda t: t.replace("pulse_width_s = 0.05\n", ""), "technique.pulse_width_s", 5),
        (lambda t: t.replace("step_V = 0.005", "step_size_V = 0.005"), "technique.step_size_V", 8),
        (lambda t: t.replace("step_V = 0.005", "step_V = 0.005\nfrequency_Hz = 25"),
         "technique.frequency_Hz", 9),
        (lambda t: t.replace("pulse_amplitude_V = -0.05", "pulse_amplitude_V = 0"),
         "technique.pulse_amplitude_V", 6),
        (lambda t: t.replace('"dpv"', '"polarography"'), "series.technique", 3),
        (lambda t: t + "rotation_rate_rpm = -5\n", "voltammogram[1].rotation_rate_rpm", 13),
        (lambda t: t.replace('technique = "dpv"\n', ""), "technique", 4),
        (lambda t: t + "[fit]\nglobal = true\n", "fit.global", 14),
    ],
)  # fmt: skip
def test_bad_settings_are_one_line_errors_naming_the_key(tmp_path, change, key, line):
    path = _write(tmp_path, change(DPV))
    with pytest.raises(InputError) as err:
        load_manifest(path)
    assert err.value.key == key
    assert err.value.line == line
    assert "\n" not in str(err.value)


def test_the_command_line_refuses_a_missing_setting(tmp_path):
    path = _write(tmp_path, DPV.replace("step_V = 0.005\n", ""))
    line = assert_clean_error(run_cli("run", str(path), cwd=tmp_path), "technique.step_V")
    assert "required" in line
