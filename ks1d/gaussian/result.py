"""Result objects of the Gaussian-basis solver (frozen dataclasses with to_dict())."""
from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from ..errors import IterationRecord
from ..units import AU_DIPOLE_TO_DEBYE


def _plain(value):
    """Convert numpy scalars/arrays and nested containers to strict-JSON values (NaN → None)."""
    if hasattr(value, "to_dict"):
        return value.to_dict()
    if isinstance(value, IterationRecord):
        return {"iteration": value.iteration, "energy": _plain(value.energy),
                "delta_energy": _plain(value.delta_energy), "residual": _plain(value.residual)}
    if isinstance(value, np.ndarray):
        return [_plain(v) for v in value.tolist()]
    if isinstance(value, (np.floating, np.integer, np.bool_)):
        value = value.item()
    if isinstance(value, float) and not np.isfinite(value):
        return None  # strict JSON has no NaN/Infinity (e.g. ΔE of the first iteration)
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return value


class _ToDict:
    def to_dict(self) -> dict:
        return {f.name: _plain(getattr(self, f.name)) for f in fields(self)}


@dataclass(frozen=True)
class MolecularOrbital(_ToDict):
    """One Kohn–Sham orbital: spin channel ('restricted', 'alpha' or 'beta'), index, ε, occupation."""

    spin: str
    index: int
    energy: float
    occupation: float


@dataclass(frozen=True)
class EnergyComponents(_ToDict):
    """Parts of the total energy (hartree).

    total = kinetic + nuclear_attraction + coulomb + exchange_correlation
            + exact_exchange + nuclear_repulsion
    """

    kinetic: float
    nuclear_attraction: float
    coulomb: float
    exchange_correlation: float
    exact_exchange: float
    nuclear_repulsion: float

    @property
    def total(self) -> float:
        return (self.kinetic + self.nuclear_attraction + self.coulomb + self.exchange_correlation
                + self.exact_exchange + self.nuclear_repulsion)


@dataclass(frozen=True)
class MoleculeResult(_ToDict):
    """Outcome of :func:`ks1d.solve_molecule` (atomic units unless a name says otherwise).

    ``dipole`` is the electric dipole moment (e·bohr) about the coordinate
    origin of the input geometry; ``mulliken_charges`` follow the atom order
    of ``geometry``.
    """

    total_energy: float
    converged: bool
    iterations: int
    orbitals: tuple
    components: EnergyComponents
    homo_energy: float | None
    lumo_energy: float | None
    homo_lumo_gap: float | None
    mulliken_charges: tuple
    dipole: tuple
    spin_square: float
    charge: int
    multiplicity: int
    restricted: bool
    n_alpha: int
    n_beta: int
    geometry: dict
    basis_functions: int
    grid_points: int
    history: tuple
    timings: dict
    settings: dict

    @property
    def dipole_debye(self) -> float:
        """|μ| in debye."""
        return float(np.linalg.norm(self.dipole) * AU_DIPOLE_TO_DEBYE)
