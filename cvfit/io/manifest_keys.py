"""Every key of the series manifest, declared once.

The loader's checks, ``cvfit/schemas/series.schema.json`` and the key tables of
docs/manifest.md are all made from these declarations (:mod:`cvfit.io.manifest_spec`);
``python scripts/manifest_reference.py`` rewrites the schema and the docs' tables, and
``tests/test_manifest_schema.py`` fails when either differs from what they give. Defaults
are the record fields' own (:func:`~cvfit.io.manifest_spec.bind` reads them). How to add
a key: docs/design.md, "Contracts", "Manifest".
"""

from __future__ import annotations

from cvfit.io.manifest_spec import Key, Table

__all__ = [
    "SERIES",
    "IMPORT",
    "FIT",
    "REVERSIBILITY",
    "INTERNAL_STANDARD",
    "TECHNIQUE",
    "TITRATION",
    "VOLTAMMOGRAM",
    "POINT",
    "TABLES",
    "MODELS",
    "REFERENCE_AT",
    "MAX_PROTONS_LIMIT",
    "TECHNIQUES",
    "TECHNIQUE_SETTINGS",
    "MAX_AMPLITUDE_V",
    "MAX_COMPLEXES_LIMIT",
    "GLOBAL_SHARED_NAMES",
    "HALF_WAVE_SOURCES",
    "BULK_FORMS",
    "MAX_QUIET_TIME_S",
    "MAX_ABS_POTENTIAL_V",
    "POTENTIAL_UNIT_NAMES",
    "CURRENT_UNIT_NAMES",
    "DELIMITERS",
]

MAX_COMPLEXES_LIMIT = 8
#: ``[fit] model`` values (the registry of cvfit.titration holds the same names, tested).
MODELS = ("lingane", "stepwise", "proton", "temperature")
#: ``[series] reference_at`` (the temperature model's names, tested).
REFERENCE_AT = ("constant_temperature", "same_temperature")
MAX_PROTONS_LIMIT = 4
#: What ``[series] technique`` may name: cyclic, differential-pulse and square-wave
#: voltammetry, and steady-state or sampled-current waves.
TECHNIQUES = ("cv", "dpv", "swv", "wave")
#: Each technique's ``[technique]`` settings: name → required.
TECHNIQUE_SETTINGS: dict[str, dict[str, bool]] = {
    "cv": {},
    "dpv": {
        "pulse_amplitude_V": True,
        "pulse_width_s": True,
        "step_V": True,
        "period_s": False,
        "pulse_current_column": False,
        "base_current_column": False,
    },
    "swv": {
        "amplitude_V": True,
        "frequency_Hz": True,
        "step_V": True,
        "forward_current_column": False,
        "reverse_current_column": False,
    },
    "wave": {},
}
#: Largest pulse or square-wave amplitude and staircase step accepted, V.
MAX_AMPLITUDE_V = 1.0
#: What the global curve fit may share between files (the same names as
#: cvfit.techniques.cv.curve.global_fit.SHARED_NAMES, tested).
GLOBAL_SHARED_NAMES = ("alpha", "charging")
#: Where E½ of each file comes from.
HALF_WAVE_SOURCES = ("peaks", "curve", "auto")
#: What ``bulk_form`` may say.
BULK_FORMS = ("ox", "red")
#: Longest quiet time accepted, s (common practice: seconds to a minute; an hour is a typo).
MAX_QUIET_TIME_S = 3600.0
#: Largest magnitude of the E½ assigned to an internal standard, V (electrode potentials
#: in any solvent lie within a few volts; 1e308 would overflow the error budget).
MAX_ABS_POTENTIAL_V = 10.0
#: Unit spellings accepted for ``potential_unit`` and ``current_unit``.
POTENTIAL_UNIT_NAMES: tuple[str, ...] = ("V", "mV")
CURRENT_UNIT_NAMES: tuple[str, ...] = ("A", "mA", "uA", "\u00b5A", "\u03bcA", "nA", "pA")
#: Accepted spellings of a delimiter and the canonical value each one means.
DELIMITERS: dict[str, str] = {
    ",": ",",
    ";": ";",
    "\t": "\t",
    "tab": "\t",
    " ": "whitespace",
    "whitespace": "whitespace",
}
#: Largest magnitude of an ion's charge number accepted.
_MAX_CHARGE = 10.0
_COLUMN = "header text (matched ignoring case and surrounding blanks) or 0-based index"

