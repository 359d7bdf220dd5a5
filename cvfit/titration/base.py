"""The titration-model seam: points in, a result that serialises and describes itself out.

A titration model turns the E½ of a series — one :class:`TitrationPoint` per accepted file,
its titration variable ``x`` (a ligand concentration today; pH or temperature are the same
kind of point) — and the reference E½(s) (:class:`ReferenceHalfWave`) into constants.

A model is an object with

* ``name`` — the value of ``[fit] model`` that selects it;
* ``variable`` — what ``x`` is, with its unit in the name (``"ligand_M"``, ``"pH"``,
  ``"temperature_K"``); ``is_point(x)`` — whether a file with that value is a titration
  point (a ligand model: x > 0); ``needs_reference`` — whether it needs E½(s) of the
  ligand-free couple; ``check_points(points)`` — the flags that stop or qualify a fit
  before it is made;
* ``fit(data, manifest) -> ModelOutcome`` — the fit, or why none can be made, with what it
  found about each point (:class:`PointNote`: the free ligand it used, flags).

Its result (:class:`TitrationResult`) serialises itself (``to_dict``; the model's
``null_dict`` for a series it could not fit) and gives its summary lines; the model lists
its figures (keys of :mod:`cvfit.report.figures.registry`, drawn also without a fit), so
that the reports need no branch on the model. :func:`cvfit.titration.registry.model_named`
is the one registry.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Literal, Protocol

from cvfit.flags import FitRefused, Flag
from cvfit.quantity import clean_number

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest

__all__ = [
    "TitrationPoint",
    "ReferenceHalfWave",
    "TitrationData",
    "PointNote",
    "ModelOutcome",
    "TitrationModel",
    "TitrationResult",
]


def finite_number(name: str, value: float) -> float:
    v = float(value)
    if not math.isfinite(v):
        raise ValueError(f"{name} must be a finite number, got {value!r}")
    return v


def optional_stderr(name: str, value: float | None) -> float | None:
    if value is None:
        return None
    v = float(value)
    if math.isnan(v):
        return None
    if not (math.isfinite(v) and v >= 0.0):
        raise ValueError(f"{name} must be >= 0 and finite (or None if unknown), got {value!r}")
    return v


@dataclass(frozen=True)
class TitrationPoint:
    """One E½ of a titration, as it enters a model.

    Attributes
    ----------
    label : str
        Where the point came from (file name), used in messages.
    x : float
        The titration variable in the model's unit (:attr:`TitrationModel.variable`): for a
        ligand titration the free ligand concentration, mol/L (>= 0 here; > 0 to be fitted);
        for a pH series the pH; for a temperature series the temperature, K.
    E_half_V : float
        Half-wave potential, V.
    E_half_stderr_V : float or None
        Standard error of ``E_half_V`` from the file's noise, V; ``None`` (NaN is turned
        into ``None``) when unknown.
    bulk_form : {"ox", "red"} or None
        The form of the couple in the bulk of the solution, when the technique knows it
        (which form binds the ligand that the mass balance removes).
    diffusion_current_A : float or None
        The technique's diffusion-controlled current of the bulk oxidised form, A (cyclic
        voltammetry: the forward reduction peak), or None.
    scan_rate_V_s : float or None
        The scan rate the current was recorded at, V/s (None when unknown).
    pH : float or None
        The solution's pH, when given (ligand protonation).
    metal_M : float or None
        The solution's own total metal concentration, mol/L (a titration by additions
        dilutes it); None: the series value ``metal_total_M`` (:meth:`metal_or`).
    """

    label: str
    x: float
    E_half_V: float
    E_half_stderr_V: float | None = None
    bulk_form: Literal["ox", "red"] | None = None
    diffusion_current_A: float | None = None
    scan_rate_V_s: float | None = None
    pH: float | None = None
    metal_M: float | None = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "label", str(self.label))
        c = finite_number(f"{self.label}: x", self.x)
        if c < 0.0:  # a ligand concentration, a pH (0–14) or a temperature in K
            raise ValueError(f"{self.label}: x must be >= 0, got {c}")
        object.__setattr__(self, "x", c)
        object.__setattr__(
            self, "E_half_V", finite_number(f"{self.label}: E_half_V", self.E_half_V)
        )
        s = optional_stderr(f"{self.label}: E_half_stderr_V", self.E_half_stderr_V)
        object.__setattr__(self, "E_half_stderr_V", s)

    @property
    def ligand_M(self) -> float:
        """``x`` of a ligand titration: the free ligand concentration, mol/L."""
        return self.x

    def metal_or(self, series_metal_M: float | None) -> float | None:
        """Total metal of this solution: its own, else *series_metal_M*."""
        return self.metal_M if self.metal_M is not None else series_metal_M


@dataclass(frozen=True)
class ReferenceHalfWave:
    """E½ of the uncomplexed couple, E½(s), and where it came from.

    Attributes
    ----------
    E_half_V : float or None
        Reference half-wave potential, V (None when it could not be measured).
    stderr_V : float or None
        Its standard error, V (None when unknown).
    source : str
        ``"file"`` (mean of the accepted ligand-free files), ``"manifest"``, or ``"none"``
        (a model that needs no E½(s): pH and temperature series).
    files : tuple of str
        The ligand-free files it was taken from.
    spread_V : float or None
        Standard deviation of those files' E½, V (None with fewer than two).
    file_E_half_V : tuple of float
        Their E½ values, V, in the order of ``files``.
    """

    E_half_V: float | None
    stderr_V: float | None
    source: str
    files: tuple[str, ...] = ()
    spread_V: float | None = None
    file_E_half_V: tuple[float, ...] = ()

    @property
    def count(self) -> int:
        """How many solutions E½(s) averages (1 for a value from the manifest)."""
        return max(len(self.files), 1) if self.source == "file" else 1

    def to_dict(self) -> dict[str, Any]:
        return {
            "E_half_V": clean_number(self.E_half_V),
            "stderr_V": clean_number(self.stderr_V),
            "source": self.source,
            "files": list(self.files),
            "spread_V": clean_number(self.spread_V),
            "file_E_half_V": [clean_number(v) for v in self.file_E_half_V],
        }


@dataclass(frozen=True)
class TitrationData:
    """What a model is given: the titration points, the reference and its own points.

    Attributes
    ----------
    points : tuple of TitrationPoint
        The accepted files with the titration variable set (x > 0 for a ligand), in order.
    reference : ReferenceHalfWave
        E½(s).
    reference_points : tuple of TitrationPoint
        The files E½(s) was taken from (x = 0), for terms that compare them with the
        titration points (the DeFord–Hume current ratio).
    """

    points: tuple[TitrationPoint, ...]
    reference: ReferenceHalfWave
    reference_points: tuple[TitrationPoint, ...] = ()


@dataclass(frozen=True)
class PointNote:
    """What a model found about one point: the x it fitted at and flags for its file."""

    x: float
    flags: tuple[Flag, ...] = ()


@dataclass(frozen=True)
class ModelOutcome:
    """A model's fit (or why none was made) and its notes on the points, by label."""

    fit: TitrationResult | FitRefused
    notes: Mapping[str, PointNote] = field(default_factory=dict)


