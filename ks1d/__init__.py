"""ks1d: all-electron Kohn-Sham DFT for atoms (radial finite elements) and
small molecules (Gaussian basis), with validation and benchmarking tools.

Public API::

    import ks1d
    atom = ks1d.solve_atom("Fe", xc="pbe")                 # radial, basis-set limit
    mol = ks1d.solve_molecule("water.xyz", basis="def2-svp", xc="pbe", gradient=True)
    opt = ks1d.optimize_molecule("water.xyz", basis="def2-svp", xc="pbe")   # .geometry (XYZ, Å)
    vib = ks1d.harmonic_frequencies(opt.geometry, basis="def2-svp", xc="pbe")  # .wavenumbers (cm^-1)
    # ks1d.ase.KS1D(basis=..., xc=...) is an ASE calculator (import ks1d.ase)

Heavy modules (pyscf) are imported on first use only.
"""
from __future__ import annotations

from ._version import __version__

__all__ = ["solve_atom", "solve_molecule", "optimize_molecule", "harmonic_frequencies", "resolve_functional",
           "__version__"]


def __getattr__(name):
    if name == "solve_atom":
        from .radial.scf import solve_atom

        return solve_atom
    if name == "solve_molecule":
        from .gaussian.scf import solve_molecule

        return solve_molecule
    if name == "optimize_molecule":
        from .optimize import optimize_molecule

        return optimize_molecule
    if name == "harmonic_frequencies":
        from .frequencies import harmonic_frequencies

        return harmonic_frequencies
    if name == "resolve_functional":
        from .xc import resolve_functional

        return resolve_functional
    raise AttributeError(f"module 'ks1d' has no attribute {name!r}")
