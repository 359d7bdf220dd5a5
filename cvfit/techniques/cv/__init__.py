"""Cyclic voltammetry: peaks, the reversibility screen, the switching correction, the
curve fit and the scan-rate study."""
