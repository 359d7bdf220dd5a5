"""Packaged data (the demo series)."""
