"""Catalogue of every flag code cvfit can raise: its meaning and its severity.

:class:`cvfit.flags.Flag` accepts only the codes listed here (and only with the severity
listed), so the catalogue, the results schema (``schemas/results.schema.json`` lists the
codes as an enum) and the docs page ``docs/flags.md`` describe exactly the codes a result
can carry. Tests check that the three agree and that every code here is raised somewhere.

Regenerate the docs page with ``python -m cvfit.flag_codes > docs/flags.md``.

Severities: ``info`` — how the result was obtained, no action needed; ``warning`` — the
result stands but deserves a look; ``error`` — the quantity concerned could not be
determined.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

__all__ = ["FLAG_CODES", "FlagCode", "Severity", "SEVERITIES", "render_markdown"]

Severity = Literal["info", "warning", "error"]
SEVERITIES: tuple[Severity, ...] = ("info", "warning", "error")


@dataclass(frozen=True)
class FlagCode:
    """One catalogued flag code.

    Attributes
    ----------
    code : str
        Stable UPPER_SNAKE_CASE identifier.
    severity : {"info", "warning", "error"}
        The severity the code is raised with.
    meaning : str
        What it says, in one or two sentences.
    also : tuple of str
        Other severities the code may carry (a milder case of the same finding).
    """

    code: str
    severity: Severity
    meaning: str
    also: tuple[Severity, ...] = ()

    def __post_init__(self) -> None:
        if not self.code or not self.code.replace("_", "").isalnum() or not self.code.isupper():
            raise ValueError(f"flag code must be UPPER_SNAKE_CASE, got {self.code!r}")
        for s in (self.severity, *self.also):
            if s not in SEVERITIES:
                raise ValueError(f"unknown flag severity {s!r}")

    @property
    def severities(self) -> tuple[Severity, ...]:
        return (self.severity, *self.also)


_I: Severity = "info"
_W: Severity = "warning"
_E: Severity = "error"

_CATALOGUE = (
    # --- import --------------------------------------------------------------------------
    FlagCode("PADDING_ROWS_SKIPPED", _I, "Rows with neither a potential nor a current (only "
             "a counter or other columns filled) were skipped as padding; how many and where "
             "is said."),
    FlagCode("DUPLICATE_COLUMN_NAMES", _W, "Several columns share the name of a column that "
             "was read; which one was read, and why, is said (set the column option to an "
             "index to choose another)."),
    FlagCode("POTENTIAL_UNIT_DOUBTFUL", _W, "The potentials span more than 10 V under a label "
             "that gives no unit: they are probably in mV (set potential_unit = \"mV\")."),
    FlagCode("POTENTIAL_GLITCH", _W, "The potential jumps away and straight back for one "
             "sample (a glitch of the record); the sweeps were divided without it and the "
             "line is named."),
    FlagCode("SCAN_RATE_METADATA_DISAGREES", _W, "The scan rate the file's metadata states "
             "differs by more than 5 % from the manifest's (without one, the time column's), "
             "which is used; both values are given."),
    FlagCode("SCAN_RATE_FROM_FILE", _I, "The scan rate is the one the file's metadata states "
             "(the manifest gives none and the file has no time column)."),
    # --- peak analysis -------------------------------------------------------------------
    FlagCode("NO_FORWARD_PEAK", _E, "No forward peak was found (or the forward sweep is too "
             "short to fit a baseline); E½, ΔEp and the screen are not determinable."),
    FlagCode("CURRENT_SIGN_REVERSED", _W, "The file has no forward peak but its current "
             "with the sign reversed has a clean peak pair: it is probably in the polarographic "
             "convention (cathodic current positive); set anodic_current = \"negative\" in "
             "[import] (or in the file's [[voltammogram]] table)."),
    FlagCode("NO_REVERSE_PEAK", _E, "No reverse peak was found (none above the noise, no "
             "reverse sweep, or no forward baseline to measure it against); ΔEp and ipa/ipc "
             "are not determinable."),
    FlagCode("SHORT_BASELINE", _W, "The foot of the forward wave is short, so the "
             "extrapolated baseline and the peak heights may be off by several per cent."),
    FlagCode("PREVIOUS_TAIL_NOT_MODELLED", _W, "The cycle starts on the decaying current of "
             "the sweep before it, whose decay could not be fitted; the forward peak may be "
             "displaced."),
    FlagCode("CURRENT_RATIO_NOT_DETERMINED", _W, "The cycle does not start at rest, where "
             "Nicholson's current-ratio relation holds; the reverse peak height and ipa/ipc "
             "are not reported."),
    FlagCode("CURRENT_RATIO_FROM_FIRST_CYCLE", _I, "ipa/ipc was taken from cycle 1 of the "
             "same record because the analysed cycle does not start at rest; the reverse "
             "peak height is that ratio times the analysed cycle's forward height."),
    # --- reversibility screen ------------------------------------------------------------
    FlagCode("DELTA_EP_TOO_LARGE", _W, "ΔEp exceeds the Nernstian value by more than the "
             "margin: slow electron transfer or uncompensated resistance."),
    FlagCode("DELTA_EP_TOO_SMALL", _W, "ΔEp is below the Nernstian value by more than the "
             "margin: check n, or adsorption of the couple."),
    FlagCode("PEAK_WIDTH_OFF", _W, "|Ep − Ep/2| of the forward peak departs from the "
             "Nernstian 2.20 RT/nF by more than the margin."),
    FlagCode("CURRENT_RATIO_OFF", _W, "ipa/ipc departs from 1 by more than the margin: a "
             "following chemical reaction, adsorption or slow kinetics."),
    FlagCode("SWITCHING_TOO_CLOSE", _W, "The switching potential lies too close to E½ for "
             "the tabulated Nernstian ΔEp, so ΔEp is not tested."),
    FlagCode("CLASS_REVERSIBLE", _I, "Electron-transfer class of the voltammogram: "
             "reversible (Nernstian), with the numbers behind the verdict."),
    FlagCode("CLASS_QUASI_REVERSIBLE", _W, "Electron-transfer class of the voltammogram: "
             "quasi-reversible, with the numbers behind the verdict."),
    FlagCode("CLASS_IRREVERSIBLE", _W, "Electron-transfer class of the voltammogram: "
             "irreversible, with the numbers behind the verdict."),
    FlagCode("CLASS_NOT_DETERMINABLE", _W, "The electron-transfer class could not be "
             "determined (no forward peak)."),
    # --- uncompensated resistance --------------------------------------------------------
    FlagCode("OHMIC_DROP_CORRECTED", _I, "Potentials were corrected by i·R_u with the R_u "
             "given."),
    FlagCode("OHMIC_CORRECTION_INCOMPLETE", _W, "i_p·R_u is large: a correction after the "
             "measurement leaves part of the ohmic drop in ΔEp; compensate R_u instead."),
    # --- kinetics (ψ, k0) ----------------------------------------------------------------
    FlagCode("KINETICS_NOT_DETERMINABLE", _I, "ψ and k0 are not determinable because ΔEp "
             "needs both peaks."),
    FlagCode("K0_NOT_DETERMINABLE_REVERSIBLE", _I, "The couple is reversible at this scan "
             "rate (ψ > 20): k0 is not determinable, at most a lower bound is given."),
    FlagCode("K0_UPPER_LIMIT_OPEN", _I, "ΔEp is within 1.96 standard errors of the "
             "reversible limit: the 95 % interval of ψ and k0 has no upper end."),
    FlagCode("K0_NEEDS_D", _I, "ψ is determined but k0 is not: no scan rate or no diffusion "
             "coefficient."),
    FlagCode("LAVAGNINI_OUT_OF_RANGE", _I, "n·ΔEp lies outside the range where Lavagnini's "
             "formula follows Nicholson's table; the table was interpolated instead."),
    FlagCode("ALPHA_OUTSIDE_TABLE", _W, "The transfer coefficient assumed lies outside "
             "0.3–0.7, where Nicholson's α = 0.5 table applies; ψ may be off."),
    FlagCode("DELTA_EP_UNCERTAINTY_UNKNOWN", _W, "The peak positions have no standard "
             "error; ψ's uncertainty includes only the table's rounding."),
    FlagCode("D_FROM_REVERSIBLE_FILES", _I, "k0 uses D from the Randles–Ševčík currents of "
             "the series' reversible voltammograms."),
    FlagCode("D_FROM_OTHER_SOLUTION", _I, "k0 uses D from a scan-rate study at another "
             "ligand concentration; complexation may change D."),
    FlagCode("D_FROM_SLOW_PEAK", _W, "D from the Randles–Ševčík current of a peak that is "
             "not reversible is too low, and k0 with it."),
    FlagCode("K0_DOUBTFUL_IR_DROP", _W, "The scan-rate study shows the iR-drop signature: "
             "ψ and k0 measure the ohmic drop more than the electron transfer."),
    # --- scan-rate studies ---------------------------------------------------------------
    FlagCode("SCAN_RATE_RANGE_NARROW", _I, "Few scan rates or a narrow span of them; check "
             "reversibility over more rates spanning 1–2 decades."),
    FlagCode("PEAK_CURRENT_NOT_DIFFUSION_CONTROLLED", _W, "The log-log slope of i_p against "
             "v is not 0.5: adsorption, slow kinetics or iR drop."),
    FlagCode("DELTA_EP_GROWS_WITH_SCAN_RATE", _W, "n·(ΔEp − ΔEp_N) grows with the scan rate: "
             "not Nernstian at these scan rates (the files of the study fail the screen)."),
    FlagCode("IR_DROP_SIGNATURE", _W, "The excess ΔEp grows in proportion to the peak "
             "current: uncompensated resistance (an apparent R_u is given)."),
    FlagCode("SLOW_KINETICS_SIGNATURE", _I, "The excess ΔEp follows Nicholson's working "
             "curve with ψ ∝ v^−½: slow electron transfer."),
    FlagCode("EXCESS_CAUSE_UNDECIDED", _W, "The excess ΔEp fits an iR drop and slow kinetics "
             "alike, or neither passes its own χ² test; no cause is named."),
    FlagCode("IR_DROP_IMPLAUSIBLE", _W, "The R_u the scan-rate study's iR model would need "
             "is far above what the electrode and electrolyte can give: the iR drop is not "
             "named as the cause."),
    # --- curve fit ------------------------------------------------------------------------
    FlagCode("CURVE_FIT_USED", _I, "E½ of this quasi-reversible voltammogram comes from the "
             "fit of the whole curve; the file rejoins the titration fit with that E½."),
    FlagCode("CURVE_FIT_REFUSED", _W, "The curve fit does not describe the curve (reduced χ² "
             "or structured residuals, or no convergence); its numbers are not used."),
    FlagCode("CURVE_FIT_NOT_POSSIBLE", _W, "The curve could not be fitted (for example, "
             "unequal time steps or no scan rate); the reason is given."),
    FlagCode("CURVE_FIT_SYSTEMATIC_RESIDUALS", _W, "The curve fit leaves residuals above "
             "the noise, but its E½ moves little when the background model or the fitted "
             "window changes: the fit is used and that spread is added to the E½ error."),
    FlagCode("CURVE_FIT_INITIAL_STATE", _I, "How the curve fit's initial state was decided: "
             "the bulk form (given or detected from the record's start) and the quiet time "
             "at the first potential (given, from the time column, or assumed)."),
    FlagCode("CURVE_FIT_K0_NEEDS_RU", _I, "k0 is near the reversible end with R_u fitted: the "
             "two trade against each other, so k0 rests on the R_u the curve fixes; give "
             "resistance_ohm for k0 to mean more than that."),
    FlagCode("CURVE_FIT_K0_LOWER_BOUND", _I, "k0 from the curve fit is near the reversible "
             "limit: the χ² profile gives only a lower bound."),
    FlagCode("GLOBAL_FIT_NOT_POSSIBLE", _W, "global = true, but the global curve fit could "
             "not be made (no two-step fit, an internal standard, a file that cannot be "
             "fitted); "
             "the reason is given."),
    FlagCode("GLOBAL_FIT_REFUSED", _W, "The global curve fit's reduced χ² is far above 1: "
             "its constants are not given (the two-step result stands)."),
    FlagCode("GLOBAL_FIT_FILE_LEFT_OUT", _I, "A file whose own curve fit was refused is not "
             "Nernstian and is left out of the global curve fit."),
    FlagCode("CURVE_FIT_D_ASSUMED", _I, "The curve fit's k0 assumes D = 1e-5 cm²/s (no D, "
             "electrode area or analyte concentration given); k0 scales with √D."),
    FlagCode("CURVE_FIT_IRREVERSIBLE", _I, "The voltammogram is irreversible (no usable "
             "reverse peak, classified irreversible, or fitted ψ below 0.01): its E½ is not "
             "taken from the curve fit and it stays out."),
    # --- pulse and steady-state techniques (dpv, swv, wave) ------------------------------
    FlagCode("PULSE_NO_PEAK", _E, "No pulse peak could be measured (too few points across "
             "it, or it lies at the end of the record); the file has no E½."),
    FlagCode("PULSE_WIDTH_NOT_NERNSTIAN", _W, "The peak's half-height width differs from "
             "the reversible width for the program: the couple is not Nernstian on the "
             "pulse's time scale (its E½ is not used)."),
    FlagCode("PULSE_PEAK_ASYMMETRIC", _W, "The peak's half-height crossings are skewed "
             "against the reversible shape: a slow electron transfer (its E½ is not used)."),
    FlagCode("PULSE_PEAK_HEIGHT", _W, "The peak height differs by more than 15 % from the "
             "reversible height for the area, concentration and D of [series]."),
    FlagCode("PULSE_HISTORY_UNKNOWN", _I, "No period_s: the reversible reference leaves out "
             "the earlier steps of the staircase (Parry & Osteryoung's limit)."),
    FlagCode("SWV_COMPONENTS_NOT_NERNSTIAN", _W, "The square wave's forward and reverse peaks "
             "lie away from their reversible places, or their height ratio differs from the "
             "reversible one (its E½ is not used)."),
    FlagCode("COMPONENT_COLUMNS_UNREAD", _W, "The sampled-current columns named in "
             "[technique] could not be read; the screen went without them."),
    FlagCode("TECHNIQUE_SETTING_CONTRADICTS_FILE", _W, "A [technique] setting disagrees with "
             "the file (its potential step, its period or the pulse's direction); both "
             "values are given."),
    FlagCode("WAVE_NOT_FOUND", _E, "No sigmoidal wave could be fitted (too few points, or "
             "the wave runs off the end of the record); the file has no E½."),
    FlagCode("WAVE_SLOPE_NOT_NERNSTIAN", _W, "The log-plot slope of the wave differs from "
             "2.303 RT/nF, or E¼ − E¾ from Tomeš's 2 ln 3 RT/nF: the wave is not reversible "
             "(its E½ is not used)."),
    FlagCode("WAVE_LEVICH_NOT_LINEAR", _W, "The limiting currents of one solution at several "
             "rotation rates do not grow as ω½ (log-log slope away from 0.5)."),
    # --- series and reference ------------------------------------------------------------
    FlagCode("EXCLUDED_NON_NERNSTIAN", _I, "The file failed the reversibility screen and its "
             "E½ was left out of the fits — as a titration point and as the reference E½(s) "
             "(exclude_non_nernstian = true)."),
    FlagCode("EXCLUDED_BY_USER", _I, "The manifest leaves the file out of the fits, for the "
             "reason it gives (exclude = \"...\"); the file is still analysed and shown."),
    FlagCode("FILES_EXCLUDED", _W, "Some voltammograms failed the reversibility screen and "
             "were not fitted; they are named."),
    FlagCode("FIT_USES_FLAGGED_DATA", _W, "exclude_non_nernstian = false: the constants rest "
             "on voltammograms that failed the reversibility screen."),
    FlagCode("NO_REFERENCE_E_HALF", _E, "E½ of the ligand-free couple could not be measured "
             "and none was given; no constants are reported."),
    FlagCode("REFERENCE_NOT_NERNSTIAN", _W, "E½(s) rests on ligand-free files that failed the "
             "reversibility screen (exclude_non_nernstian = false, or an approximate E½ with "
             "its extra error); it may bias every shift."),
    FlagCode("E_HALF_APPROXIMATE", _W, "The file failed its Nernstian screen and no model of "
             "the whole response was accepted; its E½ was read all the same with an extra "
             "error for what the failure leaves unknown (cyclic voltammetry: the peak midpoint "
             "with its spread over the transfer coefficient α 0.3–0.7 at the file's ψ), and "
             "it enters the fits."),
    FlagCode("NO_TITRATION", _I, "Every file is ligand-free: the couple is characterised "
             "(E½, ΔEp, ipa/ipc, k0, D, scan-rate studies) and no constants are fitted."),
    FlagCode("REFERENCE_FILES_LEFT_OUT", _I, "Ligand-free files whose E½ the decision did not "
             "accept were left out of E½(s); they are named."),
    FlagCode("INTERNAL_STANDARD_NOT_FOUND", _E, "The internal reference couple's E½ could "
             "not be measured in its window, so the analyte's E½ of this file cannot be "
             "quoted against it; the file is not fitted."),
    FlagCode("INTERNAL_STANDARD_NOT_NERNSTIAN", _W, "The internal reference couple failed "
             "its own reversibility screen in this file; its E½ (peak midpoint) is used as "
             "the file's reference all the same."),
    FlagCode("REFERENCE_UNCERTAINTY_UNKNOWN", _I, "E½(s) has no standard error; the fit "
             "gives the reference the scatter of the titration points."),
    FlagCode("LOW_LIGAND_EXCESS", _W, "More than 10 % of the ligand is bound to the metal "
             "(bound ligands × metal_total_M / total ligand; common practice: >= 10-fold "
             "excess per bound ligand); the free ligand is corrected by the mass balance."),
    FlagCode("LIGAND_DEPLETION_CORRECTED", _W, "The correction of the free ligand for "
             "ligand bound to the metal (metal_total_M) moves a point by more than its E½ "
             "noise; the point is fitted at the corrected free ligand."),
    FlagCode("D_IMPLAUSIBLE", _W, "A diffusion coefficient outside 1e-7–1e-3 cm²/s: most "
             "often a wrong current unit, electrode area or analyte concentration."),
    FlagCode("K0_IMPLAUSIBLE", _W, "A standard rate constant above 10 cm/s: most often a "
             "wrong current unit, electrode area or analyte concentration."),
    # --- Lingane fit ---------------------------------------------------------------------
    FlagCode("TOO_FEW_POINTS", _E, "Too few usable titration points for a fit with a "
             "confidence interval; no constants are reported."),
    FlagCode("NO_LIGAND_RANGE", _E, "Every titration point has the same ligand "
             "concentration; the slope cannot be determined and no constants are reported."),
    FlagCode("SHORT_LIGAND_RANGE", _W, "The ligand concentrations span less than one "
             "decade; p − q is poorly determined."),
    FlagCode("WEIGHTS_UNAVAILABLE", _I, "Not every E½ has a standard error; the line is "
             "fitted unweighted."),
    FlagCode("WEIGHTS_NOT_CREDIBLE", _W, "The E½ scatter is far larger than the per-file "
             "errors predict; the weights are not trusted."),
    FlagCode("REFERENCE_STDERR_FROM_SCATTER", _I, "E½(s) has no standard error: it is "
             "assumed to scatter like one more titration point."),
    FlagCode("LINE_CURVED", _W, "A quadratic term in log10[L] improves the fit: more than "
             "one complex may form over this range (try the stepwise model)."),
    FlagCode("DELTA_LIGANDS_NOT_WHOLE", _W, "p − q is several standard errors from a whole "
             "number: the simple Lingane model may not hold."),
    FlagCode("DELTA_LIGANDS_AMBIGUOUS", _W, "The 95 % interval of p − q holds more than one "
             "whole number, so the fixed-integer refit is a guess."),
    FlagCode("DELTA_LIGANDS_NOT_POSITIVE", _W, "p − q rounds to zero or less; check n, the "
             "ligand concentrations and the sign of the shift."),
    # --- stepwise fit --------------------------------------------------------------------
    FlagCode("BETA_UNDETERMINED", _W, "Some β_j are not determined by the ligand range "
             "measured (info when they all lie beyond the number of complexes chosen); the "
             "message names the ligand concentration where ML_j would reach 20 % of the "
             "metal, or says that no reachable concentration will do.",
             also=(_I,)),
    FlagCode("COMPLEX_BARELY_FORMED", _W, "A complex never reaches a notable fraction of the "
             "metal over the measured range; its β_j rests on a small effect."),
    FlagCode("FREE_LIGAND_NOT_CONVERGED", _W, "No self-consistent free ligand was found: "
             "the stepwise model's mass-balance rounds did not settle, or (Lingane) no p − q "
             "reproduces itself at c_L − (p − q)·c_M; the last fit is reported — give "
             "bound_ligand_number."),
    FlagCode("UNWEIGHTED_STEPWISE", _I, "No per-file E½ errors: equal weights, scale from "
             "the residual scatter."),
    FlagCode("CURRENT_RATIO_APPLIED", _I, "The DeFord–Hume term ln(Is/Ic) from the reduction "
             "peak currents was added to the shift."),
    FlagCode("CURRENT_RATIO_NOT_APPLIED", _I, "The DeFord–Hume term ln(Is/Ic) could not be "
             "formed (a peak current is missing); fitted without it."),
    FlagCode("CURRENT_RATIO_SCAN_RATE_UNKNOWN", _I, "Some scan rates are unknown; peak "
             "currents were compared without the v^½ normalisation."),
    FlagCode("DIFFUSION_TERM_SHARED_RATIO", _I, "Both forms complexed: the reduced form's "
             "diffusion ratio, which reduction peak currents do not measure, was taken from "
             "the same complex-to-free D fraction as the oxidised form's."),
    FlagCode("ACTIVITY_TEMPERATURE_OUT_OF_RANGE", _W, "The temperature lies outside 0–100 "
             "°C, where the Davies A is known from the permittivity of water; no "
             "thermodynamic constants are reported."),
    # --- pH and temperature series, E½ tables ------------------------------------------------
    FlagCode("NO_VARIABLE_RANGE", _E, "Every point of a pH or temperature series has the same "
             "pH or temperature; nothing can be fitted against it."),
    FlagCode("PKA_NOT_DETERMINED", _W, "A pKa's 95 % interval is open: the pH range measured "
             "does not reach far enough past it."),
    FlagCode("PROTON_FIT_UNWEIGHTED", _I, "Not every E½ of a pH series has a standard error: "
             "equal weights, the scale from the scatter about the fit."),
    FlagCode("TEMPERATURE_LINE_CURVED", _W, "E½ bends with temperature (a quadratic term is "
             "significant): dE½/dT is an average over the range."),
    FlagCode("TEMPERATURE_CELL_UNSTATED", _I, "[series] reference_at is not given: dE½/dT is "
             "reported, the reaction entropy and enthalpy are not."),
    FlagCode("E_HALF_FROM_TABLE", _I, "The E½ of this entry is given in the manifest "
             "([[point]]), not measured from a voltammogram; no reversibility screen."),
    FlagCode("E_HALF_ERROR_FROM_SCATTER", _I, "No standard error was given for this E½ "
             "([[point]]): the fit estimates it from the scatter of the points."),
)  # fmt: skip

#: Every flag code, by code, in the order above (grouped by where it is raised).
FLAG_CODES: dict[str, FlagCode] = {c.code: c for c in _CATALOGUE}
if len(FLAG_CODES) != len(_CATALOGUE):  # pragma: no cover - caught at import in tests
    raise ValueError("a flag code is catalogued twice")


def render_markdown() -> str:
    """The docs page of the catalogue (``docs/flags.md``): one table, code · severity ·
    meaning."""
    lines = [
        "# Flag codes",
        "",
        "Every finding cvfit reports (in results.json, the summary and the HTML report) "
        "carries one of these codes.",
        "Severity `info`: how a result was obtained; `warning`: the result stands but "
        "deserves a look; `error`: the quantity concerned could not be determined.",
        "",
        "Generated from `cvfit/flag_codes.py` by `python -m cvfit.flag_codes > docs/flags.md`"
        " (a test checks it is current).",
        "",
        "| code | severity | meaning |",
        "| --- | --- | --- |",
    ]
    for c in FLAG_CODES.values():
        sev = " or ".join(c.severities)
        meaning = c.meaning.replace("|", r"\|")
        lines.append(f"| `{c.code}` | {sev} | {meaning} |")
    return "\n".join(lines) + "\n"


if __name__ == "__main__":  # pragma: no cover - the docs page is checked by a test
    import sys

    sys.stdout.write(render_markdown())
