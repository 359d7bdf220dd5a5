"""The reference E½(s) folded into the Lingane fit's intercept (the interval arithmetic
itself is on :class:`cvfit.quantity.Quantity`)."""

from __future__ import annotations

import math

from cvfit.quantity import Quantity

__all__ = ["t_quantity", "scaled", "with_reference"]

#: Quantity with a Student-t interval on *dof* (normal when infinite).
t_quantity = Quantity.from_t


def scaled(q: Quantity, factor: float, note: str = "") -> Quantity:
    """``factor · q`` (see :meth:`cvfit.quantity.Quantity.scaled`)."""
    return q.scaled(factor, note)


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
            q = q.with_note(", reference scaled with the fit")
        return q, ref_var, float(dof)
    ref_var = reference_stderr**2
    q, nu = Quantity.combined(value, fit_variance, dof, ref_var)
    return q, ref_var, nu
