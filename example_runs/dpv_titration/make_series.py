"""Rebuild the differential-pulse example: inputs/ (CSV files and manifest) and results/.

Invented scenario, simulated data, for demonstration only: a hypothetical one-electron
M(III)/M(II) couple at 20 µM — a concentration at which a pulse technique still gives a
clean peak — titrated with a hypothetical neutral ligand "L" at 25 °C, potentials against
Ag/AgCl. The oxidised state binds two ligands (log β1 = 5.5, log β2 = 10.5), the reduced
state one (log β1 = 5.2), so p − q = 1 and log10(β_ox/β_red) = 10.5 − 5.2 = 5.3 where ML2
and ML dominate. E½ of the free couple +0.050 V. Eight solutions from 0 to 0.3 M ligand, each
scanned cathodically from +0.35 to −0.55 V in 5 mV steps with 50 mV pulses of 50 ms every
0.5 s; noise 0.5 % of the peak current and a sloping background.

Usage: ``python example_runs/dpv_titration/make_series.py`` from the project root (some
seconds).
"""

from __future__ import annotations

import shutil
import sys
from pathlib import Path

from cvfit.cli import main as cvfit_main
from cvfit.simulate.program_series import simulate_technique_series

HERE = Path(__file__).resolve().parent
LIGAND_M = (0.0, 0.005, 0.01, 0.02, 0.04, 0.08, 0.15, 0.3)
LOG_BETA_OX = (5.5, 10.5)
LOG_BETA_RED = (5.2,)
SEED = 20261205


def main() -> int:
    inputs, results = HERE / "inputs", HERE / "results"
    for folder in (inputs, results):
        if folder.exists():
            shutil.rmtree(folder)
    manifest = simulate_technique_series(
        inputs,
        technique="dpv",
        ligand_M=LIGAND_M,
        E_half_free_V=0.050,
        log10_beta_ox=LOG_BETA_OX,
        log10_beta_red=LOG_BETA_RED,
        window_V=(0.35, -0.55),
        title="DPV titration of a M(III)/M(II) couple with ligand L (simulated)",
        program={
            "step_V": 0.005,
            "pulse_amplitude_V": 0.05,
            "pulse_width_s": 0.05,
            "period_s": 0.5,
        },  # fmt: skip
        concentration_M=2e-5,
        noise_fraction=0.005,
        background_slope_A_per_V=2e-9,
        seed=SEED,
    )
    return cvfit_main(["run", str(manifest), "--out", str(results)])


if __name__ == "__main__":
    sys.exit(main())
