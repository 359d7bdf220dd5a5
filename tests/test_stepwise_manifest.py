"""Manifest keys of the stepwise model and its solution chemistry: values and errors."""

from __future__ import annotations

import textwrap

import pytest

from cvfit.errors import InputError
from cvfit.io import load_manifest

BASE = """\
[series]
electrons = 1
metal_total_M = 1.0e-3
ligand_pKa = [9.2, 6.1]
pH = 7.0
ionic_strength_M = 0.1
metal_charge = 2
ligand_charge = 0

[fit]
model = "stepwise"
max_complexes = 3
fixed_log10_beta_red = [4.2]
current_ratio_correction = false

[[voltammogram]]
file = "a.csv"
ligand_M = 0.0

[[voltammogram]]
file = "b.csv"
ligand_M = 0.01
pH = 7.5
"""


def _load(tmp_path, text):
    for f in ("a.csv", "b.csv"):
        (tmp_path / f).write_text("E/V,I/A\n", encoding="utf-8")
    p = tmp_path / "m.toml"
    p.write_text(textwrap.dedent(text), encoding="utf-8")
    return load_manifest(p)


def test_stepwise_keys_are_read(tmp_path):
    m = _load(tmp_path, BASE)
    s, f = m.series, m.fit
    assert s.ligand_pKa == (9.2, 6.1) and s.pH == 7.0 and s.ionic_strength_M == 0.1
    assert s.metal_charge == 2 and s.ligand_charge == 0 and s.bound_ligand_number is None
    assert f.fixed_log10_beta_red == (4.2,) and f.fixed_log10_beta_ox is None
    assert f.current_ratio_correction is False
    assert m.voltammograms[0].pH is None and m.voltammograms[1].pH == 7.5


def test_defaults_without_the_keys(tmp_path):
    text = BASE.split("ligand_pKa")[0] + '\n[[voltammogram]]\nfile = "a.csv"\nligand_M = 0.0\n'
    m = _load(tmp_path, text)
    assert m.series.ligand_pKa is None and m.series.pH is None
    assert m.fit.current_ratio_correction is True and m.fit.fixed_log10_beta_red is None


@pytest.mark.parametrize(
    ("old", "new", "key"),
    [
        ("pH = 7.0", "pH = 15.0", "series.pH"),
        ("ligand_pKa = [9.2, 6.1]", 'ligand_pKa = "9.2"', "series.ligand_pKa"),
        ("ligand_pKa = [9.2, 6.1]", "ligand_pKa = []", "series.ligand_pKa"),
        ("ionic_strength_M = 0.1", "ionic_strength_M = -0.1", "series.ionic_strength_M"),
        ("metal_charge = 2", "metal_charge = 1.5", "series.metal_charge"),
        (
            "fixed_log10_beta_red = [4.2]",
            'fixed_log10_beta_red = ["x"]',
            "fit.fixed_log10_beta_red",
        ),
        (
            "fixed_log10_beta_red = [4.2]",
            "fixed_log10_beta_red = [4.2]\nfixed_log10_beta_ox = [3.0]",
            "fit.fixed_log10_beta_red",
        ),
        ('model = "stepwise"', 'model = "lingane"', "fit.fixed_log10_beta_red"),
        (
            "current_ratio_correction = false",
            "current_ratio_correction = 1",
            "fit.current_ratio_correction",
        ),
        ("pH = 7.5", "pH = -1", "voltammogram[2].pH"),
        ("metal_total_M = 1.0e-3", "bound_ligand_number = 2", "series.bound_ligand_number"),
    ],
)
def test_bad_values_name_the_key(tmp_path, old, new, key):
    assert old in BASE
    with pytest.raises(InputError) as err:
        _load(tmp_path, BASE.replace(old, new, 1))
    assert err.value.key == key
    assert "m.toml" in str(err.value)
