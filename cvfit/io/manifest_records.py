"""The records a loaded manifest is made of: the ``[series]`` and ``[fit]`` settings, one
entry per ``[[voltammogram]]``, and the :class:`Manifest` that holds them.

Each validates its own fields against the key declarations of
:mod:`cvfit.io.manifest_keys` (:func:`~cvfit.io.manifest_spec.clean_record`);
:func:`cvfit.io.manifest.load_manifest` builds them from the TOML file.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from cvfit.errors import InputError
from cvfit.io import manifest_keys as _keys
from cvfit.io import manifest_standard as _standard
from cvfit.io import manifest_technique as _technique
from cvfit.io import manifest_titration as _titration
from cvfit.io import manifest_variables as _variables
from cvfit.io.manifest_spec import clean_record
from cvfit.io.options import ImportOptions
from cvfit.reversibility_criteria import ReversibilityCriteria
from cvfit.units import celsius_to_kelvin

__all__ = ["Manifest", "SeriesSettings", "FitSettings", "VoltammogramEntry"]


@dataclass(frozen=True, kw_only=True)
class SeriesSettings:
    """The ``[series]`` table.

    Attributes
    ----------
    title : str
        Free text (default: the manifest's file name without extension).
    temperature_C : float
        Cell temperature, °C, 0–100 (default 25).
    electrons : int
        n of the couple, a positive whole number.
    metal_total_M : float or None
        Analytical metal concentration, mol/L (> 0), for the free-ligand correction.
    E_half_free_V, E_half_free_stderr_V : float or None
        E½ of the uncomplexed couple, V, and its standard error, V (>= 0), used when the
        series has no ligand-free file.
    reference_electrode : str or None
        Free text, echoed in reports.
    ligand_pKa, pH, ionic_strength_M, metal_charge, ligand_charge, bound_ligand_number
        Solution chemistry for the stepwise model (see
        cvfit.titration.stepwise.SolutionConditions).
    electrode_area_cm2, analyte_M : float or None
        Electrode area, cm², and bulk concentration of the electroactive species, mol/L
        (D from Randles–Ševčík peak currents).
    diffusion_cm2_s, diffusion_stderr_cm2_s : float or None
        A known diffusion coefficient of the species in solution and its standard error,
        cm²/s (for k0).
    alpha : float
        Transfer coefficient assumed, 0 < α < 1 (default 0.5).
    resistance_ohm : float or None
        Uncompensated resistance R_u, Ω (>= 0); potentials are corrected by i·R_u.
    analyte_window_V : (float, float) or None
        Potential range of the analyte's wave, V, when a file holds two waves (with an
        ``[internal_standard]``); its peaks are measured there only.
    bulk_form : {"ox", "red"} or None
        The form present in the solution, for the curve model's initial state (None:
        detected from each record's start).
    quiet_time_s : float or None
        Time the electrode was held at the first recorded potential before the record, s
        (None: from the time column where it shows a hold, else an assumed 2 s).
    technique : {"cv", "dpv", "swv", "wave"}
        How the files were recorded (default cv; :mod:`cvfit.io.manifest_technique`).
    """

    title: str = ""
    temperature_C: float = 25.0
    electrons: int
    metal_total_M: float | None = None
    E_half_free_V: float | None = None
    E_half_free_stderr_V: float | None = None
    reference_electrode: str | None = None
    ligand_pKa: tuple[float, ...] | None = None
    pH: float | None = None
    ionic_strength_M: float | None = None
    metal_charge: int | None = None
    ligand_charge: int | None = None
    bound_ligand_number: float | None = None
    electrode_area_cm2: float | None = None
    analyte_M: float | None = None
    diffusion_cm2_s: float | None = None
    diffusion_stderr_cm2_s: float | None = None
    alpha: float = 0.5
    resistance_ohm: float | None = None
    analyte_window_V: tuple[float, float] | None = None
    bulk_form: str | None = None
    quiet_time_s: float | None = None
    technique: str = "cv"

    def __post_init__(self) -> None:
        clean_record(self, _keys.SERIES)

    @property
    def temperature_K(self) -> float:
        """Temperature, K."""
        return celsius_to_kelvin(self.temperature_C)


@dataclass(frozen=True, kw_only=True)
class FitSettings:
    """The ``[fit]`` table.

    Attributes
    ----------
    model : {"lingane", "stepwise", "proton", "temperature"}
        Titration model (default lingane): a ligand titration (Lingane line or stepwise
        constants), E½ against pH, or E½ against temperature.
    max_complexes : int
        Highest j tried by the stepwise model, 1–8 (default 4).
    exclude_non_nernstian : bool
        Flagged voltammograms are reported but not fitted (default true).
    fixed_log10_beta_ox, fixed_log10_beta_red : tuple of float or None
        Stepwise model: known constants of one oxidation state; the other's are fitted.
    current_ratio_correction : bool
        Stepwise model: add DeFord–Hume's ln(Is/Ic) from the peak currents (default true).
    half_wave_source : {"peaks", "curve", "auto"}
        E½ from the peaks, from the fit of the whole curve, or (default) the peaks for
        files that pass the reversibility screen and the curve fit for the others.
    global_fit : bool
        ``global`` in the manifest: also fit all curves at once with E½ tied by the
        Lingane line or the DeFord–Hume model (default false).
    global_shared : tuple of str
        Global fit: ``"alpha"`` (one α for the kinetic files) and/or ``"charging"`` (one
        double-layer capacitance for all files); default none.
    curve_diffusion_ratio : float
        D_R/D_O of the curve fit's model (default 1). A number only: one curve cannot
        tell it (see :mod:`cvfit.techniques.cv.curve.fit`); it changes k0, not E½.
    max_protons : int
        pH model: most protonation steps tried per oxidation state, 1–4 (default 2).
    """

    model: Literal["lingane", "stepwise", "proton", "temperature"] = "lingane"
    max_complexes: int = 4
    exclude_non_nernstian: bool = True
    fixed_log10_beta_ox: tuple[float, ...] | None = None
    fixed_log10_beta_red: tuple[float, ...] | None = None
    current_ratio_correction: bool = True
    half_wave_source: Literal["peaks", "curve", "auto"] = "auto"
    global_fit: bool = False
    curve_diffusion_ratio: float = 1.0
    global_shared: tuple[str, ...] = ()
    max_protons: int = 2

    def __post_init__(self) -> None:
        if self.curve_diffusion_ratio == "fit":
            raise InputError(
                'curve_diffusion_ratio cannot be "fit": a single curve at a planar electrode '
                "does not determine D_R/D_O (it trades exactly against k0); give the ratio as "
                "a number, or leave it out for 1",
                key="curve_diffusion_ratio",
            )
        clean_record(self, _keys.FIT)
        if self.global_shared and not self.global_fit:
            raise InputError(
                "global_shared applies to the global curve fit: set global = true too, or "
                "leave global_shared out",
                key="global_shared",
            )
        ox, red = self.fixed_log10_beta_ox, self.fixed_log10_beta_red
        if ox is not None and red is not None:
            raise InputError(
                "give fixed_log10_beta_ox or fixed_log10_beta_red, not both: the constants of "
                "the other oxidation state are what the fit finds",
                key="fixed_log10_beta_red",
            )
        if (ox is not None or red is not None) and self.model != "stepwise":
            key = "fixed_log10_beta_ox" if ox is not None else "fixed_log10_beta_red"
            raise InputError(f'{key} needs model = "stepwise" in [fit]', key=key)


@dataclass(frozen=True, kw_only=True)
class VoltammogramEntry:
    """One ``[[voltammogram]]`` table.

    Attributes
    ----------
    file : Path
        Absolute path, resolved against the manifest's folder.
    name : str
        The file name as written in the manifest.
    ligand_M : float
        Total ligand concentration, mol/L (>= 0; default 0, given in every file of a
        ligand titration).
    scan_rate_V_s : float or None
        Scan rate, V/s (> 0), else taken from a time column.
    import_options : ImportOptions
        Series-wide ``[import]`` merged with this table's own import keys.
    label : str or None
        Free text for legends.
    exclude : str or None
        Why the user leaves this file out of the fits (it is still analysed and shown);
        None: the file is used when its E½ is accepted.
    pH : float or None
        pH of this solution (stepwise model with ligand_pKa), else the series value.
    resistance_ohm : float or None
        Uncompensated resistance for this file, Ω, else the series value.
    temperature_C : float or None
        This solution's temperature, °C (0–100): the file is analysed at it (a temperature
        series); None: the series value.
    rotation_rate_rpm : float or None
        Rotation rate of a disc electrode, revolutions per minute (waves).
    added_mL : float or None
        Titration by additions: cumulative volume of stock added before this record, mL
        (``ligand_M``, ``metal_M`` and ``volume_mL`` are then computed from it,
        :mod:`cvfit.io.manifest_titration`).
    metal_M : float or None
        This solution's total metal concentration, mol/L: given, or computed from the
        additions; None: the series value ``metal_total_M``.
    volume_mL : float or None
        Volume in the cell, mL (computed from ``added_mL``; not a manifest key).
    """

    file: Path
    name: str
    ligand_M: float = 0.0
    scan_rate_V_s: float | None = None
    import_options: ImportOptions = ImportOptions()
    label: str | None = None
    exclude: str | None = None
    pH: float | None = None
    resistance_ohm: float | None = None
    temperature_C: float | None = None
    rotation_rate_rpm: float | None = None
    added_mL: float | None = None
    metal_M: float | None = None
    volume_mL: float | None = None

    def __post_init__(self) -> None:
        clean_record(self, _keys.VOLTAMMOGRAM)
        object.__setattr__(self, "file", Path(self.file))

    @property
    def temperature_K(self) -> float | None:
        """This file's own temperature, K (None: the series temperature)."""
        return None if self.temperature_C is None else celsius_to_kelvin(self.temperature_C)


@dataclass(frozen=True, kw_only=True)
class Manifest:
    """A loaded series manifest.

    ``points`` are the ``[[point]]`` tables (E½ given, no file); ``reference_at`` is
    ``[series] reference_at`` (kept beside the series settings: it concerns the
    temperature model only); ``titration`` the ``[titration]`` table of a titration by
    additions (the entries already carry the concentrations it gives).
    """

    path: Path
    folder: Path
    series: SeriesSettings
    import_options: ImportOptions
    fit: FitSettings
    reversibility: ReversibilityCriteria
    voltammograms: tuple[VoltammogramEntry, ...]
    internal_standard: _standard.InternalStandard | None = None
    points: tuple[_variables.PointEntry, ...] = ()
    reference_at: str | None = None
    technique: _technique.TechniqueSettings = _technique.TechniqueSettings()
    titration: _titration.TitrationSettings | None = None

    def __post_init__(self) -> None:
        entries = tuple(self.voltammograms)
        if not entries and not self.points:
            raise InputError(
                "a series needs at least one voltammogram or [[point]]", source=str(self.path)
            )
        object.__setattr__(self, "voltammograms", entries)
        object.__setattr__(self, "points", tuple(self.points))