SERIES = Table("series", "The titration series as a whole.", required=True, keys=(
    Key("electrons", "integer", "n of the couple", low=1, required=True),
    Key("title", "text", "free text, echoed in outputs",
        default_text="the manifest's file name"),
    Key("temperature_C", "number", "cell temperature", unit="°C", low=0, high=100),
    Key("metal_total_M", "number",
        "analytical metal concentration: both models fit the free ligand c_L − (bound "
        "ligands)·c_M; a bound share above 10 % of c_L, or a correction larger than the E½ "
        "noise, is flagged", unit="mol/L", low=0, open_low=True),
    Key("E_half_free_V", "number",
        "E½ of the uncomplexed couple, used when no file has ligand_M = 0", unit="V"),
    Key("E_half_free_stderr_V", "number", "standard error of E_half_free_V", unit="V",
        low=0, needs="E_half_free_V"),
    Key("reference_electrode", "text", "free text naming the reference electrode, echoed "
        "in reports"),
    Key("electrode_area_cm2", "number", "working-electrode area (with analyte_M: D from "
        "Randles–Ševčík peak currents)", unit="cm²", low=0, open_low=True),
    Key("analyte_M", "number", "bulk concentration of the electroactive species (for D "
        "from the peak current)", unit="mol/L", low=0, open_low=True),
    Key("diffusion_cm2_s", "number", "known diffusion coefficient of the species in "
        "solution (for k0)", unit="cm²/s", low=0, open_low=True),
    Key("diffusion_stderr_cm2_s", "number", "standard error of diffusion_cm2_s",
        unit="cm²/s", low=0, needs="diffusion_cm2_s"),
    Key("alpha", "number", "transfer coefficient assumed for kinetics", low=0, high=1,
        open_low=True, open_high=True),
    Key("resistance_ohm", "number", "uncompensated resistance R_u of every file; "
        "potentials are corrected by i·R_u before the peak analysis", unit="Ω", low=0),
    Key("ligand_pKa", "numbers", "stepwise model: pKa values of the ligand's conjugate "
        "acids (any order); with pH the constants are absolute (free unprotonated ligand)"),
    Key("pH", "number", "pH of every solution of the series (a [[voltammogram]] may give "
        "its own)", low=0, high=14),
    Key("ionic_strength_M", "number", "ionic strength; recorded, and with the two charges "
        "used for Davies activity corrections (approximate)", unit="mol/L", low=0),
    Key("metal_charge", "integer", "charge number of the free metal ion in its oxidised "
        "form (Davies corrections)", low=-_MAX_CHARGE, high=_MAX_CHARGE),
    Key("ligand_charge", "integer", "charge number of the free, unprotonated ligand "
        "(Davies corrections)", low=-_MAX_CHARGE, high=_MAX_CHARGE),
    Key("bound_ligand_number", "number", "ligands bound per metal, given instead of the "
        "self-consistent mass balance: free ligand = α_L·(total − n·metal_total_M)",
        low=0, needs="metal_total_M"),
    Key("analyte_window_V", "window", "the analyte's peaks are measured in this potential "
        "range only (required with [internal_standard]; must not overlap its window_V)",
        unit="V"),
    Key("bulk_form", "choice", "curve fit: the form present in the solution, for the "
        "model's initial state", choices=BULK_FORMS,
        default_text="detected from each record's start (stated in the flag "
        "`CURVE_FIT_INITIAL_STATE`)",
        hint="leave it out to detect it from the record's start"),
    Key("quiet_time_s", "number", "curve fit: time the electrode was held at the first "
        "recorded potential before the record", unit="s", low=0, high=MAX_QUIET_TIME_S,
        default_text="from the time column where its clock starts before the first "
        "sample; a hold recorded in the file stands for itself; else 2 s, stated in the "
        "flag"),
    Key("technique", "choice", "how the files were recorded: cyclic (cv), differential-pulse "
        "(dpv) or square-wave voltammetry (swv), or steady-state / sampled-current waves "
        "(wave); dpv and swv need a [technique] table", choices=TECHNIQUES),
    Key("reference_at", "choice", "temperature model: where the reference electrode is held "
        "— \"constant_temperature\" (a non-isothermal cell: nF·dE½/dT is the reaction entropy "
        "ΔS°rc of the couple) or \"same_temperature\" (an isothermal cell: the entropy of the "
        "cell reaction)", choices=REFERENCE_AT, field=""),
    Key("files_table", "text", "a CSV table listing the files instead of [[voltammogram]] "
        "tables (path relative to the manifest's folder): a column file, and ligand_M or "
        "added_mL, optional scan_rate_V_s, label, exclude and other [[voltammogram]] keys; "
        "one row per file, in order; an empty cell is not given", nonempty=True, field=""),
))  # fmt: skip

