"""Speed of the global curve fit (``[fit] global = true``) against the two-step fit.

Run: ``python benchmarks/bench_global_fit.py [--repeats 3]``.

Two six-file series of 2 001-point cycles (charging, a sloping background, 0.5 % noise), the
two highest-[L] files quasi-reversible (k0 5e-3 and 2e-3 cm/s, α = 0.4, 20 Ω the manifest
does not give), simulated once with :func:`cvfit.simulate.simulate_cv`:

* ``lingane``: one complex of each oxidation state (p − q = 1);
* ``stepwise``: two complexes of the oxidised form (log10 β = 2.5, 4.5).

Each is analysed in this process by :func:`cvfit.pipeline.series.analyse_series` with the
two-step fit (peaks, and the curve fit of the two slow files; the baseline) and with
``global = true`` (the same, then every file's curve fitted with E½ tied by the model),
the two alternating run by run. Prints the medians, their ratio and the simulations the
global fit took. No assertions: numbers depend on the machine and its load.
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

from _timing import alternate, median

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.simulate import simulate_cv, write_voltammogram_csv

LIGAND_M = (0.0, 0.003, 0.01, 0.03, 0.1, 0.3)
SLOW = {0.1: 5e-3, 0.3: 2e-3}
SETTINGS = dict(
    start_V=0.25, switch_V=-0.65, scan_rate_V_s=0.02, step_V=0.0009, double_layer_F=5e-6,
    background_offset_A=1e-7, background_slope_A_per_V=2e-6, noise_fraction=0.005, alpha=0.4,
)  # fmt: skip
#: (β of the oxidised form, β of the reduced form, the [fit] lines) of each model.
MODELS = {
    "lingane": ((6.0,), (), ['model = "lingane"']),
    "stepwise": ((2.5, 4.5), (), ['model = "stepwise"', "max_complexes = 3"]),
}


def _series(folder: Path, model: str) -> dict[str, Path]:
    """The series' files and its two manifests (two-step, global), by fit."""
    beta_ox, beta_red, fit_lines = MODELS[model]
    entries = []
    for k, ligand in enumerate(LIGAND_M):
        E = float(
            complexed_half_wave_V(
                0.0, ligand_M=ligand, log10_beta_ox=beta_ox, log10_beta_red=beta_red
            )
        )
        k0 = SLOW.get(ligand)
        v = simulate_cv(
            E_half_V=E, k0_cm_s=k0, resistance_ohm=20.0 if k0 else 0.0, seed=300 + k,
            **SETTINGS,
        )  # fmt: skip
        name = f"{model}_{k}.csv"
        write_voltammogram_csv(v, folder / name)
        entries += ["[[voltammogram]]", f'file = "{name}"', f"ligand_M = {ligand!r}"]
    head = ["[series]", "electrons = 1", "diffusion_cm2_s = 1e-5", "[fit]", *fit_lines]
    paths = {}
    for fit, extra in (("two-step", []), ("global", ["global = true"])):
        path = folder / f"{model}_{fit}.toml"
        path.write_text("\n".join([*head, *extra, *entries]) + "\n", encoding="utf-8")
        paths[fit] = path
    return paths


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=3, help="timed runs of each side (3)")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory(prefix="cvfit_bench_global_") as tmp:
        for model in MODELS:
            manifests = {k: load_manifest(p) for k, p in _series(Path(tmp), model).items()}
            analyse_series(manifests["global"])  # untimed: loads the simulator's kernel once
            times = alternate(
                {k: (lambda m=m: analyse_series(m)) for k, m in manifests.items()}, args.repeats
            )
            g = analyse_series(manifests["global"]).global_fit
            two, glob = median(times["two-step"]), median(times["global"])
            print(
                f"{model:9s} two-step {two:6.2f} s   global {glob:6.2f} s  = {glob / two:5.1f} ×"
                f"   ({g.simulations} simulations, the global fit itself {g.fit_time_s:.2f} s)"
            )


if __name__ == "__main__":
    main()
