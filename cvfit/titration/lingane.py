"""Lingane regression of the half-wave shift against log10 of the free ligand concentration.

For ``O·L_p + n e⁻ ⇌ R·L_q + (p − q) L`` with fast, labile complexation and ligand in
excess (Lingane, Chem. Rev. 29 (1941) 1)::

    E½(c) − E½(s) = −(RT/nF) ln(β_ox/β_red) − (p − q)(RT/nF) ln[L]

so a line of the shift against ``log10[L]`` has slope ``−(p − q)·ln10·RT/nF`` and intercept
``−ln10·(RT/nF)·log10(β_ox/β_red)``. Lingane's full expression has one more term,
``(RT/2nF) ln[(D_O,s D_R,c)/(D_R,s D_O,c)]``; it is neglected here. It cancels exactly when
complexation changes the diffusion coefficients of both oxidation states by the same
factor (complexes of similar size), and is in any case a constant that would be absorbed
into the intercept, biasing log10(β_ox/β_red) by ``log10(D-ratio)/2``.

Usage from the pipeline::

    fit = fit_lingane(points, electrons=n, temperature_K=T,
                      reference_E_half_V=Es, reference_stderr_V=sEs)
    if isinstance(fit, FitRefused):                  # too few points, no ligand range
        fit_json = null_fit_dict(len(points), fit.flags)  # constants reported as null
    else:
        fit_json = fit.to_dict()
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np

from cvfit.errors import InputError
from cvfit.flags import FitRefused, Flag
from cvfit.formatting import format_q
from cvfit.quantity import Quantity, clean_number
from cvfit.titration.base import TitrationPoint, finite_number, optional_stderr
from cvfit.titration.error_budget import (
    ErrorBudget,
    budget_of,
    extra_scatter_variance,
    reference_solution_variance,
    within_file_variance,
)
from cvfit.titration.lingane_flags import (
    delta_ligand_flags,
    free_ion_bend_flag,
    point_flags,
    weighting_flag,
)
from cvfit.titration.lingane_intervals import scaled, t_quantity, with_reference
from cvfit.titration.lingane_regression import (
    curvature_p_value,
    fit_fixed_slope,
    fit_line,
    weights_credible,
)
from cvfit.units import nernst_slope_V_per_decade

__all__ = [
    "TitrationPoint",
    "LinganeFit",
    "fit_lingane",
    "check_points",
    "null_fit_dict",
    "MIN_POINTS",
]

#: Fewest points for a line with a confidence interval (dof = N − 2 >= 1).
MIN_POINTS = 3

_Q_KEYS = (
    "slope_V_per_decade",
    "intercept_V",
    "delta_ligands",
    "log10_beta_ratio",
    "log10_beta_ratio_at_integer",
)


@dataclass(frozen=True)
class LinganeFit:
    """Result of :func:`fit_lingane`; every uncertain number is a :class:`Quantity`.

    Attributes
    ----------
    slope_V_per_decade, intercept_V : Quantity
        Of ``E½(c) − E½(s)`` against ``log10([L]/(mol/L))``. The intercept's standard
        error includes the reference E½(s) uncertainty; the slope's does not (a common
        offset of every point cannot tilt the line).
    delta_ligands : Quantity
        ``p − q = −slope / (ln10·RT/nF)``.
    delta_ligands_integer : int
        Nearest whole number to ``delta_ligands`` (may be <= 0 if the data say so; flagged).
    log10_beta_ratio : Quantity
        ``log10(β_ox/β_red) = −intercept / (ln10·RT/nF)``, slope free.
    log10_beta_ratio_at_integer : Quantity
        The same from a one-parameter refit with ``p − q`` fixed at the whole number
        (dof = N − 1).
    n_points, dof : int
        Points fitted and ``N − 2``.
    weighted : bool
        Whether 1/σ² weights from the per-file standard errors were used.
    residuals_V : tuple of float
        Observed minus fitted E½, V, in input order.
    covariance : tuple of tuple of float
        Covariance of (slope, intercept), V² per decade² etc.; includes the reference term.
    curvature_p_value : float or None
        F-test p-value of an added quadratic term in log10[L] (``None`` if N < 4).
    reduced_chi_square : float or None
        ``χ²/(N − 2)`` with the per-file errors (``None`` if they are not all known).
    flags : tuple of Flag
        Findings about the fit.
    nernst_slope_V_per_decade : float
        ``ln10·RT/nF`` used for the conversion, V.
    intercept_dof : float
        Degrees of freedom behind the intercept's interval: N − 2, or with a known
        reference stderr in an unweighted fit the equivalent dof of the combined interval
        (``inf`` means a normal quantile).
    error_budget : dict of str to ErrorBudget
        For every fitted constant (the keys of ``to_dict``), its standard uncertainty by
        source: within-file noise, solution-to-solution scatter, reference E½(s)
        (:mod:`cvfit.titration.error_budget`); the totals are the reported standard errors.
    extra_scatter_V : float or None
        Moment estimate of the solution-to-solution standard deviation s beyond the
        per-file noise, V (None when the files gave no standard errors: then all the
        scatter is counted as between solutions).
    """

    slope_V_per_decade: Quantity
    intercept_V: Quantity
    delta_ligands: Quantity
    delta_ligands_integer: int
    log10_beta_ratio: Quantity
    log10_beta_ratio_at_integer: Quantity
    n_points: int
    dof: int
    weighted: bool
    residuals_V: tuple[float, ...]
    covariance: tuple[tuple[float, float], tuple[float, float]]
    curvature_p_value: float | None
    reduced_chi_square: float | None
    flags: tuple[Flag, ...]
    nernst_slope_V_per_decade: float
    intercept_dof: float
    error_budget: dict[str, ErrorBudget] | None = None
    extra_scatter_V: float | None = None

    def __post_init__(self) -> None:
        for key in _Q_KEYS:
            if not isinstance(getattr(self, key), Quantity):
                raise TypeError(f"{key} must be a Quantity")
        if self.n_points < MIN_POINTS or self.dof != self.n_points - 2:
            raise ValueError(f"inconsistent n_points={self.n_points}, dof={self.dof}")
        res = tuple(float(r) for r in self.residuals_V)
        if len(res) != self.n_points:
            raise ValueError("residuals_V must have one entry per point")
        object.__setattr__(self, "residuals_V", res)
        cov = tuple(tuple(float(c) for c in row) for row in self.covariance)
        if len(cov) != 2 or any(len(row) != 2 for row in cov):
            raise ValueError("covariance must be 2 x 2")
        object.__setattr__(self, "covariance", cov)
        object.__setattr__(self, "delta_ligands_integer", int(self.delta_ligands_integer))
        object.__setattr__(self, "flags", tuple(self.flags))
        if not all(isinstance(f, Flag) for f in self.flags):
            raise TypeError("flags must be Flag instances")

    def summary_lines(self) -> list[str]:
        """Its lines in the terminal summary: slope, p − q and log10(β_ox/β_red) with intervals."""
        lines = [
            f"Lingane fit on {self.n_points} points ({self.dof} degrees of freedom, "
            f"{'weighted by per-file E½ errors' if self.weighted else 'unweighted'}):",
            "  slope                 "
            + format_q(self.slope_V_per_decade, scale=1e3, unit="mV/decade"),
            "  p − q                 " + format_q(self.delta_ligands),
            "  log10(β_ox/β_red)     " + format_q(self.log10_beta_ratio),
            f"  with p − q = {self.delta_ligands_integer}:       "
            + format_q(self.log10_beta_ratio_at_integer),
            "  (β_ox/β_red in (mol/L)^-(p−q); [L] in mol/L)",
        ]
        return lines

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready mapping with the results.json ``fit`` keys (NaN/inf → None)."""

        out: dict[str, Any] = {"model": "lingane"}
        for key in _Q_KEYS[:3]:
            out[key] = getattr(self, key).to_dict()
        out["delta_ligands_integer"] = self.delta_ligands_integer
        for key in _Q_KEYS[3:]:
            out[key] = getattr(self, key).to_dict()
        out.update(
            n_points=self.n_points,
            dof=self.dof,
            weighted=self.weighted,
            residuals_V=list(self.residuals_V),
            covariance=[list(row) for row in self.covariance],
            curvature_p_value=clean_number(self.curvature_p_value),
            reduced_chi_square=clean_number(self.reduced_chi_square),
            nernst_slope_V_per_decade=self.nernst_slope_V_per_decade,
            intercept_dof=clean_number(self.intercept_dof),
            interval_methods={key: getattr(self, key).method for key in _Q_KEYS},
            extra_scatter_V=clean_number(self.extra_scatter_V),
            error_budget=None
            if self.error_budget is None
            else {k: b.to_dict() for k, b in self.error_budget.items()},
            flags=[f.to_dict() for f in self.flags],
        )
        return out


