"""Plain result records of a series analysis and their results.json form.

The records are frozen and carry everything the reports need; ``to_dict`` gives the
results.json contract (``schemas/results.schema.json``, ``docs/design.md``; NaN and
missing values become ``null``).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import asdict, dataclass, field, fields
from typing import TYPE_CHECKING, Any, Literal, TypeAlias

from cvfit.fit.lingane import LinganeFit, null_fit_dict
from cvfit.fit.stepwise_result import StepwiseFit, null_stepwise_dict
from cvfit.flags import Flag
from cvfit.quantity import clean_number
from cvfit.reversibility_criteria import ReversibilityCriteria

if TYPE_CHECKING:  # imported for annotations only; keeps this module free of heavy imports
    from cvfit.fit.curve_fit import CurveFit
    from cvfit.fit.curve_global import GlobalCurveFit
    from cvfit.io.manifest import SeriesSettings
    from cvfit.peaks.analysis import PeakAnalysis
    from cvfit.screen.classification import Classification
    from cvfit.screen.kinetics import KineticsResult
    from cvfit.screen.reversibility import ReversibilityScreen
    from cvfit.screen.scan_rate import ScanRateStudy

    from .curves import CycleCurve

__all__ = [
    "FileResult",
    "InternalStandardResult",
    "ReferenceHalfWave",
    "SeriesConditions",
    "SeriesResult",
    "TitrationFit",
    "clean_number",
]

#: The fit of a titration series: one type per model (``[fit] model`` of the manifest).
#: Consumers tell them apart with ``isinstance``.
TitrationFit: TypeAlias = LinganeFit | StepwiseFit

#: results.json ``fit`` record of a series that could not be fitted, by model: the keys of
#: that model's fit with null constants.
_NULL_FIT_DICT = {"lingane": null_fit_dict, "stepwise": null_stepwise_dict}


@dataclass(frozen=True)
class InternalStandardResult:
    """The internal reference couple as measured in one voltammogram.

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
        Its peak separation, V.
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


