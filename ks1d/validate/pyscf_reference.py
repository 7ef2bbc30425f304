"""Reference calculations with pyscf for the validation suite (never used by the solvers).

Two kinds of job:

* :func:`even_tempered_atom_energy`: a spherical atom in a large even-tempered
  Gaussian basis (s and p shells, exponents α_k = α_0 β^k), the variational
  upper bound that approaches the radial basis-set limit from above.  For
  closed-shell and s¹ atoms the UKS ground state of pyscf is spherical, so
  the two calculations describe the same state.  Exponent ranges and the
  radial/angular grid (500 × 50 points, unpruned) are those of
  tests/test_radial_pyscf.py, measured there to reach < 0.1 µHa for Ne.
* :func:`molecule_energy`: the same molecule, basis, functional and
  integration grid as a ks1d Gaussian run (ks1d's grid points and weights
  are handed to pyscf), so the comparison tests the SCF and the potential
  assembly, not two different grids.
"""
from __future__ import annotations

import numpy as np


def even_tempered(lo: float, hi: float, ratio: float) -> np.ndarray:
    """Exponents lo·ratio^k, k = 0 … ⌈ln(hi/lo)/ln(ratio)⌉."""
    n = int(np.ceil(np.log(hi / lo) / np.log(ratio))) + 1
    return lo * ratio ** np.arange(n)


def even_tempered_basis(lmax: int, s_range=(0.02, 1e7), p_range=(0.02, 1e4), ratio: float = 1.6) -> list:
    shells = [[0, [a, 1.0]] for a in even_tempered(*s_range, ratio)]
    if lmax >= 1:
        shells += [[1, [a, 1.0]] for a in even_tempered(*p_range, ratio)]
    return shells


def even_tempered_atom_energy(symbol: str, libxc: str, charge: int = 0, spin: int = 0, lmax: int = 1,
                              restricted: bool | None = None) -> float:
    """pyscf total energy (hartree) of an atom in the even-tempered basis above.

    ``spin`` is N↑ − N↓; ``libxc`` the functional's libxc identifiers, or "hf".
    """
    from pyscf import dft, gto, scf

    mol = gto.M(atom=f"{symbol} 0 0 0", basis={symbol: even_tempered_basis(lmax)}, charge=charge,
                spin=spin, verbose=0)
    if restricted is None:
        restricted = spin == 0
    if libxc == "hf":
        mf = scf.RHF(mol) if restricted else scf.UHF(mol)
    else:
        mf = dft.RKS(mol) if restricted else dft.UKS(mol)
        mf.xc = libxc
        mf.grids.atom_grid = (500, 50)
        mf.grids.prune = None
    mf.conv_tol = 1e-11
    e = mf.kernel()
    if not mf.converged:
        raise RuntimeError(f"pyscf reference SCF for {symbol} (charge {charge:+d}) did not converge")
    return float(e)


def molecule_energy(xyz: str, basis: str, libxc: str, multiplicity: int = 1, grid_level: str = "default"):
    """pyscf (energy, dipole in e·bohr) for an XYZ geometry on ks1d's own grid of ``grid_level``."""
    from pyscf import dft, gto, scf

    from ..gaussian.geometry import read_geometry
    from ..gaussian.grid import build_grid

    g = read_geometry(xyz)
    mol = gto.M(atom=[(s, tuple(x)) for s, x in zip(g.symbols, g.coordinates)], unit="Bohr", basis=basis,
                spin=multiplicity - 1, verbose=0)
    if libxc == "hf":
        mf = scf.RHF(mol) if multiplicity == 1 else scf.UHF(mol)
    else:
        mf = dft.RKS(mol) if multiplicity == 1 else dft.UKS(mol)
        mf.xc = libxc
        mf.small_rho_cutoff = 0.0
        grid = build_grid(g, grid_level)
        mf.grids.coords = grid.coords
        mf.grids.weights = grid.weights
    mf.conv_tol = 1e-11
    mf.max_cycle = 100
    e = mf.kernel()
    if not mf.converged:
        raise RuntimeError("pyscf reference SCF did not converge")
    return float(e), np.asarray(mf.dip_moment(unit="au", verbose=0))
