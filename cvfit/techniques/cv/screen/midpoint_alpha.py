"""How far the peak midpoint of a quasi-reversible voltammogram may sit from E½ for want of
the transfer coefficient.

For a Nernstian couple the midpoint of the two peak potentials is E½. For slow electron
transfer each peak moves away from E½ by an amount that depends on ψ and on α: with α = 0.5
the two moves nearly cancel, with α ≠ 0.5 they do not, and the midpoint shifts towards the
peak of the faster direction. A file whose E½ can only come from its midpoint, where α is
unknown, carries that shift as an extra error.

The shift is taken from the project's simulator (:func:`cvfit.simulate.simulate_cv`,
Butler–Volmer, equal D) at the file's ψ for α = 0.3, 0.4, 0.5, 0.6 and 0.7 (common
practice: transfer coefficients of outer-sphere one-electron couples lie in 0.3–0.7), the
peaks measured by the project's own peak analysis, as for a file. In units of RT/nF it
depends on ψ alone (the switching potentials are placed 20 RT/nF beyond E½ on each side,
past the peaks of every ψ covered), so it is computed once per ψ (to 1 % in ψ) and kept.

The extra standard error is the range of the midpoint over α divided by √12: with α
anywhere in 0.3–0.7 and nothing to prefer one value, and the midpoint moving almost
linearly with α, the midpoint is spread evenly over its range, and √12 converts the width
of an even spread to its standard deviation. Below ψ = :data:`PSI_MIN` the couple is
nearly irreversible and the midpoint no estimate of E½: the error is infinite.

References
----------
Nicholson, R. S. Anal. Chem. 1965, 37, 1351 (ψ; the peak separation of quasi-reversible
voltammograms).
Bard, A. J.; Faulkner, L. R. Electrochemical Methods, 2nd ed.; Wiley, 2001, §3.3 (α of
simple electron transfers, 0.3–0.7).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from cvfit.units import FARADAY, GAS_CONSTANT

__all__ = [
    "ALPHAS",
    "PSI_MIN",
    "MidpointShift",
    "midpoint_alpha_error_V",
    "midpoint_alpha_shift",
]

#: Transfer coefficients the shift is taken over.
ALPHAS = (0.3, 0.4, 0.5, 0.6, 0.7)
#: Smallest ψ with a finite error (Nicholson's working curve ends at ψ = 0.1; below ~0.05
#: the peak separation exceeds 200 mV and the midpoint rests on kinetics alone).
PSI_MIN = 0.05
#: Largest ψ computed; above it the shift is taken as at this ψ (it falls as 1/ψ).
PSI_MAX = 50.0
#: Reference conditions of the dimensionless computation.
_T_REF_K = 298.15
_EXCURSION = 20.0  # switching potentials ±20 RT/F from E½
_STEP = 0.02  # potential step, RT/F
_D_CM2_S = 1e-5
_V_S = 0.1


@dataclass(frozen=True)
class MidpointShift:
    """Midpoint − E½ over α, V.

    ``shift_V`` maps each α of :data:`ALPHAS` to the midpoint's offset from E½;
    ``range_V`` is their spread (max − min); ``stderr_V`` the extra standard error,
    range/√12 (module notes); ``centre_V`` the middle of the range: the offset of the
    midpoint for an α in the middle of the range. It holds the switching potential's own
    small offset at this excursion (0.12 mV at ψ = 30), which the switching correction of
    a file's midpoint already removes, so it is not part of the error.
    """

    psi: float
    shift_V: dict[float, float]
    range_V: float
    stderr_V: float
    centre_V: float


@lru_cache(maxsize=256)
def _dimensionless_shifts(log_psi_key: int) -> tuple[float, ...]:
    """(midpoint − E½)·F/RT at ψ = 10^(key/200) for each α, n = 1, 298.15 K."""
    from cvfit.simulate.voltammogram import simulate_cv
    from cvfit.techniques.cv.peaks.analysis import analyse_peaks

    psi = 10.0 ** (log_psi_key / 200.0)
    rt_f = GAS_CONSTANT * _T_REF_K / FARADAY
    k0 = psi * math.sqrt(math.pi * _D_CM2_S * _V_S / rt_f)
    out = []
    for alpha in ALPHAS:
        v = simulate_cv(
            E_half_V=0.0, start_V=_EXCURSION * rt_f, switch_V=-_EXCURSION * rt_f,
            scan_rate_V_s=_V_S, step_V=_STEP * rt_f, k0_cm_s=k0, alpha=alpha,
            D_ox_cm2_s=_D_CM2_S, temperature_K=_T_REF_K,
        )  # fmt: skip
        peaks = analyse_peaks(v, electrons=1, temperature_K=_T_REF_K)
        if peaks.Epa_V is None or peaks.Epc_V is None:
            out.append(math.nan)
        else:
            out.append(0.5 * (peaks.Epa_V + peaks.Epc_V) / rt_f)
    return tuple(out)


def midpoint_alpha_shift(psi: float, electrons: int, temperature_K: float) -> MidpointShift:
    """The peak midpoint's offset from E½ for each α of :data:`ALPHAS` at *psi*.

    Raises
    ------
    ValueError
        ψ not a positive number, electrons not a whole number ≥ 1, temperature not
        positive.
    """
    if not (isinstance(psi, int | float) and math.isfinite(psi) and psi > 0):
        raise ValueError(f"psi must be a positive number, got {psi!r}")
    if isinstance(electrons, bool) or int(electrons) != electrons or electrons < 1:
        raise ValueError(f"electrons must be a whole number >= 1, got {electrons!r}")
    if not (math.isfinite(temperature_K) and temperature_K > 0):
        raise ValueError(f"temperature_K must be positive (kelvin), got {temperature_K!r}")
    if psi < PSI_MIN:
        nan = {a: math.nan for a in ALPHAS}
        return MidpointShift(float(psi), nan, math.inf, math.inf, math.nan)
    key = int(round(200.0 * math.log10(min(psi, PSI_MAX))))  # ψ to 1.2 %
    scale = GAS_CONSTANT * temperature_K / (electrons * FARADAY)
    shifts = np.array(_dimensionless_shifts(key)) * scale
    if not np.all(np.isfinite(shifts)):
        nan = {a: math.nan for a in ALPHAS}
        return MidpointShift(float(psi), nan, math.inf, math.inf, math.nan)
    width = float(shifts.max() - shifts.min())
    return MidpointShift(
        float(psi),
        dict(zip(ALPHAS, (float(s) for s in shifts), strict=True)),
        width,
        width / math.sqrt(12.0),
        0.5 * float(shifts.max() + shifts.min()),
    )


def midpoint_alpha_error_V(psi: float, electrons: int, temperature_K: float) -> float:
    """Extra standard error of a peak midpoint used as E½ for want of α, V.

    The range of the midpoint over α = 0.3–0.7 at *psi* divided by √12 (module notes);
    infinite below ψ = :data:`PSI_MIN`.

    Parameters
    ----------
    psi : float
        Nicholson's ψ of the file (from its peak separation).
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K.

    References
    ----------
    Nicholson, R. S. Anal. Chem. 1965, 37, 1351.
    """
    return midpoint_alpha_shift(psi, electrons, temperature_K).stderr_V
