"""The version of cvfit (read by the build from here, so that no start-up reads metadata)."""

__version__ = "0.1.0"