class TitrationResult(Protocol):
    """The fitted result of a titration model (a frozen record of the model's own)."""

    @property
    def flags(self) -> tuple[Flag, ...]:
        """Its findings, as flags."""
        ...

    def to_dict(self) -> dict[str, Any]:
        """The results.json ``fit`` record."""
        ...

    def summary_lines(self) -> list[str]:
        """Its lines in the terminal summary (the fit in detail)."""
        ...


class TitrationModel(Protocol):
    """A way of turning E½ against a titration variable into constants."""

    name: str
    #: How the reports name it ("Lingane", "stepwise").
    title: str
    #: The titration variable x, with its unit in the name: "ligand_M", "pH", "temperature_K".
    variable: str
    #: Whether the model needs E½(s) of the ligand-free couple (the ligand models).
    needs_reference: bool
    #: What makes a file a point of this model, in the manifest's words ("ligand_M > 0").
    point_rule: str
    figures: tuple[str, ...]
    #: Its steps of the method as the report states them: (heading, text, sources).
    method_steps: tuple[tuple[str, str, tuple[str, ...]], ...]

    def is_point(self, x: float | None) -> bool:
        """Whether a file whose titration variable is *x* (None: not given) is a point."""
        ...

    def check_points(self, points: Sequence[TitrationPoint]) -> tuple[Flag, ...]:
        """Flags that stop (severity error) or qualify a fit of *points*, before fitting."""
        ...

    def fit(self, data: TitrationData, manifest: Manifest) -> ModelOutcome:
        """The fit of *data* under the manifest's settings."""
        ...

    def null_dict(self, n_points: int, flags: Sequence[Flag]) -> dict[str, Any]:
        """The results.json ``fit`` record of a series this model could not fit."""
        ...
