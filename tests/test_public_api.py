"""The small public API of cvfit/__init__.py resolves to real objects."""

import cvfit


def test_every_public_name_resolves():
    for name in cvfit.__all__:
        assert getattr(cvfit, name) is not None, name


def test_python_api_round_trip():
    # Randles-Sevcik (Nicholson & Shain, Anal. Chem. 36 (1964) 706; confirmed):
    # 0.4463 nFAC(nFvD/RT)^1/2
    v = cvfit.simulate_cv(E_half_V=0.05, start_V=0.35, switch_V=-0.35)
    p = cvfit.analyse_peaks(v)
    assert abs(p.E_half_V - 0.05) < 0.5e-3
    ip = cvfit.randles_sevcik_peak_current_A(
        electrons=1, concentration_M=1e-3, area_cm2=0.0707, D_cm2_s=1e-5, scan_rate_V_s=0.1
    )
    assert abs(p.ipc_A / ip - 1) < 0.02
