"""Figures of a series (matplotlib, imported only when figures are drawn).

- :mod:`.titration` — overlaid voltammograms and the Lingane plot
- :mod:`.diagnostics` — ΔEp and current ratio of every file against the Nernstian band
- :mod:`.stepwise` — shift with the fitted curve, Leden functions, species distribution
- :mod:`.legend_placement` — legends in the corner with the fewest points
"""
