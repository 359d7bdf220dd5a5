"""Speed of the curve fit: one 2 000-point cycle, and a 20-file series fitted file by file.

Run: ``python benchmarks/bench_curve_fit.py [--repeats 5] [--jobs 2]``.

* one quasi-reversible cycle (2 001 points, k0 = 5e-3 cm/s, charging, background, noise):
  the whole fit (:func:`cvfit.techniques.cv.curve.fit.fit_curve`, R_u known and R_u fitted), the
  number of simulations it takes and the time per simulation, against the peak analysis
  of the same record (:func:`cvfit.techniques.cv.peaks.analysis.analyse_peaks`);
* a 20-file series of such cycles analysed with ``half_wave_source = "curve"`` (a curve
  fit for every file) and ``"peaks"``, the two runs alternated, on ``--jobs`` processes.

Prints times and ratios to the peaks-only runs. No assertions: numbers depend on the
machine and its load (the targets of the issue: ≤ 0.3 s per cycle on one core, < 10 s for
the series on two).
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

import numpy as np
from _timing import alternate, best_of, median

from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.simulate import simulate_cv, write_voltammogram_csv
from cvfit.techniques.cv.curve.fit import fit_curve
from cvfit.techniques.cv.curve.model import curve_data
from cvfit.techniques.cv.peaks.analysis import analyse_peaks

SETTINGS = dict(
    start_V=0.25, switch_V=-0.65, scan_rate_V_s=0.02, step_V=0.0009, double_layer_F=5e-6,
    background_slope_A_per_V=2e-6, noise_fraction=0.005, k0_cm_s=5e-3, alpha=0.5,
)  # fmt: skip


def _record(E_half_V: float, seed: int):
    return simulate_cv(E_half_V=E_half_V, seed=seed, **SETTINGS)


def _series(folder: Path, files: int, source: str) -> Path:
    lines = ["[series]", "electrons = 1", "diffusion_cm2_s = 1e-5", "[fit]"]
    lines.append(f'half_wave_source = "{source}"')
    for k in range(files):
        name = f"q{k:02d}.csv"
        if not (folder / name).exists():
            write_voltammogram_csv(_record(-0.05 * np.log10(1 + k), 100 + k), folder / name)
        lines += ["[[voltammogram]]", f'file = "{name}"', f"ligand_M = {0.01 * k!r}"]
    path = folder / f"series_{source}.toml"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--files", type=int, default=20)
    args = ap.parse_args()

    v = _record(-0.2, 1)
    n = v.potential_V.size
    sigma = 0.005 * 1.2e-5
    data = curve_data(
        v.potential_V, v.current_A, time_s=v.time_s, scan_rate_V_s=0.02, stop=n - 1,
        electrons=1, temperature_K=298.15, bulk="ox", sigma_A=sigma,
    )  # fmt: skip
    fit_curve(data, E_half_start_V=-0.19, D_cm2_s=1e-5)  # compile / load the kernel once
    peaks = best_of(lambda: analyse_peaks(v, electrons=1), args.repeats)
    print(f"one cycle, {n} points")
    print(f"  peak analysis (baseline)      {1e3 * peaks:8.1f} ms")
    for label, R in (("curve fit, R_u known", 0.0), ("curve fit, R_u fitted", None)):
        fits = []

        def run(R=R, fits=fits):
            fits.append(fit_curve(data, E_half_start_V=-0.19, D_cm2_s=1e-5, resistance_ohm=R))

        t = best_of(run, args.repeats)
        f = fits[-1]
        per_sim = f.simulation_time_s / f.simulations
        print(
            f"  {label:<28}  {1e3 * t:8.1f} ms  = {t / peaks:6.1f} × peaks;  "
            f"{f.simulations} simulations × {1e3 * per_sim:.2f} ms "
            f"({100 * f.simulation_time_s / f.fit_time_s:.0f} % of the fit)"
        )

    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        manifests = {s: load_manifest(_series(folder, args.files, s)) for s in ("peaks", "curve")}
        analyse_series(manifests["curve"], jobs=args.jobs)  # warm the pool's imports
        times = alternate(
            {s: (lambda m=m: analyse_series(m, jobs=args.jobs)) for s, m in manifests.items()},
            max(1, args.repeats // 2),
        )
        res = analyse_series(manifests["curve"], jobs=args.jobs)
        fitted = sum(f.measurement.curve_fit is not None for f in res.files)
        base = median(times["peaks"])
        print(f"series of {args.files} files ({fitted} curve fits), --jobs {args.jobs}")
        print(f"  peaks only (baseline)         {median(times['peaks']):8.2f} s")
        print(
            f"  curve fit of every file       {median(times['curve']):8.2f} s  = "
            f"{median(times['curve']) / base:6.1f} × peaks"
        )


if __name__ == "__main__":
    main()
