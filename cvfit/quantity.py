"""A fitted or measured number with its uncertainty record."""

from __future__ import annotations

import math
from dataclasses import dataclass

from scipy import stats

__all__ = ["Quantity", "t_interval", "clean_number"]


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
    q = stats.norm.ppf(0.5 + level / 2) if math.isinf(dof) else stats.t.ppf(0.5 + level / 2, dof)
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
