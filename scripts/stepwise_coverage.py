"""Coverage of the stepwise profile intervals over many simulated titrations.

Run: ``python scripts/stepwise_coverage.py [--series 200] [--scenario NAME ...] [--seed 1]``.

Each series is a set of labile-limit half-wave potentials (DeFord & Hume, J. Am. Chem.
Soc. 73 (1951) 5321; Lingane, Chem. Rev. 29 (1941) 1) with Gaussian noise of the stated
SD on every E½ and on the reference E½(s), fitted by
:func:`cvfit.titration.stepwise.fit_stepwise` with the number of complexes fixed at the
truth. Prints, per scenario and per β_j, how often the 95 % interval holds the truth
(binomial SD √(0.95·0.05/n): 1.5 % at n = 200), how often the interval is open, and the
median reduced χ². Not a test: a few minutes on two cores.

Scenarios (oxidised form ML, ML2, ML3 with log β = 2.0, 3.7, 4.9; 0.2 mV noise):

* ``plain`` — reduced form not complexed, 14 points over 10^-3.5 … 1 M;
* ``both`` — both forms complexed (reduced log β1 = 1.5 given), 10 points;
* ``both-metal`` — as ``both`` with 1 mM metal: the free ligand from the mass balance,
  the manifest's ligand totals from the true free ligand;
* ``both-ratio`` — as ``both`` with complexes diffusing at 0.4 of the free ion's D and
  ln(Is/Ic) given (the diffusion term shared between the forms);
* ``both-few`` — as ``both-metal`` with 7 points (ν = 4);
* ``voltammograms`` — as ``both-metal`` but each point a simulated voltammogram (0.2 %
  current noise) analysed by ``cvfit run``'s pipeline, E½ and its error from the peaks,
  the ligand-free file as the reference (slow: ~1 s per series).
"""

from __future__ import annotations

import argparse
import math
import sys
from dataclasses import dataclass

import numpy as np

from cvfit.chemistry.complexation import complexed_half_wave_V, effective_diffusion_cm2_s
from cvfit.chemistry.speciation import free_ligand_M
from cvfit.titration.stepwise import SolutionConditions, StepwisePoint, fit_stepwise

TRUTH = (2.0, 3.7, 4.9)
RED = (1.5,)
SIGMA_V = 0.2e-3


@dataclass(frozen=True)
class Scenario:
    name: str
    points: int
    red: tuple[float, ...] = ()
    metal_M: float | None = None
    d_ratio: float | None = None
    low: float = -3.5
    high: float = 0.0


SCENARIOS = {
    s.name: s
    for s in (
        Scenario("plain", 14),
        Scenario("both", 10, RED),
        Scenario("both-metal", 10, RED, metal_M=1e-3, low=-2.6),
        Scenario("both-ratio", 10, RED, d_ratio=0.4),
        Scenario("both-few", 7, RED, metal_M=1e-3, low=-2.6),
        Scenario("voltammograms", 10, RED, metal_M=1e-3, low=-2.6),
    )
}


def voltammogram_series(s: Scenario, rng: np.random.Generator):
    """Simulate the files of one series and analyse them as ``cvfit run`` does."""
    import tempfile
    from pathlib import Path

    from cvfit.chemistry.speciation import mean_ligand_number
    from cvfit.pipeline.series import analyse_manifest_file
    from cvfit.simulate.titration_series import simulate_series

    free = np.array([0.0, *np.logspace(s.low, s.high, s.points)])
    total = free + s.metal_M * mean_ligand_number(free, TRUTH) * (free > 0)
    with tempfile.TemporaryDirectory() as tmp:
        simulate_series(
            tmp, ligand_M=free, E_half_free_V=0.0, log10_beta_ox=TRUTH, log10_beta_red=s.red,
            noise_fraction=0.002, seed=int(rng.integers(2**31)), start_V=0.45,
            switch_V=-0.55, step_V=0.001,
        )  # fmt: skip
        names = sorted(p.name for p in Path(tmp).glob("titr_*.csv"))
        lines = ["[series]", "electrons = 1", f"metal_total_M = {s.metal_M!r}", "[fit]",
                 'model = "stepwise"', f"max_complexes = {len(TRUTH)}",
                 f"fixed_log10_beta_red = {list(s.red)!r}"]  # fmt: skip
        for name, t in zip(names, total, strict=True):
            lines += ["[[voltammogram]]", f'file = "{name}"', f"ligand_M = {float(t)!r}",
                      "scan_rate_V_s = 0.1"]  # fmt: skip
        manifest = Path(tmp) / "m.toml"
        manifest.write_text("\n".join(lines) + "\n", encoding="utf-8")
        result = analyse_manifest_file(manifest)
    fit = result.fit
    if not hasattr(fit, "log10_beta"):
        return None
    # each file's E½ error against the labile-limit truth, V (the first: ligand-free)
    truth = complexed_half_wave_V(0.0, ligand_M=free, log10_beta_ox=TRUTH, log10_beta_red=s.red)
    errors = [f.E_half_V - t if f.E_half_V is not None else np.nan
              for f, t in zip(result.files, truth, strict=True)]  # fmt: skip
    return fit, np.array(errors)


