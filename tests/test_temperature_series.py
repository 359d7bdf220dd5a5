"""Temperature series: dE½/dT, the reaction entropy of the couple, and van 't Hoff.

The voltammograms come from tests/convolution_cv.py (no code shared with cvfit.simulate),
each computed at its own temperature; E½(T) = E½(T₀) + (ΔS°rc/nF)(T − T₀) is the relation
of a non-isothermal cell (Yee, Cave, Guyer, Tyma, Weaver, J. Am. Chem. Soc. 101 (1979)
1131; from memory), written out here.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from independent_curves import independent_cv
from scipy.constants import R, physical_constants, zero_Celsius

from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.titration.van_t_hoff import fit_van_t_hoff

F = physical_constants["Faraday constant"][0]
PEAK_A = 2.69e5 * 0.0707 * math.sqrt(1e-5) * 1e-6 * math.sqrt(0.1)  # Randles–Ševčík, 1 mM
#: ΔS°rc of the simulated couple, J/(mol K): about that of Ru(NH3)6 3+/2+ (Yee et al. 1979,
#: some 18 e.u., from memory).
ENTROPY = 75.0
T0 = 298.15


def e_half(T: float) -> float:
    return 0.1 + ENTROPY / F * (T - T0)


def _series(folder: Path, temps_C, *, reference_at: str | None, noise=0.003) -> Path:
    lines = ["[series]", "electrons = 1", "[fit]", 'model = "temperature"']
    if reference_at:
        lines.insert(2, f'reference_at = "{reference_at}"')
    for k, tc in enumerate(temps_C):
        T = tc + zero_Celsius
        E = e_half(T)
        t, V, i = independent_cv(
            E_half_V=E, start_V=E + 0.3, switch_V=E - 0.3, k0_cm_s=None, scan_rate_V_s=0.1,
            step_V=0.001, substeps=4, noise_A=noise * PEAK_A, seed=500 + k, temperature_K=T,
        )  # fmt: skip
        np.savetxt(folder / f"t{k}.csv", np.column_stack([t, V, i]), delimiter=",",
                   header="time_s,potential_V,current_A", comments="")  # fmt: skip
        lines += ["[[voltammogram]]", f'file = "t{k}.csv"', f"temperature_C = {float(tc)!r}"]
    (folder / "series.toml").write_text("\n".join(lines) + "\n", encoding="utf-8")
    return folder / "series.toml"


def test_seven_temperatures_give_the_reaction_entropy(tmp_path):
    temps = [15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0]
    result = analyse_series(
        load_manifest(_series(tmp_path, temps, reference_at="constant_temperature"))
    )
    fit = result.fit
    lo, hi = fit.entropy.ci95
    assert lo <= ENTROPY <= hi, fit.entropy
    assert fit.entropy.value == pytest.approx(ENTROPY, abs=3.0)
    lo, hi = fit.slope.ci95
    assert lo <= ENTROPY / F <= hi
    # ΔH°rc = −F(E − T dE/dT), the same at every T for a straight line
    true_h = -F * (e_half(T0) - T0 * ENTROPY / F)
    assert fit.enthalpy.ci95[0] <= true_h <= fit.enthalpy.ci95[1]
    # every file was analysed at its own temperature: its screen's Nernstian ΔEp, in units
    # of RT/F at the file's T, is the same number for every file (Nicholson & Shain, Anal.
    # Chem. 36 (1964) 706: 2.218 RT/F for a distant switch, 57.0–57.8 mV at 25 °C for
    # switches beyond 270 mV; from memory); at the series' 25 °C it would drift by 10 %.
    reduced = []
    for f, tc in zip(result.files, temps, strict=True):
        assert f.temperature_K == pytest.approx(tc + zero_Celsius)
        assert f.measurement.temperature_K == pytest.approx(tc + zero_Celsius)
        reduced.append(f.measurement.screen.expected_delta_Ep_V * F / (R * f.temperature_K))
    assert max(reduced) - min(reduced) < 0.01  # the switch, 0.3 V, is 11–12 RT/F
    assert 2.218 - 0.005 < min(reduced) and max(reduced) < 2.26
    assert not any(fl.code == "TEMPERATURE_LINE_CURVED" for fl in fit.flags)


def _points_manifest(folder: Path, rows, reference_at: str | None) -> Path:
    lines = ["[series]", "electrons = 1", "[fit]", 'model = "temperature"']
    if reference_at:
        lines.insert(2, f'reference_at = "{reference_at}"')
    for tc, E in rows:
        lines += ["[[point]]", f"temperature_C = {tc!r}", f"E_half_V = {E!r}",
                  "E_half_stderr_V = 0.0001"]  # fmt: skip
    path = folder / "points.toml"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_iron_aquo_worked_value(tmp_path):
    # Yee et al. 1979: ΔS°rc of Fe(H2O)6 3+/2+ ≈ 43 e.u. = 180 J/(mol K) (from memory), so
    # dE°′/dT = ΔS°rc/F = 1.866 mV/K for n = 1 in a non-isothermal cell.
    slope = 180.0 / F
    rows = [(tc, 0.5 + slope * (tc - 25.0)) for tc in (10.0, 20.0, 30.0, 40.0, 50.0)]
    fit = analyse_series(
        load_manifest(_points_manifest(tmp_path, rows, "constant_temperature"))
    ).fit
    assert fit.slope.value == pytest.approx(1.866e-3, abs=0.001e-3)
    assert fit.entropy.value == pytest.approx(180.0, abs=0.01)
    assert "couple" in fit.to_dict()["entropy_of"]


def test_the_cell_arrangement_decides_what_is_reported(tmp_path):
    rows = [(tc, 0.2 + 1e-3 * (tc - 25.0)) for tc in (10.0, 20.0, 30.0, 40.0)]
    unstated = analyse_series(load_manifest(_points_manifest(tmp_path, rows, None))).fit
    assert unstated.entropy is None and unstated.slope.value == pytest.approx(1e-3)
    assert any(fl.code == "TEMPERATURE_CELL_UNSTATED" for fl in unstated.flags)
    iso = analyse_series(load_manifest(_points_manifest(tmp_path, rows, "same_temperature"))).fit
    assert "cell reaction" in iso.to_dict()["entropy_of"]
    # a bend (ΔCp ≠ 0) is flagged
    rows = [(tc, 0.2 + 1e-3 * (tc - 25.0) + 4e-6 * (tc - 25.0) ** 2) for tc in range(10, 51, 5)]
    bent = analyse_series(load_manifest(_points_manifest(tmp_path, rows, None))).fit
    assert any(fl.code == "TEMPERATURE_LINE_CURVED" for fl in bent.flags)


def test_van_t_hoff_gives_the_enthalpy_and_entropy_back():
    # ln(β_ox/β_red) = −ΔH/RT + ΔS/R (van 't Hoff), written out here
    dH, dS = -25e3, 40.0
    T = np.array([288.15, 298.15, 308.15, 318.15])
    y = (-dH / (R * T) + dS / R) / math.log(10)
    fit = fit_van_t_hoff(T, y + np.array([1e-3, -1e-3, 1e-3, -1e-3]), [1e-3] * 4)
    assert fit.enthalpy.ci95[0] <= dH <= fit.enthalpy.ci95[1]
    assert fit.entropy.ci95[0] <= dS <= fit.entropy.ci95[1]
    assert fit.enthalpy.value == pytest.approx(dH, abs=300)
    assert fit_van_t_hoff(T[:2], y[:2], [1e-3] * 2) is None


def test_a_batch_at_three_temperatures_prints_the_van_t_hoff_summary(tmp_path):
    from cvfit.cli.batch import format_batch_summary, run_batch
    from cvfit.simulate.titration_series import simulate_series

    dH, dS = -20e3, 30.0
    manifests = []
    for k, tc in enumerate((15.0, 30.0, 45.0)):
        T = tc + zero_Celsius
        ratio = (-dH / (R * T) + dS / R) / math.log(10)
        m = simulate_series(
            tmp_path / f"s{k}", ligand_M=[0.0, 0.01, 0.03, 0.1, 0.3], E_half_free_V=0.0,
            log10_beta_ox=[ratio], log10_beta_red=[], temperature_K=T, start_V=0.3,
            switch_V=-0.5, noise_fraction=0.002, seed=k, title=f"at {tc:g} °C",
        )  # fmt: skip
        manifests.append(m)
    outcomes = run_batch(manifests, [tmp_path / f"o{k}" for k in range(3)], jobs=1, progress=False)
    text = format_batch_summary(outcomes)
    assert "Van 't Hoff" in text
    from cvfit.cli.batch_van_t_hoff import van_t_hoff_lines

    assert van_t_hoff_lines(outcomes)
    T = [o.temperature_K for o in outcomes]
    fit = fit_van_t_hoff(T, [o.log10_ratio for o in outcomes],
                         [o.log10_ratio_stderr for o in outcomes])  # fmt: skip
    assert fit.enthalpy.ci95[0] <= dH <= fit.enthalpy.ci95[1]
    assert fit.entropy.ci95[0] <= dS <= fit.entropy.ci95[1]
