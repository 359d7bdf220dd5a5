"""Confidence-interval coverage through whole simulated voltammograms (the slow check).

800 titration series of 7 simulated CVs each (0.5 % noise, charging current and a sloping
background) go through the real pipeline in memory: peaks → reversibility screen →
switching correction → Lingane fit. The nominal 95 % intervals must cover the truth
(p − q = 1, log10(β_ox/β_red) = 6.0; Lingane, Chem. Rev. 29 (1941) 1) in 93–97 % of the
series. With 800 series the binomial standard error of a true 95 % rate is 0.77 %, so the
band is ±2.6 standard errors (with 400 it was ±1.8, and a correct change of the peak
analysis — honest E½ standard errors instead of 5 % conservative ones — fell one series
below it: 0.9275, while the next 400 series gave 0.950).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from seriesfactory import LIGAND_M, TRUE_DELTA_LIGANDS, TRUE_LOG10_RATIO, simulate_point

from cvfit.io import FitSettings, ImportOptions, Manifest, SeriesSettings, VoltammogramEntry
from cvfit.pipeline.series import analyse_series
from cvfit.reversibility_criteria import ReversibilityCriteria

N_SERIES = 800


def in_memory_manifest() -> Manifest:
    entries = tuple(
        VoltammogramEntry(
            file=Path(f"/virtual/f{k}.csv"),
            name=f"f{k}.csv",
            ligand_M=c,
            scan_rate_V_s=0.1,
            import_options=ImportOptions(),
        )
        for k, c in enumerate(LIGAND_M)
    )
    return Manifest(
        path=Path("/virtual/series.toml"),
        folder=Path("/virtual"),
        series=SeriesSettings(title="coverage", electrons=1),
        import_options=ImportOptions(),
        fit=FitSettings(),
        reversibility=ReversibilityCriteria(),
        voltammograms=entries,
    )


@pytest.mark.slow
def test_interval_coverage_through_voltammograms():
    manifest = in_memory_manifest()
    hits = np.zeros(3, dtype=int)
    estimates = []
    for s in range(N_SERIES):
        records = {
            e.name: simulate_point(e.ligand_M, seed=1000 * s + k, noise_fraction=0.005)
            for k, e in enumerate(manifest.voltammograms)
        }
        result = analyse_series(manifest, records=records)
        fit = result.fit
        assert fit is not None and fit.n_points == len(LIGAND_M) - 1
        for j, (q, truth) in enumerate(
            (
                (fit.log10_beta_ratio, TRUE_LOG10_RATIO),
                (fit.delta_ligands, TRUE_DELTA_LIGANDS),
                (fit.log10_beta_ratio_at_integer, TRUE_LOG10_RATIO),
            )
        ):
            hits[j] += q.ci95[0] <= truth <= q.ci95[1]
        estimates.append((fit.log10_beta_ratio.value, fit.delta_ligands.value))
    coverage = hits / N_SERIES
    est = np.array(estimates)
    print(f"coverage over {N_SERIES} series (log ratio, p-q, ratio at integer): {coverage}")
    assert np.all((coverage >= 0.93) & (coverage <= 0.97)), coverage
    # and the estimates are unbiased well inside the tolerances
    assert abs(est[:, 0].mean() - TRUE_LOG10_RATIO) < 0.003
    assert abs(est[:, 1].mean() - TRUE_DELTA_LIGANDS) < 0.003
