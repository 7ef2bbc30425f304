"""The one version string of ks1d (pyproject.toml reads it from here).

Sweep job keys include it, so a new version never reuses stored results of an older one.
"""
__version__ = "0.3.0"
