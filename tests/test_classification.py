"""Class of electron transfer per voltammogram.

Reference values (from memory): |Ep − Ep/2| = 2.20 RT/nF reversible and 1.857 RT/(αnF)
totally irreversible (Nicholson & Shain, Anal. Chem. 36 (1964) 706; Matsuda & Ayabe,
Z. Elektrochem. 59 (1955) 494); irreversible regime Λ ≤ 10^(−2(1+α)) (Matsuda & Ayabe 1955);
ψ = k0/(π D n F v/RT)^1/2 (Nicholson, Anal. Chem. 37 (1965) 1351).
"""

from __future__ import annotations

import math
from dataclasses import replace

import pytest

from cvfit.flags import Flag
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.peaks.analysis import analyse_peaks
from cvfit.techniques.cv.screen.classification import Classification, classify_voltammogram
from cvfit.techniques.cv.screen.reversibility import screen_reversibility
from cvfit.units import FARADAY, GAS_CONSTANT

T = 298.15


def _classify(n=1, psi=None, *, switch=0.5, seed=1, noise=0.005, alpha=0.5):
    k0 = (
        None
        if psi is None
        else psi * math.sqrt(math.pi * 1e-5 * n * FARADAY * 0.1 / (GAS_CONSTANT * T))
    )
    v = simulate_cv(
        E_half_V=0.0,
        start_V=0.3 / n,
        switch_V=-switch / n,
        electrons=n,
        k0_cm_s=k0,
        alpha=alpha,
        double_layer_F=10e-6,
        noise_fraction=noise,
        seed=seed,
    )
    p = analyse_peaks(v, electrons=n)
    s = screen_reversibility(p, electrons=n, temperature_K=T)
    return p, s, classify_voltammogram(p, s, electrons=n, temperature_K=T, alpha=alpha)


@pytest.mark.parametrize("n", [1, 2])
def test_reversible_and_quasi_reversible(n):
    _, _, c = _classify(n)
    assert c.kind == "reversible" and c.flag.code == "CLASS_REVERSIBLE"
    assert c.flag.severity == "info"
    # 2.20 RT/nF and 1.857 RT/(αnF) (Nicholson & Shain, Anal. Chem. 36 (1964) 706; Matsuda &
    # Ayabe, Z. Elektrochem. 59 (1955) 494; from memory)
    rt = GAS_CONSTANT * T / (n * FARADAY)
    assert c.reversible_width_V == pytest.approx(2.20 * rt)
    assert c.irreversible_width_V == pytest.approx(1.857 * rt / 0.5)
    _, _, c = _classify(n, psi=0.5)
    assert c.kind == "quasi-reversible" and c.flag.code == "CLASS_QUASI_REVERSIBLE"
    assert "ψ ≈ 0.4" in c.reason or "ψ ≈ 0.5" in c.reason
    assert f"{1e3 * c.n_delta_Ep_V:.1f} mV" in c.reason


def test_irreversible_with_and_without_reverse_peak():
    # Matsuda & Ayabe, Z. Elektrochem. 59 (1955) 494 (from memory): irreversible for
    # Λ ≤ 10^(−2(1+α)). ψ = 1e-3: Λ = √π ψ ≈ 1.8e-3 is near 10^-3; ψ = 3e-4 lies below it
    _, _, c = _classify(psi=3e-4, switch=1.2)
    assert c.kind == "irreversible", c.reason
    # switch before the reverse wave: no reverse peak, broad forward peak → irreversible
    p, s, c = _classify(psi=1e-4, switch=0.9)
    assert p.delta_Ep_V is None
    assert s.reversible is False  # the width fails; the class says why
    assert c.kind == "irreversible" and "αn = 0.5" in c.reason


def test_missing_reverse_peak_with_nernstian_width_is_not_determinable():
    p, s, _ = _classify()
    narrow = replace(
        p,
        Epa_V=None,
        ipa_A=None,
        Ep_half_a_V=None,
        E_half_V=None,
        E_half_stderr_V=None,
        delta_Ep_V=None,
        current_ratio=None,
    )
    s = screen_reversibility(narrow, electrons=1, temperature_K=T)
    c = classify_voltammogram(narrow, s, electrons=1, temperature_K=T)
    assert c.kind == "not determinable" and "following chemical reaction" in c.reason
    none = replace(narrow, Epc_V=None, ipc_A=None, Ep_half_c_V=None)
    c = classify_voltammogram(none, s, electrons=1, temperature_K=T)
    assert c.kind == "not determinable" and "no forward peak" in c.reason


def test_ratio_failure_alone_is_not_a_kinetic_class():
    p, s, _ = _classify()
    bad = replace(p, current_ratio=0.6)
    s = screen_reversibility(bad, electrons=1, temperature_K=T)
    c = classify_voltammogram(bad, s, electrons=1, temperature_K=T)
    assert c.kind == "not determinable" and "CURRENT_RATIO_OFF" in c.reason


def test_scan_rate_trend_makes_it_quasi_reversible():
    p, s, _ = _classify()
    trend = Flag("DELTA_EP_GROWS_WITH_SCAN_RATE", "grows", "warning")
    s = replace(s, reversible=False, flags=(*s.flags, trend))
    c = classify_voltammogram(p, s, electrons=1, temperature_K=T)
    assert c.kind == "quasi-reversible" and "grows with the scan rate" in c.reason


def test_record_validates():
    _, _, c = _classify()
    assert isinstance(c, Classification) and c.to_dict()["kind"] == "reversible"
    with pytest.raises(ValueError):
        replace(c, kind="fast")
