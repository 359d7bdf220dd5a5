"""The terms of the curve model that are linear in their coefficients: the current scale,
a charging current that may vary with the potential, and a common background.

For a sweep the background current of a real electrode is a sloping, gently curved line
that differs between the two sweep directions. Written per direction as a low-order
polynomial in E, the half-sum of the two directions is a common background b(E) and the
half-difference is a capacitance times the sweep rate, C(E)·dE/dt, so

    i_background(t) = b(E) + C(E)·dE/dt,

with b a polynomial of order ``background_order`` (Legendre polynomials of the potential
scaled to [−1, 1] over the fitted samples, for conditioning) and C a polynomial of order
``capacitance_order`` written in the Bernstein basis of that interval. A capacitance is
never negative: the Bernstein coefficients are held at zero or above (non-negative least
squares on the columns projected off the free ones), which keeps C(E) ≥ 0 across the
window; the order-0 case is a constant C_dl ≥ 0. With ``background_order`` = 1 and
``capacitance_order`` = 0 this is the model of a constant double-layer capacitance and a
linear background.

References
----------
Bard, A. J.; Faulkner, L. R. Electrochemical Methods, 2nd ed.; Wiley, 2001, ch. 1 and 6
(charging current C·dE/dt in a sweep).
Lawson, C. L.; Hanson, R. J. Solving Least Squares Problems; Prentice-Hall, 1974, ch. 23
(non-negative least squares).
Farouki, R. T. Comput. Aided Geom. Des. 2012, 29, 379 (the Bernstein basis: a polynomial
with non-negative Bernstein coefficients is non-negative on the interval).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.polynomial import legendre
from scipy.optimize import nnls

__all__ = ["BackgroundBasis", "LinearTerms", "solve_terms"]


@dataclass(frozen=True)
class BackgroundBasis:
    """Columns of the common background and of the capacitance on every sample.

    Attributes
    ----------
    common : ndarray, shape (samples, background_order + 1)
        Legendre polynomials P_0 … P_order of the scaled potential.
    capacitance : ndarray, shape (samples, capacitance_order + 1)
        Bernstein polynomials of the scaled potential (each ≥ 0, summing to 1).
    """

    common: np.ndarray
    capacitance: np.ndarray

    @classmethod
    def build(
        cls,
        potential_V: np.ndarray,
        window_V: tuple[float, float],
        *,
        background_order: int,
        capacitance_order: int,
    ) -> BackgroundBasis:
        lo, hi = window_V
        span = hi - lo if hi > lo else 1.0
        u = np.clip((np.asarray(potential_V, float) - lo) / span, 0.0, 1.0)
        x = 2.0 * u - 1.0
        common = legendre.legvander(x, int(background_order))
        q = int(capacitance_order)
        capacitance = np.column_stack(
            [math.comb(q, k) * u**k * (1.0 - u) ** (q - k) for k in range(q + 1)]
        )
        return cls(common, capacitance)


@dataclass(frozen=True)
class LinearTerms:
    """Closed-form coefficients of one model evaluation on the fitted samples.

    ``scale``: current per unit faradaic shape, A; ``common``: coefficients of the common
    background's columns, A; ``capacitance``: Bernstein coefficients of C(E), F (each ≥ 0;
    or the one held value); ``residual``: (data − model)/σ on the fitted samples.
    """

    scale: float
    common: np.ndarray
    capacitance: np.ndarray
    residual: np.ndarray


def solve_terms(
    y: np.ndarray,
    shape: np.ndarray,
    common: np.ndarray,
    charging: np.ndarray,
    *,
    held_capacitance_F: float | None = None,
) -> LinearTerms:
    """Least squares of weighted data *y* on [shape, common] and the charging columns.

    All arrays are the fitted samples divided by σ. *charging* holds the capacitance
    columns times dE/dt (one column per Bernstein coefficient). With
    *held_capacitance_F* the single charging column is held at that capacitance (shared
    by several records) and only the free columns are solved.
    """
    free = np.column_stack([shape, common])
    if held_capacitance_F is not None:
        yc = y - held_capacitance_F * charging[:, 0]
        coef, *_ = np.linalg.lstsq(free, yc, rcond=None)
        return LinearTerms(
            float(coef[0]), coef[1:], np.array([held_capacitance_F]), yc - free @ coef
        )
    full = np.column_stack([free, charging])
    coef, *_ = np.linalg.lstsq(full, y, rcond=None)
    k = free.shape[1]
    cap = coef[k:]
    if np.any(cap < 0.0):
        # non-negative capacitance: NNLS on the charging columns with the free columns
        # projected out, then the free columns on what is left
        Q, _ = np.linalg.qr(free)
        project = charging - Q @ (Q.T @ charging)
        norm = np.linalg.norm(project, axis=0)
        norm[norm == 0.0] = 1.0
        cap, _ = nnls(project / norm, y - Q @ (Q.T @ y))
        cap = cap / norm
        rest, *_ = np.linalg.lstsq(free, y - charging @ cap, rcond=None)
        coef = np.concatenate([rest, cap])
    residual = y - full @ coef
    return LinearTerms(float(coef[0]), coef[1:k], np.asarray(cap, float), residual)
