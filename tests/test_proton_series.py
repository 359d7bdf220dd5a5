"""A pH series end to end, from voltammograms computed independently of cvfit.

Each file is a cyclic voltammogram of tests/convolution_cv.py (the convolution integral,
no code shared with cvfit.simulate), recorded ±0.3 V around its own E½ with 0.3 % noise;
for a pH series only E½ moves, so each file is computed at the E½ the relation gives at
its pH, written out here (Clark, Oxidation-Reduction Potentials of Organic Systems, 1960;
Bard & Faulkner, Electrochemical Methods, 2nd ed., 2001; from memory). The manifest gives
each file its pH and ``[fit] model = "proton"``; cvfit reads the CSV files, measures E½ and
fits the pKa.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
from independent_curves import independent_cv
from scipy.constants import R, physical_constants

from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report import write_outputs

F = physical_constants["Faraday constant"][0]
E0_V = 0.10
#: Reversible peak current of 1 mM, 0.0707 cm², D 1e-5 cm²/s, 0.1 V/s (Randles–Ševčík,
#: 2.69e5 n^3/2 A C D^½ v^½; Bard & Faulkner eq. 6.2.19): the noise scale.
PEAK_A = 2.69e5 * 0.0707 * math.sqrt(1e-5) * 1e-6 * math.sqrt(0.1)


def e_half(pH: float, ox, red, T: float = 298.15) -> float:
    h = 10.0**-pH

    def poly(pKa) -> float:
        total, beta = 1.0, 1.0
        for j, p in enumerate(pKa, start=1):
            beta *= 10.0**p
            total += beta * h**j
        return total

    return E0_V + R * T / F * math.log(poly(red) / poly(ox))


def write_series(folder: Path, pHs, ox, red, *, noise=0.003, seed=7, max_protons=2) -> Path:
    lines = ["[series]", "electrons = 1", 'title = "pH series"', "[fit]", 'model = "proton"',
             f"max_protons = {max_protons}"]  # fmt: skip
    for k, pH in enumerate(pHs):
        E = e_half(pH, ox, red)
        t, V, i = independent_cv(
            E_half_V=E, start_V=E + 0.3, switch_V=E - 0.3, k0_cm_s=None, scan_rate_V_s=0.1,
            step_V=0.001, substeps=4, noise_A=noise * PEAK_A, seed=1000 * seed + k,
        )  # fmt: skip
        name = f"ph{k:02d}.csv"
        np.savetxt(folder / name, np.column_stack([t, V, i]), delimiter=",",
                   header="time_s,potential_V,current_A", comments="")  # fmt: skip
        lines += ["[[voltammogram]]", f'file = "{name}"', f"pH = {pH!r}"]
    manifest = folder / "series.toml"
    manifest.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return manifest


def _check(fit, ox, red) -> None:
    assert [p.j for p in fit.pKa_ox] == list(range(1, len(ox) + 1))
    assert [p.j for p in fit.pKa_red] == list(range(1, len(red) + 1))
    for pkas, truth in ((fit.pKa_ox, ox), (fit.pKa_red, red)):
        for p, true in zip(pkas, truth, strict=True):
            lo, hi = p.value.ci95
            assert abs(p.value.value - true) < 0.03, (p, true)
            assert lo <= true <= hi, (p, true)
            assert p.determined


def test_one_pKa_per_form(tmp_path):
    ox, red = (4.0,), (7.5,)
    pHs = [float(x) for x in np.arange(2.0, 10.01, 0.5)]
    result = analyse_series(load_manifest(write_series(tmp_path, pHs, ox, red)))
    _check(result.fit, ox, red)
    # the region between the two pKa carries one proton per electron: −59.16 mV per pH
    middle = [r for r in result.fit.regions if r.protons == 1]
    assert len(middle) == 1
    assert middle[0].slope_V_per_pH == pytest.approx(-math.log(10) * R * 298.15 / F, rel=1e-9)
    assert middle[0].pH_low == pytest.approx(4.0, abs=0.03)
    out = write_outputs(result, tmp_path / "out")
    data = json.loads((tmp_path / "out" / "results.json").read_text(encoding="utf-8"))
    from test_pipeline import validate

    validate(data, "results.schema.json")
    assert data["fit"]["pKa_ox"][0]["j"] == 1 and data["reference"]["source"] == "none"
    assert [v["pH"] for v in data["voltammograms"]] == pHs
    assert {"proton_figure", "proton_fractions_figure"} <= set(out)


def test_two_pKa_per_form_at_0_3_percent_noise(tmp_path):
    ox, red = (5.5, 2.5), (9.5, 6.5)
    pHs = [float(x) for x in np.arange(0.5, 11.51, 0.5)]
    result = analyse_series(load_manifest(write_series(tmp_path, pHs, ox, red)))
    _check(result.fit, ox, red)
    assert [r.protons for r in result.fit.regions] == [0, 1, 2, 1, 0]