IMPORT = Table("import", "How to read the files (series-wide); every key may also be "
    "given in a [[voltammogram]] table, which then takes precedence. Absent keys are "
    "detected from the file.", keys=(
    Key("potential_column", "column", f"potential column: {_COLUMN} (a name two columns "
        "share is refused: give the index)",
        default_text="detected (see *How a data file is read*)"),
    Key("current_column", "column", f"current column: {_COLUMN}", default_text="detected"),
    Key("time_column", "column", f"time column: {_COLUMN}", default_text="detected"),
    Key("potential_unit", "choice", "unit of the potential column; must agree with the "
        "column label's unit", choices=POTENTIAL_UNIT_NAMES,
        default_text="from the label, else V"),
    Key("current_unit", "choice", "unit of the current column (uA, µA with the micro sign "
        "and μA with Greek mu are all micro); must agree with the column label's unit",
        choices=CURRENT_UNIT_NAMES, default_text="from the label, else A"),
    Key("anodic_current", "choice", "sign the file gives anodic current: positive (IUPAC) "
        "or negative (polarographic convention; the current is flipped on import); when it "
        "is not set and a file has no forward peak but its mirrored trace has one, the "
        "NO_FORWARD_PEAK flag says so",
        choices=("positive", "negative"), default_text="positive"),
    Key("delimiter", "choice", "column separator (\"tab\" for a tab, \" \" for runs of "
        "blanks)", choices=(",", ";", "\t", "whitespace"),
        aliases={"tab": "\t", " ": "whitespace"}, default_text="sniffed"),
    Key("decimal", "choice", "decimal mark", choices=(".", ","), default_text="sniffed"),
    Key("cycle", "cycle", "cycle analysed: 1-based cycle number or the last complete one"),
))  # fmt: skip

FIT = Table("fit", "Titration model settings.", keys=(
    Key("model", "choice", "lingane: straight line of the E½ shift against log10[L]; "
        "stepwise: β_1 … β_N from DeFord–Hume F-functions; proton: the pKa of both forms "
        "from E½ against pH; temperature: dE½/dT and the reaction entropy from E½ against "
        "temperature", choices=MODELS),
    Key("max_complexes", "integer", "stepwise: highest number of complexes tried",
        low=1, high=MAX_COMPLEXES_LIMIT),
    Key("fixed_log10_beta_ox", "numbers", "stepwise: known log10 β_j of the oxidised form; "
        "the reduced form's are fitted (not with fixed_log10_beta_red)"),
    Key("fixed_log10_beta_red", "numbers", "stepwise: known log10 β_j of the reduced form; "
        "the oxidised form's are fitted. Neither: the reduced form is not complexed"),
    Key("current_ratio_correction", "flag", "stepwise: add DeFord–Hume's ln(Is/Ic) from the "
        "reduction peak currents (÷√v) to the E½ shift"),
    Key("exclude_non_nernstian", "flag", "keep voltammograms that fail the reversibility "
        "screen out of the fit (they are still reported)"),
    Key("global", "flag", "also fit all curves at once with E½ tied by the Lingane line "
        "or, with model = \"stepwise\", by the DeFord–Hume model (constants with χ²-profile "
        "intervals, compared with the two-step result)", field="global_fit"),
    Key("global_shared", "choices", "global fit: what all files share — \"alpha\" (one "
        "transfer coefficient for the curve-fitted files), \"charging\" (one double-layer "
        "capacitance for every file); needs global = true", choices=GLOBAL_SHARED_NAMES,
        default_text="`[]` (each file its own)"),
    Key("curve_diffusion_ratio", "number", "D_R/D_O of the curve fit's model, not fitted: "
        "one curve at a planar electrode cannot tell it (it trades exactly against k0); "
        "E½ does not depend on it, k0 does, by (assumed/true)^(α/2)", low=0.1, high=10),
    Key("half_wave_source", "choice", "where E½ comes from: the peaks, the fit of the whole "
        "curve (every file not irreversible), or (auto) the peaks for files that pass the "
        "screen and the curve fit for quasi-reversible ones, also those failed by their "
        "scan-rate study", choices=HALF_WAVE_SOURCES),
    Key("max_protons", "integer", "pH model: most protonation steps tried per oxidation "
        "state", low=1, high=MAX_PROTONS_LIMIT),
))  # fmt: skip

