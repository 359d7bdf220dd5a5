"""The stepwise fit counts the reference E½(s) as one more solution (issue 24, item 2).

Independent computation: with one complex and every point far into the complexed range
(β1·[L] ≥ 10^4), the DeFord–Hume relation E½ = E½(s) − (RT/nF)·ln(1 + β1[L]) (DeFord &
Hume, J. Am. Chem. Soc. 73 (1951) 5321) is Lingane's line of known slope (Lingane, Chem.
Rev. 29 (1941) 1): the points give only c = E½(s) − (RT/nF)·ln β1, their weighted mean of
E½ + (RT/nF)·ln[L], and log10 β1 = (E½(s) − c)/(ln10·RT/nF). So, by hand:

    var(log10 β1)·(ln10·RT/nF)² = s_pts²/n + σ_s² + s²/M

with s_pts² the points' sample variance about c (equal σ: the fit's scaled variance of
the mean), σ_s the reference's own error, s² = max(0, s_pts² − σ²) the moment estimate of
the between-solution variance (Searle, Casella & McCulloch, Variance Components (1992)
ch. 4) and M the ligand-free files averaged. The interval adds the expanded parts in
quadrature, √(t²(n−1)·s_pts²/n + z²·(σ_s² + s²/M)) (JCGM 100:2008, annex G).
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest

from cvfit.titration.stepwise import StepwisePoint, fit_stepwise
from cvfit.units import thermal_voltage

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "scripts"))

import reference_cases  # noqa: E402

K = thermal_voltage(298.15, 1)
LOG_BETA1 = 4.0
L = np.logspace(0.0, 1.0, 8)  # β1·[L] = 1e4 … 1e5
Z975 = 1.959964  # normal quantile (any statistics table)
T975_7 = 2.364624  # Student t, 7 dof


@pytest.mark.parametrize(
    ("actual_V", "count"), [(0.06e-3, 1), (0.5e-3, 2)], ids=["points-agree", "points-scatter"]
)
def test_one_complex_reduces_to_the_closed_form(actual_V, count):
    sigma, sigma_ref, ref = 0.14e-3, 0.14e-3, 0.38e-3  # reference 2.7σ off
    e = np.random.default_rng(3).normal(0.0, actual_V, L.size)
    E = -K * np.log1p(10.0**LOG_BETA1 * L) + e
    pts = [StepwisePoint(f"p{i}", float(c), float(y), sigma) for i, (c, y) in
           enumerate(zip(L, E, strict=True))]  # fmt: skip
    fit = fit_stepwise(
        pts, electrons=1, temperature_K=298.15, reference_E_half_V=ref,
        reference_stderr_V=sigma_ref, max_complexes=1, reference_count=count,
    )  # fmt: skip
    u = E + K * np.log(L)
    s_pts2 = float(np.var(u, ddof=1))
    between = max(0.0, s_pts2 - sigma**2)
    ref_var = sigma_ref**2 + between / count
    to_log = 1.0 / (K * math.log(10.0))
    q = fit.log10_beta[0]
    assert q.value == pytest.approx((ref - u.mean()) * to_log, abs=2e-4)
    assert q.stderr == pytest.approx(math.sqrt(s_pts2 / L.size + ref_var) * to_log, rel=2e-3)
    half = math.sqrt(T975_7**2 * s_pts2 / L.size + Z975**2 * ref_var) * to_log
    # the profile's crossing is located to 1e-4 (cvfit.likelihood); t² for the reference
    # part too would widen the interval by 20 %
    assert q.ci95[0] == pytest.approx(q.value - half, abs=1e-4)
    assert q.ci95[1] == pytest.approx(q.value + half, abs=1e-4)
    b = fit.error_budget[0]
    assert b.reference == pytest.approx(math.sqrt(ref_var) * to_log, rel=2e-3)
    assert fit.extra_scatter_V == pytest.approx(math.sqrt(between), abs=2e-6)
    if actual_V < sigma:  # reduced χ² about 0.2: the reference keeps its own 0.14 mV
        assert fit.candidates[0].reduced_chi_square < 0.5
        assert b.reference == pytest.approx(sigma_ref * to_log, rel=2e-3)


@pytest.mark.parametrize("case", ["agree", "real"])
def test_the_issue_cases_keep_the_truth_within_three_standard_errors(case):
    """scripts/reference_cases.py, stepwise over 8 complexed points. Before (reference
    row scaled by the points' reduced χ²): agree |z| 2.12, 0.17, 5.09; real 4.94, 8.27,
    23.2. After: 2.00, 0.16, 2.90; 2.26, 3.00 (2.997), 2.70."""
    rows = reference_cases.stepwise(case, "high")
    z = [(v - t) / se for (_, v, se, _), t in zip(rows, reference_cases.THREE, strict=True)]
    assert max(abs(x) for x in z) <= 3.0, z


def test_report_names_each_stepwise_constant_a_second_reference_would_narrow():
    from cvfit.report.html_sections import error_budget_section

    part = {"unit": "log10 units", "within_file": 0.004, "between_solutions": 0.0}
    budget = {
        "log10_beta_1": {**part, "reference": 0.003, "total": 0.005},
        "log10_beta_2": {**part, "reference": 0.0, "total": 0.004},
        "log10_beta_3": {**part, "reference": 0.012, "total": 0.013},
    }
    html = error_budget_section({"fit": {"error_budget": budget},
                                 "reference": {"file_E_half_V": [-0.1]}})  # fmt: skip
    # two ligand-free files halve the reference variance: √(0.005² − 0.003²/2) = 0.00453,
    # √(0.013² − 0.012²/2) = 0.00985; β2 has no reference part and is not named
    assert "β1 from 0.005 to about 0.00453" in html
    assert "β3 from 0.013 to about 0.00985" in html
    assert "β2 from" not in html
