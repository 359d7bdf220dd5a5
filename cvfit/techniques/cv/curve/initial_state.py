"""The curve model's initial state: which form is in the bulk, and how long the electrode
was held at the first recorded potential before the record.

Bulk form. Given as ``[series] bulk_form``, or detected from the record's start. The
first sweep's direction names it (negative-going first: the oxidised form) — right for a
record that starts at rest — unless the record starts where its bulk form already reacts
and sweeps away from that reaction: it then opens on a decaying current no sweep
direction explains. To see that, the curve model (at the peak midpoint, with its
closed-form background and a positive current scale; Nernstian and two quasi-reversible
rates, the best of the three) is run on the first cycle with each form in the bulk, held
for the quiet time at the first potential; the form against the direction is taken when
its model reproduces the cycle :data:`DECISIVE_RATIO` times better in χ². The whole cycle,
not the first sweep alone: a hold where the bulk form reacts makes the other form near the
electrode, whose peak on the first sweep a larger scale could pass off as the bulk form's;
on the way back the two differ. Where the first cycle is too short to run the model, the
direction decides.

Quiet time. Given as ``[series] quiet_time_s``; else from the time column when its clock
starts before the first sample (the hold is the time before it); else, where the record
begins with samples at one potential, the hold is in the record itself (no further quiet
time); else :data:`DEFAULT_QUIET_TIME_S`, said in the flag. A wrong quiet time matters
only where the bulk form reacts at the first potential; the fit's model spread leaves the
first tenth of the cycle out in one variant (:mod:`cvfit.techniques.cv.curve.stability`),
so its weight on E½ is measured.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from cvfit.errors import FitError
from cvfit.flags import Flag
from cvfit.techniques.cv.curve.fit import CURVE_ORDERS
from cvfit.techniques.cv.curve.model import CurveData, CurveModel, LinearSolution

__all__ = [
    "DEFAULT_QUIET_TIME_S",
    "InitialState",
    "detect_bulk_form",
    "initial_state",
    "quiet_time_from_record",
]

#: Quiet time assumed when neither the manifest nor the time column says, s (common
#: practice: potentiostat programs hold the start potential for about 2 s).
DEFAULT_QUIET_TIME_S = 2.0
#: χ² ratio by which the model must prefer the form against the first sweep's direction
#: to overrule it: where the bulk form reacts at the start and the sweep goes away from
#: it, the ratio was 5.4–380 on tests/realistic_records.py (5–200 mV/s, 0.5 % noise);
#: where the record starts in the foot of the wave and sweeps into it, the model's
#: preference for the wrong form reached 3.4 (there the direction is right).
DECISIVE_RATIO = 4.0
#: A hold recorded at the start: at least this many samples within a quarter step.
RECORDED_HOLD_SAMPLES = 3


@dataclass(frozen=True)
class InitialState:
    """The bulk form and quiet time of a curve fit, and how each was decided (said in a
    flag, :meth:`flag`)."""

    bulk_form: str
    bulk_form_source: str
    quiet_time_s: float
    quiet_time_source: str

    def flag(self) -> Flag | None:
        """An info flag stating what was detected or assumed (None: both were given)."""
        if self.bulk_form_source == "manifest" and self.quiet_time_source == "manifest":
            return None
        form = "oxidised" if self.bulk_form == "ox" else "reduced"
        return Flag(
            "CURVE_FIT_INITIAL_STATE",
            f"curve model starts from the {form} form in the bulk ({self.bulk_form_source}), "
            f"held {self.quiet_time_s:g} s at the first potential ({self.quiet_time_source})",
            "info",
        )


def detect_bulk_form(
    data: CurveData, *, first_stop: int, E_half_V: float, D_cm2_s: float
) -> tuple[str, str]:
    """The bulk form whose model reproduces the first cycle (samples 0..*first_stop*) of
    *data* better, and the reason in words (module notes)."""
    E = data.potential_V
    moved = np.flatnonzero(E != E[0])
    way = 1.0 if moved.size == 0 or E[moved[0]] > E[0] else -1.0
    sweep = "negative" if way < 0 else "positive"
    by_direction = "ox" if way < 0 else "red"
    k = min(first_stop, E.size - 1) + 1
    v = float(np.median(np.abs(np.diff(E)))) / data.dt_s
    # Nernstian, and Λ = k0/√(D·nFv/RT) = 1 and 0.1 (quasi-reversible, ψ ≈ 0.56 and 0.056)
    root = math.sqrt(D_cm2_s * data.nf_per_V * v)
    kinetics = (math.inf, math.log10(root), math.log10(0.1 * root))
    costs = {}
    try:
        for form in ("ox", "red"):
            part = replace(
                data, potential_V=E[:k], current_A=data.current_A[:k],
                fit_mask=np.ones(k, dtype=bool), bulk=form,
            )  # fmt: skip
            model = CurveModel(part, D_cm2_s, orders=CURVE_ORDERS)
            costs[form] = min(_cost(model.evaluate(E_half_V, lk, 0.5)) for lk in kinetics)
    except FitError:
        return by_direction, f"the first sweep goes {sweep} (too short to test the start)"
    if not any(math.isfinite(c) for c in costs.values()):
        return by_direction, f"the first sweep goes {sweep} (neither form fits its start)"
    form = min(costs, key=costs.__getitem__)
    other = "red" if form == "ox" else "ox"
    name = {"ox": "oxidised", "red": "reduced"}
    chi = f"χ² {costs[form]:.3g} against {costs[other]:.3g}"
    if form == by_direction:
        return form, (
            f"detected: the first cycle (sweeping {sweep} first) fits with the {name[form]} "
            f"form in the bulk ({chi})"
        )
    if costs[other] >= DECISIVE_RATIO * costs[form]:
        return form, (
            f"detected: the first cycle (sweeping {sweep} first) fits with the {name[form]} "
            f"form in the bulk ({chi}): the record opens where that form already reacts"
        )
    return by_direction, (
        f"detected: the first sweep goes {sweep}, towards the {name[by_direction]} form's "
        f"reaction (the model of the first cycle does not tell the forms apart: {chi} for "
        f"the {name[form]} form)"
    )


def _cost(lin: LinearSolution) -> float:
    """χ² of one trial; infinite where the faradaic scale comes out negative (the bulk
    form's own current upside down: a free sign would let the wrong form fit)."""
    if not lin.coefficients[0] > 0:
        return math.inf
    return float(np.sum(lin.residual**2))


def quiet_time_from_record(
    time_s: np.ndarray | None, potential_V: np.ndarray, dt_s: float
) -> tuple[float, str]:
    """The quiet time the record shows, and how (module notes)."""
    E = np.asarray(potential_V, float)
    if time_s is not None and len(time_s) > 0 and float(time_s[0]) > 1.5 * dt_s:
        t0 = float(time_s[0])
        return t0, f"the time column starts at {t0:g} s"
    if E.size > 1:
        step = float(np.median(np.abs(np.diff(E)))) or 0.0
        held = int(np.argmax(np.abs(E - E[0]) > 0.25 * step)) if step > 0 else 0
        if held >= RECORDED_HOLD_SAMPLES:
            return 0.0, f"the hold is in the record ({held} samples at the first potential)"
    return DEFAULT_QUIET_TIME_S, (
        f"assumed {DEFAULT_QUIET_TIME_S:g} s: no quiet_time_s, and the time column shows no hold"
    )


def initial_state(
    data: CurveData,
    *,
    time_s: np.ndarray | None,
    first_stop: int,
    E_half_V: float,
    D_cm2_s: float,
    bulk_form: str | None = None,
    quiet_time_s: float | None = None,
) -> CurveData:
    """*data* with its initial state: the given values, else detected (module notes)."""
    if quiet_time_s is not None:
        quiet, quiet_how = float(quiet_time_s), "manifest"
    else:
        quiet, quiet_how = quiet_time_from_record(time_s, data.potential_V, data.dt_s)
    data = replace(data, quiet_time_s=quiet, quiet_source=quiet_how)
    if bulk_form is not None:
        form, form_how = bulk_form, "manifest"
    else:
        form, form_how = detect_bulk_form(
            data, first_stop=first_stop, E_half_V=E_half_V, D_cm2_s=D_cm2_s
        )
    return replace(data, bulk=form, bulk_source=form_how)
