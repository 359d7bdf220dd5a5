"""Choice of the number of stepwise complexes and the verdict on each constant.

Rule: the smallest N that no larger candidate beats by an extra-sum-of-squares F-test at
``alpha`` (default 0.01). Why an F-test rather than AICc/BIC: the per-file E½ errors give
the relative weights well but their overall scale is uncertain (peak-finder errors,
reference drift), and the F ratio does not depend on that scale; an information
criterion with an estimated variance admits a spurious extra constant with a probability
that grows with the number of points (about 16 % per step for AIC at large N), the F-test
at a fixed 1 % whatever the size of the series. AICc and BIC of every candidate are
reported beside it.

References
----------
Bates, D. M.; Watts, D. G. Nonlinear Regression Analysis and Its Applications; Wiley:
New York, 1988; §3.10 (extra-sum-of-squares F-test for nested non-linear models).
Hurvich, C. M.; Tsai, C.-L. Biometrika 1989, 76, 297 (AICc).
Schwarz, G. Ann. Stat. 1978, 6, 461 (BIC).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cvfit.quantity import clean_number, f_upper_tail
from cvfit.titration.stepwise_least_squares import CandidateFit, StepwiseData, fit_candidate

__all__ = ["CandidateSummary", "fit_all_candidates", "choose_candidate", "summarise", "ALPHA"]

#: Significance level of the F-test that admits one more complex.
ALPHA = 0.01


@dataclass(frozen=True)
class CandidateSummary:
    """Fit quality of one candidate number of complexes.

    Attributes
    ----------
    n_complexes : int
    chi_square : float
        Weighted residual sum of squares (1/σ² weights).
    dof : int
    reduced_chi_square : float
    aicc, bic : float
        With the variance estimated from the residuals (k = N + 2 parameters: E½(s),
        the β_j and the variance).
    p_value_vs_previous : float or None
        F-test p-value of this candidate against the one with one complex fewer.
    log10_beta : tuple of float
        The optimum (a constant on its bound means that complex is not needed).
    """

    n_complexes: int
    chi_square: float
    dof: int
    reduced_chi_square: float
    aicc: float
    bic: float
    p_value_vs_previous: float | None
    log10_beta: tuple[float, ...]

    def to_dict(self) -> dict:
        return {
            "n_complexes": self.n_complexes,
            "chi_square": clean_number(self.chi_square),
            "dof": self.dof,
            "reduced_chi_square": clean_number(self.reduced_chi_square),
            "aicc": clean_number(self.aicc),
            "bic": clean_number(self.bic),
            "p_value_vs_previous": clean_number(self.p_value_vs_previous),
            "log10_beta": [clean_number(float(x)) for x in self.log10_beta],
        }


def fit_all_candidates(data: StepwiseData, max_complexes: int) -> list[CandidateFit]:
    """Candidates N = 1 … max_complexes that leave at least one degree of freedom."""
    out: list[CandidateFit] = []
    previous = None
    for N in range(1, max_complexes + 1):
        if data.n_obs - (N + 1) < 1:
            break
        fit = fit_candidate(data, N, previous)
        out.append(fit)
        previous = fit.params
    return out


def _f_p_value(small: CandidateFit, large: CandidateFit) -> float:
    extra = large.N - small.N
    if large.dof < 1 or large.rss <= 0:
        return 0.0 if small.rss > large.rss else 1.0
    gain = max(small.rss - large.rss, 0.0)
    F = (gain / extra) / (large.rss / large.dof)
    return f_upper_tail(F, extra, large.dof)


def choose_candidate(fits: list[CandidateFit], *, alpha: float = ALPHA) -> CandidateFit:
    """The smallest N not beaten by any larger candidate at level ``alpha``."""
    for k, small in enumerate(fits):
        if all(_f_p_value(small, large) >= alpha for large in fits[k + 1 :]):
            return small
    return fits[-1]


def summarise(data: StepwiseData, fits: list[CandidateFit]) -> list[CandidateSummary]:
    """AICc, BIC and the step-wise F-test p-value of every candidate."""
    n = data.n_obs
    out = []
    for k, f in enumerate(fits):
        kk = f.N + 2
        rss = max(f.rss, 1e-300)
        aic = n * math.log(rss / n) + 2 * kk
        aicc = aic + (2 * kk * (kk + 1) / (n - kk - 1) if n - kk - 1 > 0 else math.inf)
        bic = n * math.log(rss / n) + kk * math.log(n)
        p = _f_p_value(fits[k - 1], f) if k > 0 else None
        red = f.rss / f.dof if f.dof > 0 else math.nan
        out.append(
            CandidateSummary(f.N, f.rss, f.dof, red, aicc, bic, p, tuple(np.asarray(f.params[1:])))
        )
    return out
