"""The scan-rate study names a cause of a growing ΔEp only where it is one: "undecided"
when neither an iR drop nor slow kinetics passes its own χ² test, or when the R_u an iR
drop would need is far above what the electrode and electrolyte can give; the R_u error
grows with the iR model's misfit; the scan rates are counted once each.

Synthetic studies (points written directly, no simulation): excess n·ΔEp = 2n·R_u·i_p for
an iR drop, with i_p = 20 µA·√(v / 0.1 V/s)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from cvfit.techniques.cv.screen.scan_rate import (
    ScanRatePoint,
    analyse_scan_rate_study,
    plausible_resistance_ohm,
)

RATES = (0.02, 0.05, 0.1, 0.2, 0.5, 1.0)


def study(excess_V, *, rates=RATES, area_cm2=0.0707, sd_V=0.3e-3):
    ip = [20e-6 * math.sqrt(v / 0.1) for v in rates]
    pts = [
        ScanRatePoint(f"f{k}", v, i, 1e-8, x, sd_V, 0.0, 1e-4, nernstian_n_delta_Ep_V=0.0575)
        for k, (v, i, x) in enumerate(zip(rates, ip, excess_V, strict=True))
    ]
    return analyse_scan_rate_study(
        pts, ligand_M=0.0, electrons=1, temperature_K=298.15, area_cm2=area_cm2, analyte_M=1e-3
    )


def ir_excess(R_ohm, rates=RATES):
    return [2 * R_ohm * 20e-6 * math.sqrt(v / 0.1) for v in rates]


def test_an_iR_drop_that_fits_is_named_with_its_resistance():
    st = study(ir_excess(1000.0))
    assert st.excess_cause == "ir-drop"
    assert st.ir_resistance_ohm.value == pytest.approx(1000.0, rel=1e-6)


def test_neither_model_passing_its_own_test_is_undecided():
    # a growth that is neither ∝ i_p nor the working curve: steps up and down
    st = study([0.0, 0.012, 0.004, 0.022, 0.009, 0.035])
    assert st.delta_Ep_grows and st.excess_cause == "undecided"
    flag = next(f for f in st.flags if f.code == "EXCESS_CAUSE_UNDECIDED")
    assert "neither" in flag.message
    assert not {"IR_DROP_SIGNATURE", "SLOW_KINETICS_SIGNATURE"} & {f.code for f in st.flags}


def test_an_implausible_resistance_is_said_not_named():
    # 20 kΩ: far above 1/(4κr) = 1.7 kΩ for a 3 mm disc at 1 mS/cm (Newman, J. Electrochem.
    # Soc. 113 (1966) 501, R = 1/(4κr), from memory)
    bound, _ = plausible_resistance_ohm(0.0707)
    assert bound == pytest.approx(1.0 / (4 * 1e-3 * math.sqrt(0.0707 / math.pi)))
    st = study(ir_excess(20000.0))
    assert st.excess_cause == "undecided"
    flag = next(f for f in st.flags if f.code == "IR_DROP_IMPLAUSIBLE")
    assert "20000" in flag.message and "Ω" in flag.message
    # no area: the stated plain bound of 5 kΩ
    assert plausible_resistance_ohm(None)[0] == 5000.0
    assert study(ir_excess(20000.0), area_cm2=None).excess_cause == "undecided"
    assert study(ir_excess(3000.0), area_cm2=None).excess_cause == "ir-drop"


def test_the_resistance_error_grows_with_the_misfit():
    # 2 mV of scatter against a stated 0.3 mV (plus the study's 0.3 mV floor): the
    # standard error of R_u = c/2n from the weights alone, 1/(2n·√Σw·i_p²), is scaled by
    # √(χ²/dof) of the iR fit (here the one-term fit, the charging term coming out < 0)
    rng = np.random.default_rng(4)
    clean = np.array(ir_excess(300.0))
    st = study(clean + rng.normal(0.0, 2e-3, clean.size))
    ip = np.array([20e-6 * math.sqrt(v / 0.1) for v in RATES])
    w = 1.0 / (0.3e-3**2 + 0.3e-3**2)
    from_weights = 1.0 / (2.0 * math.sqrt(w * float(ip @ ip)))
    chi_dof = st.chi2_ir / (len(RATES) - 1)
    assert chi_dof > 10
    assert st.ir_resistance_ohm.stderr == pytest.approx(from_weights * math.sqrt(chi_dof))


def test_repeated_rates_are_counted_once():
    rates = (0.05, 0.05, 0.1, 0.1, 0.2, 0.2)
    st = study(ir_excess(300.0, rates), rates=rates)
    narrow = next(f for f in st.flags if f.code == "SCAN_RATE_RANGE_NARROW")
    assert narrow.message.startswith("3 scan rates (6 files)")
