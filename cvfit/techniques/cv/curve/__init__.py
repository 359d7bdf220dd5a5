"""Fits of whole cyclic voltammograms: per file, and of a series with E½ tied by a model."""
