"""Time-marching kernel of the voltammogram simulator (private).

Planar semi-infinite diffusion of O and R on an exponentially expanding space grid,
second-order backward differentiation in time (BDF2, started by one backward-Euler
step; the double-layer charging derivative is backward Euler, exact for the
piecewise-linear applied potential, unless R_u·C_dl resolves the RC response, see
:func:`backward_euler_charging_steps`), a three-point second-order surface gradient and
a Nernstian or Butler–Volmer electrode boundary. Both the interior solve and the boundary
are linear in the surface concentrations, so each step costs O(grid): one backward
elimination sweep per species that leaves the surface gradient as ``A·c(0) + B``, a
scalar solve of the boundary condition (and, with uncompensated resistance, of the iR
drop), and one forward substitution sweep.

The sweeps run as loops compiled by numba (a requirement: 25 times faster than a
NumPy formulation at 2 001 points, ``benchmarks/bench_simulate.py`` before the NumPy
path was removed). The compiled code is cached on disk, so only the first process after
an install compiles it (see :func:`_jit`).

References
----------
Nicholson, R. S.; Shain, I. Anal. Chem. 1964, 36, 706 (the boundary-value problem).
Britz, D.; Strutwolf, J. Digital Simulation in Electrochemistry, 4th ed.; Springer, 2016,
chapters 3, 7 and 8 (BDF start-up, expanding grids, multi-point surface gradients).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numba
import numpy as np


def _jit(func):
    """``numba.njit`` with the machine code cached on disk.

    numba writes the cache beside this module, or, where the installation is read-only,
    in the user's cache folder (or ``NUMBA_CACHE_DIR``); the first process after an
    install compiles (seconds), every later one loads (``benchmarks/bench_first_fit.py``).
    Where no folder is writable at all numba refuses to cache; the kernel is then compiled
    in memory in every process that uses it, instead of failing to import.
    """
    try:
        return numba.njit(cache=True)(func)
    except RuntimeError:  # "cannot cache function ...: no locator available"
        return numba.njit(func)


# exponent clip for exp() in the boundary conditions: far beyond any physical overpotential,
# well inside float range even when multiplied by a large k0
_EXP_CLIP = 500.0


@_jit
def _flux(E, BO, BR, AO, AR, DO, DR, E0, nf, k0, alpha):
    """Anodic flux j (mol cm⁻² s⁻¹) at true potential E for surface gradients A·c + B."""
    eta = nf * (E - E0)
    if k0 <= 0.0:
        # Nernst: c_O(0)/c_R(0) = exp(eta), written with the logistic for any eta
        if eta >= 0.0:
            z = math.exp(-min(eta, _EXP_CLIP))
            s = 1.0 / (1.0 + z)
            sc = z / (1.0 + z)
        else:
            z = math.exp(max(eta, -_EXP_CLIP))
            s = z / (1.0 + z)
            sc = 1.0 / (1.0 + z)
        return (s * BR / AR - sc * BO / AO) / (sc / (DO * AO) + s / (DR * AR))
    ea = k0 * math.exp(min(max((1.0 - alpha) * eta, -_EXP_CLIP), _EXP_CLIP))
    ec = k0 * math.exp(min(max(-alpha * eta, -_EXP_CLIP), _EXP_CLIP))
    return (ec * BO / AO - ea * BR / AR) / (1.0 - ea / (DR * AR) - ec / (DO * AO))


@_jit
def _surface_solve(E_app, rhsE, kap, BO, BR, AO, AR, DO, DR, E0, nf, k0, alpha, Ru, Cdl, nFA):
    """True potential, anodic flux and charging current of one time step.

    With ``Ru > 0`` solves ``E + Ru·(nFA·j(E) + Cdl·(kap·E − rhsE)) = E_app``; the left
    side increases strictly with E, so a bracketed Illinois iteration converges.
    """
    if Ru <= 0.0:
        j = _flux(E_app, BO, BR, AO, AR, DO, DR, E0, nf, k0, alpha)
        return E_app, j, Cdl * (kap * E_app - rhsE)
    j0 = _flux(E_app, BO, BR, AO, AR, DO, DR, E0, nf, k0, alpha)
    i0 = nFA * j0 + Cdl * (kap * E_app - rhsE)
    if i0 == 0.0:
        return E_app, j0, Cdl * (kap * E_app - rhsE)
    a = E_app
    b = E_app - Ru * i0
    ga = Ru * i0
    jb = _flux(b, BO, BR, AO, AR, DO, DR, E0, nf, k0, alpha)
    gb = b - E_app + Ru * (nFA * jb + Cdl * (kap * b - rhsE))
    if gb == 0.0:
        return b, jb, Cdl * (kap * b - rhsE)
    side = 0
    x = a
    for _ in range(200):
        x = (a * gb - b * ga) / (gb - ga)
        jx = _flux(x, BO, BR, AO, AR, DO, DR, E0, nf, k0, alpha)
        gx = x - E_app + Ru * (nFA * jx + Cdl * (kap * x - rhsE))
        if gx == 0.0 or abs(b - a) < 1e-14:
            break
        if (gx > 0.0) == (gb > 0.0):
            b = x
            gb = gx
            if side == -1:
                ga *= 0.5
            side = -1
        else:
            a = x
            ga = gx
            if side == 1:
                gb *= 0.5
            side = 1
        if abs(b - a) < 1e-14:
            break
    jx = _flux(x, BO, BR, AO, AR, DO, DR, E0, nf, k0, alpha)
    return x, jx, Cdl * (kap * x - rhsE)


@dataclass(frozen=True)
class Grid:
    """Expanding space grid ``x_0 = 0 < x_1 < … < x_N`` (cm) with trapezoid weights."""

    x_cm: np.ndarray
    weights_cm: np.ndarray

    @classmethod
    def expanding(cls, first_cm: float, ratio: float, length_cm: float) -> Grid:
        n = int(math.ceil(math.log1p(length_cm * (ratio - 1.0) / first_cm) / math.log(ratio)))
        n = max(n, 4)
        h = first_cm * ratio ** np.arange(n)
        x = np.concatenate(([0.0], np.cumsum(h)))
        w = np.zeros_like(x)
        w[:-1] += 0.5 * h
        w[1:] += 0.5 * h
        x.setflags(write=False)
        w.setflags(write=False)
        return cls(x, w)


def _surface_weights(x: np.ndarray) -> tuple[float, float, float]:
    """Second-order one-sided first derivative at x_0 from x_0, x_1, x_2."""
    h1 = x[1] - x[0]
    h2 = x[2] - x[1]
    s0 = -(2.0 * h1 + h2) / (h1 * (h1 + h2))
    s1 = (h1 + h2) / (h1 * h2)
    s2 = -h1 / (h2 * (h1 + h2))
    return s0, s1, s2


@dataclass(frozen=True)
class SpeciesOperator:
    """Precomputed elimination of one species for the two step kinds (0: BE, 1: BDF2).

    Row ``k`` of each array belongs to step kind ``k``; index ``i`` to grid node ``i``.
    """

    e: np.ndarray  # c_i = e_i c_{i-1} + f_i
    inv_den: np.ndarray
    upper: np.ndarray  # G_i, coefficient of c_{i+1}
    A_surf: np.ndarray  # surface gradient = A_surf·c_0 + B


def species_operator(grid: Grid, D_cm2_s: float, dt_s: float) -> SpeciesOperator:
    """Build the per-species elimination coefficients for backward Euler and BDF2."""
    x = grid.x_cm
    N = x.size - 1
    hm = x[1:N] - x[0 : N - 1]
    hp = x[2 : N + 1] - x[1:N]
    lo = -D_cm2_s * 2.0 / (hm * (hm + hp))
    up = -D_cm2_s * 2.0 / (hp * (hm + hp))
    diag_lap = D_cm2_s * 2.0 / (hm * hp)
    s0, s1, s2 = _surface_weights(x)
    e = np.zeros((2, N + 1))
    inv_den = np.zeros((2, N + 1))
    upper = np.zeros((2, N + 1))
    A_surf = np.zeros(2)
    for kind, kap in enumerate((1.0 / dt_s, 1.5 / dt_s)):
        diag = kap + diag_lap
        upper[kind, 1:N] = up
        # backward elimination from the bulk node towards the surface
        for i in range(N - 1, 0, -1):
            den = diag[i - 1] + (up[i - 1] * e[kind, i + 1] if i < N - 1 else 0.0)
            inv_den[kind, i] = 1.0 / den
            e[kind, i] = -lo[i - 1] / den
        A_surf[kind] = s0 + s1 * e[kind, 1] + s2 * e[kind, 2] * e[kind, 1]
    for arr in (e, inv_den, upper, A_surf):
        arr.setflags(write=False)
    return SpeciesOperator(e, inv_den, upper, A_surf)


@_jit
def _march_thomas(
    E_app, dt, cO, cR, cO_bulk, cR_bulk, eO, idO, GO, AOs, eR, idR, GR, ARs, s1, s2, DO, DR,
    E0, nf, k0, alpha, Ru, Cdl, nFA, weights, track, be_charge, i_far, i_cap, E_true, amt_O,
    amt_R, prevO, prevR, bdf_first,
):  # fmt: skip
    """March all steps with Thomas sweeps; fills cO, cR and the output arrays in place.

    ``prevO``, ``prevR``: the state one step before the first (used when ``bdf_first``:
    the first step is then BDF2 too); on return, the state one step before the last.
    """
    M = E_app.size
    N = cO.size - 1
    fO = np.zeros(N + 1)
    fR = np.zeros(N + 1)
    E_prev = E_app[0]
    E_prev2 = E_app[0]
    E_true[0] = E_app[0]
    i_far[0] = 0.0
    i_cap[0] = 0.0
    if track:
        amt_O[0] = np.sum(weights * cO)
        amt_R[0] = np.sum(weights * cR)
    for m in range(1, M):
        kind = 0 if (m == 1 and not bdf_first) else 1
        kap = 1.0 / dt if kind == 0 else 1.5 / dt
        fO[N] = cO_bulk
        fR[N] = cR_bulk
        for i in range(N - 1, 0, -1):
            if kind == 0:
                rO = cO[i] / dt
                rR = cR[i] / dt
            else:
                rO = (4.0 * cO[i] - prevO[i]) / (2.0 * dt)
                rR = (4.0 * cR[i] - prevR[i]) / (2.0 * dt)
            fO[i] = (rO - GO[kind, i] * fO[i + 1]) * idO[kind, i]
            fR[i] = (rR - GR[kind, i] * fR[i + 1]) * idR[kind, i]
        BO = s1 * fO[1] + s2 * (eO[kind, 2] * fO[1] + fO[2])
        BR = s1 * fR[1] + s2 * (eR[kind, 2] * fR[1] + fR[2])
        if m == 1 or be_charge[m]:
            kapE = 1.0 / dt
            rhsE = E_prev / dt
        else:
            kapE = kap
            rhsE = (4.0 * E_prev - E_prev2) / (2.0 * dt)
        AO = AOs[kind]
        AR = ARs[kind]
        Et, j, ic = _surface_solve(
            E_app[m], rhsE, kapE, BO, BR, AO, AR, DO, DR, E0, nf, k0, alpha, Ru, Cdl, nFA
        )
        for i in range(N + 1):
            prevO[i] = cO[i]
            prevR[i] = cR[i]
        cO[0] = -(j / DO + BO) / AO
        cR[0] = (j / DR - BR) / AR
        for i in range(1, N):
            cO[i] = eO[kind, i] * cO[i - 1] + fO[i]
            cR[i] = eR[kind, i] * cR[i - 1] + fR[i]
        E_prev2 = E_prev
        E_prev = Et
        E_true[m] = Et
        i_far[m] = nFA * j
        i_cap[m] = ic
        if track:
            amt_O[m] = np.sum(weights * cO)
            amt_R[m] = np.sum(weights * cR)


def backward_euler_charging_steps(E_app_V: np.ndarray, rc_s: float, dt_s: float) -> np.ndarray:
    """Steps whose charging derivative dE/dt is taken by backward Euler instead of BDF2.

    BDF2 reaches back two steps, so across a vertex of a piecewise-linear potential it
    gives dE/dt = 2v (or 0) on the first point after the switch instead of the step from
    −v to +v. Without R_u, or with R_u·C_dl shorter than the time step (the double layer
    then follows the applied potential within one step), the electrode potential has that
    kink; backward Euler on every step is exact on each linear piece of the applied
    potential, so the charging current is exactly C·v on both sides of each vertex, and
    with a short R_u·C_dl it relaxes monotonically (L-stable; BDF2 would overshoot after
    the kink). With a resolved time constant (R_u·C_dl ≥ Δt) the electrode potential is
    continuously differentiable through the vertex — its slope is i/C_dl and the current
    through R_u is continuous — so BDF2 on the self-consistent true potential stays second
    order there and is used after the backward-Euler first step.
    """
    n = np.asarray(E_app_V).size
    if rc_s < dt_s:
        return np.ones(n, dtype=np.bool_)
    be_charge = np.zeros(n, dtype=np.bool_)
    be_charge[: min(n, 2)] = True
    return be_charge


@dataclass(frozen=True)
class MarchResult:
    """Raw output of :func:`march` (SI units, IUPAC sign)."""

    E_true_V: np.ndarray
    faradaic_A: np.ndarray
    charging_A: np.ndarray
    grid: Grid
    final_O_mol_cm3: np.ndarray
    final_R_mol_cm3: np.ndarray
    amount_O_mol_cm2: np.ndarray | None  # ∫ c_O dx per step (None unless tracked)
    amount_R_mol_cm2: np.ndarray | None
    previous_O_mol_cm3: np.ndarray | None = None  # one step before the last
    previous_R_mol_cm3: np.ndarray | None = None


def march(
    E_app_V: np.ndarray,
    dt_s: float,
    *,
    grid: Grid,
    D_ox_cm2_s: float,
    D_red_cm2_s: float,
    bulk_ox_mol_cm3: float,
    bulk_red_mol_cm3: float,
    E_formal_V: float,
    nf_per_V: float,
    k0_cm_s: float,
    alpha: float,
    resistance_ohm: float,
    double_layer_F: float,
    nFA_C_per_mol: float,
    backend: str = "auto",
    track_amounts: bool = False,
    operators: tuple[SpeciesOperator, SpeciesOperator] | None = None,
    initial_O_mol_cm3: np.ndarray | None = None,
    initial_R_mol_cm3: np.ndarray | None = None,
    previous_O_mol_cm3: np.ndarray | None = None,
    previous_R_mol_cm3: np.ndarray | None = None,
) -> MarchResult:
    """Integrate the diffusion problem over the sampled applied potential ``E_app_V``.

    ``k0_cm_s <= 0`` selects the Nernstian boundary. ``backend`` names the one back end,
    the compiled sweeps (``"auto"`` or ``"numba"``; the NumPy one was removed, numba is a
    requirement). ``operators`` = (O, R) from
    :func:`species_operator` for this grid, D and time step, when the caller reuses them
    over many runs (a fit); built here otherwise. ``initial_O_mol_cm3``,
    ``initial_R_mol_cm3``: the concentration profiles on the grid at the first sample (the
    state a hold left, :func:`hold`); uniform bulk when not given. ``previous_O_mol_cm3``,
    ``previous_R_mol_cm3``: the profiles one step before the first sample; with them the
    first step is second order (BDF2) too, as if the march had not stopped there.
    """
    if backend not in ("auto", "numba"):
        raise ValueError(f"unknown backend {backend!r} (the compiled one, 'numba', is the only)")
    E_app = np.ascontiguousarray(E_app_V, dtype=float)
    M = E_app.size
    x = grid.x_cm
    cO = np.full(x.size, float(bulk_ox_mol_cm3))
    cR = np.full(x.size, float(bulk_red_mol_cm3))
    if initial_O_mol_cm3 is not None:
        cO = np.array(initial_O_mol_cm3, dtype=float)
    if initial_R_mol_cm3 is not None:
        cR = np.array(initial_R_mol_cm3, dtype=float)
    bdf_first = previous_O_mol_cm3 is not None and previous_R_mol_cm3 is not None
    prevO = np.array(previous_O_mol_cm3, dtype=float) if bdf_first else cO.copy()
    prevR = np.array(previous_R_mol_cm3, dtype=float) if bdf_first else cR.copy()
    if operators is not None:
        opO, opR = operators
    else:
        opO = species_operator(grid, D_ox_cm2_s, dt_s)
        opR = opO if D_red_cm2_s == D_ox_cm2_s else species_operator(grid, D_red_cm2_s, dt_s)
    i_far = np.zeros(M)
    i_cap = np.zeros(M)
    E_true = np.zeros(M)
    amt_O = np.zeros(M if track_amounts else 1)
    amt_R = np.zeros(M if track_amounts else 1)
    w = np.ascontiguousarray(grid.weights_cm)
    rc_s = float(resistance_ohm) * float(double_layer_F)
    be_charge = backward_euler_charging_steps(E_app, rc_s, float(dt_s))
    scalars = (
        float(D_ox_cm2_s), float(D_red_cm2_s), float(E_formal_V), float(nf_per_V),
        float(k0_cm_s), float(alpha), float(resistance_ohm), float(double_layer_F),
        float(nFA_C_per_mol),
    )  # fmt: skip
    _, s1, s2 = _surface_weights(x)
    _march_thomas(
        E_app, float(dt_s), cO, cR, float(bulk_ox_mol_cm3), float(bulk_red_mol_cm3),
        opO.e, opO.inv_den, opO.upper, opO.A_surf, opR.e, opR.inv_den, opR.upper,
        opR.A_surf, s1, s2, *scalars, w, bool(track_amounts), be_charge, i_far, i_cap,
        E_true, amt_O, amt_R, prevO, prevR, bdf_first,
    )  # fmt: skip
    return MarchResult(
        E_true_V=E_true,
        faradaic_A=i_far,
        charging_A=i_cap,
        grid=grid,
        final_O_mol_cm3=cO,
        final_R_mol_cm3=cR,
        amount_O_mol_cm2=amt_O if track_amounts else None,
        amount_R_mol_cm2=amt_R if track_amounts else None,
        previous_O_mol_cm3=prevO,
        previous_R_mol_cm3=prevR,
    )


#: Steps per segment of a hold; each segment doubles the time step of the one before
#: (exponentially expanding time steps), the first resolving the grid's first spacing.
HOLD_STEPS_PER_SEGMENT = 8


def hold_steps(duration_s: float, dt_s: float) -> tuple[tuple[float, ...], bool]:
    """Time steps of a hold of *duration_s* before a record sampled every *dt_s*.

    Returns (steps of the expanding segments, HOLD_STEPS_PER_SEGMENT each, doubling from
    about dt_s/16, the time the grid's first spacing resolves; whether a last segment of
    HOLD_STEPS_PER_SEGMENT steps covers the hold's last *dt_s*, which happens when the hold
    is at least 2·dt_s long). The expanding segments follow the step transient at the start
    of the hold closely and cover its late, smooth part in few steps; the state one record
    step before the end, kept where the last segment starts, lets the record's march go on
    in second order (BDF2) as if it had not stopped.

    References
    ----------
    Britz, D.; Strutwolf, J. Digital Simulation in Electrochemistry, 4th ed.; Springer,
    2016, ch. 8 (exponentially expanding time intervals, after Feldberg).
    """
    if not duration_s > 0.0:
        return (), False
    last = duration_s >= 2.0 * dt_s
    graded = duration_s - dt_s if last else duration_s
    first = dt_s / 16.0
    segments = max(1, math.ceil(math.log2(graded / (HOLD_STEPS_PER_SEGMENT * first) + 1.0)))
    first = graded / (HOLD_STEPS_PER_SEGMENT * (2.0**segments - 1.0))
    return tuple(first * 2.0**k for k in range(segments)), last


@dataclass(frozen=True)
class HeldState:
    """The solution at the end of a hold (:func:`hold`).

    ``O_mol_cm3``, ``R_mol_cm3``: profiles on the grid at the end; ``previous_O_mol_cm3``,
    ``previous_R_mol_cm3``: one record time step earlier (None when the hold is shorter
    than three of them); ``current_A``: the faradaic current at the end.
    """

    O_mol_cm3: np.ndarray
    R_mol_cm3: np.ndarray
    previous_O_mol_cm3: np.ndarray | None
    previous_R_mol_cm3: np.ndarray | None
    current_A: float

    def march_start(self) -> dict[str, np.ndarray | None]:
        """Keyword arguments of :func:`march` that start a record from this state."""
        return {
            "initial_O_mol_cm3": self.O_mol_cm3,
            "initial_R_mol_cm3": self.R_mol_cm3,
            "previous_O_mol_cm3": self.previous_O_mol_cm3,
            "previous_R_mol_cm3": self.previous_R_mol_cm3,
        }


def hold(
    E_V: float,
    duration_s: float,
    dt_s: float,
    *,
    grid: Grid,
    D_ox_cm2_s: float,
    D_red_cm2_s: float,
    bulk_ox_mol_cm3: float,
    bulk_red_mol_cm3: float,
    E_formal_V: float,
    nf_per_V: float,
    k0_cm_s: float,
    alpha: float,
    nFA_C_per_mol: float,
    backend: str = "auto",
    operators: dict[float, tuple[SpeciesOperator, SpeciesOperator]] | None = None,
) -> HeldState:
    """The solution at rest held at *E_V* for *duration_s* (a quiet time before a record
    sampled every *dt_s*).

    The potential steps from rest to *E_V* at the start; the time steps are
    :func:`hold_steps`. ``operators`` maps each time step to its (O, R) operators when the
    caller keeps them (a fit); built here otherwise. No charging and no R_u: the hold's
    drop and charging die away long before its end.
    """
    cO = np.full(grid.x_cm.size, float(bulk_ox_mol_cm3))
    cR = np.full(grid.x_cm.size, float(bulk_red_mol_cm3))
    expanding, last = hold_steps(duration_s, dt_s)
    segments = list(expanding)
    if last:
        segments.append(dt_s / HOLD_STEPS_PER_SEGMENT)
    res = None
    before = (cO, cR)
    for step in segments:
        before = (cO, cR)
        ops = None if operators is None else operators.get(step)
        if ops is None:
            opO = species_operator(grid, D_ox_cm2_s, step)
            opR = opO if D_red_cm2_s == D_ox_cm2_s else species_operator(grid, D_red_cm2_s, step)
            ops = (opO, opR)
            if operators is not None:
                operators[step] = ops
        res = march(
            np.full(HOLD_STEPS_PER_SEGMENT + 1, float(E_V)), step, grid=grid,
            D_ox_cm2_s=D_ox_cm2_s, D_red_cm2_s=D_red_cm2_s, bulk_ox_mol_cm3=bulk_ox_mol_cm3,
            bulk_red_mol_cm3=bulk_red_mol_cm3, E_formal_V=E_formal_V, nf_per_V=nf_per_V,
            k0_cm_s=k0_cm_s, alpha=alpha, resistance_ohm=0.0, double_layer_F=0.0,
            nFA_C_per_mol=nFA_C_per_mol, backend=backend, operators=ops,
            initial_O_mol_cm3=cO, initial_R_mol_cm3=cR,
        )  # fmt: skip
        cO, cR = res.final_O_mol_cm3, res.final_R_mol_cm3
    if res is None:
        return HeldState(cO, cR, None, None, 0.0)
    previous = before if last else (None, None)
    return HeldState(cO, cR, previous[0], previous[1], float(res.faradaic_A[-1]))
