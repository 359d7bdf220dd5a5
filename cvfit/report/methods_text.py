"""The method, its published sources, its assumptions and the laboratory cautions, as text.

One place for the words the HTML report prints (plain text; the report escapes it).
``docs/methods.md`` and the README's *Laboratory cautions* say the same at more length;
change them together. :data:`BASELINE_SENTENCE` is quoted word for word by the README's
*Method in brief* and by docs/methods.md (a test keeps the three equal).
"""

from __future__ import annotations

__all__ = ["BASELINE_SENTENCE", "METHOD_STEPS", "ASSUMPTIONS", "CAUTIONS"]

#: How the peaks are measured, in one sentence: the report, the README and docs/methods.md
#: say exactly this (see :mod:`cvfit.techniques.cv.peaks.analysis` for the method in full).
BASELINE_SENTENCE = (
    "The forward peak is measured against a baseline made of a straight line (charging "
    "current and sloping background) plus the exponential foot of the wave itself, fitted "
    "together to the foot of the wave (the sweep before the current rises) and extrapolated "
    "under the peak; the reverse peak "
    "against the same line shifted by the charging-current step at the switching potential."
)

#: (heading, what cvfit does, published sources) for each step of the analysis.
METHOD_STEPS: tuple[tuple[str, str, tuple[str, ...]], ...] = (
    (
        "Import",
        "Units are read from the column labels and converted to V, A and s; currents are "
        "brought to the IUPAC sign (anodic positive). The record is split into sweeps at its "
        "switching potentials and into cycles; the last complete cycle is analysed unless the "
        "manifest asks for another.",
        (),
    ),
    (
        "Peaks",
        BASELINE_SENTENCE + " The reverse-to-forward current ratio follows Nicholson's "
        "method. Peak "
        "potentials are located below the sampling step by a local polynomial; "
        "E½ = (Epa + Epc)/2 with a standard error from the noise of that file.",
        ("R. S. Nicholson, Anal. Chem. 38 (1966) 1406",),
    ),
    (
        "Reversibility screen",
        "ΔEp is compared with the Nernstian value for the actual switching potential, "
        "|Ep − Ep/2| with 2.20 RT/nF and ipa/ipc with 1. The margins are settings of the "
        "manifest (the defaults are common practice, not a standard) and scale with n and T. "
        'A voltammogram that fails is reported; by default (half_wave_source = "auto") a '
        "quasi-reversible one is fitted as a whole curve, with the simulator (Butler–Volmer "
        "kinetics, charging, background, ohmic drop) as the model, and rejoins the fit with "
        "that E½ and its own standard error; irreversible files and refused curve fits are "
        "left out with the reason.",
        (
            "R. S. Nicholson, I. Shain, Anal. Chem. 36 (1964) 706",
            "R. S. Nicholson, Anal. Chem. 37 (1965) 1351",
        ),
    ),
    (
        "Lingane fit",
        "For O·Lp + ne⁻ ⇌ R·Lq + (p − q)L with fast, labile equilibria and ligand in excess, "
        "E½(c) − E½(s) = −(RT/nF) ln(βox/βred) − (p − q)(RT/nF) ln[L]. The straight line "
        "against log10[L] is fitted by (weighted) least squares: the slope gives p − q, the "
        "intercept log10(βox/βred). Standard errors come from the covariance matrix, 95 % "
        "intervals from Student's t with the fit's degrees of freedom, and the uncertainty of "
        "E½(s) is carried into the intercept. The fit is repeated with p − q fixed at the "
        "nearest whole number; a curvature test warns when stepwise complexes would describe "
        "the data better.",
        ("J. J. Lingane, Chem. Rev. 29 (1941) 1",),
    ),
    (
        "Constants",
        "F and R are taken from scipy.constants (CODATA 2018).",
        (),
    ),
)

#: What the method assumes and cvfit cannot check from the data.
ASSUMPTIONS: tuple[str, ...] = (
    "The ligand is in large excess over the metal, so free ≈ total ligand (keep at least "
    "10-fold excess — common practice).",
    "Ionic strength and temperature are constant along the series.",
    "The same reference electrode is used throughout.",
    "Complexes of both oxidation states diffuse alike (the diffusion term of Lingane's "
    "equation is neglected).",
    "The couple is Nernstian at every point used; the screen above checks this per file.",
)

#: Laboratory cautions printed with every report.
CAUTIONS: tuple[str, ...] = (
    "cvfit analyses data; it does not make an experiment safe.",
    "Many metal salts used in such titrations (cadmium, lead, thallium, nickel, "
    "chromium(VI) and others) are toxic or carcinogenic; many ligands are toxic, corrosive "
    "or sensitising.",
    "Cyanide ligands release hydrogen cyanide with acid: never acidify cyanide solutions, "
    "work in a fume hood and have a cyanide antidote procedure in place.",
    "Perchlorate electrolytes and metal perchlorates can explode when heated, dried or mixed "
    "with organic material.",
    "Mercury electrodes and amalgams need spill kits, ventilation and proper mercury waste "
    "handling.",
    "Wear the protective equipment your risk assessment prescribes; local regulations and "
    "your institution's safety rules take precedence over anything written here.",
)
