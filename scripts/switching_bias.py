"""Peak-derived E½ against the truth on noise-free reversible records, through the pipeline.

Run: ``python scripts/switching_bias.py`` (about half a minute). For n = 1 and 2 and
switching potentials 50–400 mV (÷ n) past E½, both sweep directions, a noise-free
Nernstian voltammogram from the project's simulator (E½ given, so the truth is known) goes
through ``analyse_file`` (peaks, screen, switching correction, the one E½ decision) and
the E½ it contributes is compared with the truth. Issue 24 asks |bias| <= 0.01 mV from 80
to 400 mV; ``tests/test_switching_table.py`` checks the same on the correction function.
"""

from __future__ import annotations

import sys
from pathlib import Path

from cvfit.io import FitSettings, ImportOptions, Manifest, SeriesSettings, VoltammogramEntry
from cvfit.pipeline.per_file import analyse_file
from cvfit.reversibility_criteria import ReversibilityCriteria
from cvfit.simulate.voltammogram import simulate_cv

E_HALF_V = -0.05
OFFSETS_MV = (50, 80, 100, 150, 200, 300, 400)


def bias_mV(n: int, offset_mV: float, first: str) -> tuple[float, str]:
    d = -1.0 if first == "reduction" else 1.0
    record = simulate_cv(
        E_half_V=E_HALF_V, start_V=E_HALF_V - d * 0.25 / n,
        switch_V=E_HALF_V + d * offset_mV * 1e-3 / n, electrons=n,
        initial_species="ox" if first == "reduction" else "red",
    )  # fmt: skip
    entry = VoltammogramEntry(file=Path("/virtual/f.csv"), name="f.csv", ligand_M=0.0,
                              scan_rate_V_s=0.1, import_options=ImportOptions())  # fmt: skip
    manifest = Manifest(
        path=Path("/virtual/s.toml"), folder=Path("/virtual"),
        series=SeriesSettings(title="switching", electrons=n), import_options=ImportOptions(),
        fit=FitSettings(), reversibility=ReversibilityCriteria(), voltammograms=(entry,),
    )  # fmt: skip
    f = analyse_file(entry, manifest, record)
    return 1e3 * (f.E_half_V - E_HALF_V), f.E_half_source


def main() -> int:
    worst = 0.0
    print("n  offset/mV  first       bias/mV  source")
    for n in (1, 2):
        for offset in OFFSETS_MV:
            for first in ("reduction", "oxidation"):
                b, source = bias_mV(n, offset, first)
                if offset >= 80:
                    worst = max(worst, abs(b))
                print(f"{n}  {offset:9d}  {first:<10}{b:+9.4f}  {source}")
    print(f"largest |bias| at 80-400 mV: {worst:.4f} mV (issue 24: <= 0.01 mV)")
    return 0 if worst <= 0.01 else 1


if __name__ == "__main__":
    sys.exit(main())
