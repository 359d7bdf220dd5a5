"""The curve fit on records with the artefacts of real ones (tests/realistic_records.py):
E½ error, its independence of the scan rate, k0 against the truth and the E½ model spread,
over several noise seeds.

Run: ``python scripts/curve_realistic_acceptance.py [--seeds 3]``. About a second per fit;
not part of the suite (tests/test_curve_realistic.py holds one seed of each check).
"""

from __future__ import annotations

import argparse
import dataclasses
import sys
from pathlib import Path
from types import SimpleNamespace

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from realistic_records import (  # noqa: E402
    AREA_CM2,
    CONCENTRATION_M,
    E_HALF_V,
    K0_CM_S,
    realistic_record,
)

from cvfit.techniques.cv.curve.fit import fit_curve  # noqa: E402
from cvfit.techniques.cv.curve.stage import record_curve_data  # noqa: E402
from cvfit.techniques.cv.peaks.analysis import analyse_peaks  # noqa: E402
from cvfit.voltammogram import Voltammogram  # noqa: E402

RATES = (0.005, 0.02, 0.05, 0.2)
SERIES = SimpleNamespace(
    electrons=1, temperature_K=298.15, bulk_form=None, quiet_time_s=None, diffusion_cm2_s=None
)


def fit_record(rec):
    v = Voltammogram(
        potential_V=rec.potential_V, current_A=rec.current_A, time_s=rec.time_s,
        scan_rate_V_s=rec.scan_rate_V_s, source="realistic",
    )  # fmt: skip
    peaks = analyse_peaks(v, electrons=1)
    if peaks.E_half_V is None:
        peaks = dataclasses.replace(peaks, E_half_V=E_HALF_V + 0.01)
    data = record_curve_data(v, peaks, SERIES)
    fit = fit_curve(
        data, E_half_start_V=peaks.E_half_V, area_cm2=AREA_CM2,
        concentration_M=CONCENTRATION_M, resistance_ohm=None,
    )  # fmt: skip
    return data, fit


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seeds", type=int, default=3)
    args = ap.parse_args()
    for source, cycles in (("project", 2), ("independent", 1)):
        errs, spreads, ratios, within, wrong_bulk, refused = [], [], [], [], 0, 0
        for seed in range(args.seeds):
            E = []
            for k, rate in enumerate(RATES):
                rec = realistic_record(
                    scan_rate_V_s=rate, seed=100 * seed + k, source=source, cycles=cycles
                )
                data, fit = fit_record(rec)
                wrong_bulk += data.bulk != "red"
                refused += not fit.accepted
                E.append(fit.E_half_V.value)
                errs.append(1e3 * (fit.E_half_V.value - E_HALF_V))
                spreads.append(1e3 * fit.E_half_model_spread_V)
                ratios.append(fit.k0_cm_s.value / K0_CM_S)
            within.append(1e3 * (max(E) - min(E)))
        e = np.abs(errs)
        print(f"{source} ({cycles} cycle(s)), {args.seeds} seeds × {len(RATES)} scan rates:")
        print(f"  |E½ − truth| max {e.max():.3f} mV, median {np.median(e):.3f} mV")
        print(f"  E½ max − min over 5–200 mV/s: at most {max(within):.3f} mV")
        print(f"  k0/truth {min(ratios):.3f} … {max(ratios):.3f}")
        print(f"  E½ model spread {min(spreads):.3f} … {max(spreads):.3f} mV")
        print(f"  bulk form wrong: {wrong_bulk}, fits refused: {refused}")


if __name__ == "__main__":
    main()
