"""Coverage of log10(β_ox/β_red) and p − q in the default ``auto`` mode, slow files included.

Run: ``python scripts/auto_mode_coverage.py [--series 200] [--seed 1] [--slow 2 3]``
(about 3 s per series on one core; not a test: too slow for the suite).

Each series is the seven files of ``tests/seriesfactory.py`` (p − q = 1,
log10(β_ox/β_red) = 6.0, the ligand-free file first; Lingane, Chem. Rev. 29 (1941) 1),
simulated as whole voltammograms at 20 mV/s with charging (5 µF), a sloping background
and 0.5 % noise. The two or three highest-[L] files (``--slow``, drawn per series) are
quasi-reversible, ψ drawn log-uniform in 0.4–2 (k0 from Nicholson's ψ = k0/√(πDnFv/RT),
Anal. Chem. 37 (1965) 1351), with 20 Ω of uncompensated resistance the manifest does not
give: the screen fails them and the whole-curve fit gives their E½, on one line with the
peak-derived E½ of the others. Everything runs through ``analyse_series`` in memory.

Prints the coverage of the 95 % intervals (binomial SD 1.5 % at 200 series), the mean
error of p − q and of the log ratio with its standard error (bias), how many files took
the curve fit, and the files whose E½ lies more than 3 of its standard errors from the
truth.
"""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from seriesfactory import (  # noqa: E402
    E_HALF_FREE_V,
    LIGAND_M,
    LOG_BETA_OX,
    LOG_BETA_RED,
    TRUE_DELTA_LIGANDS,
    TRUE_LOG10_RATIO,
)

from cvfit.chemistry.complexation import complexed_half_wave_V  # noqa: E402
from cvfit.io import (  # noqa: E402
    FitSettings,
    ImportOptions,
    Manifest,
    SeriesSettings,
    VoltammogramEntry,
)
from cvfit.pipeline.series import analyse_series  # noqa: E402
from cvfit.reversibility_criteria import ReversibilityCriteria  # noqa: E402
from cvfit.simulate.voltammogram import simulate_cv  # noqa: E402
from cvfit.units import thermal_voltage  # noqa: E402

SCAN_RATE_V_S = 0.02
D_CM2_S = 1e-5
PSI_RANGE = (0.4, 2.0)
RESISTANCE_OHM = 20.0
COMMON = dict(
    start_V=0.25, switch_V=-0.65, scan_rate_V_s=SCAN_RATE_V_S, step_V=0.0009,
    double_layer_F=5e-6, background_offset_A=1e-7, background_slope_A_per_V=2e-6,
    noise_fraction=0.005,
)  # fmt: skip


def k0_for_psi(psi: float) -> float:
    """k0 (cm/s) of Nicholson's ψ at the series' scan rate, n = 1, D_O = D_R."""
    return psi * math.sqrt(math.pi * D_CM2_S * SCAN_RATE_V_S / thermal_voltage(298.15, 1))


def true_E_half(ligand: float) -> float:
    return float(
        complexed_half_wave_V(
            E_HALF_FREE_V, ligand_M=ligand, log10_beta_ox=LOG_BETA_OX, log10_beta_red=LOG_BETA_RED
        )
    )


def manifest() -> Manifest:
    entries = tuple(
        VoltammogramEntry(file=Path(f"/virtual/f{k}.csv"), name=f"f{k}.csv", ligand_M=c,
                          scan_rate_V_s=SCAN_RATE_V_S, import_options=ImportOptions())
        for k, c in enumerate(LIGAND_M)
    )  # fmt: skip
    return Manifest(
        path=Path("/virtual/series.toml"), folder=Path("/virtual"),
        series=SeriesSettings(title="auto coverage", electrons=1, diffusion_cm2_s=D_CM2_S),
        import_options=ImportOptions(), fit=FitSettings(), reversibility=ReversibilityCriteria(),
        voltammograms=entries,
    )  # fmt: skip


def one_series(m: Manifest, rng: np.random.Generator, slow_counts: tuple[int, ...]):
    """Simulate and analyse one series; (fit, files, slow names)."""
    n_slow = int(rng.choice(slow_counts))
    slow = {e.name for e in m.voltammograms[-n_slow:]}
    records = {}
    for e in m.voltammograms:
        psi = math.exp(rng.uniform(*np.log(PSI_RANGE))) if e.name in slow else None
        records[e.name] = simulate_cv(
            **COMMON, E_half_V=true_E_half(e.ligand_M),
            k0_cm_s=None if psi is None else k0_for_psi(psi),
            resistance_ohm=RESISTANCE_OHM if psi is not None else 0.0,
            seed=int(rng.integers(2**31)),
        )  # fmt: skip
    result = analyse_series(m, records=records)
    return result.fit, result.files, slow


def run(n: int, seed: int, slow_counts: tuple[int, ...]) -> dict[str, float]:
    m = manifest()
    rng = np.random.default_rng(seed)
    hits = np.zeros(3)
    err_delta, err_ratio, curve, used, off = [], [], 0, 0, []
    for k in range(n):
        fit, files, slow = one_series(m, rng, slow_counts)
        for f in files:
            if f.E_half_source == "curve" and f.used_in_fit:
                curve += 1
            used += bool(f.used_in_fit)
            if f.used_in_fit and f.E_half_stderr_V:
                z = (f.E_half_V - true_E_half(f.ligand_M)) / f.E_half_stderr_V
                if abs(z) > 3:
                    off.append((k, f.file, f.E_half_source, round(z, 1)))
        quantities = (
            (fit.log10_beta_ratio, TRUE_LOG10_RATIO),
            (fit.delta_ligands, TRUE_DELTA_LIGANDS),
            (fit.log10_beta_ratio_at_integer, TRUE_LOG10_RATIO),
        )
        for j, (q, truth) in enumerate(quantities):
            hits[j] += q.ci95[0] <= truth <= q.ci95[1]
        err_delta.append(fit.delta_ligands.value - TRUE_DELTA_LIGANDS)
        err_ratio.append(fit.log10_beta_ratio.value - TRUE_LOG10_RATIO)
        if (k + 1) % 25 == 0:
            print(f"  {k + 1} series, coverage so far {hits / (k + 1)}", file=sys.stderr,
                  flush=True)  # fmt: skip
    d, r = np.array(err_delta), np.array(err_ratio)
    return {
        "series": n,
        "coverage_log10_ratio": hits[0] / n,
        "coverage_delta": hits[1] / n,
        "coverage_ratio_at_integer": hits[2] / n,
        "bias_delta": float(d.mean()),
        "bias_delta_se": float(d.std(ddof=1) / math.sqrt(n)),
        "bias_ratio": float(r.mean()),
        "bias_ratio_se": float(r.std(ddof=1) / math.sqrt(n)),
        "curve_files": curve,
        "files_used": used,
        "files_off_3se": len(off),
        "examples_off": off[:10],
    }


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--series", type=int, default=200)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--slow", type=int, nargs="+", default=[2, 3])
    args = ap.parse_args(argv)
    out = run(args.series, args.seed, tuple(args.slow))
    for key, value in out.items():
        print(f"{key:<28}{value}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
