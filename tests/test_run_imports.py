"""What a series run loads: only what its files need.

The simulator's kernel (numba, ~0.15 s of start-up) is needed only when some file is
fitted as a whole curve; a series whose files all pass the reversibility screen — the
usual case — must not load it. lmfit (~0.4 s with the scipy.stats it brings) carries the
stepwise model only: a series fitted by Lingane's line must not load it either.
(scipy.stats is checked by test_quantiles.py.)
"""

from __future__ import annotations

import ast
import subprocess
import sys

from seriesfactory import write_small_series


def _loaded_after_run(manifest, out, modules) -> list[str]:
    code = (
        "import sys\n"
        "from cvfit.cli import main\n"
        f"assert main(['run', {str(manifest)!r}, '--out', {str(out)!r}, '--quiet']) == 0\n"
        f"print('loaded:', [m for m in {list(modules)!r} if m in sys.modules])\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    return ast.literal_eval(done.stdout.strip().splitlines()[-1].removeprefix("loaded: "))


def test_reversible_series_does_not_load_the_simulator(tmp_path):
    manifest = write_small_series(tmp_path, 5, seed=3)
    assert _loaded_after_run(manifest, tmp_path / "out", ["numba", "lmfit"]) == []


def test_lmfit_is_loaded_by_a_stepwise_fit_only():
    """Importing the stepwise model does not load lmfit; running a fit does (the other
    side, so the check above can fail)."""
    code = (
        "import sys\n"
        "from cvfit.titration.stepwise import StepwisePoint, fit_stepwise\n"
        "before = 'lmfit' in sys.modules\n"
        "pts = [StepwisePoint(f'p{k}', 10.0 ** (k - 4), -0.03 * k, 2e-4) for k in range(5)]\n"
        "fit = fit_stepwise(pts, electrons=1, temperature_K=298.15, reference_E_half_V=0.0,\n"
        "                   reference_stderr_V=2e-4, max_complexes=2)\n"
        "print(before, 'lmfit' in sys.modules, type(fit.lmfit_params).__name__)\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.split() == ["False", "True", "Parameters"]


def test_a_curve_fitted_file_does_load_it(tmp_path):
    """The other side, so the check above can fail: the demo's slowed file is fitted as a
    whole curve, which runs the simulator."""
    from pathlib import Path

    demo = Path(__file__).resolve().parents[1] / "cvfit" / "data" / "demo" / "series.toml"
    assert _loaded_after_run(demo, tmp_path / "out", ["numba"]) == ["numba"]
