"""Plain result records of a series analysis and their results.json form.

The records are frozen and carry everything the reports need; ``to_dict`` gives the
results.json contract (``schemas/results.schema.json``, ``docs/design.md``; NaN and
missing values become ``null``).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import asdict, dataclass, field, fields
from typing import TYPE_CHECKING, Any, Literal, TypeAlias

from cvfit.flags import Flag
from cvfit.io.notes import ImportedFile
from cvfit.quantity import clean_number
from cvfit.reversibility_criteria import ReversibilityCriteria
from cvfit.techniques.base import Measurement, StandardMeasurement
from cvfit.titration.base import ReferenceHalfWave
from cvfit.titration.lingane import LinganeFit
from cvfit.titration.registry import MODEL_NAMES, model_named
from cvfit.titration.stepwise_result import StepwiseFit

from .half_wave import HalfWaveDecision

if TYPE_CHECKING:  # imported for annotations only; keeps this module free of heavy imports
    from cvfit.io.manifest import SeriesSettings
    from cvfit.io.manifest_titration import TitrationSettings
    from cvfit.techniques.curves import CycleCurve
    from cvfit.techniques.cv.curve.global_fit import GlobalCurveFit
    from cvfit.techniques.cv.screen.scan_rate import ScanRateStudy
    from cvfit.titration.proton_result import ProtonFit
    from cvfit.titration.temperature_model import TemperatureFit

__all__ = [
    "set_notebook_view",
    "FileResult",
    "InternalStandardResult",
    "ReferenceHalfWave",
    "SeriesConditions",
    "SeriesResult",
    "TitrationFit",
    "clean_number",
]

#: The fit of a titration series: one type per model (``[fit] model`` of the manifest),
#: each a :class:`~cvfit.titration.base.TitrationResult`.
TitrationFit: TypeAlias = "LinganeFit | StepwiseFit | ProtonFit | TemperatureFit"


#: The internal reference couple as measured in one file (defined with the techniques).
InternalStandardResult = StandardMeasurement


#: A solution's own total metal, the volume in the cell and the stock added (a titration
#: by additions): fields of :class:`FileResult`, keys of its results.json record (written
#: only when known), and the per-file tables' columns.
SOLUTION_FIELDS = ("metal_M", "volume_mL", "added_mL")


@dataclass(frozen=True)
class FileResult:
    """Everything found for one file of the series.

    The generic fields — which solution, the E½ the file contributes and whether it was
    fitted — sit beside the technique's own :attr:`measurement` (for cyclic voltammetry a
    :class:`~cvfit.techniques.cv.measurement.CVMeasurement`: peaks, screen, curve fit,
    kinetics). The E½ is made in one place only, :func:`cvfit.pipeline.half_wave.decide_half_wave`.

    Attributes
    ----------
    file : str
        The file name as written in the manifest.
    ligand_M : float
        Total ligand concentration, mol/L.
    free_ligand_M : float
        Free ligand concentration used in the fit, mol/L.
    scan_rate_V_s : float or None
        Scan rate, V/s (manifest, else from the time column).
    measurement : Measurement
        What the technique found in the file.
    half_wave : HalfWaveDecision
        The E½ the file contributes, its standard error, where it came from and whether a
        fit may take it.
    used_in_fit : bool
        Whether the point entered the titration fit.
    series_flags : tuple of Flag
        What the series-level steps found for this file (exclusion, bound ligand ...);
        :attr:`flags` adds them to the technique's and the decision's.
    curve : CycleCurve or None
        The analysed part of the record, thinned for figures (not written to
        results.json); the whole record is not kept, so a large series stays small in
        memory and results made in worker processes travel back cheaply.
    label : str or None
        Optional label from the manifest.
    resistance_ohm : float or None
        R_u the potentials were corrected with, Ω.
    pH : float or None
        The solution's pH, when the manifest gives one for the file.
    temperature_K : float or None
        The file's own temperature, K, when the manifest gives one (it was analysed at
        it); None: the series temperature.
    imported : ImportedFile or None
        The columns read from the file and the importer's flags
        (:func:`cvfit.io.notes.imported_file`); None for a record not read from a file.
    excluded_by_user : str or None
        The manifest's ``exclude`` of the file: why the user left it out of the fits.
    metal_M : float or None
        The solution's own total metal concentration, mol/L (given for the file, or
        computed from a titration by additions); None: the series value.
    volume_mL, added_mL : float or None
        Titration by additions: volume in the cell and cumulative stock added, mL.
    """

    file: str
    ligand_M: float
    free_ligand_M: float
    scan_rate_V_s: float | None
    measurement: Measurement
    half_wave: HalfWaveDecision
    used_in_fit: bool = False
    series_flags: tuple[Flag, ...] = ()
    curve: CycleCurve | None = field(default=None, repr=False, compare=False)
    label: str | None = None
    resistance_ohm: float | None = None
    pH: float | None = None
    temperature_K: float | None = None
    imported: ImportedFile | None = field(default=None, compare=False)
    excluded_by_user: str | None = None
    metal_M: float | None = None
    volume_mL: float | None = None
    added_mL: float | None = None

    @property
    def flags(self) -> tuple[Flag, ...]:
        """Every finding for this file: the importer's, the technique's, the decision's,
        the series'."""
        read = self.imported.flags if self.imported is not None else ()
        return (*read, *self.measurement.flags, *self.half_wave.flags, *self.series_flags)

    @property
    def imported_columns(self) -> dict[str, str] | None:
        """The columns read from the file and their units (None when not read from one)."""
        return self.imported.columns if self.imported is not None else None

    @property
    def reversible(self) -> bool | None:
        """The technique's Nernstian verdict."""
        return self.measurement.reversible

    @property
    def E_half_V(self) -> float | None:
        """The E½ the file contributes, V (see :attr:`half_wave`)."""
        return self.half_wave.E_half_V

    @property
    def E_half_source(self) -> str:
        return self.half_wave.source

    @property
    def switching_correction_V(self) -> float:
        return self.half_wave.correction_V

    @property
    def E_half_stderr_V(self) -> float | None:
        """Standard error of the technique's E½ alone, V."""
        return self.half_wave.own_stderr_V

    @property
    def E_half_total_stderr_V(self) -> float | None:
        """Standard error of ``E_half_V`` as fitted (with an internal standard, the
        standard's added in quadrature), V."""
        return self.half_wave.stderr_V

    @property
    def internal_standard(self) -> StandardMeasurement | None:
        return self.measurement.standard

    def to_dict(self) -> dict[str, Any]:
        own = self.measurement.to_dict()
        return {
            "file": self.file,
            "label": self.label,
            "ligand_M": clean_number(self.ligand_M),
            "free_ligand_M": clean_number(self.free_ligand_M),
            "scan_rate_V_s": clean_number(self.scan_rate_V_s),
            **own,
            "technique": self.measurement.technique,
            "E_half_V": clean_number(self.E_half_V),
            "E_half_stderr_V": clean_number(self.E_half_total_stderr_V),
            "E_half_source": self.E_half_source,
            "switching_correction_V": clean_number(self.switching_correction_V),
            "used_in_fit": self.used_in_fit,
            "excluded_by_user": self.excluded_by_user,
            "resistance_ohm": clean_number(self.resistance_ohm),
            "internal_standard": None
            if self.internal_standard is None
            else self.internal_standard.to_dict(),
            "flags": [f.to_dict() for f in self.flags],
            **self._solution_keys(),
            "imported_columns": self.imported_columns,
        }

    def _solution_keys(self) -> dict[str, float]:
        """pH and temperature_K of the file's record, written only when the manifest gives
        them for the file (a pH or temperature series); likewise the total metal, the
        volume and the stock added of a titration by additions."""
        keys = {
            "pH": self.pH,
            "temperature_K": self.temperature_K,
            **{k: getattr(self, k) for k in SOLUTION_FIELDS},
        }
        return {k: float(v) for k, v in keys.items() if v is not None}


