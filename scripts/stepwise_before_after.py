"""The stepwise fit's numbers from two checkouts, side by side.

Run: ``python scripts/stepwise_before_after.py --before PATH`` where PATH is another
checkout of the repository (e.g. ``git worktree add /tmp/before main``). Each side runs
in its own process with its checkout first on ``sys.path``; the series are the ones of
``tests/test_stepwise.py`` (E½ values simulated in the labile limit, DeFord & Hume,
J. Am. Chem. Soc. 73 (1951) 5321) and the demo's voltammograms fitted with the stepwise
model (reduced form's log10 β1 = 4.2 given, as simulated). Prints every constant
(value, standard error, interval limits), E½(s), the chosen N and the one-sided upper
limits, with the difference after − before; ``--dump`` prints one side as JSON.
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]


def _series() -> dict[str, dict]:
    """Every series fitted on the current ``sys.path`` (the dump of one side)."""
    import numpy as np

    from cvfit.chemistry.complexation import complexed_half_wave_V
    from cvfit.chemistry.speciation import free_ligand_M, ligand_fraction_unprotonated
    from cvfit.titration.stepwise import SolutionConditions, StepwisePoint, fit_stepwise

    sigma = 0.2e-3
    three, L3 = (2.0, 3.7, 4.9), np.logspace(-3.5, 0.0, 14)
    four, L4 = (2.5, 4.6, 6.2, 7.1), np.logspace(-4.0, 0.0, 16)

    def points(L, E):
        return [StepwisePoint(f"p{i:02d}", float(x), float(e), sigma) for i, (x, e) in
                enumerate(zip(L, E, strict=True))]  # fmt: skip

    def series(truth, L, rng, red=(), E0=0.0):
        E = complexed_half_wave_V(E0, ligand_M=L, log10_beta_ox=truth, log10_beta_red=red)
        return E + rng.normal(0.0, sigma, L.size), E0 + rng.normal(0.0, sigma)

    def fit(pts, ref, **kw):
        return fit_stepwise(pts, electrons=1, temperature_K=298.15, reference_E_half_V=ref,
                            reference_stderr_V=sigma, **kw)  # fmt: skip

    out = {}
    for name, truth, L, top in (("three", three, L3, 4), ("four", four, L4, 5)):
        E, ref = series(truth, L, np.random.default_rng(11))
        out[name] = fit(points(L, E), ref, max_complexes=top)
    L = np.logspace(-3.5, -2.2, 10)
    E, ref = series(three, L, np.random.default_rng(5))
    out["beta3-undetermined"] = fit(points(L, E), ref, max_complexes=4)
    rng = np.random.default_rng(3)
    LT = np.logspace(-3.0, 0.5, 14)
    for pH in (7.0, 8.0):
        aL = float(ligand_fraction_unprotonated(pH, (9.2, 6.1)))
        E = complexed_half_wave_V(0.0, ligand_M=aL * LT, log10_beta_ox=(4.0, 7.4, 9.9))
        E = E + rng.normal(0.0, sigma, LT.size)
        cond = SolutionConditions(ligand_pKa=(9.2, 6.1), pH=pH)
        out[f"pKa-pH{pH:g}"] = fit(points(LT, E), 0.0, max_complexes=3, conditions=cond)
    E, ref = series(three, L3, np.random.default_rng(9), red=(4.2,))
    out["fixed-red"] = fit(points(L3, E), ref, max_complexes=4, fixed_log10_beta_red=(4.2,))
    out["fixed-ox"] = fit(points(L3, E), ref, max_complexes=2, fixed_log10_beta_ox=three)
    LT = np.logspace(-2.4, 0.0, 14)
    L_true = np.array([free_ligand_M(x, 1e-3, three) for x in LT])
    E = complexed_half_wave_V(0.0, ligand_M=L_true, log10_beta_ox=three)
    E = E + np.random.default_rng(4).normal(0.0, sigma, LT.size)
    cond = SolutionConditions(metal_total_M=1e-3)
    out["mass-balance"] = fit(points(LT, E), 0.0, max_complexes=4, conditions=cond)
    L = np.logspace(-4.5, -1.0, 12)
    E, ref = series((3.31, 7.21), L, np.random.default_rng(1), E0=0.7996)
    out["two-complexes"] = fit(points(L, E), ref, max_complexes=3)
    out["demo-stepwise"] = _demo()
    return {name: _record(f) for name, f in out.items()}


def _demo():
    """The demo series fitted with the stepwise model (its reduced constant given)."""
    from cvfit.pipeline.series import analyse_manifest_file

    demo = REPO / "cvfit" / "data" / "demo"
    with tempfile.TemporaryDirectory() as tmp:
        for f in demo.iterdir():
            shutil.copy(f, tmp)
        manifest = Path(tmp) / "series.toml"
        text = manifest.read_text(encoding="utf-8")
        text += '\n[fit]\nmodel = "stepwise"\nfixed_log10_beta_red = [4.2]\n'
        manifest.write_text(text, encoding="utf-8")
        return analyse_manifest_file(manifest).fit


def _record(fit) -> dict:
    rows = {"N": fit.n_complexes, "E_half_free_V": list(_q(fit.E_half_free))}
    for j, q in enumerate(fit.log10_beta, start=1):
        rows[f"log10_beta_{j}"] = list(_q(q))
    for u in fit.undetermined:
        rows[f"upper_limit_{u.j}"] = u.upper_limit_95
    return rows


def _q(q):
    return q.value, q.stderr, q.ci95[0], q.ci95[1]


def _side(path: Path) -> dict:
    env = dict(os.environ, PYTHONPATH=str(path))
    done = subprocess.run(
        [sys.executable, str(Path(__file__).resolve()), "--dump"],
        env=env,
        cwd=path,
        capture_output=True,
        text=True,
        check=True,
    )
    return json.loads(done.stdout)


def _fmt(x) -> str:
    return "—" if x is None else f"{x:.5f}" if abs(x) >= 1e-3 else f"{x:.3e}"


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", type=Path, help="checkout of the code to compare with")
    ap.add_argument("--dump", action="store_true", help="print this checkout's numbers")
    args = ap.parse_args(argv)
    if args.dump:
        print(json.dumps(_series()))
        return 0
    if args.before is None:
        ap.error("give --before PATH (or --dump)")
    before, after = _side(args.before.resolve()), _side(REPO)
    worst = 0.0
    print(
        f"{'series':<20} {'quantity':<16} {'':>6} {'before':>11} {'after':>11} {'difference':>13}"
    )
    for name, rows in before.items():
        for key, b in rows.items():
            a = after[name].get(key)
            labels = ("value", "stderr", "ci_lo", "ci_hi") if isinstance(b, list) else ("",)
            bs = b if isinstance(b, list) else [b]
            as_ = a if isinstance(a, list) else [a]
            for lab, x, y in zip(labels, bs, as_, strict=True):
                d = None if x is None or y is None else y - x
                if d is not None and key != "N":
                    worst = max(worst, abs(d) * (1e3 if key.startswith("E_half") else 1.0))
                print(f"{name:<20} {key:<16} {lab:>6} {_fmt(x):>11} {_fmt(y):>11} "
                      f"{'' if d is None else f'{d:+.1e}':>13}")  # fmt: skip
    print(f"largest difference: {worst:.2e} (log10 units; E½ in mV)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
