"""Independent cyclic voltammograms for the tests: the convolution-integral formulation.

Written only for the tests; it shares no code with :mod:`cvfit.simulate` (which solves the
diffusion equations by finite differences on a grid in space). Here the surface
concentrations of a semi-infinite planar electrode follow from the semi-integral of the
flux (equal diffusion coefficients, only O in the bulk):

    C_O(0, t) = C*·(1 − M),   C_R(0, t) = C*·M,   M(s) = π^−½ ∫0^s χ̃(u) (s − u)^−½ du,

in dimensionless time s = σt, σ = nFv/RT, with the dimensionless flux χ̃ = J/(C*√(Dσ)) (so
χ̃ = π^½·χ, Nicholson and Shain's current function, 0.4463 at a reversible peak). The boundary
condition is Nernst's equation (reversible) or Butler–Volmer with Λ = k0/√(Dσ) = ψ√π.
χ̃ is taken piecewise constant over each step and the kernel is integrated exactly over
each step (product integration), so every step is a linear equation in the new χ̃.

References
----------
Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706 (the integral equation).
Nicholson, R. S. Anal. Chem. 37 (1965) 1351 (the quasi-reversible case, ψ).
Oldham, K. B.; Spanier, J. The Fractional Calculus, Academic Press (1974) (semi-integrals).
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import brentq


def convolution_cv(
    *,
    start: float,
    switch: float,
    h: float = 0.005,
    psi: float | None = None,
    alpha: float = 0.5,
    rho: float = 0.0,
    hold: int = 0,
) -> tuple[np.ndarray, np.ndarray, int]:
    """Dimensionless CV of a sweep start → switch → start with only O in the bulk.

    ``start`` and ``switch`` are nF(E − E½)/RT (usually start > 0 > switch: reduction
    first; the other order sweeps positive first); ``h`` is the step in that variable (one
    dimensionless time unit per unit); ``psi`` None for a Nernstian couple.
    ``rho`` is an uncompensated resistance in dimensionless form, R·nFAC*√(Dσ)·nF/RT: the
    electrode sees ξ + ρ·π^½χ (a reduction current moves it positive), solved at every
    step by bracketing (the step equation is then not linear in the new χ).
    ``hold``: steps (of dimensionless time h each) at ``start`` before the sweep, the
    potential stepped there from rest (a quiet time; no ohmic drop during it).
    Returns (ξ, π^½χ, index of the switch): ξ = nF(E − E½)/RT of the applied potential and
    π^½χ = i/(nFAC*√(Dσ)), the current function (positive for reduction; 0.4463 at a
    reversible peak). The hold's samples come first; the switch index counts them.
    """
    n_leg = int(round(abs(start - switch) / h))
    way = -1.0 if switch < start else 1.0
    xi = np.concatenate(
        [
            np.full(hold, start),
            start + way * h * np.arange(n_leg + 1),
            switch - way * h * np.arange(1, n_leg + 1),
        ]
    )
    count = xi.size
    # ∫ over step j of (s_n − u)^−½ du = 2√h (√(k + 1) − √k), k = n − j
    k = np.arange(count, dtype=float)
    w = 2.0 * math.sqrt(h) * (np.sqrt(k + 1.0) - np.sqrt(k)) / math.sqrt(math.pi)
    chi = np.zeros(count)
    a = w[0]
    lam = None if psi is None else psi * math.sqrt(math.pi)
    first = 1 if hold == 0 else 0  # with a hold, the potential steps at the first sample
    for n in range(first, count):
        # memory term: the steps before n, weights w[n − j] for j = first .. n − 1
        b = float(np.dot(chi[first:n], w[n - first : 0 : -1])) if n > first else 0.0
        chi[n] = _step(xi[n], a, b, lam, alpha)
        if rho > 0.0 and n >= hold:
            c0 = chi[n]

            def g(c: float, n: int = n, b: float = b) -> float:
                return c - _step(xi[n] + rho * c, a, b, lam, alpha)

            if c0 != 0.0 and g(0.0) * g(c0) < 0.0:
                chi[n] = brentq(g, min(0.0, c0), max(0.0, c0), xtol=1e-15, rtol=1e-13)
    return xi, chi, hold + n_leg


def _step(x: float, a: float, b: float, lam: float | None, alpha: float) -> float:
    """New χ̃ of one step at electrode potential ξ = *x* (memory term *b*)."""
    if lam is None:
        m = 1.0 / (1.0 + math.exp(min(x, 700.0)))
        return (m - b) / a
    kf = lam * math.exp(min(-alpha * x, 700.0))
    kb = lam * math.exp(min((1.0 - alpha) * x, 700.0))
    return (kf * (1.0 - b) - kb * b) / (1.0 + a * (kf + kb))


def _vertex(xi: np.ndarray, y: np.ndarray) -> float:
    k = int(np.argmax(y))
    y0, y1, y2 = y[k - 1], y[k], y[k + 1]
    return float(xi[k] + 0.5 * (xi[k + 1] - xi[k]) * (y0 - y2) / (y0 - 2.0 * y1 + y2))


def peak_potentials(
    *, start: float, switch: float, h: float = 0.005, psi: float | None = None
) -> tuple[float, float]:
    """(ξ of the cathodic peak, ξ of the anodic peak), parabola through the top 3 samples."""
    xi, chi, k = convolution_cv(start=start, switch=switch, h=h, psi=psi)
    return _vertex(xi[: k + 1], chi[: k + 1]), _vertex(xi[k:], -chi[k:])
