"""Model of a whole voltammogram for the curve fit: the simulator's faradaic shape plus
the linear terms (current scale, charging, background; :mod:`.linear`).

The faradaic current of a one-step couple at a planar electrode is the current scale
``n F A C √D`` times a shape that depends only on E½, Λ = k0/√D, α, the D_R/D_O ratio and
the potential the electrode actually sees. The shape comes from the project's simulator
(:mod:`cvfit.simulate.finite_difference`, Butler–Volmer boundary, finite differences) run
with unit concentration, unit n F A and the assumed D; the ohmic drop enters through the
potential: ``E = E_applied − R_u·(i_measured − background)`` drives the simulation. Written
that way every other term is linear in its coefficient,

    i(t) = s·f(t; E½, k0, α, R_u) + C(E)·dE/dt + b(E),

(C(E) ≥ 0 and b(E) low-order polynomials, :mod:`cvfit.techniques.cv.curve.linear`) so the
fit solves s and the background's coefficients in closed form for each trial of the
non-linear parameters (variable projection) and the non-linear search has only E½,
log10 k0, α and, when it is not given, R_u.

Initial state: the bulk form alone, uniform, at rest; the potential steps to the first
recorded potential and is held there for the quiet time (``CurveData.quiet_time_s``,
:func:`cvfit.simulate.finite_difference.hold`) before the first sample, so a record that
starts where the bulk form already reacts opens on the decaying current the model
reproduces. The simulation then runs from the first sample through every earlier cycle to
the end of the analysed one: a later cycle starts from the state the earlier ones left.

References
----------
Nicholson, R. S. Anal. Chem. 1965, 37, 1351 (quasi-reversible voltammograms).
Golub, G. H.; Pereyra, V. SIAM J. Numer. Anal. 1973, 10, 413 (variable projection).
Bard, A. J.; Faulkner, L. R. Electrochemical Methods, 2nd ed.; Wiley, 2001, ch. 6
(charging current C_dl·v, ohmic drop).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cvfit.errors import FitError
from cvfit.techniques.cv.curve.linear import BackgroundBasis, solve_terms
from cvfit.units import FARADAY, GAS_CONSTANT

__all__ = ["CurveData", "CurveModel", "LinearSolution", "curve_data"]

#: nF(E − E°')/RT beyond which the hold at a potential is skipped: the bulk form's share
#: that reacts there at equilibrium, e^−9 ≈ 1e-4, gives a hold current below 1e-4 of the
#: diffusion-limited one, ten times under the model's precision floor (1e-3 of the peak).
REST_EXPONENT = 9.0

#: Orders of the old model: a linear background and one constant capacitance.
LINEAR_ORDERS = (1, 0)

#: Width of the moving mean of the measured current that gives the first ohmic drop,
#: samples (the model's own current replaces it, :meth:`CurveModel.settle_drop`).
DROP_SMOOTHING_POINTS = 15


def smoothed(values: np.ndarray, width: int) -> np.ndarray:
    """Centred moving mean of *values* over *width* samples (shorter at the ends)."""
    v = np.asarray(values, dtype=float)
    if width < 2 or v.size < width:
        return v.copy()
    kernel = np.ones(width)
    total = np.convolve(v, kernel, mode="same")
    count = np.convolve(np.ones(v.size), kernel, mode="same")
    return total / count


#: Largest relative spread of the sampling interval a record may have: the simulation
#: marches in equal time steps (common practice: potentiostats sample at a fixed clock).
MAX_DT_SPREAD = 0.05


def _simulator() -> tuple:
    """The simulator's kernel module and its grid constants, imported on first use: the
    kernel loads numba (~0.15 s), which a series whose files all pass the screen never
    needs."""
    from cvfit.simulate import finite_difference
    from cvfit.simulate.voltammogram import GRID_FIRST_FACTOR, GRID_LENGTH_FACTOR, GRID_RATIO

    return finite_difference, (GRID_FIRST_FACTOR, GRID_RATIO, GRID_LENGTH_FACTOR)


@dataclass(frozen=True)
class CurveData:
    """The samples a curve fit describes.

    Attributes
    ----------
    potential_V, current_A : ndarray
        Applied potential and current (IUPAC: anodic positive) from the start of the
        record to the end of the analysed cycle, equal time steps.
    dt_s : float
        Sampling interval, s.
    fit_mask : ndarray of bool
        The samples of the analysed cycle (the simulation runs from the first sample).
    electrons : int
    temperature_K : float
    bulk : {"ox", "red"}
        The form present in the bulk.
    sigma_A : float
        Standard deviation of a current sample, A (the weight of every point).
    quiet_time_s : float
        Time the electrode was held at the first recorded potential before the first
        sample, s (0: the sweep started from rest at once).
    bulk_source, quiet_source : str
        How the bulk form and the quiet time were decided (said in the outputs).
    """

    potential_V: np.ndarray
    current_A: np.ndarray
    dt_s: float
    fit_mask: np.ndarray
    electrons: int
    temperature_K: float
    bulk: str
    sigma_A: float
    quiet_time_s: float = 0.0
    bulk_source: str = "given"
    quiet_source: str = "given"

    def __post_init__(self) -> None:
        n = self.potential_V.size
        if self.current_A.size != n or self.fit_mask.size != n:
            raise FitError("curve data: potential, current and mask differ in length")
        if n < 20:
            raise FitError(f"curve data: {n} samples are too few for a curve fit")
        if not (self.dt_s > 0 and math.isfinite(self.dt_s)):
            raise FitError(f"curve data: sampling interval must be positive, got {self.dt_s}")
        if not (self.sigma_A > 0 and math.isfinite(self.sigma_A)):
            raise FitError(f"curve data: sigma_A must be positive, got {self.sigma_A}")
        if not (np.all(np.isfinite(self.potential_V)) and np.all(np.isfinite(self.current_A))):
            raise FitError("curve data: a potential or current is not a finite number")
        if self.bulk not in ("ox", "red"):
            raise FitError(f"curve data: bulk must be 'ox' or 'red', got {self.bulk!r}")
        if not (self.quiet_time_s >= 0 and math.isfinite(self.quiet_time_s)):
            raise FitError(f"curve data: quiet time must be >= 0 s, got {self.quiet_time_s}")

    @property
    def nf_per_V(self) -> float:
        """nF/RT, 1/V."""
        return self.electrons * FARADAY / (GAS_CONSTANT * self.temperature_K)


def curve_data(
    potential_V: np.ndarray,
    current_A: np.ndarray,
    *,
    time_s: np.ndarray | None,
    scan_rate_V_s: float | None,
    stop: int,
    start: int = 0,
    electrons: int,
    temperature_K: float,
    bulk: str,
    sigma_A: float,
    quiet_time_s: float = 0.0,
    bulk_source: str = "given",
    quiet_source: str = "given",
) -> CurveData:
    """Samples 0..*stop* (inclusive) of a record, the analysed cycle *start*..*stop* fitted.

    The sampling interval is taken from the time column, else from the potential step and
    the scan rate. *quiet_time_s*: the hold at the first potential before the record.

    Raises
    ------
    FitError
        Unequal time steps (more than :data:`MAX_DT_SPREAD` spread), or neither a time
        column nor a scan rate.
    """
    E = np.ascontiguousarray(potential_V[: stop + 1], dtype=float)
    i = np.ascontiguousarray(current_A[: stop + 1], dtype=float)
    if time_s is not None:
        steps = np.diff(np.asarray(time_s[: stop + 1], dtype=float))
    elif scan_rate_V_s:
        steps = np.abs(np.diff(E)) / float(scan_rate_V_s)
    else:
        raise FitError("no time column and no scan rate: the sampling interval is unknown")
    if steps.size == 0:
        raise FitError("curve data: a single sample")
    dt = float(np.median(steps))
    spread = float(np.max(np.abs(steps - dt))) / dt if dt > 0 else math.inf
    if not spread <= MAX_DT_SPREAD:
        raise FitError(
            f"the samples are not equally spaced in time (steps differ by {100 * spread:.0f} % "
            "of the median); the curve fit needs a fixed sampling clock"
        )
    mask = np.zeros(E.size, dtype=bool)
    mask[start:] = True
    return CurveData(
        E, i, dt, mask, int(electrons), float(temperature_K), bulk, float(sigma_A),
        float(quiet_time_s), bulk_source, quiet_source,
    )  # fmt: skip


@dataclass(frozen=True)
class LinearSolution:
    """Closed-form part of one model evaluation.

    Attributes
    ----------
    coefficients : ndarray
        (s, C_dl, b0, b1): current scale (A per unit shape), the mean capacitance over
        the fitted samples (F), and the background's offset (A) and slope (A/V) of its
        tangent at the middle of the window.
    faradaic_A, charging_A, background_A : ndarray
        The three parts of the model current on every sample.
    residual : ndarray
        (data − model)/σ on the fitted samples.
    charging_projected : ndarray or None
        With C_dl given (shared by several records): the weighted charging column
        dE/dt/σ with its projection on the other linear terms removed, so that
        ∂residual/∂C_dl = −charging_projected (exact: the residual is linear in C_dl).
    """

    coefficients: np.ndarray
    faradaic_A: np.ndarray
    charging_A: np.ndarray
    background_A: np.ndarray
    residual: np.ndarray
    charging_projected: np.ndarray | None = None
    capacitance_F: np.ndarray | None = None

    @property
    def model_A(self) -> np.ndarray:
        return self.faradaic_A + self.charging_A + self.background_A


@dataclass(frozen=True)
class _Fixed:
    """Weighted data, background columns on the fitted samples and the potential's
    centring (:meth:`CurveModel.solve_linear`)."""

    y: np.ndarray
    common: np.ndarray
    capacitance: np.ndarray
    capacitance_mean: np.ndarray
    dE: np.ndarray
    dE2: float
    E_mean: float


class CurveModel:
    """Evaluator of the curve model on one record (counts its simulations).

    Parameters
    ----------
    data : CurveData
    D_cm2_s : float
        Diffusion coefficient assumed for the simulation (of the bulk form); the shape
        depends on k0/√D only, so k0 scales with √D (see :mod:`cvfit.techniques.cv.curve.fit`).
    backend : str
        Simulator back end (``"auto"``: numba when installed).
    orders : (int, int)
        Orders of the common background and of the capacitance
        (:mod:`cvfit.techniques.cv.curve.linear`); (1, 0): linear background, constant C.
    """

    def __init__(
        self,
        data: CurveData,
        D_cm2_s: float,
        backend: str = "auto",
        *,
        orders: tuple[int, int] = LINEAR_ORDERS,
    ) -> None:
        if not (D_cm2_s > 0 and math.isfinite(D_cm2_s)):
            raise FitError(f"the assumed D must be positive, got {D_cm2_s}")
        self.data = data
        self.D_cm2_s = float(D_cm2_s)
        self.backend = backend
        self.orders = (int(orders[0]), int(orders[1]))
        self.simulations = 0
        self.simulation_time_s = 0.0
        self._drop_current_A = smoothed(data.current_A, DROP_SMOOTHING_POINTS)
        self._grids: dict[tuple[float, float], tuple] = {}
        E_fit = data.potential_V[data.fit_mask]
        self.window_V = (float(E_fit.min()), float(E_fit.max()))
        self._bases: dict[tuple[int, int], BackgroundBasis] = {}
        self._fixed_parts: dict[int, _Fixed] = {}

    def set_drop_current(self, current_A: np.ndarray) -> None:
        """The cell current whose ohmic drop the electrode sees (faradaic plus charging)."""
        self._drop_current_A = np.asarray(current_A, dtype=float).copy()

    def settle_drop(
        self,
        E_half_V: float,
        log10_k0: float,
        alpha: float,
        resistance_ohm: float,
        D_ratio: float = 1.0,
    ) -> LinearSolution:
        """Take the drop from this model's own faradaic plus charging current (one run).

        The measured current carries noise that does not flow through R_u, and a
        background that is an artefact of the record: a drop computed from it puts the
        noise into the model's potential, correlated with the noise of the data (the fit
        then prefers R_u = 0). The model current is free of both; settled at a first
        optimum and refitted, drop and model agree (a fixed point).
        """
        lin = self.evaluate(E_half_V, log10_k0, alpha, resistance_ohm, D_ratio)
        self.set_drop_current(lin.faradaic_A + lin.charging_A)
        return lin

    def drive_V(self, resistance_ohm: float) -> np.ndarray:
        """Potential the electrode sees: applied less the ohmic drop of the cell current."""
        if resistance_ohm == 0.0:
            return self.data.potential_V
        return self.data.potential_V - resistance_ohm * self._drop_current_A

    def _grid(self, D_ox: float, D_red: float) -> tuple:
        """Grid and species operators for this D pair (built once, reused by every run)."""
        key = (D_ox, D_red)
        if key not in self._grids:
            _kernel, (GRID_FIRST_FACTOR, GRID_RATIO, GRID_LENGTH_FACTOR) = _simulator()
            d = self.data
            total = d.dt_s * d.potential_V.size + d.quiet_time_s
            grid = _kernel.Grid.expanding(
                GRID_FIRST_FACTOR * math.sqrt(min(D_ox, D_red) * d.dt_s),
                GRID_RATIO,
                GRID_LENGTH_FACTOR * math.sqrt(max(D_ox, D_red) * (total + d.dt_s)),
            )
            op_O = _kernel.species_operator(grid, D_ox, d.dt_s)
            op_R = op_O if D_red == D_ox else _kernel.species_operator(grid, D_red, d.dt_s)
            # keep one: the D ratio changes only when it is fitted; the dict keeps the
            # hold's operators, one pair per time step
            self._grids = {key: (grid, (op_O, op_R), {})}
        return self._grids[key]

    def shape(
        self,
        E_half_V: float,
        log10_k0: float,
        alpha: float,
        resistance_ohm: float = 0.0,
        D_ratio: float = 1.0,
    ) -> tuple[np.ndarray, np.ndarray]:
        """Faradaic shape (unit n F A C) and the driving potential, one simulation.

        ``D_ratio`` is D_R/D_O; E½ is the reversible half-wave potential, so the formal
        potential is E½ − (RT/2nF)·ln(D_R/D_O). ``log10_k0`` = +inf gives Nernst.
        """
        import time

        d = self.data
        nf = d.nf_per_V
        if d.bulk == "ox":
            D_ox, D_red = self.D_cm2_s, self.D_cm2_s * D_ratio
        else:
            D_red, D_ox = self.D_cm2_s, self.D_cm2_s / D_ratio
        drive = self.drive_V(resistance_ohm)
        k0 = 0.0 if math.isinf(log10_k0) else 10.0**log10_k0
        t0 = time.perf_counter()
        grid, operators, hold_operators = self._grid(D_ox, D_red)
        kernel = _simulator()[0]
        common = dict(
            grid=grid,
            D_ox_cm2_s=D_ox,
            D_red_cm2_s=D_red,
            bulk_ox_mol_cm3=1.0 if d.bulk == "ox" else 0.0,
            bulk_red_mol_cm3=0.0 if d.bulk == "ox" else 1.0,
            E_formal_V=E_half_V - 0.5 / nf * math.log(D_ratio),
            nf_per_V=nf,
            k0_cm_s=k0,
            alpha=alpha,
            nFA_C_per_mol=1.0,
            backend=self.backend,
        )
        start: dict = {}
        held_A = 0.0
        # at rest the hold changes nothing: skip it where the bulk form is stable at the
        # first potential to within e^−9 (its equilibrium share of the other form)
        at_rest = (1.0 if d.bulk == "ox" else -1.0) * nf * (
            float(drive[0]) - common["E_formal_V"]
        ) > REST_EXPONENT
        if d.quiet_time_s > 0.0 and not at_rest:
            # the hold at the first potential the electrode saw (the drop of the hold's
            # current has died away by its end, finite_difference.hold)
            held = kernel.hold(
                float(drive[0]), d.quiet_time_s, d.dt_s, operators=hold_operators, **common
            )
            start, held_A = held.march_start(), held.current_A
        raw = kernel.march(
            drive, d.dt_s, operators=operators, resistance_ohm=0.0, double_layer_F=0.0,
            **common, **start,
        )  # fmt: skip
        raw.faradaic_A[0] = held_A
        self.simulation_time_s += time.perf_counter() - t0
        self.simulations += 1
        return raw.faradaic_A, drive

    def basis(self, orders: tuple[int, int] | None = None) -> BackgroundBasis:
        """Background columns of these *orders* (the model's own by default), cached."""
        key = self.orders if orders is None else (int(orders[0]), int(orders[1]))
        if key not in self._bases:
            self._bases[key] = BackgroundBasis.build(
                self.data.potential_V, self.window_V,
                background_order=key[0], capacitance_order=key[1],
            )  # fmt: skip
        return self._bases[key]

    def solve_linear(
        self,
        shape: np.ndarray,
        drive_V: np.ndarray,
        double_layer_F: float | None = None,
        *,
        mask: np.ndarray | None = None,
        orders: tuple[int, int] | None = None,
    ) -> LinearSolution:
        """Least-squares scale and background for a given shape on the fitted samples.

        With *double_layer_F* given, the capacitance is that constant (a capacitance shared
        by several records, fitted outside) and the scale and common background are
        solved. *mask* and *orders* replace the fitted samples and the background's orders
        (a variant of the fit, :mod:`cvfit.techniques.cv.curve.stability`).
        """
        d = self.data
        rate = np.empty_like(drive_V)
        rate[0] = 0.0
        # backward difference: exact for the piecewise-linear sweep, as the simulator
        rate[1:] = np.diff(drive_V) / d.dt_s
        m = d.fit_mask if mask is None else mask
        basis = self.basis(orders)
        fixed = self._fixed(basis, m, cache=mask is None)
        sig = d.sigma_A
        if double_layer_F is not None:
            charging_w = (rate[m] / sig)[:, None]
        else:
            charging_w = fixed.capacitance * (rate[m] / sig)[:, None]
        shape_w = shape[m] / sig
        terms = solve_terms(
            fixed.y, shape_w, fixed.common, charging_w, held_capacitance_F=double_layer_F
        )
        projected = None
        if double_layer_F is not None:
            Q, _ = np.linalg.qr(np.column_stack([shape_w, fixed.common]))
            c = charging_w[:, 0]
            projected = c - Q @ (Q.T @ c)
        background = basis.common @ terms.common
        if double_layer_F is not None:
            charging = double_layer_F * rate
            mean_C = double_layer_F
        else:
            charging = (basis.capacitance @ terms.capacitance) * rate
            mean_C = float(fixed.capacitance_mean @ terms.capacitance)
        # the background's straight-line part on the fitted samples (least-squares line)
        b = background[m]
        slope = float(fixed.dE @ b) / fixed.dE2 if fixed.dE2 > 0 else 0.0
        offset = float(b.mean()) - slope * fixed.E_mean
        return LinearSolution(
            coefficients=np.array([terms.scale, mean_C, offset, slope]),
            faradaic_A=terms.scale * shape,
            charging_A=charging,
            background_A=background,
            residual=terms.residual,
            charging_projected=projected,
            capacitance_F=terms.capacitance,
        )

    def _fixed(self, basis: BackgroundBasis, mask: np.ndarray, *, cache: bool) -> _Fixed:
        """The parts of the linear solve that do not change between trials (kept for the
        fitted samples and each order)."""
        key = id(basis)
        if cache and key in self._fixed_parts:
            return self._fixed_parts[key]
        d = self.data
        E = d.potential_V[mask]
        cap = basis.capacitance[mask]
        fixed = _Fixed(
            y=d.current_A[mask] / d.sigma_A,
            common=basis.common[mask] / d.sigma_A,
            capacitance=cap,
            capacitance_mean=cap.mean(axis=0),
            dE=E - E.mean(),
            dE2=float(np.sum((E - E.mean()) ** 2)),
            E_mean=float(E.mean()),
        )
        if cache:
            self._fixed_parts[key] = fixed
        return fixed

    def evaluate(
        self,
        E_half_V: float,
        log10_k0: float,
        alpha: float,
        resistance_ohm: float = 0.0,
        D_ratio: float = 1.0,
        double_layer_F: float | None = None,
    ) -> LinearSolution:
        """One simulation and the closed-form linear coefficients (C held if given)."""
        shape, drive = self.shape(E_half_V, log10_k0, alpha, resistance_ohm, D_ratio)
        return self.solve_linear(shape, drive, double_layer_F)
