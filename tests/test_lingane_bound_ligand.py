"""The Lingane fit on the free ligand c_L − (p − q)·c_M, p − q fitted: self-consistent
estimate and intervals that carry the dependence of [L] on the fitted p − q.

The E½ sets are computed exactly from the mass balance (tests/bound_ligand_series.py:
one complex ML2 of the oxidised form, log10 β2 = 10, reduced form free; Lingane, Chem.
Rev. 29 (1941) 1; Bjerrum 1941), so every check compares with the simulation's truth or
with an independent computation. scripts/bound_ligand_coverage.py runs the larger version.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from bound_ligand_series import (
    TRUE_LOG_BETA,
    TRUE_P,
    covered,
    exact_half_waves,
    manifest,
    noisy_data,
)

from cvfit.titration.base import ReferenceHalfWave, TitrationData, TitrationPoint
from cvfit.titration.lingane import fit_lingane
from cvfit.titration.lingane_model import LINGANE

NOISE_V = 0.2e-3


def _exact_data(metal_M: float) -> TitrationData:
    c_L, c_M, e_half = exact_half_waves(metal_M)
    points = tuple(
        TitrationPoint(f"s{k}", float(a), float(e), NOISE_V, "ox", metal_M=float(m))
        for k, (a, m, e) in enumerate(zip(c_L, c_M, e_half, strict=True))
    )
    return TitrationData(points, ReferenceHalfWave(-0.2, NOISE_V, "file", files=("r",)))


@pytest.mark.parametrize("metal_M", [1.0e-3, 2.0e-3])
def test_exact_half_waves_give_the_truth(metal_M):
    # 2 mM: 80 % of the ligand bound at the first addition; plain iteration diverged there
    outcome = LINGANE.fit(_exact_data(metal_M), manifest())
    fit = outcome.fit
    assert "FREE_LIGAND_NOT_CONVERGED" not in {f.code for f in fit.flags}
    # the only departure from the line is the "1 +" of 1 + β[L]² (β[L]² >= 9e3)
    assert fit.delta_ligands.value == pytest.approx(TRUE_P, abs=2e-4)
    assert fit.log10_beta_ratio.value == pytest.approx(TRUE_LOG_BETA, abs=1e-3)
    assert fit.log10_beta_ratio_at_integer.value == pytest.approx(TRUE_LOG_BETA, abs=1e-3)
    # the free ligand it used is the mass balance's (within the same "1 +")
    c_L, c_M, _ = exact_half_waves(metal_M)
    used = [outcome.notes[f"s{k}"].x for k in range(c_L.size)]
    np.testing.assert_allclose(used, c_L - TRUE_P * c_M, rtol=2e-3)


def test_a_given_bound_ligand_number_is_one_plain_line():
    """n given: [L] = c_L − n·c_M exactly, nothing to propagate — the same numbers as the
    line fitted directly at those free ligands."""
    data = noisy_data(2.0e-3, NOISE_V, np.random.default_rng(3))
    fit = LINGANE.fit(data, manifest(bound_ligand_number=2)).fit
    free = [replace(p, x=p.x - 2 * p.metal_M, metal_M=None) for p in data.points]
    ref = data.reference
    plain = fit_lingane(
        free, electrons=1, temperature_K=298.15, reference_E_half_V=ref.E_half_V,
        reference_stderr_V=ref.stderr_V,
    )  # fmt: skip
    for key in ("delta_ligands", "log10_beta_ratio", "log10_beta_ratio_at_integer"):
        assert getattr(fit, key) == getattr(plain, key)


def test_propagated_error_matches_the_whole_estimator_differentiated():
    """The p − q error of a weighted fit is √(χ²_red · Σ (∂p*/∂E½ᵢ)² σᵢ²), the derivatives
    taken by refitting the whole model (root finding included) with one E½ nudged."""
    data = noisy_data(2.0e-3, NOISE_V, np.random.default_rng(11))
    m = manifest()
    fit = LINGANE.fit(data, m).fit
    base = fit.delta_ligands.value
    step = 1e-6
    grads = []
    for k, p in enumerate(data.points):
        moved = list(data.points)
        moved[k] = replace(p, E_half_V=p.E_half_V + step)
        nudged = LINGANE.fit(TitrationData(tuple(moved), data.reference), m).fit
        grads.append((nudged.delta_ligands.value - base) / step)
    independent = float(np.sqrt(np.sum(np.square(grads) * NOISE_V**2)))
    assert fit.weighted and fit.reduced_chi_square is not None
    expected = independent * np.sqrt(fit.reduced_chi_square)
    assert fit.delta_ligands.stderr == pytest.approx(expected, rel=0.01)


@pytest.mark.parametrize("metal_M", [1.5e-3, 2.0e-3])
def test_coverage_and_bias_over_simulated_series(metal_M):
    """200 series each: the 95 % intervals of p − q and log10(β_ox/β_red) cover the truth
    90–99 % of the time (binomial SD 1.5 %; the ratio to 99.5 %: its reference E½(s) term
    adds t and normal half-widths in quadrature, conservative at N = 8 by design of
    cvfit.titration.lingane), the estimates are unbiased (mean within 3 standard errors of
    the truth) and the reported standard errors match the spread of the estimates (ratio
    0.8–1.2). Before: 2 mM never settled (0 % coverage, p − q off by 1.3); at 1.5 mM the
    standard errors were 1.38 (p − q) and 1.27 (ratio) × the spread."""
    rng = np.random.default_rng(20261204)
    exact = exact_half_waves(metal_M)
    m = manifest()
    n = 200
    fits = [LINGANE.fit(noisy_data(metal_M, NOISE_V, rng, exact), m).fit for _ in range(n)]
    assert not any(f.code == "FREE_LIGAND_NOT_CONVERGED" for fit in fits for f in fit.flags)
    for key, truth, top in (
        ("delta_ligands", TRUE_P, 0.99),
        ("log10_beta_ratio", TRUE_LOG_BETA, 0.995),
    ):
        values = np.array([getattr(f, key).value for f in fits])
        rate = np.mean([covered(getattr(f, key), truth) for f in fits])
        assert 0.90 <= rate <= top, (key, rate)
        spread = values.std(ddof=1)
        assert abs(values.mean() - truth) < 3 * spread / np.sqrt(n), key
        reported = np.mean([getattr(f, key).stderr for f in fits])
        assert 0.8 < reported / spread < 1.2, (key, reported, spread)
