"""The pH model: the relation against outside values, and the fit at the E½ level.

Every expected value is computed here, independently of cvfit.chemistry.protonation, or
comes from a named source.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.constants import R, physical_constants

from cvfit.chemistry.protonation import (
    mean_protons,
    proton_half_wave_V,
    proton_regions,
    protonation_fractions,
)
from cvfit.titration.base import ReferenceHalfWave, TitrationData, TitrationPoint
from cvfit.titration.proton_model import PROTON

F = physical_constants["Faraday constant"][0]
NERNST_25 = math.log(10) * R * 298.15 / F  # 59.16 mV


def relation(E0: float, pH, ox, red, n: int = 1, T: float = 298.15):
    """E½(pH) written out term by term (Clark 1960; Bard & Faulkner 2001, from memory)."""
    h = 10.0 ** -np.asarray(pH, dtype=float)

    def poly(pKa):
        total, beta = np.ones_like(h), 1.0
        for j, p in enumerate(pKa, start=1):
            beta *= 10.0**p
            total = total + beta * h**j
        return total

    return E0 + R * T / (n * F) * np.log(poly(red) / poly(ox))


def _manifest(max_protons: int = 2, T: float = 298.15, n: int = 1):
    return SimpleNamespace(
        series=SimpleNamespace(temperature_K=T, electrons=n),
        fit=SimpleNamespace(max_protons=max_protons),
    )


def _fit(pH, E, sigma, max_protons=2):
    pts = tuple(
        TitrationPoint(f"p{k}", float(x), float(e), sigma)
        for k, (x, e) in enumerate(zip(pH, E, strict=True))
    )
    data = TitrationData(pts, ReferenceHalfWave(None, None, "none"))
    return PROTON.fit(data, _manifest(max_protons)).fit


def test_relation_matches_the_written_out_sum():
    pH = np.linspace(0, 14, 57)
    for ox, red in (((4.0,), (7.5,)), ((6.0, 3.0), (9.0, 5.0)), ((), (9.85, 11.4))):
        got = proton_half_wave_V(0.2, pH, pKa_ox=ox, pKa_red=red, electrons=2)
        assert np.allclose(got, relation(0.2, pH, ox, red, n=2), atol=1e-12, rtol=0)


def test_benzoquinone_at_pH_7():
    # Benzoquinone/hydroquinone, 2 e⁻ + 2 H⁺: E°(Q + 2H⁺ + 2e⁻ = H2Q) = 0.699 V vs SHE and
    # hydroquinone pKa 9.85 and 11.4 (Clark 1960, from memory). Below pH 9.85 E falls by
    # ln(10)RT/F per pH (2 H⁺ per 2 e⁻): E(pH 7) = 0.699 − 7 × 0.05916 = 0.285 V, close to
    # the E°′ ≈ 0.28 V quoted for pH 7 (from memory).
    pKa_red = (11.4, 9.85)  # j counted from the unprotonated form Q²⁻
    E0 = 0.699 - NERNST_25 / 2 * sum(pKa_red)  # E of Q/Q²⁻, the unprotonated couple
    E7 = float(proton_half_wave_V(E0, 7.0, pKa_red=pKa_red, electrons=2))
    assert abs(E7 - (0.699 - 7 * NERNST_25)) < 0.1e-3  # HQ⁻ contributes 0.02 mV at pH 7
    assert abs(E7 - 0.28) < 0.01


def test_slopes_fractions_and_regions():
    # −59.16 m/n mV per pH far from every pKa (m = 1, n = 1; m = 2, n = 2), flat outside
    for red, n, m in (((12.0,), 1, 1), ((12.0, 11.0), 2, 2)):
        E = proton_half_wave_V(0.0, [6.95, 7.05], pKa_ox=(2.0,), pKa_red=red, electrons=n)
        assert abs(np.diff(E)[0] / 0.1 + m / n * NERNST_25) < 0.01e-3
    E = proton_half_wave_V(0.0, [0.5, 0.6, 13.4, 13.5], pKa_ox=(4.0,), pKa_red=(7.5,))
    assert abs(E[1] - E[0]) < 0.01e-3 and abs(E[3] - E[2]) < 0.01e-3
    ox, red = (4.0,), (7.5,)
    a = protonation_fractions(np.array([2.0, 7.5, 12.0]), red)
    assert np.allclose(a.sum(axis=0), 1.0)
    assert abs(a[1, 1] - 0.5) < 1e-12  # half protonated at pH = pKa
    assert abs(float(mean_protons(7.5, red)) - 0.5) < 1e-12
    regions = proton_regions(ox, red, (2.0, 10.0))
    assert [(lo, hi, m) for lo, hi, m in regions] == [(2.0, 4.0, 0), (4.0, 7.5, 1), (7.5, 10.0, 0)]


@pytest.mark.parametrize(
    ("ox", "red", "pH"),
    [
        ((4.0,), (7.5,), np.arange(2.0, 10.01, 0.5)),
        ((5.5, 2.5), (9.5, 6.5), np.arange(0.5, 11.51, 0.5)),
    ],
)
def test_exact_points_give_the_pKa_back(ox, red, pH):
    fit = _fit(pH, relation(0.1, pH, ox, red), 1e-4)
    assert [p.value.value for p in fit.pKa_ox] == pytest.approx(list(ox), abs=1e-4)
    assert [p.value.value for p in fit.pKa_red] == pytest.approx(list(red), abs=1e-4)
    assert fit.E0.value == pytest.approx(0.1, abs=1e-6)


def test_number_of_steps_is_chosen_and_a_pKa_beyond_the_range_is_not_determined():
    rng = np.random.default_rng(5)
    pH = np.arange(5.0, 10.01, 0.5)
    # only the reduced form's step lies in 5–10; the oxidised form's pKa 2 is out of reach
    E = relation(0.1, pH, (2.0,), (7.5,)) + rng.normal(0, 3e-4, pH.size)
    fit = _fit(pH, E, 3e-4)
    assert len(fit.pKa_red) == 1 and abs(fit.pKa_red[0].value.value - 7.5) < 0.05
    assert len(fit.pKa_ox) == 0
    # a step near the edge: its interval is open on the far side and flagged
    pH = np.arange(2.0, 8.01, 0.5)
    E = relation(0.1, pH, (), (8.3,)) + rng.normal(0, 3e-4, pH.size)
    fit = _fit(pH, E, 3e-4)
    p = fit.pKa_red[0]
    if not p.determined:
        assert any(f.code == "PKA_NOT_DETERMINED" for f in fit.flags)
    assert p.value.ci95[0] < 8.3 and not p.value.ci95[1] < 8.3


def test_interval_coverage_small_version():
    """30 series of the one-pKa-per-form scenario at 0.5 mV: the 95 % profile intervals hold
    the truth in 24–30 of 30 per pKa (binomial 99.9 % range of 95 % coverage). The full
    check is scripts/proton_coverage.py (1000 series)."""
    rng = np.random.default_rng(20261204)
    pH = np.arange(2.0, 10.01, 0.5)
    clean = relation(0.1, pH, (4.0,), (7.5,))
    hits = {"ox": 0, "red": 0}
    for _ in range(30):
        fit = _fit(pH, clean + rng.normal(0, 5e-4, pH.size), 5e-4, max_protons=1)
        for form, pkas, true in (("ox", fit.pKa_ox, 4.0), ("red", fit.pKa_red, 7.5)):
            lo, hi = pkas[0].value.ci95
            hits[form] += lo <= true <= hi
    assert 24 <= hits["ox"] <= 30 and 24 <= hits["red"] <= 30, hits


def test_unweighted_points_are_flagged():
    pH = np.arange(2.0, 10.01, 1.0)
    pts = tuple(
        TitrationPoint(f"p{k}", float(x), float(e))
        for k, (x, e) in enumerate(zip(pH, relation(0.1, pH, (4.0,), (7.5,)), strict=True))
    )
    fit = PROTON.fit(TitrationData(pts, ReferenceHalfWave(None, None, "none")), _manifest()).fit
    assert not fit.weighted
    assert any(f.code == "PROTON_FIT_UNWEIGHTED" for f in fit.flags)
    assert "activity" in fit.to_dict()["hydrogen_ion"]


def test_lmfit_is_loaded_only_when_a_pH_series_is_fitted():
    import subprocess
    import sys

    code = (
        "import sys\n"
        "from cvfit.titration.registry import model_named\n"
        "from cvfit.pipeline import series\n"
        "model = model_named('proton')\n"
        "print('lmfit' in sys.modules)\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.split() == ["False"]
    pH = np.arange(2.0, 10.01, 1.0)
    _fit(pH, relation(0.1, pH, (4.0,), (7.5,)), 1e-4, max_protons=1)
    assert "lmfit" in sys.modules


def test_model_names_and_cell_arrangements_agree_with_the_manifest():
    from cvfit.io.manifest_variables import MODELS, REFERENCE_AT, VARIABLE_OF_MODEL
    from cvfit.titration.registry import MODEL_NAMES, model_named
    from cvfit.titration.temperature_model import REFERENCE_AT as MODEL_REFERENCE_AT

    assert MODELS == MODEL_NAMES and REFERENCE_AT == MODEL_REFERENCE_AT
    for name, key in VARIABLE_OF_MODEL.items():
        variable = model_named(name).variable
        assert variable == {"temperature_C": "temperature_K"}.get(key, key)
