"""A fitted or measured number with its uncertainty record, and the quantiles behind it.

The quantile and tail functions of the Student-t, normal, F and χ² distributions are the
:mod:`scipy.special` functions that :mod:`scipy.stats` evaluates for them, with the same
answers at the ends of their ranges (``scipy.stats`` itself takes ~0.3 s to import, more
than the analysis of a typical series).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

__all__ = [
    "Quantity",
    "t_interval",
    "clean_number",
    "t_quantile",
    "normal_quantile",
    "f_upper_tail",
    "f_quantile",
    "chi2_quantile",
    "chi2_upper_quantile",
]


def _quantile(p, valid, at_0: float, at_1: float, func):
    """*func()* where 0 < p < 1 and *valid*; *at_0*, *at_1* at p = 0, 1; else NaN.

    A Python float for scalar arguments, else an array.
    """
    p = np.asarray(p, dtype=float)
    valid = np.asarray(valid)
    with np.errstate(invalid="ignore"):
        out = np.where(valid & (p > 0) & (p < 1), func(), np.nan)
    out = np.where(valid & (p == 0), at_0, out)
    out = np.where(valid & (p == 1), at_1, out)
    return float(out) if out.ndim == 0 else out


def t_quantile(p, dof):
    """Quantile of Student's t on *dof* degrees of freedom (as ``scipy.stats.t.ppf``)."""
    dof = np.asarray(dof, dtype=float)
    return _quantile(p, dof > 0, -np.inf, np.inf, lambda: special.stdtrit(dof, p))


def normal_quantile(p):
    """Quantile of the standard normal distribution (as ``scipy.stats.norm.ppf``)."""
    return _quantile(p, True, -np.inf, np.inf, lambda: special.ndtri(p))


def f_quantile(p, dfn, dfd):
    """Quantile of the F distribution (as ``scipy.stats.f.ppf``)."""
    dfn, dfd = np.asarray(dfn, dtype=float), np.asarray(dfd, dtype=float)
    valid = (dfn > 0) & (dfd > 0)
    return _quantile(p, valid, 0.0, np.inf, lambda: special.fdtri(dfn, dfd, p))


def chi2_quantile(p, dof):
    """Quantile of χ² on *dof* degrees of freedom (as ``scipy.stats.chi2.ppf``)."""
    dof = np.asarray(dof, dtype=float)
    return _quantile(p, dof > 0, 0.0, np.inf, lambda: 2 * special.gammaincinv(dof / 2, p))


def chi2_upper_quantile(p, dof):
    """The χ² value exceeded with probability *p* (as ``scipy.stats.chi2.isf``)."""
    dof = np.asarray(dof, dtype=float)
    return _quantile(p, dof > 0, np.inf, 0.0, lambda: special.chdtri(dof, p))


def f_upper_tail(x, dfn, dfd):
    """Upper-tail probability of the F distribution at *x* (as ``scipy.stats.f.sf``)."""
    x = np.asarray(x, dtype=float)
    dfn, dfd = np.asarray(dfn, dtype=float), np.asarray(dfd, dtype=float)
    valid = (dfn > 0) & (dfd > 0)
    with np.errstate(invalid="ignore"):
        out = np.where(valid & (x > 0) & (x < np.inf), special.fdtrc(dfn, dfd, x), np.nan)
    out = np.where(valid & (x <= 0), 1.0, out)
    out = np.where(valid & (x == np.inf), 0.0, out)
    return float(out) if out.ndim == 0 else out


def clean_number(x: float | None) -> float | None:
    """A float for JSON: ``None`` for missing, NaN or infinite values."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def t_interval(value: float, stderr: float, dof: int, level: float = 0.95) -> tuple[float, float]:
    """Two-sided Student-t confidence interval ``value ± t(dof) · stderr``.

    With ``dof`` = ``math.inf`` (or <= 0 treated as undefined) the normal quantile is used
    when dof is infinite; for dof <= 0 the interval is ``(nan, nan)``.
    """
    if not (0.0 < level < 1.0):
        raise ValueError(f"confidence level must lie in (0, 1), got {level}")
    if dof <= 0 or not math.isfinite(stderr):
        return (math.nan, math.nan)
    q = normal_quantile(0.5 + level / 2) if math.isinf(dof) else t_quantile(0.5 + level / 2, dof)
    return (value - q * stderr, value + q * stderr)


@dataclass(frozen=True)
class Quantity:
    """A value with its standard error and 95 % confidence interval.

    Attributes
    ----------
    value : float
        Best estimate.
    stderr : float
        Standard error (one standard deviation), same unit as ``value``.
    ci95 : tuple of float
        Lower and upper limit of the 95 % confidence interval.
    method : str
        How the interval was obtained (e.g. ``"student-t, dof=5"``).
    """

    value: float
    stderr: float
    ci95: tuple[float, float]
    method: str = ""

    def __post_init__(self) -> None:
        object.__setattr__(self, "value", float(self.value))
        object.__setattr__(self, "stderr", float(self.stderr))
        lo, hi = (float(x) for x in self.ci95)
        if math.isfinite(lo) and math.isfinite(hi) and lo > hi:
            raise ValueError(f"ci95 lower limit {lo} exceeds upper limit {hi}")
        object.__setattr__(self, "ci95", (lo, hi))

    @classmethod
    def from_t(
        cls, value: float, stderr: float, dof: int | float, level: float = 0.95
    ) -> Quantity:
        """Build with a Student-t interval on *dof* degrees of freedom."""
        lo, hi = t_interval(value, stderr, dof, level)
        how = "normal" if math.isinf(dof) else f"student-t, dof={int(dof)}"
        return cls(value, stderr, (lo, hi), how)

    def to_dict(self) -> dict[str, object]:
        """Plain JSON-ready mapping ``{"value", "stderr", "ci95"}`` (NaN → None)."""

        return {
            "value": clean_number(self.value),
            "stderr": clean_number(self.stderr),
            "ci95": [clean_number(self.ci95[0]), clean_number(self.ci95[1])],
        }
