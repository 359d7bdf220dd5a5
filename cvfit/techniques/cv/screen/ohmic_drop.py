"""Correction of the potential for the ohmic drop across the uncompensated resistance.

The working electrode sees E_applied − i·R_u (IUPAC sign: anodic current positive), so
the corrected record has ``potential_V = E_applied − current_A · R_u``. The correction is
made after the measurement, so it cannot restore a linear sweep of the true potential:
on simulated reversible CVs (20 µA peaks) it restores ΔEp within ~1 mV while i·R_u is
~1 mV (50 Ω), but leaves ~3 mV at 200 Ω and ~12 mV at 1000 Ω, because the true
potential then lags and the diffusion layer has grown under a distorted waveform.

References
----------
Bard, A. J.; Faulkner, L. R. Electrochemical Methods, 2nd ed. (2001), on uncompensated
resistance (from memory; the correction E − i·R_u itself is common practice).
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from cvfit.flags import Flag
from cvfit.techniques.cv.peaks.analysis import PeakAnalysis
from cvfit.voltammogram import Voltammogram

__all__ = ["correct_ohmic_drop", "correct_for_resistance", "ohmic_flags"]


def correct_ohmic_drop(voltammogram: Voltammogram, *, resistance_ohm: float) -> Voltammogram:
    """A new Voltammogram with the potential corrected by i·R_u (the input is unchanged).

    Parameters
    ----------
    voltammogram : Voltammogram
        Applied potential and total current (SI, IUPAC sign).
    resistance_ohm : float
        Uncompensated resistance R_u, Ω (>= 0).

    Returns
    -------
    Voltammogram
        ``potential_V = E − i·R_u``; the scan rate, time and metadata are kept, with
        ``metadata["ohmic_drop_corrected_ohm"]`` recording R_u.
    """
    R = float(resistance_ohm)
    if not (math.isfinite(R) and R >= 0):
        raise ValueError(f"resistance_ohm must be a finite number >= 0, got {resistance_ohm!r}")
    E = np.asarray(voltammogram.potential_V) - np.asarray(voltammogram.current_A) * R
    meta = {**dict(voltammogram.metadata), "ohmic_drop_corrected_ohm": repr(R)}
    return replace(voltammogram, potential_V=E, metadata=meta)


#: Post-hoc correction leaves roughly this fraction of i_p·R_u in each peak position once
#: i_p·R_u exceeds ~1 mV (simulations: ~3 of 4 mV at 200 Ω, ~12 of 20 mV at 1000 Ω).
OHMIC_RESIDUAL_FRACTION = 0.6
OHMIC_EXACT_LIMIT_V = 1e-3


def ohmic_flags(peaks: PeakAnalysis, resistance_ohm: float | None) -> list[Flag]:
    """Say that the potentials were corrected, and how much the correction may leave."""
    if not resistance_ohm:
        return []
    ip = peaks.forward_height_A
    drop = None if ip is None else ip * resistance_ohm
    text = "" if drop is None else f"; i_p·R_u = {1e3 * drop:.2f} mV"
    flags = [
        Flag(
            "OHMIC_DROP_CORRECTED",
            f"potentials corrected by i·R_u with R_u = {resistance_ohm:g} Ω{text}",
            "info",
        )
    ]
    if drop is not None and drop > OHMIC_EXACT_LIMIT_V:
        flags.append(
            Flag(
                "OHMIC_CORRECTION_INCOMPLETE",
                f"i_p·R_u = {1e3 * drop:.1f} mV: a correction after the measurement cannot "
                "restore a linear sweep of the true potential and leaves up to about "
                f"{1e3 * OHMIC_RESIDUAL_FRACTION * drop:.1f} mV in ΔEp (simulations); "
                "compensate R_u on the instrument",
            )
        )
    return flags


def correct_for_resistance(v: Voltammogram, resistance_ohm: float | None) -> Voltammogram:
    """The record corrected by i·R_u (a new record), or the record itself without R_u."""
    if not resistance_ohm:
        return v
    return correct_ohmic_drop(v, resistance_ohm=resistance_ohm)
