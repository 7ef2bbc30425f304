"""Result objects of the Gaussian-basis solver (frozen dataclasses with to_dict())."""
from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from ..results import EnergyComponents
from ..serialize import plain
from ..units import AU_DIPOLE_TO_DEBYE


class _ToDict:
    def to_dict(self) -> dict:
        return plain({f.name: getattr(self, f.name) for f in fields(self)})


@dataclass(frozen=True)
class MolecularOrbital(_ToDict):
    """One Kohn–Sham orbital: spin channel ('both' for restricted, 'alpha' or 'beta'), index, ε, occupation."""

    spin: str
    index: int
    energy: float
    occupation: float


@dataclass(frozen=True)
class MoleculeResult(_ToDict):
    """Outcome of :func:`ks1d.solve_molecule` (atomic units unless a name says otherwise).

    The first block of fields is the vocabulary shared with
    :class:`~ks1d.radial.result.AtomResult` (see :mod:`ks1d.results`).
    ``dipole`` is the electric dipole moment (e·bohr) about the coordinate
    origin of the input geometry; ``mulliken_charges`` follow the atom order
    of ``geometry``.  ``error_estimate`` is None until a grid-error estimate exists.
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

    @property
    def dipole_debye(self) -> float:
        """|μ| in debye."""
        return float(np.linalg.norm(self.dipole) * AU_DIPOLE_TO_DEBYE)
