"""Confidence intervals of the Lingane fit's derived quantities (Quantity builders)."""

from __future__ import annotations

import math

from cvfit.quantity import Quantity, t_interval
from cvfit.titration.lingane_regression import combined_interval

__all__ = ["t_quantity", "scaled", "with_reference"]


def t_quantity(value: float, stderr: float, dof: float) -> Quantity:
    """Quantity with a Student-t interval on *dof* (normal when infinite)."""
    lo, hi = t_interval(value, stderr, dof)
    how = "normal" if math.isinf(dof) else f"student-t, dof={int(dof)}"
    return Quantity(value, stderr, (lo, hi), how)


def scaled(q: Quantity, factor: float, note: str = "") -> Quantity:
    """``factor · q`` (a linear change of unit, e.g. V → log10 units)."""
    lo, hi = sorted((q.ci95[0] * factor, q.ci95[1] * factor))
    return Quantity(q.value * factor, q.stderr * abs(factor), (lo, hi), q.method + note)


def with_reference(
    value: float,
    fit_variance: float,
    dof: int,
    scale: float,
    reference_stderr: float | None,
    typical_variance: float | None,
) -> tuple[Quantity, float, float]:
    """Intercept of the shift with the reference E½(s) uncertainty folded in.

    ``typical_variance`` is the median σᵢ² of a weighted fit (``None``: unweighted).
    Weighted: the reference stderr came from the same peak analysis as the σᵢ, so it takes
    the same scale factor (reduced χ²) and the interval is exact Student-t on ``dof``.
    Unweighted with a given reference stderr: that stderr is known and is combined with
    the fitted variance by :func:`combined_interval`. Reference stderr unknown: the
    reference scatters like one more point (variance ``scale · typical``), Student-t.

    Returns the Quantity, the reference variance used and the (equivalent) dof.
    """
    if typical_variance is not None or reference_stderr is None:
        base = typical_variance if reference_stderr is None else reference_stderr**2
        ref_var = scale * (1.0 if base is None else base)
        q = t_quantity(value, math.sqrt(fit_variance + ref_var), dof)
        if reference_stderr is not None:
            q = Quantity(q.value, q.stderr, q.ci95, q.method + ", reference scaled with the fit")
        return q, ref_var, float(dof)
    ref_var = reference_stderr**2
    lo, hi, nu = combined_interval(value, fit_variance, dof, ref_var)
    how = f"student-t (dof={dof}) and normal reference in quadrature" + (
        "" if math.isinf(nu) else f", equivalent dof={nu:.1f}"
    )
    return Quantity(value, math.sqrt(fit_variance + ref_var), (lo, hi), how), ref_var, nu
