"""Spherical atomic profiles (density and screened potential) for molecular guesses.

``atomic_profile(Z)`` solves the neutral, spin-restricted LDA atom once per
process and returns callables of r.  The Gaussian solver superposes them to
start its SCF (superposition of atomic densities or potentials; for the
potential variant see S. Lehtola, J. Chem. Theory Comput. 15, 1593 (2019)).
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import numpy as np
from scipy.interpolate import CubicSpline

from .result import RadialData


@dataclass(frozen=True, eq=False)
class AtomicProfile:
    """ρ(r) and v_H(r) + v_xc(r) of a neutral spherical atom (atomic units)."""

    Z: int
    total_energy: float
    _radial: RadialData
    _spline: CubicSpline  # r·(v_H + v_xc) against ln r
    _r_first: float
    _r_last: float
    _n_electrons: float

    def density(self, r: np.ndarray) -> np.ndarray:
        """Total electron density ρ(r) in bohr⁻³ (0 beyond the mesh)."""
        return self._radial.density_at(r).sum(axis=0).reshape(np.shape(r))

    def screened_potential(self, r: np.ndarray) -> np.ndarray:
        """v_H(r) + v_xc(r) in hartree; the full atomic potential is −Z/r plus this."""
        r = np.asarray(r, dtype=float)
        rc = np.clip(r, self._r_first, self._r_last)
        v = self._spline(np.log(rc)) / rc
        return np.where(r > self._r_last, self._n_electrons / np.maximum(r, 1e-300), v)


@cache
def atomic_profile(Z: int, xc: str = "lda") -> AtomicProfile:
    """Profile of the neutral spin-restricted atom Z (cached per process)."""
    from .scf import solve_atom

    res = solve_atom(int(Z), xc=xc, spin="restricted", precision="low", estimate_error=False)
    rad = res.radial
    order = np.argsort(rad.r)
    r = rad.r[order]
    v = (rad.v_hartree + rad.v_xc[0])[order]
    spline = CubicSpline(np.log(r), r * v)
    return AtomicProfile(Z=int(Z), total_energy=res.total_energy, _radial=rad, _spline=spline,
                         _r_first=float(r[0]), _r_last=float(r[-1]), _n_electrons=res.n_electrons)
