"""Solution chemistry: complexation, speciation, activity and the reversible peak current.

Pure functions of concentrations and constants; no voltammogram is read here.

- :mod:`.complexation` — Leden F0, the half-wave potential of a complexed couple and the
  standard potential of a couple of complexes
- :mod:`.speciation` — F-functions, species fractions, mean ligand number, free ligand
- :mod:`.activity` — Davies activity coefficients, thermodynamic constants
- :mod:`.randles_sevcik` — the reversible peak current
"""

from cvfit.chemistry.activity import davies_log10_gamma, thermodynamic_log10_beta
from cvfit.chemistry.complexation import (
    complex_standard_potential_V,
    complexed_half_wave_V,
    effective_diffusion_cm2_s,
    leden_F0,
    log_leden_F0,
)
from cvfit.chemistry.randles_sevcik import RANDLES_SEVCIK_CONSTANT, randles_sevcik_peak_current_A
from cvfit.chemistry.speciation import (
    absolute_log10_beta,
    conditional_log10_beta,
    free_ligand_M,
    leden_F_functions,
    ligand_fraction_unprotonated,
    mean_ligand_number,
    species_fractions,
)

__all__ = [
    "RANDLES_SEVCIK_CONSTANT",
    "absolute_log10_beta",
    "complex_standard_potential_V",
    "complexed_half_wave_V",
    "conditional_log10_beta",
    "davies_log10_gamma",
    "effective_diffusion_cm2_s",
    "free_ligand_M",
    "leden_F0",
    "leden_F_functions",
    "ligand_fraction_unprotonated",
    "log_leden_F0",
    "mean_ligand_number",
    "randles_sevcik_peak_current_A",
    "species_fractions",
    "thermodynamic_log10_beta",
]
