"""Noisy titration series of each pulse or wave technique, analysed by the pipeline.

The noise-free records of one design (one per ligand concentration, simulated once by
:mod:`cvfit.simulate.programs`) get, per series, white noise of 0.2–1 % of their peak (or
limiting current) and a sloping background, and go through
:func:`cvfit.pipeline.series.analyse_series` in memory. :func:`coverage` counts how often
the 95 % intervals of log10(β_ox/β_red) and p − q hold the truth (used by
tests/test_pulse_series.py and scripts/pulse_coverage.py).
"""

from __future__ import annotations

from functools import cache
from pathlib import Path

import numpy as np

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.io import FitSettings, ImportOptions, Manifest, SeriesSettings, VoltammogramEntry
from cvfit.io.manifest_technique import TechniqueSettings
from cvfit.pipeline.series import analyse_series
from cvfit.reversibility_criteria import ReversibilityCriteria
from cvfit.simulate.programs import dpv_program, simulate_pulse, simulate_wave, swv_program
from cvfit.voltammogram import Voltammogram

#: The invented design: log10(β_ox/β_red) = 5 with one ligand more on the oxidised form.
LOG_BETA = 5.0
E_FREE = -0.080
LIGANDS = (0.0, 0.01, 0.02, 0.05, 0.1, 0.2)
WINDOW = (0.25, -0.65)
SETTINGS = {
    "dpv": {"pulse_amplitude_V": -0.05, "pulse_width_s": 0.05, "step_V": 0.005, "period_s": 0.5},
    "swv": {"amplitude_V": 0.025, "frequency_Hz": 25.0, "step_V": 0.005},
    "wave": {},
}


@cache
def clean_records(technique: str) -> tuple[Voltammogram, ...]:
    """One noise-free record per ligand concentration of the design."""
    halves = complexed_half_wave_V(
        E_FREE, ligand_M=np.array(LIGANDS), log10_beta_ox=[LOG_BETA], log10_beta_red=[]
    )
    out = []
    for E_half in np.atleast_1d(halves):
        if technique == "wave":
            out.append(simulate_wave(E_half_V=float(E_half), start_V=WINDOW[0],
                                     stop_V=WINDOW[1], step_V=0.002))  # fmt: skip
            continue
        if technique == "dpv":
            prog = dpv_program(*WINDOW, **SETTINGS["dpv"])
        else:
            prog = swv_program(*WINDOW, **SETTINGS["swv"])
        out.append(simulate_pulse(prog, E_half_V=float(E_half)).record)
    return tuple(out)


def manifest(technique: str, model: str = "lingane") -> Manifest:
    """The design's manifest in memory (files named f00.csv …, never read)."""
    entries = tuple(
        VoltammogramEntry(file=Path(f"/nonexistent/f{k:02d}.csv"), name=f"f{k:02d}.csv",
                          ligand_M=L)
        for k, L in enumerate(LIGANDS)
    )  # fmt: skip
    return Manifest(
        path=Path("/nonexistent/series.toml"),
        folder=Path("/nonexistent"),
        series=SeriesSettings(electrons=1, technique=technique, bulk_form="ox"),
        import_options=ImportOptions(),
        fit=FitSettings(model=model),  # type: ignore[arg-type]
        reversibility=ReversibilityCriteria(),
        voltammograms=entries,
        technique=TechniqueSettings(name=technique, **SETTINGS[technique]),
    )


def noisy_series(technique: str, rng: np.random.Generator) -> dict[str, Voltammogram]:
    """The design's records with 0.2–1 % noise and a sloping background, by file name."""
    noise = rng.uniform(0.002, 0.01)
    out = {}
    for k, clean in enumerate(clean_records(technique)):
        scale = float(np.max(np.abs(clean.current_A)))
        slope = rng.uniform(-0.2, 0.2) * scale  # A/V: up to 20 % of the peak per volt
        i = (
            clean.current_A
            + slope * clean.potential_V
            + rng.normal(0, noise * scale, clean.n_points)
        )
        out[f"f{k:02d}.csv"] = Voltammogram(
            potential_V=clean.potential_V, current_A=i, time_s=clean.time_s
        )
    return out


def coverage(technique: str, n_series: int, seed: int) -> dict[str, float]:
    """Fractions of *n_series* whose 95 % intervals hold log10(β_ox/β_red) and p − q, and
    of files that passed the technique's screen."""
    rng = np.random.default_rng(seed)
    m = manifest(technique)
    hits = np.zeros(2)
    passed = total = 0
    for _ in range(n_series):
        result = analyse_series(m, records=noisy_series(technique, rng))
        passed += sum(f.reversible is True for f in result.files)
        total += len(result.files)
        fit = result.fit
        if fit is None:
            continue
        d = fit.to_dict()
        lo, hi = d["log10_beta_ratio"]["ci95"]
        hits[0] += lo <= LOG_BETA <= hi
        lo, hi = d["delta_ligands"]["ci95"]
        hits[1] += lo <= 1.0 <= hi
    return {
        "log10_beta_ratio": hits[0] / n_series,
        "delta_ligands": hits[1] / n_series,
        "screen_passed": passed / total,
    }
