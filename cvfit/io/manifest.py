"""The TOML manifest of a titration series (``schemas/series.schema.json``, ``docs/manifest.md``).

:func:`load_manifest` reads it with :mod:`tomllib`, rejects unknown keys by name (with the
closest valid spelling), checks every value and returns frozen records. Error messages
name the manifest, the line of the offending key where it can be found, and the key path
(``series.electrons``, ``voltammogram[3].file``).
"""

from __future__ import annotations

import difflib
import math
import os
import re
import tomllib
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any, Literal

from cvfit.errors import InputError
from cvfit.io import manifest_chemistry as _chem
from cvfit.io import manifest_electrode as _electrode
from cvfit.io import manifest_standard as _standard
from cvfit.io import manifest_technique as _technique
from cvfit.io import manifest_variables as _variables
from cvfit.io.limits import MAX_MANIFEST_BYTES, read_regular_file
from cvfit.io.options import IMPORT_KEYS, ImportOptions
from cvfit.io.text import split_lines
from cvfit.reversibility_criteria import ReversibilityCriteria
from cvfit.units import celsius_to_kelvin

__all__ = [
    "Manifest",
    "SeriesSettings",
    "FitSettings",
    "VoltammogramEntry",
    "load_manifest",
    "resistance_for",
]

SERIES_KEYS = (
    "title",
    "temperature_C",
    "electrons",
    "metal_total_M",
    "E_half_free_V",
    "E_half_free_stderr_V",
    "reference_electrode",
    "analyte_window_V",
    "reference_at",
    *_chem.SERIES_CHEMISTRY_KEYS,
    *_electrode.SERIES_ELECTRODE_KEYS,
    *_technique.SERIES_TECHNIQUE_KEYS,
)
FIT_KEYS = (
    "model", "max_complexes", "exclude_non_nernstian", "half_wave_source", "global",
    "curve_diffusion_ratio", "global_shared", "max_protons",
    *_chem.FIT_STEPWISE_KEYS,
)  # fmt: skip
#: Where E½ of each file comes from (``[fit] half_wave_source``).
HALF_WAVE_SOURCES = ("peaks", "curve", "auto")
#: What the global curve fit may share between files (``[fit] global_shared``; the same
#: names as cvfit.techniques.cv.curve.global_fit.SHARED_NAMES, tested).
GLOBAL_SHARED_NAMES = ("alpha", "charging")
REVERSIBILITY_KEYS = ("n_delta_Ep_margin_V", "n_peak_width_margin_V", "current_ratio_margin")
ENTRY_KEYS = (
    "file",
    "ligand_M",
    "scan_rate_V_s",
    "label",
    "pH",
    "temperature_C",
    *_electrode.ENTRY_ELECTRODE_KEYS,
    *_technique.ENTRY_TECHNIQUE_KEYS,
    *IMPORT_KEYS,
)
TABLES = (
    "series", "import", "fit", "reversibility", "internal_standard", "technique", "voltammogram",
    "point",
)  # fmt: skip
MAX_COMPLEXES_LIMIT = 8


def _is_number(value: object) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def _need_number(value: object, key: str, *, optional: bool = True) -> float | None:
    if value is None and optional:
        return None
    if not _is_number(value) or not math.isfinite(float(value)):
        raise InputError(f"{key} must be a finite number, got {value!r}", key=key)
    return float(value)


def _whole(value: object) -> object:
    """An integral float (``2.0``) as an int, as JSON Schema's "integer" treats it."""
    if isinstance(value, float) and value.is_integer():
        return int(value)
    return value


