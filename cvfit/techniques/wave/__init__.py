"""Steady-state and sampled-current waves as a technique (:mod:`.technique`).

The measurement is in :mod:`.measurement`, the fit of the wave in :mod:`.fit`.
"""
