"""The script a chemist would write instead of ``cvfit run`` (the baseline of bench_command).

Run: ``python benchmarks/hand_script.py MANIFEST OUT_DIR``.

For each voltammogram of the series (file and ligand concentration taken from the TOML
manifest): ``pandas.read_csv``, anodic and cathodic peak by arg-max/arg-min of the
current, E½ as the midpoint of the two peak potentials. Then the Lingane line,
``scipy.stats.linregress`` of E½ against log10[L] (the files with ligand), printed, and
one matplotlib figure (the voltammograms overlaid, E½ against log10[L] with the line)
written as ``OUT_DIR/hand.png``. No baseline, no screening, no intervals: the least a
user would do by hand, timed as a whole fresh process.
"""

from __future__ import annotations

import sys
import tomllib
from pathlib import Path

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402
from scipy.stats import linregress  # noqa: E402


def main(manifest: Path, out: Path) -> None:
    spec = tomllib.loads(manifest.read_text(encoding="utf-8"))
    fig, (ax_cv, ax_line) = plt.subplots(1, 2, figsize=(10, 4))
    log_l, e_half = [], []
    for entry in spec["voltammogram"]:
        data = pd.read_csv(manifest.parent / entry["file"])
        E = data["potential_V"].to_numpy()
        i = data["current_A"].to_numpy()
        mid = (E[np.argmax(i)] + E[np.argmin(i)]) / 2
        ax_cv.plot(E, i * 1e6, lw=0.8)
        if entry["ligand_M"] > 0:
            log_l.append(np.log10(entry["ligand_M"]))
            e_half.append(mid)
    line = linregress(log_l, e_half)
    print(f"slope {line.slope:.5f} V/decade, intercept {line.intercept:.5f} V")
    x = np.array(log_l)
    ax_cv.set(xlabel="E / V", ylabel="i / µA")
    ax_line.plot(x, e_half, "o")
    ax_line.plot(x, line.intercept + line.slope * x)
    ax_line.set(xlabel="log10 [L] / M", ylabel="E½ / V")
    out.mkdir(parents=True, exist_ok=True)
    fig.savefig(out / "hand.png")


if __name__ == "__main__":
    main(Path(sys.argv[1]), Path(sys.argv[2]))
