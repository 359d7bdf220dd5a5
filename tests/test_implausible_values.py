"""D and k0 no solution can have are flagged (common practice: D of ions and molecules in
water 1e-7–1e-3 cm²/s, about 1e-5 for small ions; k0 above 10 cm/s is not measurable)."""

from __future__ import annotations

from cvfit.quantity import Quantity
from cvfit.techniques.cv.series_study import _implausible


def _q(x: float) -> Quantity:
    return Quantity(x, 0.0, (x, x), "test")


def test_a_thousandfold_unit_error_is_flagged():
    # The values a current in µA read as mA gave (D 6.96 cm²/s, k0 686 cm/s).
    codes = [f.code for f in _implausible(_q(6.96), "peak current", _q(686.0))]
    assert codes == ["D_IMPLAUSIBLE", "K0_IMPLAUSIBLE"]
    assert [f.code for f in _implausible(_q(5e-11), "peak current", None)] == ["D_IMPLAUSIBLE"]


def test_ordinary_values_pass():
    # Ferrocenium/ferrocene-like D ≈ 2.4e-5 cm²/s and k0 ≈ 1 cm/s (common practice).
    assert _implausible(_q(2.4e-5), "manifest", _q(1.0)) == []
    assert _implausible(None, "", None) == []