def null_fit_dict(n_points: int, flags: Sequence[Flag]) -> dict[str, Any]:
    """The ``fit`` mapping of a series that could not be fitted: constants ``null``.

    Same keys as :meth:`LinganeFit.to_dict`; ``flags`` should say why (see
    :func:`check_points`).
    """
    null_q = {"value": None, "stderr": None, "ci95": [None, None]}
    out: dict[str, Any] = {"model": "lingane"}
    for key in _Q_KEYS[:3]:
        out[key] = dict(null_q, ci95=[None, None])
    out["delta_ligands_integer"] = None
    for key in _Q_KEYS[3:]:
        out[key] = dict(null_q, ci95=[None, None])
    out.update(
        n_points=int(n_points),
        dof=None,
        weighted=False,
        residuals_V=[],
        covariance=None,
        curvature_p_value=None,
        reduced_chi_square=None,
        nernst_slope_V_per_decade=None,
        intercept_dof=None,
        interval_methods={},
        extra_scatter_V=None,
        error_budget=None,
        flags=[f.to_dict() for f in flags],
    )
    return out


def check_points(points: Sequence[TitrationPoint]) -> tuple[Flag, ...]:
    """Flags that stop or qualify a Lingane fit of *points*, before fitting.

    Returns ``TOO_FEW_POINTS`` or ``NO_LIGAND_RANGE`` (severity ``error``: no constants can
    be reported) and ``SHORT_LIGAND_RANGE`` (warning, < 1 decade of [L]).

    Raises
    ------
    InputError
        (a ``ValueError``) if a point has ``ligand_M <= 0``; the ligand-free reference is
        passed to :func:`fit_lingane` separately.
    """
    pts = tuple(points)
    for p in pts:
        if not isinstance(p, TitrationPoint):
            raise TypeError(f"expected TitrationPoint, got {type(p).__name__}")
        if not p.ligand_M > 0.0:
            raise InputError(
                f"ligand_M = {p.ligand_M} mol/L cannot go on a log10[L] axis; pass the "
                "ligand-free E½ as reference_E_half_V and only points with ligand_M > 0",
                source=p.label,
                key="ligand_M",
            )
    return point_flags([p.ligand_M for p in pts], MIN_POINTS)


