"""The stepwise model on a titration by additions: the DeFord–Hume current ratio compares
diffusion coefficients, not the dilution of the metal.

A peak current is proportional to the bulk concentration and to √D (Randles–Ševčík; Bard,
A. J.; Faulkner, L. R. Electrochemical Methods, 2nd ed.; Wiley, 2001, eq. 6.2.19, from
memory), so with every solution's metal known ln(Is/Ic) must be taken per unit
concentration: 10 mL of metal diluted to 15 mL lowers the current by 1.5 × with no
complexation at all, ln 1.5 = 0.405 — 10 mV on the shift at 25 °C.
"""

from __future__ import annotations

import math
from dataclasses import replace

import pytest

from cvfit.cli import main
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.titration.base import TitrationPoint
from cvfit.titration.stepwise_model import current_ratios


def _point(label: str, current_A: float, metal_M: float | None) -> TitrationPoint:
    return TitrationPoint(label, 0.01, -0.3, 1e-4, "ox", current_A, 0.1, metal_M=metal_M)


def test_current_ratio_is_taken_per_unit_metal():
    # reference: 1 mM, 10 µA; the complexed solutions diluted to 0.8 and 0.667 mM, with D
    # lowered 4 × in the second: i ∝ C·√D, so Is/Ic per unit metal is 1 and √4 = 2
    refs = [_point("r", 10e-6, 1e-3)]
    used = [_point("a", 8e-6, 0.8e-3), _point("b", 10e-6 * (2 / 3) * 0.5, 1e-3 * 2 / 3)]
    ratios, flags = current_ratios(used, refs)
    assert ratios == pytest.approx([0.0, math.log(2.0)], abs=1e-12)
    assert "metal concentration" in flags[-1].message


def test_without_the_metal_the_raw_currents_are_compared_and_the_flag_says_so():
    refs = [_point("r", 10e-6, None)]
    used = [_point("a", 8e-6, None)]
    ratios, flags = current_ratios(used, refs)
    assert ratios == pytest.approx([math.log(10 / 8)], abs=1e-12)
    assert "same metal concentration" in flags[-1].message
    # a series metal alone (the same in every solution) changes nothing
    ratios, _ = current_ratios(used, refs, series_metal_M=1e-3)
    assert ratios == pytest.approx([math.log(10 / 8)], abs=1e-12)


def test_stepwise_on_a_titration_by_additions_finds_the_one_complex(tmp_path):
    """The acceptance series of tests/test_titration_additions.py (ML2, log10 β2 = 10; the
    "-5" for β1 makes ML1 negligible). Before: the dilution read as ln(Is/Ic) up to 0.406
    and the fit took a third constant, log10 β3 = 11.20 ± 0.02, with
    FREE_LIGAND_NOT_CONVERGED; measured now: two complexes, log10 β2 = 10.0042 ± 0.0022."""
    code = main([
        "simulate", "--series", "--e-half", "-0.2", "--log-beta-ox=-5,10",
        "--added-mL", "0,0.5,0.75,1,1.5,2,3,4,5", "--start-volume-mL", "10",
        "--metal-M", "1e-3", "--ligand-stock-M", "0.1", "--noise", "0.003", "--seed", "5",
        "--out", str(tmp_path),
    ])  # fmt: skip
    assert code == 0
    m = load_manifest(tmp_path / "series.toml")
    fit = analyse_series(replace(m, fit=replace(m.fit, model="stepwise"))).fit
    codes = {f.code for f in fit.flags}
    assert "FREE_LIGAND_NOT_CONVERGED" not in codes and "CURRENT_RATIO_APPLIED" in codes
    determined = [b for b in fit.to_dict()["log10_beta"] if b["determined"]]
    assert [b["j"] for b in determined] == [2]
    lo, hi = determined[0]["ci95"]
    assert lo <= 10.0 <= hi and hi - lo < 0.05


def test_the_global_stepwise_fit_compares_current_scales_per_unit_metal(tmp_path):
    """The global curve fit's DeFord–Hume term (from each curve model's current scale
    s = nFAC√D) read the dilution as a change of D as well: on this series it refused
    itself (reduced χ² 11.6). Per unit metal the truth (ML2 alone, log10 β2 = 10) is
    inside its interval."""
    out = tmp_path / "s"
    assert main([
        "simulate", "--series", "--e-half", "-0.2", "--log-beta-ox=-5,10",
        "--added-mL", "0,0.5,1,2,3,5", "--start-volume-mL", "10", "--metal-M", "1e-3",
        "--ligand-stock-M", "0.1", "--noise", "0.003", "--seed", "3", "--out", str(out),
    ]) == 0  # fmt: skip
    text = (out / "series.toml").read_text(encoding="utf-8")
    fit = '[fit]\nmodel = "stepwise"\ncurrent_ratio_correction = true\nglobal = true\n\n'
    (out / "series.toml").write_text(text.replace("[titration]", fit + "[titration]"))
    result = analyse_series(load_manifest(out / "series.toml"))
    assert not any(f.code == "GLOBAL_FIT_REFUSED" for f in result.flags)
    g = result.global_fit
    assert g is not None
    beta2 = next(b for b in g.to_dict()["log10_beta"] if b["j"] == 2)
    assert beta2["ci95"][0] <= 10.0 <= beta2["ci95"][1]
