"""The technique seam: what every technique gives for one file, and what it is asked to do.

A technique turns one record into a *measurement*: the E½ it stands behind with its
standard error, its own verdict on whether the couple behaved Nernstian, its own
diagnostics (peak potentials, widths, a wave's limiting current ...), its table cells and
its flags. Everything after that — the one E½ decision of the pipeline
(:mod:`cvfit.pipeline.half_wave`), the titration models, the error budget and the reports —
is shared by all techniques.

A technique is an object with

* ``name`` — the value of ``[series] technique`` that selects it;
* ``analyse(record, settings) -> Measurement`` — one file on its own;
* ``study_series(items, settings, reread) -> SeriesStudy`` — what only the whole series can
  tell (for cyclic voltammetry: the scan-rate study, the class of transfer and k0); it
  returns new measurements whose verdicts may have changed, and the pipeline then decides
  every file's E½ again;
* ``report_sections(data) -> list[ReportSection]`` — its own tables of the HTML report,
  read from the results.json mapping, as plain text (the report has no branch on the
  technique).

A measurement offers :meth:`Measurement.half_wave_estimate`: the E½ the technique offers
under its current verdicts. It never applies an internal standard or decides whether the
file enters a fit: that is the pipeline's one decision.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal, Protocol, runtime_checkable

from cvfit.flags import Flag
from cvfit.quantity import clean_number

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest, VoltammogramEntry
    from cvfit.voltammogram import Voltammogram

__all__ = [
    "HalfWaveEstimate",
    "EstimateKind",
    "StandardMeasurement",
    "Measurement",
    "Technique",
    "FileSettings",
    "StudyItem",
    "SeriesStudy",
    "FileView",
    "ReportCell",
    "ReportSection",
    "no_report_sections",
]

#: How a technique's E½ was obtained, in decreasing order of trust:
#: ``"nernstian"`` — read from a response that passed the technique's Nernstian screen;
#: ``"kinetic_model"`` — from a model of the whole response that includes slow electron
#: transfer (the curve fit of a quasi-reversible CV), accepted by its own tests;
#: ``"approximate"`` — read from a response that failed the screen, with an extra error for
#: what the failure leaves unknown (e.g. the transfer coefficient), usable with a flag;
#: ``"unusable"`` — no E½ that a titration fit should take.
EstimateKind = Literal["nernstian", "kinetic_model", "approximate", "unusable"]


@dataclass(frozen=True)
class HalfWaveEstimate:
    """The E½ a technique offers for one file under its current verdicts.

    Attributes
    ----------
    E_half_V : float or None
        E½ on the electrode's scale, V (None when none could be read).
    stderr_V : float or None
        Its standard error, V, including any extra term the technique adds for an
        approximate reading.
    source : str
        How it was read, in the technique's words (``"peaks"``, ``"curve"``,
        ``"midpoint"`` for cyclic voltammetry); written to results.json as
        ``E_half_source``.
    kind : EstimateKind
        How far it may be trusted (see :data:`EstimateKind`).
    correction_V : float
        A correction the technique applied to its raw reading, V (the switching
        correction of a CV peak midpoint), 0 when none.
    why : str
        For ``"approximate"`` and ``"unusable"``: the reason, in words.
    """

    E_half_V: float | None
    stderr_V: float | None
    source: str
    kind: EstimateKind
    correction_V: float = 0.0
    why: str = ""

    def __post_init__(self) -> None:
        if self.kind not in ("nernstian", "kinetic_model", "approximate", "unusable"):
            raise ValueError(f"unknown estimate kind {self.kind!r}")
        if self.E_half_V is not None and not math.isfinite(self.E_half_V):
            raise ValueError(f"E_half_V must be finite, got {self.E_half_V}")
        if self.stderr_V is not None and not self.stderr_V >= 0:
            raise ValueError(f"stderr_V must be >= 0, got {self.stderr_V}")


@dataclass(frozen=True)
class StandardMeasurement:
    """An internal reference couple as measured in one file.

    Attributes
    ----------
    E_half_V : float or None
        The standard's E½ on the electrode's scale, V (switching-corrected when it passed
        its screen); its changes along the series are the drift of the reference electrode.
    E_half_stderr_V : float or None
        Its standard error from the file's noise, V.
    reversible : bool or None
        Verdict of the standard's own reversibility screen (its n, its window).
    delta_Ep_V : float or None
        Its peak separation, V (cyclic voltammetry; None for other techniques).
    flags : tuple of Flag
        Findings of its peak analysis and screen.
    """

    E_half_V: float | None
    E_half_stderr_V: float | None
    reversible: bool | None
    delta_Ep_V: float | None = None
    flags: tuple[Flag, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {
            "E_half_V": clean_number(self.E_half_V),
            "E_half_stderr_V": clean_number(self.E_half_stderr_V),
            "reversible": self.reversible,
            "delta_Ep_V": clean_number(self.delta_Ep_V),
            "flags": [f.to_dict() for f in self.flags],
        }


@runtime_checkable
class Measurement(Protocol):
    """What a technique found in one file (a frozen record of the technique's own)."""

    @property
    def technique(self) -> str:
        """The technique's name (``[series] technique``)."""
        ...

    @property
    def flags(self) -> tuple[Flag, ...]:
        """Its findings, as flags."""
        ...

    @property
    def standard(self) -> StandardMeasurement | None:
        """An internal reference couple measured in the same record, if any."""
        ...

    @property
    def reversible(self) -> bool | None:
        """The technique's Nernstian verdict (None: could not be judged)."""
        ...

    @property
    def bulk_form(self) -> Literal["ox", "red"] | None:
        """The form of the couple in the bulk of the solution, when it can tell."""
        ...

    @property
    def diffusion_current_A(self) -> float | None:
        """The diffusion-controlled current of the bulk oxidised form, A, or None."""
        ...

    def half_wave_estimate(self) -> HalfWaveEstimate:
        """The E½ the technique offers under its current verdicts."""
        ...

    def to_dict(self) -> dict[str, Any]:
        """The technique's own results.json fields of the file record."""
        ...

    def table_cells(self) -> dict[str, object]:
        """The technique's own columns of the per-file CSV table (name → value)."""
        ...

    def figure_marks(
        self,
    ) -> tuple[list[tuple[tuple[float, ...], tuple[float, ...]]], list[tuple[float, ...]]]:
        """What the voltammogram figure marks on the file's curve: lines (E, i) the
        technique measured against (baselines) and points (E, i, level under it) it read
        (peaks); both empty when it has none."""
        ...

    def summary_cells(self) -> dict[str, str]:
        """The technique's own columns of the terminal's per-file table (header → text,
        right-aligned under a header as wide as the widest cell)."""
        ...


class FileView(Protocol):
    """One file of an analysed series as a technique's report sees it (the pipeline's
    per-file result satisfies it)."""

    @property
    def file(self) -> str: ...

    @property
    def ligand_M(self) -> float: ...

    @property
    def used_in_fit(self) -> bool: ...

    @property
    def measurement(self) -> Any: ...

    @property
    def E_half_source(self) -> str: ...


@dataclass(frozen=True)
class FileSettings:
    """What a technique may know about one file: its manifest entry and the manifest."""

    entry: VoltammogramEntry
    manifest: Manifest


@dataclass(frozen=True)
class StudyItem:
    """One file as a series-level study sees it (generic fields and its measurement)."""

    name: str
    ligand_M: float
    scan_rate_V_s: float | None
    measurement: Any


@dataclass(frozen=True)
class SeriesStudy:
    """What a technique's series-level study found.

    Attributes
    ----------
    measurements : tuple
        One per file, in the order given (changed where a verdict changed).
    studies : tuple
        The technique's study records (for cyclic voltammetry: scan-rate studies).
    flags : tuple of Flag
        Series-level findings.
    """

    measurements: tuple[Any, ...]
    studies: tuple[Any, ...] = ()
    flags: tuple[Flag, ...] = ()


@dataclass(frozen=True)
class ReportCell:
    """One cell of a technique's report table.

    Attributes
    ----------
    text : str
        What the reader sees, formatted (:mod:`cvfit.formatting`).
    value : str or None
        The exact results.json value as JSON text, for a program checking the page.
    key : str
        Which results.json value the cell shows ("" for none), e.g. ``"kinetics.k0_cm_s"``.
    """

    text: str
    value: str | None = None
    key: str = ""


@dataclass(frozen=True)
class ReportSection:
    """A technique's own section of the HTML report: a table and notes, all plain text.

    Attributes
    ----------
    key : str
        Its id on the page (letters, digits and dashes).
    title : str
        Its heading.
    intro : str
        A sentence above the table ("" for none).
    headers : tuple of str
        Column headers.
    rows : tuple of tuple of ReportCell
        One row per file or study; the first cell names it.
    notes : tuple of str
        Sentences below the table.
    """

    key: str
    title: str
    intro: str
    headers: tuple[str, ...]
    rows: tuple[tuple[ReportCell, ...], ...]
    notes: tuple[str, ...] = ()


def no_report_sections(data: Any) -> list[ReportSection]:
    """The report sections of a technique that adds none to the shared ones."""
    return []


#: Reads a file's record again (by its index in the manifest), for a study that needs it.
Reread = Callable[[int], "Voltammogram"]


class Technique(Protocol):
    """A way of recording a voltammogram, and how to get E½ from it."""

    name: str
    #: Its figures (keys of :mod:`cvfit.report.figures.registry`).
    figures: tuple[str, ...]
    #: Its columns of the HTML per-file table, (header, results.json key, scale, decimals),
    #: and the keys of its measurement the table leaves out.
    report_columns: tuple[tuple[str, str, float, int], ...]
    hidden_keys: frozenset[str]

    def analyse(self, record: Voltammogram, settings: FileSettings) -> Measurement:
        """Measure one file on its own."""
        ...

    def study_series(
        self, items: Sequence[StudyItem], manifest: Manifest, reread: Reread
    ) -> SeriesStudy:
        """What only the whole series can tell; verdicts may change."""
        ...

    def drawn_curve(self, record: Voltammogram, measurement: Any, max_points: int) -> Any:
        """The analysed part of *record*, thinned for figures."""
        ...

    def summary_lines(self, files: Sequence[FileView], studies: Sequence[Any]) -> list[str]:
        """Its lines of the terminal summary for the whole series."""
        ...

    def report_sections(self, data: Any) -> list[ReportSection]:
        """Its own sections of the HTML report, from the results.json mapping *data*."""
        ...