def _need_text(value: object, key: str) -> None:
    if value is not None and not isinstance(value, str):
        raise InputError(f"{key} must be a text string, got {value!r}", key=key)


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
        _technique.clean_series(self)
        _chem.clean_series(self)
        _electrode.clean_series(self)
        object.__setattr__(
            self,
            "analyte_window_V",
            _standard.potential_window(self.analyte_window_V, "analyte_window_V"),
        )
        _need_text(self.title, "title")
        _need_text(self.reference_electrode, "reference_electrode")
        e = _whole(self.electrons)
        object.__setattr__(self, "electrons", e)
        if isinstance(e, bool) or not isinstance(e, int) or e < 1:
            raise InputError(
                f"electrons must be a positive whole number, got {e!r}", key="electrons"
            )
        t = _need_number(self.temperature_C, "temperature_C", optional=False)
        if not 0.0 <= t <= 100.0:
            raise InputError(
                f"temperature_C must lie within 0–100 °C, got {t:g}", key="temperature_C"
            )
        object.__setattr__(self, "temperature_C", t)
        m = _need_number(self.metal_total_M, "metal_total_M")
        if m is not None and m <= 0:
            raise InputError(
                f"metal_total_M must be positive (mol/L), got {m:g}", key="metal_total_M"
            )
        object.__setattr__(self, "metal_total_M", m)
        object.__setattr__(
            self, "E_half_free_V", _need_number(self.E_half_free_V, "E_half_free_V")
        )
        s = _need_number(self.E_half_free_stderr_V, "E_half_free_stderr_V")
        if s is not None and s < 0:
            raise InputError(
                f"E_half_free_stderr_V must be >= 0 V, got {s:g}", key="E_half_free_stderr_V"
            )
        if s is not None and self.E_half_free_V is None:
            raise InputError(
                "E_half_free_stderr_V is given without E_half_free_V; add "
                "E_half_free_V or remove the standard error",
                key="E_half_free_stderr_V",
            )
        object.__setattr__(self, "E_half_free_stderr_V", s)

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
        _chem.clean_fit(self)
        object.__setattr__(self, "max_protons", _variables.clean_max_protons(self.max_protons))
        if self.half_wave_source not in HALF_WAVE_SOURCES:
            raise InputError(
                'half_wave_source must be "peaks", "curve" or "auto", got '
                f"{self.half_wave_source!r}",
                key="half_wave_source",
            )
        r = self.curve_diffusion_ratio
        if r == "fit":
            raise InputError(
                'curve_diffusion_ratio cannot be "fit": a single curve at a planar electrode '
                "does not determine D_R/D_O (it trades exactly against k0); give the ratio as "
                "a number, or leave it out for 1",
                key="curve_diffusion_ratio",
            )
        if not _is_number(r) or not 0.1 <= float(r) <= 10.0:
            raise InputError(
                f"curve_diffusion_ratio must be a number 0.1–10 (D_R/D_O), got {r!r}",
                key="curve_diffusion_ratio",
            )
        object.__setattr__(self, "curve_diffusion_ratio", float(r))
        shared = self.global_shared
        if not isinstance(shared, list | tuple) or not all(
            isinstance(x, str) and x in GLOBAL_SHARED_NAMES for x in shared
        ):
            raise InputError(
                f'global_shared must be a list of "alpha" and/or "charging", got {shared!r}',
                key="global_shared",
            )
        object.__setattr__(self, "global_shared", tuple(dict.fromkeys(shared)))
        if shared and self.global_fit is not True:
            raise InputError(
                "global_shared applies to the global curve fit: set global = true too, or "
                "leave global_shared out",
                key="global_shared",
            )
        if not isinstance(self.global_fit, bool):
            raise InputError(
                f"global must be true or false, got {self.global_fit!r}", key="global"
            )
        if self.model not in _variables.MODELS:
            raise InputError(
                f"model must be 'lingane', 'stepwise', 'proton' or 'temperature', got "
                f"{self.model!r}",
                key="model",
            )
        j = _whole(self.max_complexes)
        object.__setattr__(self, "max_complexes", j)
        if isinstance(j, bool) or not isinstance(j, int) or not 1 <= j <= MAX_COMPLEXES_LIMIT:
            raise InputError(
                f"max_complexes must be a whole number 1–{MAX_COMPLEXES_LIMIT}, got {j!r}",
                key="max_complexes",
            )
        if not isinstance(self.exclude_non_nernstian, bool):
            raise InputError(
                f"exclude_non_nernstian must be true or false, got {self.exclude_non_nernstian!r}",
                key="exclude_non_nernstian",
            )


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
        Total ligand concentration, mol/L (>= 0).
    scan_rate_V_s : float or None
        Scan rate, V/s (> 0), else taken from a time column.
    import_options : ImportOptions
        Series-wide ``[import]`` merged with this table's own import keys.
    label : str or None
        Free text for legends.
    pH : float or None
        pH of this solution (stepwise model with ligand_pKa), else the series value.
    resistance_ohm : float or None
        Uncompensated resistance for this file, Ω, else the series value.
    temperature_C : float or None
        This solution's temperature, °C (0–100): the file is analysed at it (a temperature
        series); None: the series value.
    rotation_rate_rpm : float or None
        Rotation rate of a disc electrode, revolutions per minute (waves).
    """

    file: Path
    name: str
    ligand_M: float
    scan_rate_V_s: float | None = None
    import_options: ImportOptions = ImportOptions()
    label: str | None = None
    pH: float | None = None
    resistance_ohm: float | None = None
    temperature_C: float | None = None
    rotation_rate_rpm: float | None = None

    def __post_init__(self) -> None:
        object.__setattr__(
            self, "rotation_rate_rpm", _technique.rotation_rate(self.rotation_rate_rpm)
        )
        object.__setattr__(self, "pH", _chem.optional_pH(self.pH))
        object.__setattr__(
            self, "temperature_C", _variables.optional_temperature_C(self.temperature_C)
        )
        object.__setattr__(
            self,
            "resistance_ohm",
            _electrode.positive(self.resistance_ohm, "resistance_ohm", "Ω", allow_zero=True),
        )
        _need_text(self.label, "label")
        if not isinstance(self.name, str) or not self.name.strip():
            raise InputError(
                f"file must be a non-empty text string, got {self.name!r}", key="file"
            )
        c = _need_number(self.ligand_M, "ligand_M", optional=False)
        if c < 0:
            raise InputError(f"ligand_M must be >= 0 mol/L, got {c:g}", key="ligand_M")
        object.__setattr__(self, "ligand_M", c)
        v = _need_number(self.scan_rate_V_s, "scan_rate_V_s")
        if v is not None and v <= 0:
            raise InputError(
                f"scan_rate_V_s must be positive (V/s), got {v:g}", key="scan_rate_V_s"
            )
        object.__setattr__(self, "scan_rate_V_s", v)
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
    temperature model only).
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

    def __post_init__(self) -> None:
        entries = tuple(self.voltammograms)
        if not entries and not self.points:
            raise InputError(
                "a series needs at least one voltammogram or [[point]]", source=str(self.path)
            )
        object.__setattr__(self, "voltammograms", entries)
        object.__setattr__(self, "points", tuple(self.points))


class _Locator:
    """Line numbers of tables and keys in the raw TOML text (best effort)."""

    def __init__(self, text: str) -> None:
        self.lines = split_lines(text)

    def _table_start(self, table: str, index: int | None) -> int | None:
        pattern = (
            re.compile(rf"^\s*\[\[\s*{table}\s*\]\]")
            if index is not None
            else re.compile(rf"^\s*\[\s*{table}\s*\]")
        )
        seen = 0
        for k, line in enumerate(self.lines):
            if pattern.match(line):
                seen += 1
                if index is None or seen == index:
                    return k
        return None

    def line(self, table: str | None, key: str | None = None, index: int | None = None):
        start = -1 if table is None else self._table_start(table, index)
        if start is None:
            return None
        if key is None:
            return start + 1
        key_re = re.compile(rf"^\s*[\"']?{re.escape(key)}[\"']?\s*=")
        for k in range(start + 1, len(self.lines)):
            if k > start + 1 and table is not None and re.match(r"^\s*\[", self.lines[k]):
                break
            if table is None and re.match(r"^\s*\[", self.lines[k]):
                break
            if key_re.match(self.lines[k]):
                return k + 1
        return start + 1 if table is not None else None


class _Loader:
    def __init__(self, path: Path, text: str) -> None:
        self.path = path
        self.source = str(path)
        self.where = _Locator(text)

    def fail(self, message: str, keypath: str, line: int | None) -> InputError:
        return InputError(f"{keypath}: {message}", source=self.source, line=line, key=keypath)

    def check_keys(self, table: dict, valid: tuple[str, ...], name: str, index: int | None):
        for key in table:
            if key in valid:
                continue
            close = difflib.get_close_matches(key, valid, n=1, cutoff=0.6)
            hint = f"did you mean {close[0]!r}?" if close else "valid keys: " + ", ".join(valid)
            label = f"[[{name}]] #{index}" if index is not None else f"[{name}]"
            if name == "":
                label = "top level"
            raise self.fail(
                f"unknown key {key!r} in {label}; {hint}",
                self.keypath(name, key, index),
                self.where.line(name or None, key, index),
            )

    @staticmethod
    def keypath(table: str, key: str | None, index: int | None) -> str:
        base = f"{table}[{index}]" if index is not None else table
        if not base:
            return key or ""
        return f"{base}.{key}" if key else base

    def table(self, data: dict, name: str) -> dict:
        value = data.get(name, {})
        if not isinstance(value, dict):
            raise self.fail(
                f"must be a table ([{name}]), got {value!r}", name, self.where.line(None, name)
            )
        return value

    def build(self, cls, values: dict, table: str, index: int | None = None):
        try:
            return cls(**values)
        except InputError as exc:
            key = exc.key
            raise self.fail(
                exc.message, self.keypath(table, key, index), self.where.line(table, key, index)
            ) from None
        except ValueError as exc:
            # A record outside cvfit.io (ReversibilityCriteria) names the field in words.
            key = next((k for k in values if str(exc).startswith(k)), None)
            raise self.fail(
                str(exc), self.keypath(table, key, index), self.where.line(table, key, index)
            ) from None

    def require(self, values: dict, key: str, table: str, index: int | None = None) -> None:
        if key not in values:
            raise self.fail(
                "required key is missing; add it to the table",
                self.keypath(table, key, index),
                self.where.line(table, None, index),
            )


def _renamed(table: dict, names: dict[str, str]) -> dict:
    """*table* with keys that are Python keywords renamed to their field names."""
    return {names.get(k, k): v for k, v in table.items()}


def _whole_import(table: dict) -> dict:
    keys = ("potential_column", "current_column", "time_column", "cycle")
    return {k: _whole(v) if k in keys else v for k, v in table.items()}


def _read(path: Path) -> tuple[str, dict[str, Any]]:
    source = str(path)
    raw = read_regular_file(
        path,
        limit=MAX_MANIFEST_BYTES,
        what="manifest",
        missing="manifest not found; check the path",
        folder="this is a folder; name the manifest .toml file",
    )
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(
            f"the manifest is not UTF-8 text (byte {exc.start}); save it as UTF-8",
            source=source,
            line=raw.count(b"\n", 0, exc.start) + 1,
        ) from None
    try:
        return text, tomllib.loads(text)
    except RecursionError:
        raise InputError(
            "the TOML is nested too deeply to read (arrays or tables inside one another "
            "hundreds of levels deep); a manifest needs two levels: fix the manifest",
            source=source,
        ) from None
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
        line = int(m.group(1)) if m else None
        what = msg[: m.start()].strip() if m else msg
        if m is None and "(at end of document)" in msg:
            line = max(len(split_lines(text)), 1)
            what = msg.replace("(at end of document)", "at the end of the file").strip()
        col = f" (column {m.group(2)})" if m else ""
        raise InputError(
            f"TOML syntax error{col}: {what}; fix the manifest", source=source, line=line
        ) from None


def load_manifest(path: str | os.PathLike[str]) -> Manifest:
    """Read and check a series manifest.

    Parameters
    ----------
    path : path-like
        The TOML file. Voltammogram files are resolved against its folder.

    Returns
    -------
    Manifest

    Raises
    ------
    InputError
        Missing or unreadable manifest, TOML syntax error, unknown key (with the closest
        valid key), missing required key, wrong type or range, a listed file that does not
        exist, the same file listed twice, or no voltammogram at all.
    """
    p = Path(path)
    text, data = _read(p)
    try:
        return _check(p, text, data)
    except RecursionError:  # a value nested deeply enough to pass tomllib, not our checks
        raise InputError(
            "a value is nested too deeply (arrays inside one another hundreds of levels "
            "deep); fix the manifest",
            source=str(p),
        ) from None


def _check(p: Path, text: str, data: dict[str, Any]) -> Manifest:
    ld = _Loader(p, text)
    folder = p.resolve().parent
    ld.check_keys(data, TABLES, "", None)
    series = ld.table(data, "series")
    if "series" not in data:
        raise ld.fail(
            "the manifest needs a [series] table with at least electrons = n", "series", None
        )
    ld.check_keys(series, SERIES_KEYS, "series", None)
    ld.require(series, "electrons", "series")
    series = dict(series)
    where = {"value": series.pop("reference_at", None)}
    reference_at = ld.build(_variables.check_reference_at, where, "series")
    series_settings = ld.build(SeriesSettings, {"title": p.stem, **series}, "series")
    imp = ld.table(data, "import")
    ld.check_keys(imp, IMPORT_KEYS, "import", None)
    imp = _whole_import(imp)
    import_options = ld.build(ImportOptions, imp, "import")
    fit = ld.table(data, "fit")
    ld.check_keys(fit, FIT_KEYS, "fit", None)
    fit_settings = ld.build(FitSettings, _renamed(fit, {"global": "global_fit"}), "fit")
    rev = ld.table(data, "reversibility")
    ld.check_keys(rev, REVERSIBILITY_KEYS, "reversibility", None)
    for key, value in rev.items():
        if not _is_number(value):
            raise ld.fail(
                f"must be a number, got {value!r}",
                f"reversibility.{key}",
                ld.where.line("reversibility", key),
            )
    criteria = ld.build(ReversibilityCriteria, rev, "reversibility")
    standard = _load_standard(ld, data, series_settings)
    points = _variables.load_points(ld, data, fit_settings.model)
    if points and fit_settings.global_fit:
        raise ld.fail(
            "the global curve fit needs a voltammogram for every E½; leave out [[point]] "
            "tables or set global = false",
            "fit.global",
            ld.where.line("fit", "global"),
        )
    technique = _technique.load_technique(
        ld, data, series_settings.technique, fit_settings.global_fit
    )
    entries_raw = data.get("voltammogram")
    if entries_raw is None and points:
        entries_raw = []  # a series of [[point]] tables only
    elif entries_raw is None or entries_raw == []:
        raise ld.fail(
            "no [[voltammogram]] tables; list at least one file (or E½ values as [[point]] "
            "tables)",
            "voltammogram",
            None,
        )
    if not isinstance(entries_raw, list) or not all(isinstance(e, dict) for e in entries_raw):
        raise ld.fail(
            "write one [[voltammogram]] table (double brackets) per file",
            "voltammogram",
            ld.where.line("voltammogram"),
        )
    entries = []
    seen: dict[tuple[Path, object], int] = {}
    for index, raw in enumerate(entries_raw, start=1):
        ld.check_keys(raw, ENTRY_KEYS, "voltammogram", index)
        ld.require(raw, "file", "voltammogram", index)
        if _variables.VARIABLE_OF_MODEL[fit_settings.model] == "ligand_M":
            ld.require(raw, "ligand_M", "voltammogram", index)
        per_file = _whole_import({k: raw[k] for k in IMPORT_KEYS if k in raw})
        options = ld.build(ImportOptions, {**imp, **per_file}, "voltammogram", index)
        name = raw["file"]
        if not isinstance(name, str) or not name.strip():
            raise ld.fail(
                f"must be a non-empty text string, got {name!r}",
                f"voltammogram[{index}].file",
                ld.where.line("voltammogram", "file", index),
            )
        try:
            resolved = (folder / name).resolve()
        except (RuntimeError, OSError, ValueError):  # a symbolic link loop, a NUL byte
            raise ld.fail(
                f"file {name!r} cannot be resolved (a symbolic link loop or a bad name); "
                "name the data file itself",
                f"voltammogram[{index}].file",
                ld.where.line("voltammogram", "file", index),
            ) from None
        entry = ld.build(
            VoltammogramEntry,
            {
                "file": resolved,
                "name": name,
                "ligand_M": raw.get("ligand_M", 0.0),
                "scan_rate_V_s": raw.get("scan_rate_V_s"),
                "import_options": options,
                "label": raw.get("label"),
                "pH": raw.get("pH"),
                "resistance_ohm": raw.get("resistance_ohm"),
                "temperature_C": raw.get("temperature_C"),
                "rotation_rate_rpm": raw.get("rotation_rate_rpm"),
            },
            "voltammogram",
            index,
        )
        key = (resolved, options.cycle)
        if not resolved.is_file() or key in seen:
            # the line is looked up only for the message: scanning the manifest for every
            # entry made loading a 1 000-file manifest quadratic
            file_line = ld.where.line("voltammogram", "file", index)
        if not resolved.is_file():
            if resolved.exists():
                raise ld.fail(
                    f"file {name!r} is not a regular file (a folder, FIFO, device or socket: "
                    f"{resolved}); list the data files themselves",
                    f"voltammogram[{index}].file",
                    file_line,
                )
            raise ld.fail(
                f"file {name!r} not found (looked for {resolved}); check the name, paths are "
                "relative to the manifest's folder",
                f"voltammogram[{index}].file",
                file_line,
            )
        if key in seen:
            raise ld.fail(
                f"file {name!r} is listed twice with the same cycle (also "
                f"voltammogram[{seen[key]}]); list each file once, or each cycle of it once "
                "with its own cycle = N",
                f"voltammogram[{index}].file",
                file_line,
            )
        seen[key] = index
        entries.append(entry)
    entries = _name_cycles(entries)
    _variables.check_variable_series(ld, tuple(entries), points, fit_settings.model)
    return Manifest(
        path=p.resolve(),
        folder=folder,
        series=series_settings,
        import_options=import_options,
        fit=fit_settings,
        reversibility=criteria,
        voltammograms=tuple(entries),
        internal_standard=standard,
        points=points,
        reference_at=reference_at,
        technique=technique,
    )


def _name_cycles(entries: list[VoltammogramEntry]) -> list[VoltammogramEntry]:
    """Entries of one file listed once per cycle get names that tell them apart
    (``"run.csv [cycle 2]"``); every other entry keeps its file name."""
    count: dict[Path, int] = {}
    for e in entries:
        count[e.file] = count.get(e.file, 0) + 1
    return [
        replace(e, name=f"{e.name} [cycle {e.import_options.cycle}]") if count[e.file] > 1 else e
        for e in entries
    ]


def _load_standard(
    ld: _Loader, data: dict, series: SeriesSettings
) -> _standard.InternalStandard | None:
    """The ``[internal_standard]`` table, checked against ``series.analyte_window_V``."""
    if "internal_standard" not in data:
        return None
    table = ld.table(data, "internal_standard")
    ld.check_keys(table, _standard.INTERNAL_STANDARD_KEYS, "internal_standard", None)
    ld.require(table, "window_V", "internal_standard")
    standard = ld.build(_standard.InternalStandard, table, "internal_standard")
    analyte = series.analyte_window_V
    if analyte is None:
        raise ld.fail(
            "required with [internal_standard]: give the analyte's potential range [low, high] "
            "so that its peaks are not confused with the standard's",
            "series.analyte_window_V",
            ld.where.line("series"),
        )
    if not _standard.windows_apart(analyte, standard.window_V):
        raise ld.fail(
            f"the standard's window {list(standard.window_V)} overlaps "
            f"series.analyte_window_V {list(analyte)}; give two separate potential ranges",
            "internal_standard.window_V",
            ld.where.line("internal_standard", "window_V"),
        )
    return standard


def resistance_for(entry: object, series: object) -> float | None:
    """R_u of one file: its own ``resistance_ohm``, else the series value, else None."""
    own = getattr(entry, "resistance_ohm", None)
    return own if own is not None else getattr(series, "resistance_ohm", None)
