"""Rebuild the internal-standard example: inputs/ (CSV files and manifest) and results/.

Invented scenario, simulated data, for demonstration only: the demo's hypothetical
M(III)/M(II) couple (E½ of the free couple −0.050 V on the electrode's scale; oxidised state
log β1 = 5.0, log β2 = 9.6; reduced state log β1 = 4.2: p − q = 1 and log10(β_ox/β_red)
= 5.4 where ML2 and ML dominate) titrated with "tazine", with an inert one-electron
reference couple (E½ +0.250 V on the electrode's scale, 1 mM) in every solution. The
reference electrode drifts between solutions by a random walk of 2 mV steps, which moves
both waves of a file alike. Two ligand-free solutions are measured, one before and one
after the series. Noise 0.5 % of the analyte's peak current, double-layer charging 5 µF
and a sloping background, one cycle per file, 0.1 V/s.

Potentials are reported against the standard (``[internal_standard] E_half_V = 0``), so
the analyte's true E½ against the standard is −0.300 V without ligand.

Usage: ``python example_runs/internal_standard/make_series.py`` from the project root
(about half a minute).
"""

from __future__ import annotations

import shutil
import sys
from pathlib import Path

from cvfit.cli import main as cvfit_main
from cvfit.simulate.internal_standard import simulate_internal_standard_series

HERE = Path(__file__).resolve().parent
E_HALF_FREE_V = -0.050
STANDARD_E_HALF_V = 0.250
LOG_BETA_OX = (5.0, 9.6)
LOG_BETA_RED = (4.2,)
LIGAND_M = (0.0, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2, 0.35, 0.0)
SEED = 20261203


def main() -> int:
    inputs, results = HERE / "inputs", HERE / "results"
    for folder in (inputs, results):
        if folder.exists():
            shutil.rmtree(folder)
    series = simulate_internal_standard_series(
        ligand_M=LIGAND_M,
        E_half_free_V=E_HALF_FREE_V,
        log10_beta_ox=LOG_BETA_OX,
        log10_beta_red=LOG_BETA_RED,
        standard_E_half_V=STANDARD_E_HALF_V,
        drift_step_V=0.002,
        noise_fraction=0.005,
        seed=SEED,
        out_dir=inputs,
        title="Internal standard: M(III)/M(II) with tazine (simulated)",
        analyte_window_V=(-0.9, 0.10),
        standard_window_V=(0.10, 0.8),
        start_V=0.55,
        switch_V=-0.70,
        step_V=0.001,
        scan_rate_V_s=0.1,
        double_layer_F=5e-6,
        background_slope_A_per_V=2e-6,
    )
    drift = ", ".join(f"{1e3 * d:+.2f}" for d in series.drift_V)
    truth = ", ".join(f"{1e3 * e:.2f}" for e in series.E_half_vs_standard_V)
    print(f"reference-electrode drift per file / mV: {drift}")
    print(f"true analyte E½ against the standard / mV: {truth}")
    return cvfit_main(["run", str(series.manifest), "--out", str(results)])


if __name__ == "__main__":
    sys.exit(main())
