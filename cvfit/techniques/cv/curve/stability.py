"""How far a curve fit's E½ moves when the background model or the fitted window changes.

A real electrode is never the ideal one-step couple on a polynomial background: a fit of a
real record leaves residuals well above the noise, and its reduced χ² then says nothing
about E½. What matters is whether E½ depends on the arbitrary choices of the model. The
fit is repeated with

* the background one order lower and one order higher (common background and capacitance
  together, :mod:`cvfit.techniques.cv.curve.linear`);
* the first tenth of the analysed cycle left out (where the assumed quiet time and the
  start transient weigh most);
* the outer fifth of the potential range on each side of E½ left out (where the
  background's curvature weighs most),

and the largest move of E½ among these variants is the model spread. The lower order
counts only where it describes the record about as well as the fit's own order: where
the F test of the terms it drops (their Δχ² against the fit's reduced χ²) rejects it at
:data:`LOWER_ORDER_REJECT_P`, it is no plausible alternative and its E½ is reported but not
counted. Each variant is one
Gauss–Newton step of the variable-projection problem from the fit's optimum: the
derivatives of the faradaic shape by the non-linear parameters are taken once (one
simulation per parameter), and each variant costs only its linear solve — exact to second
order in the (small) move, checked against full refits in tests/test_curve_realistic.py.

References
----------
Golub, G. H.; Pereyra, V. SIAM J. Numer. Anal. 1973, 10, 413; Kaufman, L. BIT 1975, 15, 49
(the Jacobian of the projected residual).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from cvfit.quantity import f_upper_tail
from cvfit.techniques.cv.curve.model import CurveModel

__all__ = ["Variant", "ModelSpread", "fit_variants", "model_spread"]

#: Share of the analysed cycle's first samples left out by the window variant.
START_SHARE = 0.10
#: Share of the potential excursion from E½ kept by the narrow-window variant.
KEPT_EXCURSION = 0.80
#: F-test level below which the lower-order background is rejected (common practice).
LOWER_ORDER_REJECT_P = 0.01
#: Finite-difference steps of the non-linear parameters (E½ V, log10 k0, α, R_u Ω).
STEPS = (1e-5, 1e-4, 1e-4, 0.5)


@dataclass(frozen=True)
class Variant:
    """One alternative fit: its label, background orders and fitted samples."""

    label: str
    orders: tuple[int, int]
    mask: np.ndarray


@dataclass(frozen=True)
class ModelSpread:
    """E½ of each variant, the largest move from the fit's E½ among those counted, V, and
    the labels of the variants not counted (a lower order the F test rejects)."""

    E_half_V: dict[str, float]
    spread_V: float
    not_counted: tuple[str, ...] = ()


def fit_variants(model: CurveModel, E_half_V: float) -> list[Variant]:
    """The variants of :func:`model_spread` for *model* (module notes)."""
    data = model.data
    P, Q = model.orders
    full = data.fit_mask
    out = [
        Variant("background one order lower", (max(P - 1, 0), max(Q - 1, 0)), full),
        Variant("background one order higher", (P + 1, Q + 1), full),
    ]
    idx = np.flatnonzero(full)
    late = full.copy()
    late[idx[: int(START_SHARE * idx.size)]] = False
    out.append(Variant("first tenth of the cycle left out", (P, Q), late))
    dE = data.potential_V - E_half_V
    narrow = full.copy()
    for side in (dE > 0, dE < 0):
        reach = float(np.max(np.abs(dE[full & side]), initial=0.0))
        narrow &= ~(side & (np.abs(dE) > KEPT_EXCURSION * reach))
    out.append(Variant("outer fifth of the potential range left out", (P, Q), narrow))
    return out


def model_spread(
    model: CurveModel,
    params: Sequence[float],
    free: Sequence[bool],
    evaluate_shape: Callable[[np.ndarray], tuple[np.ndarray, np.ndarray]],
) -> ModelSpread:
    """E½ of every variant by one Gauss–Newton step from the optimum *params*.

    Parameters
    ----------
    model : CurveModel
    params : sequence of float
        (E½, log10 k0, α, R_u) at the optimum.
    free : sequence of bool
        Which of them the fit varied and left off its bounds (the others stay put).
    evaluate_shape : callable
        ``evaluate_shape(params) -> (shape, drive)``: one simulation.
    """
    base = np.asarray(params, float)
    shape0, drive0 = evaluate_shape(base)
    derivs = []
    for j, is_free in enumerate(free):
        if not is_free:
            continue
        p = base.copy()
        p[j] += STEPS[j]
        shape_j, _ = evaluate_shape(p)
        derivs.append((j, (shape_j - shape0) / STEPS[j]))
    sig = model.data.sigma_A
    moves: dict[str, float] = {}
    ssr: dict[str, tuple[float, int]] = {}
    main = model.solve_linear(shape0, drive0)
    n_main = int(model.data.fit_mask.sum())
    p_main = len(derivs) + 1 + sum(o + 1 for o in model.orders)
    for v in fit_variants(model, float(base[0])):
        lin = model.solve_linear(shape0, drive0, mask=v.mask, orders=v.orders)
        if not derivs:
            moves[v.label] = float(base[0])
            continue
        scale = float(lin.coefficients[0])
        basis = model.basis(v.orders)
        rate = np.empty_like(drive0)
        rate[0] = 0.0
        rate[1:] = np.diff(drive0) / model.data.dt_s
        m = v.mask
        linear = np.column_stack(
            [shape0[m], basis.common[m], basis.capacitance[m] * rate[m, None]]
        )
        Qm, _ = np.linalg.qr(linear / sig)
        J = np.column_stack([scale * d[m] / sig for _, d in derivs])
        J -= Qm @ (Qm.T @ J)
        step, *_ = np.linalg.lstsq(J, lin.residual, rcond=None)
        moved = dict(zip([j for j, _ in derivs], step, strict=True))
        moves[v.label] = float(base[0] + moved.get(0, 0.0))
        left = float(np.sum((lin.residual - J @ step) ** 2))
        ssr[v.label] = (left, sum(o + 1 for o in v.orders))
    dropped = []
    lower = "background one order lower"
    if lower in ssr:
        ssr_main = float(np.sum(main.residual**2))
        dof = n_main - p_main
        extra = sum(o + 1 for o in model.orders) - ssr[lower][1]
        if extra > 0 and dof > 0 and ssr_main > 0:
            F = (ssr[lower][0] - ssr_main) / extra / (ssr_main / dof)
            if f_upper_tail(F, extra, dof) < LOWER_ORDER_REJECT_P:
                dropped.append(lower)
    counted = [e for k, e in moves.items() if k not in dropped]
    spread = max((abs(e - float(base[0])) for e in counted), default=0.0)
    return ModelSpread(moves, spread, tuple(dropped))
