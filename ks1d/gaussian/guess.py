"""Initial Fock matrices for the SCF.

* ``"atoms"`` (default): superposition of ks1d's own radial atomic potentials.
  Each neutral, spin-restricted LDA atom from :mod:`ks1d.radial` contributes
  its screened potential v_H,A + v_xc,A; the nuclear attraction is exact
  (from the integral engine), the screened parts are integrated on the
  molecular grid:

      F⁰_μν = T_μν + V^nuc_μν + ∫ φ_μ φ_ν Σ_A v_scr,A(|r − R_A|) d³r.

  The orbitals of F⁰ see a neutral-atom-like potential everywhere, a much
  better start than the bare core Hamiltonian, and come from ks1d's own
  basis-set-limit atoms (no minimal-basis projection needed).
* ``"core"``: the core Hamiltonian T + V^nuc (a fallback that needs nothing).
"""
from __future__ import annotations

import numpy as np

from ..errors import SettingsError

GUESSES = ("atoms", "core")


def radial_atoms_available() -> bool:
    try:
        from ..radial.profile import atomic_profile  # noqa: F401
    except ImportError:
        return False
    return True


def screened_atomic_potential(geometry, points: np.ndarray) -> np.ndarray:
    """Σ_A v_scr,A(|r − R_A|) on ``points`` from ks1d's radial atoms."""
    from ..radial.profile import atomic_profile
    from ..threads import single_threaded

    v = np.zeros(len(points))
    for Z, R in zip(geometry.numbers, geometry.coordinates):
        with single_threaded(openmp=False):  # the radial solve is many small dense products
            profile = atomic_profile(int(Z))
        r = np.linalg.norm(points - R, axis=1)
        v += np.asarray(profile.screened_potential(r), dtype=float)
    return v


def guess_fock(kind: str, hcore: np.ndarray, geometry, bog) -> tuple[np.ndarray, str]:
    """(F⁰, name of the guess actually used)."""
    if kind not in GUESSES:
        raise SettingsError(f"unknown initial guess {kind!r}; choose one of {', '.join(GUESSES)}")
    if kind == "atoms" and radial_atoms_available():
        from .density import potential_matrix

        v = screened_atomic_potential(geometry, bog.grid.coords)
        return hcore + potential_matrix(bog, v), "atoms"
    return hcore.copy(), "core"
