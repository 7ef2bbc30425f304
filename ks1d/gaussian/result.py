"""Result objects of the Gaussian-basis solver (frozen dataclasses with to_dict())."""
from __future__ import annotations

from dataclasses import dataclass, field, fields

import numpy as np

from ..results import EnergyComponents
from ..serialize import plain
from ..units import AU_DIPOLE_TO_DEBYE, HARTREE_PER_BOHR_TO_EV_PER_ANGSTROM


class _ToDict:
    def to_dict(self) -> dict:
        """Strict-JSON fields; fields marked ``metadata={"json": False}`` (bulky solver state) are left out."""
        return plain({f.name: getattr(self, f.name) for f in fields(self) if f.metadata.get("json", True)})


@dataclass(frozen=True)
class MolecularOrbital(_ToDict):
    """One Kohn–Sham orbital: spin channel ('both' for restricted, 'alpha' or 'beta'), index, ε, occupation."""

    spin: str
    index: int
    energy: float
    occupation: float


@dataclass(frozen=True, eq=False)
class ConvergedState:
    """The converged SCF in the atomic-orbital basis (atomic units), for restarts and gradients.

    One entry per spin channel (one for restricted orbitals, holding both spins; α and β otherwise):
    ``densities`` D^σ and ``energy_weighted`` W^σ = Σ_i f_i ε_i C_i C_iᵀ (nao, nao), and the
    occupied orbital coefficients with their occupations.  ``basis`` records the per-element basis
    and ``symbols`` the atoms, so that a restart can check it uses the same functions.
    """

    densities: np.ndarray
    energy_weighted: np.ndarray
    occupied_orbitals: tuple
    occupations: tuple
    symbols: tuple
    basis: dict


@dataclass(frozen=True)
class MoleculeResult(_ToDict):
    """Outcome of :func:`ks1d.solve_molecule` (atomic units unless a name says otherwise).

    The first block of fields is the vocabulary shared with
    :class:`~ks1d.radial.result.AtomResult` (see :mod:`ks1d.results`).
    ``dipole`` is the electric dipole moment (e·bohr) about the coordinate
    origin of the input geometry; ``mulliken_charges`` follow the atom order
    of ``geometry``.  ``grid_error_estimate`` (Ha) is E_xc of the converged density on
    the next finer grid level minus E_xc on the grid used (None on the ``reference``
    level, on custom grids, or when not asked for); ``error_estimate`` is its magnitude,
    the numerical error of the stated model as on atoms (the basis-set error is not
    included: that is a property of the model).
    ``gradient`` is ∂E/∂R_A (natoms × 3, hartree/bohr; :mod:`ks1d.gaussian.gradient`) when asked
    for, ``forces`` the same as forces in eV/Å; ``state`` (not serialised) is the converged density
    that ``solve_molecule(..., start=result)`` restarts from.
    """

    # the vocabulary shared with atoms (ks1d.results)
    total_energy: float
    components: EnergyComponents
    converged: bool
    iterations: int
    history: tuple
    spin: str
    multiplicity: int
    n_alpha: int
    n_beta: int
    charge: int
    functional: dict
    warnings: tuple
    error_estimate: float | None
    version: str
    settings: dict
    timings: dict
    # molecule-specific
    orbitals: tuple
    homo_energy: float | None
    lumo_energy: float | None
    homo_lumo_gap: float | None
    mulliken_charges: tuple
    dipole: tuple
    spin_square: float
    geometry: dict
    basis_functions: int
    grid_points: int

    # nuclear gradient (solve_molecule(..., gradient=True)); None unless asked for
    gradient: np.ndarray | None = None
    # E_xc on the next finer grid minus E_xc on the used grid, same density (Ha)
    grid_error_estimate: float | None = None
    # converged SCF state (densities, orbitals) for restarts and gradients; not serialised
    state: ConvergedState | None = field(default=None, repr=False, compare=False, metadata={"json": False})
    # the parts of the gradient (ks1d.gaussian.gradient.GradientTerms); not serialised
    gradient_terms: object = field(default=None, repr=False, compare=False, metadata={"json": False})

    @property
    def forces(self) -> np.ndarray | None:
        """F_A = −∂E/∂R_A in eV/Å (atom order of ``geometry``); None unless the gradient was computed."""
        if self.gradient is None:
            return None
        return -np.asarray(self.gradient) * HARTREE_PER_BOHR_TO_EV_PER_ANGSTROM

    @property
    def dipole_debye(self) -> float:
        """|μ| in debye."""
        return float(np.linalg.norm(self.dipole) * AU_DIPOLE_TO_DEBYE)
