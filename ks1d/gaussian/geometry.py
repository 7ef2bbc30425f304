"""Molecular geometries: the nuclei of a molecule, in bohr, validated.

Files and XYZ text are read by the one structure reader
(:func:`ks1d.structure.read_structure`: XYZ by ks1d, every other format through
ASE); this module turns a :class:`~ks1d.structure.Structure` (Å) into a
:class:`Geometry` (bohr) and rejects nuclei closer than 0.1 Å.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..elements import element
from ..errors import GeometryError
from ..structure import Structure, parse_xyz_text, read_structure
from ..units import ANGSTROM_TO_BOHR, BOHR_TO_ANGSTROM

#: Two nuclei closer than this (in ångström) are rejected as a typo.
MIN_DISTANCE_ANGSTROM = 0.1


@dataclass(frozen=True, eq=False)
class Geometry:
    """Nuclei of a molecule: symbols, atomic numbers and positions (bohr)."""

    symbols: tuple[str, ...]
    numbers: tuple[int, ...]
    coordinates: np.ndarray  # (natom, 3) bohr
    comment: str = ""

    @property
    def natom(self) -> int:
        return len(self.symbols)

    @property
    def nuclear_charge(self) -> int:
        return int(sum(self.numbers))

    def to_dict(self) -> dict:
        return {
            "symbols": list(self.symbols),
            "numbers": list(self.numbers),
            "coordinates_angstrom": (self.coordinates * BOHR_TO_ANGSTROM).tolist(),
            "comment": self.comment,
        }


def nuclear_repulsion(geometry: Geometry) -> float:
    """E_nn = Σ_{A<B} Z_A Z_B / |R_A − R_B|."""
    Z = np.array(geometry.numbers, dtype=float)
    R = geometry.coordinates
    d = np.linalg.norm(R[:, None, :] - R[None, :, :], axis=-1)
    iu = np.triu_indices(len(Z), 1)
    return float(np.sum(Z[iu[0]] * Z[iu[1]] / d[iu]))


def geometry_from_structure(structure: Structure) -> Geometry:
    """A :class:`Geometry` (bohr) from a :class:`~ks1d.structure.Structure` (Å); periodic ones are refused.

    A molecule calculation of a periodic cell's contents is almost always a mistake; pass
    ``structure.to_xyz()`` (or ``ks1d molecule --as-cluster``) to compute those atoms as a cluster.
    """
    if structure.periodic:
        axes = "".join("abc"[i] for i, p in enumerate(structure.pbc) if p)
        raise GeometryError(
            f"'{structure.source}' is periodic (a cell, periodic along {axes}); the molecule solver computes "
            "an isolated molecule — give a molecular structure, or use --as-cluster (API: "
            "read_structure(path).to_xyz()) to compute the cell's atoms as a finite cluster")
    numbers = tuple(element(sym).Z for sym in structure.symbols)
    geometry = Geometry(tuple(structure.symbols), numbers,
                        np.asarray(structure.positions, dtype=float) * ANGSTROM_TO_BOHR, structure.comment)
    check_distances(geometry)
    return geometry


def parse_xyz(text: str) -> Geometry:
    """Parse XYZ text (coordinates in ångström) into a :class:`Geometry`."""
    return geometry_from_structure(parse_xyz_text(text))


def check_distances(geometry: Geometry, min_angstrom: float = MIN_DISTANCE_ANGSTROM) -> None:
    """Reject any pair of nuclei closer than ``min_angstrom``."""
    R = geometry.coordinates
    if len(R) < 2:
        return
    d = np.linalg.norm(R[:, None, :] - R[None, :, :], axis=-1) * BOHR_TO_ANGSTROM
    d[np.diag_indices(len(R))] = np.inf
    i, j = np.unravel_index(np.argmin(d), d.shape)
    if d[i, j] < min_angstrom:
        a, b = sorted((int(i), int(j)))
        raise GeometryError(
            f"atoms {a + 1} ({geometry.symbols[a]}) and {b + 1} ({geometry.symbols[b]}) are "
            f"{d[a, b]:.4f} Å apart, closer than {min_angstrom} Å; check the coordinates (in ångström)"
        )


def read_geometry(source) -> Geometry:
    """A :class:`Geometry` from a Geometry, a Structure, a structure file (any format
    :func:`ks1d.structure.read_structure` reads) or XYZ text."""
    if isinstance(source, Geometry):
        return source
    if isinstance(source, (str, Path, Structure)):
        return geometry_from_structure(read_structure(source))
    raise GeometryError(
        f"geometry must be a structure file path, XYZ text or a Geometry, got {type(source).__name__}"
    )