REVERSIBILITY = Table("reversibility", "Margins of the reversibility screen (the defaults "
    "are common practice; see docs/methods.md).", keys=(
    Key("n_delta_Ep_margin_V", "number", "allowed excess of n·ΔEp over its Nernstian value",
        unit="V", low=0, open_low=True),
    Key("n_peak_width_margin_V", "number", "allowed deviation of n·|Ep − Ep/2| from "
        "2.20 RT/F", unit="V", low=0, open_low=True),
    Key("current_ratio_margin", "number", "allowed |ipa/ipc − 1|", low=0, open_low=True),
))  # fmt: skip

INTERNAL_STANDARD = Table("internal_standard", "An inert reversible reference couple in "
    "every solution: the analyte's E½ is reported against it.", keys=(
    Key("window_V", "window", "potential range of the internal reference couple's wave in "
        "every file", unit="V", required=True),
    Key("E_half_V", "number", "value assigned to the standard's E½ on the reported scale: "
        "every E½ (and E_half_free_V, if given) is then E½,analyte − E½,standard + "
        "E_half_V", unit="V",
        low=-MAX_ABS_POTENTIAL_V, high=MAX_ABS_POTENTIAL_V,
        default_text="`0.0` (potentials against the standard)"),
    Key("electrons", "integer", "n of the reference couple", low=1),
))  # fmt: skip

TITRATION = Table("titration", "A titration by additions: the cell's starting solution and "
    "the stock added to it; each [[voltammogram]] then gives added_mL and cvfit computes its "
    "total ligand and metal with the dilution (volumes additive).", keys=(
    Key("start_volume_mL", "number", "volume in the cell before any addition", unit="mL",
        low=0, open_low=True, required=True),
    Key("metal_M", "number", "the cell's initial total metal concentration", unit="mol/L",
        low=0, open_low=True, required=True),
    Key("ligand_M", "number", "the cell's initial total ligand concentration", unit="mol/L",
        low=0),
    Key("ligand_stock_M", "number", "ligand concentration of the stock added", unit="mol/L",
        low=0, open_low=True, required=True),
    Key("metal_stock_M", "number", "metal concentration of the stock added (equal to "
        "metal_M keeps the metal constant)", unit="mol/L", low=0),
))  # fmt: skip