@dataclass(frozen=True)
class SeriesConditions:
    """The conditions a series was analysed under: its ``[series]`` settings and the model.

    Attributes
    ----------
    settings : SeriesSettings
        The ``[series]`` table of the manifest, as loaded (validated there).
    model : {"lingane", "stepwise", "proton", "temperature"}
        The titration model of ``[fit]``; the fit, when one could be made, is of its type.
    technique : str
        How the files were recorded (``[series] technique``).
    titration : TitrationSettings or None
        The ``[titration]`` table of a titration by additions (the cell before the first
        addition and the stock), or None.
    """

    settings: SeriesSettings
    model: Literal["lingane", "stepwise", "proton", "temperature"]
    technique: str = "cv"
    titration: TitrationSettings | None = None

    def __post_init__(self) -> None:
        if self.model not in MODEL_NAMES:
            raise ValueError(f"model must be one of {MODEL_NAMES}, got {self.model!r}")

    @property
    def title(self) -> str:
        return self.settings.title

    @property
    def electrons(self) -> int:
        return self.settings.electrons

    @property
    def temperature_K(self) -> float:
        """Cell temperature, K."""
        return self.settings.temperature_K

    @property
    def reference_electrode(self) -> str | None:
        return self.settings.reference_electrode

    def to_dict(self) -> dict[str, Any]:
        """Every ``[series]`` setting as given (tuples as lists), then T in K and the model."""
        record: dict[str, Any] = {}
        for f in fields(self.settings):
            value = getattr(self.settings, f.name)
            record[f.name] = list(value) if isinstance(value, tuple) else value
        record["temperature_K"] = self.temperature_K
        record["model"] = self.model
        record["technique"] = self.technique
        record["titration"] = None if self.titration is None else asdict(self.titration)
        return record


