"""Rebuild the pH example: inputs/ (CSV files and manifest) and results/.

Invented scenario, simulated data, for demonstration only: a hypothetical one-electron
couple "Ox/Red" of an organic mediator, one proton on each form — pKa of the oxidised form
4.0, of the reduced form 7.5, E° of the unprotonated couple +0.100 V against Ag/AgCl — so
E½ falls by 59.2 mV per pH unit between pH 4.0 and 7.5 and stays flat outside. Thirteen
buffered solutions from pH 2.0 to 11.0, one cycle each at 0.1 V/s, noise 0.3 % of the
peak current, double-layer charging 5 µF. [H⁺] = 10^−pH is the activity a pH meter reads.

Usage: ``python example_runs/ph_series/make_series.py`` from the project root (some
seconds).
"""

from __future__ import annotations

import shutil
import sys
from pathlib import Path

from cvfit.cli import main as cvfit_main
from cvfit.simulate.variable_series import simulate_pH_series

HERE = Path(__file__).resolve().parent
E0_V = 0.100
PKA_OX = (4.0,)
PKA_RED = (7.5,)
PH = (2.0, 2.75, 3.5, 4.25, 5.0, 5.75, 6.5, 7.25, 8.0, 8.75, 9.5, 10.25, 11.0)
SEED = 20261204


def main() -> int:
    inputs, results = HERE / "inputs", HERE / "results"
    for folder in (inputs, results):
        if folder.exists():
            shutil.rmtree(folder)
    manifest = simulate_pH_series(
        inputs,
        pH=PH,
        E0_V=E0_V,
        pKa_ox=PKA_OX,
        pKa_red=PKA_RED,
        title="pH series: a proton-coupled Ox/Red couple (simulated)",
        noise_fraction=0.003,
        seed=SEED,
        max_protons=2,
        start_V=0.70,
        switch_V=-0.30,
        step_V=0.001,
        scan_rate_V_s=0.1,
        double_layer_F=5e-6,
    )
    return cvfit_main(["run", str(manifest), "--out", str(results)])


if __name__ == "__main__":
    sys.exit(main())
