"""ks1d: all-electron Kohn-Sham DFT for atoms (radial finite elements) and
small molecules (Gaussian basis), with validation and benchmarking tools.

Public API::

    import ks1d
    atom = ks1d.solve_atom("Fe", xc="pbe")                 # radial, basis-set limit
    mol = ks1d.solve_molecule("water.xyz", basis="def2-svp", xc="pbe")

Heavy modules (pyscf) are imported on first use only.
"""
from __future__ import annotations

from ._version import __version__

__all__ = ["solve_atom", "solve_molecule", "resolve_functional", "__version__"]


def __getattr__(name):
    if name == "solve_atom":
        from .radial.scf import solve_atom

        return solve_atom
    if name == "solve_molecule":
        from .gaussian.scf import solve_molecule

        return solve_molecule
    if name == "resolve_functional":
        from .xc import resolve_functional

        return resolve_functional
    raise AttributeError(f"module 'ks1d' has no attribute {name!r}")