def one_series(s: Scenario, rng: np.random.Generator):
    """Fit one simulated series; the fit record (or None when refused)."""
    free = np.logspace(s.low, s.high, s.points)
    kw = {}
    ratio = None
    if s.d_ratio is not None:
        D = 1e-5
        kw = dict(
            D_ox_cm2_s=D,
            D_red_cm2_s=D,
            D_ox_complexed_cm2_s=s.d_ratio * D,
            D_red_complexed_cm2_s=s.d_ratio * D,
        )
        D_ox = effective_diffusion_cm2_s(
            free, TRUTH, D_free_cm2_s=D, D_complexed_cm2_s=s.d_ratio * D
        )
        # reduction peak currents scale with √D_O: ln(Is/Ic) = ½ ln(D_O,s/D_O,c)
        ratio = 0.5 * np.log(D / D_ox) + rng.normal(0.0, 0.002, free.size)
    E = complexed_half_wave_V(0.0, ligand_M=free, log10_beta_ox=TRUTH, log10_beta_red=s.red, **kw)
    E = E + rng.normal(0.0, SIGMA_V, free.size)
    ref = rng.normal(0.0, SIGMA_V)
    total = free
    cond = None
    if s.metal_M is not None:
        # bulk metal oxidised: L_T = [L] + M_T·n̄_ox([L])
        from cvfit.chemistry.speciation import mean_ligand_number

        total = free + s.metal_M * mean_ligand_number(free, TRUTH)
        cond = SolutionConditions(metal_total_M=s.metal_M)
        assert np.allclose([free_ligand_M(t, s.metal_M, TRUTH) for t in total], free)
    pts = [
        StepwisePoint(
            f"p{i:02d}",
            float(t),
            float(e),
            SIGMA_V,
            ln_current_ratio=None if ratio is None else float(ratio[i]),
        )
        for i, (t, e) in enumerate(zip(total, E, strict=True))
    ]
    fit = fit_stepwise(
        pts,
        electrons=1,
        temperature_K=298.15,
        reference_E_half_V=ref,
        reference_stderr_V=SIGMA_V,
        max_complexes=len(TRUTH),
        fixed_log10_beta_red=s.red or None,
        conditions=cond,
    )
    return fit if hasattr(fit, "log10_beta") else None


def run(s: Scenario, n: int, seed: int) -> str:
    rng = np.random.default_rng(seed)
    hits = np.zeros(len(TRUTH))
    opened = np.zeros(len(TRUTH))
    total = np.zeros(len(TRUTH))
    chi2, errors = [], []
    for k in range(n):
        fit = voltammogram_series(s, rng) if s.name == "voltammograms" else one_series(s, rng)
        if isinstance(fit, tuple):
            fit, err = fit
            errors.append(err)
        if (k + 1) % 25 == 0:
            print(f"  {s.name}: {k + 1} series", file=sys.stderr, flush=True)
        if fit is None:
            continue
        chi2.append(fit.candidates[-1].reduced_chi_square)
        for j, q in enumerate(fit.log10_beta):
            lo, hi = q.ci95
            total[j] += 1
            if not (math.isfinite(lo) and math.isfinite(hi)):
                opened[j] += 1
            lo = lo if math.isfinite(lo) else -math.inf
            hi = hi if math.isfinite(hi) else math.inf
            hits[j] += lo <= TRUTH[j] <= hi
    cover = " ".join(
        f"β{j + 1} {100 * hits[j] / max(total[j], 1):5.1f} %" for j in range(len(TRUTH))
    )
    open_ = " ".join(f"{int(x)}" for x in opened)
    text = (
        f"{s.name:<11} n={int(total[0]):4d}  {cover}   open {open_}   "
        f"median χ²/ν {np.median(chi2):.2f}"
    )
    if errors:
        bias = np.nanmean(np.array(errors), axis=0)
        sd = np.nanstd(np.array(errors), axis=0)
        text += "\n  E½ error per file, mean ± SD, mV (ligand-free first): " + ", ".join(
            f"{1e3 * b:+.3f}±{1e3 * d:.3f}" for b, d in zip(bias, sd, strict=True)
        )
    return text


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--series", type=int, default=200)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument(
        "--scenario",
        nargs="*",
        default=[k for k in SCENARIOS if k != "voltammograms"],
        choices=list(SCENARIOS),
    )
    args = ap.parse_args(argv)
    for name in args.scenario:
        print(run(SCENARIOS[name], args.series, args.seed), flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
