"""Differential-pulse voltammetry as a technique (:mod:`.technique`, :mod:`.measurement`)."""