VOLTAMMOGRAM = Table("voltammogram", "One exported voltammogram: its file, the total "
    "ligand concentration and optional per-file settings.", array=True,
    includes=(IMPORT,), keys=(
    Key("file", "text", "path of the export, relative to the manifest's folder",
        required=True, field="name"),
    Key("ligand_M", "number", "total ligand concentration (required for lingane and "
        "stepwise; for proton and temperature the same in every solution)", unit="mol/L",
        low=0),
    Key("added_mL", "number", "titration by additions: cumulative volume of stock added "
        "before this record (needs [titration]; instead of ligand_M)", unit="mL", low=0),
    Key("metal_M", "number", "this solution's total metal concentration, given directly "
        "(it overrides the one [titration] computes and [series] metal_total_M)",
        unit="mol/L", low=0, open_low=True),
    Key("scan_rate_V_s", "number", "scan rate; else derived from a time column, else a "
        "scan rate the file's metadata states (a stated rate more than 5 % from the one "
        "used is flagged SCAN_RATE_METADATA_DISAGREES)", unit="V/s", low=0, open_low=True),
    Key("label", "text", "free text for legends and tables"),
    Key("exclude", "text", "leave this file out of the fits, for the reason given (e.g. "
        "\"bubble on the electrode\"): it is still read, analysed and shown, greyed with "
        "the reason", nonempty=True, hint="give the reason as text, or leave the key out"),
    Key("pH", "number", "pH of this solution: the titration variable of model = \"proton\"; "
        "for the stepwise model with ligand_pKa the protonation of the ligand", low=0,
        high=14, default_text="the series value"),
    Key("resistance_ohm", "number", "uncompensated resistance R_u of this file", unit="Ω",
        low=0, default_text="the series value"),
    Key("temperature_C", "number", "this solution's temperature: the file is analysed at it "
        "(temperature series); the titration variable of model = \"temperature\"", unit="°C",
        low=0, high=100, default_text="the series value"),
    Key("rotation_rate_rpm", "number", "rotation rate of a disc electrode for this file; "
        "with several rates for one solution the Levich exponent is reported (waves)",
        unit="rpm", low=0, open_low=True),
))  # fmt: skip

_COLUMN_OF = "column, by header text or 0-based index, of the current sampled"
TECHNIQUE = Table("technique", "Settings of the technique named by [series] technique "
    "(dpv, swv): which keys each technique takes, and which it needs, is "
    "TECHNIQUE_SETTINGS.", keys=(
    Key("pulse_amplitude_V", "number", "DPV: pulse height ΔE, signed: in the scan's "
        "direction (negative for a cathodic scan)", unit="V",
        low=-MAX_AMPLITUDE_V, high=MAX_AMPLITUDE_V, nonzero=True,
        hint="signed: in the scan's direction, and not 0"),
    Key("pulse_width_s", "number", "DPV: pulse duration", unit="s", low=0, open_low=True),
    Key("step_V", "number", "DPV, SWV: staircase step (its size)", unit="V", low=0,
        high=MAX_AMPLITUDE_V, open_low=True),
    Key("period_s", "number", "DPV: time from one pulse to the next (when known)", unit="s",
        low=0, open_low=True),
    Key("amplitude_V", "number", "SWV: square-wave amplitude (half the peak-to-peak "
        "height)", unit="V", low=0, high=MAX_AMPLITUDE_V, open_low=True),
    Key("frequency_Hz", "number", "SWV: square-wave frequency", unit="Hz", low=0,
        open_low=True),
    Key("pulse_current_column", "column", f"DPV: {_COLUMN_OF} at the end of the pulse"),
    Key("base_current_column", "column", f"DPV: {_COLUMN_OF} just before the pulse"),
    Key("forward_current_column", "column", "SWV: column of the forward current"),
    Key("reverse_current_column", "column", "SWV: column of the reverse current"),
))  # fmt: skip

POINT = Table("point", "An E½ measured elsewhere (another technique, another program, a "
    "paper), one table per solution, instead of or beside files; the model's variable "
    "(ligand_M, pH or temperature_C) is required.", array=True, keys=(
    Key("ligand_M", "number", "total ligand concentration", unit="mol/L", low=0),
    Key("pH", "number", "pH of the solution", low=0, high=14),
    Key("temperature_C", "number", "temperature of the solution", unit="°C", low=0,
        high=100),
    Key("E_half_V", "number", "E½ on the scale of the series' files (against the internal "
        "standard when there is one)", unit="V", required=True),
    Key("E_half_stderr_V", "number", "its standard error; when left out the fit estimates "
        "it from the scatter of the points (flag E_HALF_ERROR_FROM_SCATTER)", unit="V", low=0,
        open_low=True,
        hint="leave it out when unknown"),
    Key("label", "text", "free text for legends and tables"),
))  # fmt: skip

#: The tables, in the order of the docs and the schema.
TABLES: tuple[Table, ...] = (
    SERIES, IMPORT, FIT, REVERSIBILITY, INTERNAL_STANDARD, TECHNIQUE, TITRATION, VOLTAMMOGRAM,
    POINT,
)  # fmt: skip