@dataclass(frozen=True)
class FileResult:
    """Everything found for one voltammogram of the series.

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
    peaks : PeakAnalysis
        Peak positions and heights.
    screen : ReversibilityScreen
        Outcome of the reversibility screen.
    used_in_fit : bool
        Whether the point entered the titration fit.
    flags : tuple of Flag
        Findings of the peak analysis, the screen and the pipeline.
    curve : CycleCurve or None
        The analysed cycle, thinned for figures (not written to results.json); the
        whole record is not kept, so a large series stays small in memory and results
        made in worker processes travel back cheaply.
    label : str or None
        Optional label from the manifest.
    E_half_V : float or None
        E½ used downstream, V: the peak midpoint less the switching correction for a
        voltammogram that passed the screen (see :mod:`cvfit.screen.switching`), else the midpoint.
    switching_correction_V : float
        The correction applied, V (0 when none).
    classification : Classification or None
        Class of the electron transfer (reversible, quasi-reversible, ...) and why.
    kinetics : KineticsResult or None
        Nicholson's ψ and k0, or why they are not determinable.
    resistance_ohm : float or None
        R_u the potentials were corrected with, Ω.
    internal_standard : InternalStandardResult or None
        The reference couple measured in the same file, when the manifest has an
        ``[internal_standard]``: ``E_half_V`` is then the analyte's E½ against it (plus the
        value assigned to the standard).
    curve_fit : CurveFit or None
        The fit of the whole curve, when one was made (see :mod:`cvfit.pipeline.curve_stage`).
    E_half_source : {"peaks", "curve"}
        Where ``E_half_V`` comes from: the peak midpoint or the accepted curve fit.
    imported_columns : mapping of str to str, or None
        The columns read from the file and their units
        (:func:`cvfit.io.notes.imported_columns`); None for a record not read from a file.
    """

    file: str
    ligand_M: float
    free_ligand_M: float
    scan_rate_V_s: float | None
    peaks: PeakAnalysis
    screen: ReversibilityScreen
    used_in_fit: bool
    flags: tuple[Flag, ...]
    curve: CycleCurve | None = field(default=None, repr=False, compare=False)
    label: str | None = None
    E_half_V: float | None = None
    switching_correction_V: float = 0.0
    classification: Classification | None = None
    kinetics: KineticsResult | None = None
    resistance_ohm: float | None = None
    internal_standard: InternalStandardResult | None = None
    curve_fit: CurveFit | None = field(default=None, compare=False)
    E_half_source: Literal["peaks", "curve"] = "peaks"
    imported_columns: Mapping[str, str] | None = field(default=None, compare=False)

    @property
    def reversible(self) -> bool | None:
        return self.screen.reversible

    @property
    def E_half_stderr_V(self) -> float | None:
        """Standard error of ``E_half_V``: of the curve fit or of the peak analysis, V."""
        if self.E_half_source == "curve" and self.curve_fit is not None:
            return self.curve_fit.E_half_V.stderr
        return self.peaks.E_half_stderr_V

    @property
    def E_half_total_stderr_V(self) -> float | None:
        """Standard error of ``E_half_V`` as fitted: its own (:attr:`E_half_stderr_V`), with an
        internal standard that of the standard's E½ added in quadrature (None when either
        is unknown)."""
        own = self.E_half_stderr_V
        std = self.internal_standard
        if std is None or own is None:
            return own
        if std.E_half_stderr_V is None:
            return None
        return float((own * own + std.E_half_stderr_V**2) ** 0.5)

    def to_dict(self) -> dict[str, Any]:
        p = self.peaks
        return {
            "file": self.file,
            "label": self.label,
            "ligand_M": clean_number(self.ligand_M),
            "free_ligand_M": clean_number(self.free_ligand_M),
            "scan_rate_V_s": clean_number(self.scan_rate_V_s),
            "cycle": p.cycle_number,
            "first_sweep": p.first_sweep,
            "switching_potential_V": clean_number(p.switching_potential_V),
            "Epc_V": clean_number(p.Epc_V),
            "Epa_V": clean_number(p.Epa_V),
            "E_half_V": clean_number(self.E_half_V),
            "E_half_stderr_V": clean_number(self.E_half_total_stderr_V),
            "E_half_source": self.E_half_source,
            "E_half_midpoint_V": clean_number(p.E_half_V),
            "switching_correction_V": clean_number(self.switching_correction_V),
            "delta_Ep_V": clean_number(p.delta_Ep_V),
            "expected_delta_Ep_V": clean_number(self.screen.expected_delta_Ep_V),
            "Ep_half_c_V": clean_number(p.Ep_half_c_V),
            "Ep_half_a_V": clean_number(p.Ep_half_a_V),
            "ipc_A": clean_number(p.ipc_A),
            "ipa_A": clean_number(p.ipa_A),
            "current_ratio": clean_number(p.current_ratio),
            "noise_A": clean_number(p.noise_A),
            "reversible": self.screen.reversible,
            "used_in_fit": self.used_in_fit,
            "curve_fit": None if self.curve_fit is None else self.curve_fit.to_dict(),
            "classification": None
            if self.classification is None
            else self.classification.to_dict(),
            "kinetics": None if self.kinetics is None else self.kinetics.to_dict(),
            "resistance_ohm": clean_number(self.resistance_ohm),
            "internal_standard": None
            if self.internal_standard is None
            else self.internal_standard.to_dict(),
            "flags": [f.to_dict() for f in self.flags],
            "imported_columns": None
            if self.imported_columns is None
            else dict(self.imported_columns),
        }


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
        ``"file"`` (mean of the ligand-free voltammograms) or ``"manifest"``.
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
class SeriesConditions:
    """The conditions a series was analysed under: its ``[series]`` settings and the model.

    Attributes
    ----------
    settings : SeriesSettings
        The ``[series]`` table of the manifest, as loaded (validated there).
    model : {"lingane", "stepwise"}
        The titration model of ``[fit]``; the fit, when one could be made, is of its type.
    """

    settings: SeriesSettings
    model: Literal["lingane", "stepwise"]

    def __post_init__(self) -> None:
        if self.model not in ("lingane", "stepwise"):
            raise ValueError(f"model must be 'lingane' or 'stepwise', got {self.model!r}")

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

    def to_dict(self) -> dict[str, Any]:
        if self.fit is not None:
            fit = self.fit.to_dict()
        else:
            why = [f for f in self.flags if f.severity == "error"]
            fit = _NULL_FIT_DICT[self.series.model](self.fit_n_points, why)
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