@dataclass(frozen=True)
class SeriesResult:
    """The analysis of one titration series.

    Attributes
    ----------
    cvfit_version : str
    manifest : str
        Path of the manifest analysed.
    series : SeriesConditions
        Conditions of the series (title, electrons, temperature_K, model, ...).
    files : tuple of FileResult
        One per voltammogram, in manifest order.
    reference : ReferenceHalfWave
    fit : LinganeFit, StepwiseFit or None
        The fit of the model asked for (:data:`TitrationFit`); None when no fit could be
        made (see ``flags``): results.json then carries that model's fit keys with null
        constants.
    nernstian : bool
        False when any voltammogram failed (or could not pass) the reversibility screen.
    exclude_non_nernstian : bool
        Whether flagged voltammograms were kept out of the fit.
    criteria : ReversibilityCriteria
        The reversibility margins applied.
    flags : tuple of Flag
        Series-level findings.
    fit_n_points : int
        Number of usable titration points offered to the fit.
    scan_rate_studies : tuple of ScanRateStudy
        One per ligand concentration measured at three or more scan rates.
    global_fit : GlobalCurveFit or None
        All curves fitted at once (``[fit] global = true``), beside the two-step fit.
    """

    cvfit_version: str
    manifest: str
    series: SeriesConditions
    files: tuple[FileResult, ...]
    reference: ReferenceHalfWave
    fit: TitrationFit | None
    nernstian: bool
    exclude_non_nernstian: bool
    criteria: ReversibilityCriteria
    flags: tuple[Flag, ...] = ()
    fit_n_points: int = 0
    scan_rate_studies: tuple[ScanRateStudy, ...] = ()
    global_fit: GlobalCurveFit | None = None

    def _repr_html_(self) -> str | None:
        """Jupyter's view: headline, per-file table and figures (None before the outputs
        are loaded: the notebook then shows the plain repr)."""
        html = _NOTEBOOK_VIEW.get("html")
        return None if html is None else html(self)

    def plot(self, name: str | None = None) -> Any:
        """The figures of this series as matplotlib Figures (nothing written or shown).

        Without *name*, a dict of every figure the run has by its key in the figure
        registry (``"voltammograms"``, ``"lingane"``, …); with *name*, that Figure.
        """
        plot = _NOTEBOOK_VIEW.get("plot")
        if plot is None:
            raise RuntimeError(
                "the figures are drawn by cvfit's outputs: use the public API "
                "(cvfit.analyse_series) or import cvfit.report.notebook first"
            )
        drawn = plot(self, name)
        return drawn if name is None else drawn[name]

    def to_dict(self) -> dict[str, Any]:
        if self.fit is not None:
            fit = self.fit.to_dict()
        else:
            why = [f for f in self.flags if f.severity == "error"]
            fit = model_named(self.series.model).null_dict(self.fit_n_points, why)
        return {
            "cvfit_version": self.cvfit_version,
            "manifest": self.manifest,
            "series": self.series.to_dict(),
            "nernstian": self.nernstian,
            "exclude_non_nernstian": self.exclude_non_nernstian,
            "reversibility_criteria": asdict(self.criteria),
            "reference": self.reference.to_dict(),
            "voltammograms": [f.to_dict() for f in self.files],
            "fit": fit,
            "scan_rate_studies": [st.to_dict() for st in self.scan_rate_studies],
            "global_fit": None if self.global_fit is None else self.global_fit.to_dict(),
            "flags": [f.to_dict() for f in self.flags],
        }


#: The notebook view of a series result, handed over by cvfit.report.notebook (the
#: outputs sit above the pipeline, so it cannot be imported from here).
_NOTEBOOK_VIEW: dict[str, Callable[..., Any]] = {}


def set_notebook_view(html: Callable[..., str], plot: Callable[..., Any]) -> None:
    """Give :class:`SeriesResult` its ``_repr_html_`` and ``plot`` drawing functions."""
    _NOTEBOOK_VIEW.update(html=html, plot=plot)
