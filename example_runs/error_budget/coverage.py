"""Coverage of the Lingane fit's 95 % intervals when every solution carries its own offset.

Monte-Carlo at the E½ level: 7 points on Lingane's line (log10(β_ox/β_red) = 4.6, p − q = 1,
n = 1, [L] = 1e-3 … 1e-1 mol/L, invented values) with 0.2 mV noise per file, and for every
solution — the ligand-free one(s) too — an offset of random sign and a size drawn uniformly
between a third of the maximum and the maximum (1–3 mV at the maximum 3 mV, the issue's
case). For each maximum, 2000 series; the figure shows the share of 95 % intervals that hold
the truth, with one and with two (before/after) ligand-free files, and the median error
budget of log10(β_ox/β_red).

Usage: ``python example_runs/error_budget/coverage.py`` from the project root; writes
coverage.png and coverage.csv beside this script.
"""

from __future__ import annotations

from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from cvfit.titration.error_budget import reference_mean  # noqa: E402
from cvfit.titration.lingane import TitrationPoint, fit_lingane  # noqa: E402
from cvfit.units import nernst_slope_V_per_decade  # noqa: E402

HERE = Path(__file__).resolve().parent
TRIALS = 2000
NOISE_V = 0.2e-3
MAX_OFFSET_MV = (0.0, 0.3, 0.6, 1.0, 2.0, 3.0, 5.0)
TRUE_RATIO, E_REF = 4.6, -0.120
L = np.logspace(-3.0, -1.0, 7)
SLOPE = nernst_slope_V_per_decade(298.15, 1)
KEYS = ("log10_beta_ratio", "delta_ligands", "log10_beta_ratio_at_integer")
TRUTH = (TRUE_RATIO, 1.0, TRUE_RATIO)


def run(max_mV: float, n_ref: int, seed: int):
    rng = np.random.default_rng(seed)
    hi = max_mV * 1e-3

    def off(n):
        return rng.choice([-1.0, 1.0], n) * rng.uniform(hi / 3, hi, n)

    hits = np.zeros(3)
    parts = []
    for _ in range(TRIALS):
        E = E_REF - SLOPE * (TRUE_RATIO + np.log10(L)) + off(L.size)
        E += rng.normal(0.0, NOISE_V, L.size)
        refs = E_REF + off(n_ref) + rng.normal(0.0, NOISE_V, n_ref)
        mean, se, _ = reference_mean(refs, np.full(n_ref, NOISE_V))
        pts = [
            TitrationPoint(f"t{i}", c, e, NOISE_V)
            for i, (c, e) in enumerate(zip(L, E, strict=True))
        ]
        fit = fit_lingane(
            pts,
            electrons=1,
            temperature_K=298.15,
            reference_E_half_V=mean,
            reference_stderr_V=se,
            reference_count=n_ref,
        )
        for k, (key, truth) in enumerate(zip(KEYS, TRUTH, strict=True)):
            lo, up = getattr(fit, key).ci95
            hits[k] += lo <= truth <= up
        b = fit.error_budget["log10_beta_ratio"]
        parts.append((b.within_file, b.between_solutions, b.reference, b.total))
    return hits / TRIALS, np.median(np.array(parts), axis=0)


def main() -> None:
    rows = []
    for n_ref in (1, 2):
        for j, m in enumerate(MAX_OFFSET_MV):
            cov, budget = run(m, n_ref, 1000 * n_ref + j)
            rows.append((n_ref, m, *cov, *budget))
            print(f"{n_ref} ref, offsets up to {m} mV: coverage {cov}, budget {budget}")
    arr = np.array(rows)
    header = (
        "reference_files,max_offset_mV,cov_log10_ratio,cov_p_minus_q,cov_ratio_at_integer,"
        "within_file,between_solutions,reference,total"
    )
    np.savetxt(HERE / "coverage.csv", arr, delimiter=",", header=header, comments="", fmt="%.6g")
    fig, (ax, bx) = plt.subplots(1, 2, figsize=(9.5, 3.8))
    styles = {1: "-", 2: "--"}
    colours = ("#2b4c7e", "#b5532a", "#3f8f4f")
    labels = ("log10(βox/βred)", "p − q", "log10 ratio, p − q whole")
    for n_ref in (1, 2):
        sel = arr[arr[:, 0] == n_ref]
        for k in range(3):
            ax.plot(
                sel[:, 1],
                100 * sel[:, 2 + k],
                styles[n_ref],
                marker="o",
                ms=4,
                color=colours[k],
                label=f"{labels[k]}, {n_ref} ligand-free file(s)",
            )
    ax.axhline(95, color="0.4", lw=0.8)
    ax.axhline(90, color="#a00", lw=0.8, ls=":")
    ax.text(0.02, 90.3, "required ≥ 90 %", color="#a00", fontsize=8)
    ax.set_ylim(85, 100)
    ax.set_xlabel("largest offset per solution / mV (sizes from a third of it)")
    ax.set_ylabel("coverage of 95 % intervals / %")
    ax.legend(fontsize=6.5, loc="lower left")
    ax.set_title(f"{TRIALS} series per point, 0.2 mV noise per file", fontsize=9)
    sel = arr[arr[:, 0] == 1]
    for k, (lab, col) in enumerate(
        zip(
            ("within-file", "between solutions", "reference E½(s)", "total"),
            ("#7a869a", "#b5532a", "#3f8f4f", "k"),
            strict=True,
        )
    ):
        bx.plot(sel[:, 1], sel[:, 5 + k], marker="o", ms=4, color=col, label=lab)
    bx.set_xlabel("largest offset per solution / mV")
    bx.set_ylabel("median standard uncertainty of log10(βox/βred)")
    bx.set_title("error budget (one ligand-free file)", fontsize=9)
    bx.legend(fontsize=7)
    fig.tight_layout()
    fig.savefig(HERE / "coverage.png", dpi=120)


if __name__ == "__main__":
    main()