def fit_lingane(
    points: Sequence[TitrationPoint],
    *,
    electrons: int,
    temperature_K: float,
    reference_E_half_V: float,
    reference_stderr_V: float | None,
    weighting: Literal["auto", "none", "stderr"] = "auto",
    curvature_alpha: float = 0.01,
    reference_count: int = 1,
    feedback: tuple[tuple[float, float], tuple[float, float]] | None = None,
) -> LinganeFit | FitRefused:
    """Fit Lingane's line to E½ values of a titration and derive p − q and the β ratio.

    Parameters
    ----------
    points : sequence of TitrationPoint
        At least three, all with ``ligand_M > 0`` (free ligand, mol/L), two distinct.
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K.
    reference_E_half_V : float
        E½(s) of the ligand-free couple, V.
    reference_stderr_V : float or None
        Its standard error, V; it adds in quadrature to the intercept only (a common
        offset of every point cannot change the slope). ``None``: the reference is taken
        to scatter like one more titration point and a flag says so. See Notes.
    weighting : {"auto", "none", "stderr"}
        ``"none"``: ordinary least squares. ``"stderr"``: weights 1/σᵢ² (every point needs
        a standard error > 0). ``"auto"``: weights when every point has one and the
        weighted reduced χ² passes :func:`cvfit.titration.lingane_regression.weights_credible`,
        else unweighted with a flag.
    curvature_alpha : float
        Level of the curvature F-test below which ``LINE_CURVED`` is raised.
    reference_count : int
        Number of ligand-free files averaged into E½(s). When the reference takes the
        scatter of the points (see Notes), a mean of M files scatters M times less in
        variance; ``reference_stderr_V`` (which includes their own spread) stays a floor.
    feedback : 2 x 2 matrix, optional
        Jacobian J of the self-consistent (slope, intercept) on the line's own when [L]
        depends on the fitted p − q (:mod:`cvfit.titration.lingane_model`): the fitted
        and within-file covariances become J·Cov·Jᵀ before the intervals (the reference
        term is added after). ``None``: [L] exact.

    Returns
    -------
    LinganeFit or FitRefused
        The fit; or, when :func:`check_points` finds too few points or no ligand range,
        a :class:`cvfit.flags.FitRefused` carrying those flags (an expected failure is a
        value, not an exception).

    Notes
    -----
    E½(c) is fitted directly as ``a' + b·log10[L]``; the intercept of the shift is then
    ``a' − E½(s)`` with variance ``var(a') + σ_s²`` and ``cov(b, a' − E½(s)) = cov(b, a')``.
    In every mode the fit covariance is scaled by the observed reduced χ² and intervals
    use Student's t on N − 2 dof: this is exact when the per-file errors are right up to a
    common factor (and, unweighted, when the scatter is homogeneous), and it lets the
    observed scatter dominate whenever it exceeds what the file noise predicts.

    The reference term: in a weighted fit σ_s comes from the same peak analysis as the
    σᵢ, so it takes the same scale factor and the intercept's interval is Student-t on
    N − 2 dof (exact under that model). In an unweighted fit σ_s is taken as known (its
    file has hundreds of samples) and is combined with the fitted variance by adding
    t(N − 2) and normal half-widths in quadrature (:func:`cvfit.titration.lingane_regression.
    combined_interval`) — conservative at very small N, where Welch–Satterthwaite
    under-covers. The fixed-integer refit follows the same rules on N − 1 dof.
    Monte-Carlo coverage of the 95 % intervals is checked in the tests (93–97 %).

    Error budget: every constant's variance is split into the part the per-file noise
    explains (``A diag(σ²) Aᵀ`` for the estimator ``A`` actually used), the rest of the
    fitted variance (solution-to-solution scatter, with its size s estimated by moments)
    and the reference term (:mod:`cvfit.titration.error_budget`); the parts add up to the
    variance the interval is built on. When the points scatter less than their own errors
    predict (reduced χ² < 1) the fitted variance is all within-file. Taking the larger of
    the two instead (a floor at the file noise) was tried and rejected: with Student-t on
    N − 2 dof it over-covered (98.5–100 % for a nominal 95 %) in the Monte-Carlo tests.

    References
    ----------
    Lingane, Chem. Rev. 29 (1941) 1 (half-wave shift on complexation).
    JCGM 100:2008, Evaluation of measurement data (GUM), annex G (combining a Type A and a
    Type B uncertainty).
    """
    pts = tuple(points)
    pre = check_points(pts)
    if any(f.severity == "error" for f in pre):
        return FitRefused(pre)
    if weighting not in ("auto", "none", "stderr"):
        raise ValueError(f"weighting must be 'auto', 'none' or 'stderr', got {weighting!r}")
    if not 0.0 < curvature_alpha < 1.0:
        raise ValueError(f"curvature_alpha must lie in (0, 1), got {curvature_alpha}")
    e_ref = finite_number("reference_E_half_V", reference_E_half_V)
    s_ref = optional_stderr("reference_stderr_V", reference_stderr_V)
    slope_nernst = nernst_slope_V_per_decade(temperature_K, electrons)

    x = np.log10(np.array([p.ligand_M for p in pts]))
    y = np.array([p.E_half_V for p in pts])
    known = [p.E_half_stderr_V for p in pts]
    have_sigma = all(s is not None and s > 0.0 for s in known)
    sigma = np.array(known, dtype=float) if have_sigma else None
    if weighting == "stderr" and not have_sigma:
        bad = next(p.label for p in pts if not (p.E_half_stderr_V or 0.0) > 0.0)
        raise InputError(
            "weighting = 'stderr' needs a standard error > 0 for every E½; "
            "use weighting = 'auto' or 'none'",
            source=bad,
            key="E_half_stderr_V",
        )

    flags = list(pre)
    weighted_line = fit_line(x, y, sigma) if have_sigma else None
    redchi_w = None if weighted_line is None else weighted_line.reduced_chi_square
    credible = weighted_line is not None and weights_credible(
        weighted_line.reduced_chi_square, weighted_line.dof
    )
    use_weights = weighting == "stderr" or (weighting == "auto" and credible)
    flag = weighting_flag(weighting, have_sigma, credible, redchi_w, weighted_line)
    if flag is not None:
        flags.append(flag)
    w_sigma = sigma if use_weights else None
    # weights are used only with a weighted line (stderr: every σ given; auto: credible)
    line = weighted_line if use_weights and weighted_line is not None else fit_line(x, y, None)

    n = len(pts)
    dof = line.dof
    scale = line.reduced_chi_square
    cov = line.covariance * scale
    jac = None if feedback is None else np.asarray(feedback, dtype=float)
    cov = cov if jac is None else jac @ cov @ jac.T
    s_ref_given = s_ref
    if weighting == "auto" and have_sigma and not credible:
        # The reference stderr comes from the same per-file analysis whose errors were
        # just shown to understate the scatter: let it scatter like the points instead.
        s_ref = None
    elif s_ref is None:
        flags.append(
            Flag(
                "REFERENCE_STDERR_FROM_SCATTER",
                "no standard error for E½(s): the reference is assumed to scatter like one "
                "more titration point",
                "info",
            )
        )
    typical = None if w_sigma is None else float(np.median(w_sigma**2))
    m_ref = max(int(reference_count), 1)
    design = np.column_stack([x, np.ones_like(x)])
    wts = np.ones_like(x) if w_sigma is None else 1.0 / w_sigma**2
    within = None if sigma is None else within_file_variance(design, wts, sigma)
    if within is not None and jac is not None:
        within = jac @ within @ jac.T
    noise = np.zeros_like(x) if sigma is None else sigma
    s2_extra = extra_scatter_variance(design, wts, line.residuals, noise)

    def reference_term(value: float, fit_var: float, nu: int, sc: float, typ: float | None):
        # E½(s) is one more solution: its own error plus the points' between-solution
        # scatter (error_budget.reference_solution_variance), never scaled below its own
        ref = None
        if s_ref_given is not None:
            ref = reference_solution_variance(s_ref_given, s2_extra, m_ref)
        if weighting == "auto" and have_sigma and not credible:
            # the reference file(s) scatter like the points: their mean M times less
            one = sc * (1.0 if typ is None else typ) / m_ref
            return with_reference(value, fit_var, nu, 1.0, None, max(one, ref or 0.0))
        if ref is None:
            return with_reference(value, fit_var, nu, sc, None, typ)
        # known own error plus the between part: t(ν) and normal half-widths in quadrature
        return with_reference(value, fit_var, nu, 1.0, math.sqrt(ref), None)

    slope = line.slope
    slope_se = math.sqrt(cov[0, 0])
    slope_q = t_quantity(slope, slope_se, dof)
    delta_q = scaled(slope_q, -1.0 / slope_nernst)
    intercept_q, ref_var, intercept_dof = reference_term(
        line.intercept - e_ref, cov[1, 1], dof, scale, typical
    )
    ratio_q = scaled(intercept_q, -1.0 / slope_nernst)
    cov_total = cov.copy()
    cov_total[1, 1] += ref_var

    k = int(round(delta_q.value))
    a_fix, var_fix_u, chi_fix = fit_fixed_slope(x, y, -k * slope_nernst, w_sigma)
    scale_fix = chi_fix / (n - 1)
    var_fix = var_fix_u * scale_fix
    within_fix = None
    if sigma is not None:
        within_fix = float(np.sum(wts**2 * sigma**2) / np.sum(wts) ** 2)
    fixed_q, ref_var_fix, _ = reference_term(a_fix - e_ref, var_fix, n - 1, scale_fix, typical)
    ratio_int_q = scaled(fixed_q, -1.0 / slope_nernst, f", p - q fixed at {k}")
    w00 = None if within is None else within[0, 0]
    w11 = None if within is None else within[1, 1]
    slope_b = budget_of("V/decade", cov[0, 0], w00, 0.0)
    intercept_b = budget_of("V", cov[1, 1], w11, ref_var)
    fixed_b = budget_of("V", var_fix, within_fix, ref_var_fix)
    to_log = 1.0 / slope_nernst
    budget = {
        "slope_V_per_decade": slope_b,
        "intercept_V": intercept_b,
        "delta_ligands": slope_b.scaled(to_log, "ligands"),
        "log10_beta_ratio": intercept_b.scaled(to_log, "log10 units"),
        "log10_beta_ratio_at_integer": fixed_b.scaled(to_log, "log10 units"),
    }
    flags.extend(delta_ligand_flags(delta_q, k))

    p_curv = curvature_p_value(x, y, line, w_sigma)
    bend = free_ion_bend_flag(
        x, wts, log10_ratio=ratio_q, delta=delta_q, nernst_slope_V=slope_nernst
    )
    if bend is not None and not (p_curv is not None and p_curv < curvature_alpha):
        flags.append(bend)
    if p_curv is not None and p_curv < curvature_alpha:
        flags.append(
            Flag(
                "LINE_CURVED",
                f"a quadratic term in log10[L] improves the fit (F-test p = {p_curv:.2g} < "
                f"{curvature_alpha:g}): more than one complex may form over this range; "
                'try model = "stepwise"',
            )
        )

    return LinganeFit(
        slope_V_per_decade=slope_q,
        intercept_V=intercept_q,
        delta_ligands=delta_q,
        delta_ligands_integer=k,
        log10_beta_ratio=ratio_q,
        log10_beta_ratio_at_integer=ratio_int_q,
        n_points=n,
        dof=dof,
        weighted=use_weights,
        residuals_V=tuple(line.residuals),
        covariance=(
            (float(cov_total[0, 0]), float(cov_total[0, 1])),
            (float(cov_total[1, 0]), float(cov_total[1, 1])),
        ),
        curvature_p_value=p_curv,
        reduced_chi_square=redchi_w,
        flags=tuple(flags),
        nernst_slope_V_per_decade=slope_nernst,
        intercept_dof=float(intercept_dof),
        error_budget=budget,
        extra_scatter_V=None if sigma is None else math.sqrt(s2_extra),
    )
