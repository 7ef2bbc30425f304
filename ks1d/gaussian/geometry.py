"""Molecular geometries: XYZ parsing and validation.

The XYZ format: line 1 holds the number of atoms, line 2 a free comment,
then one line per atom ``SYMBOL x y z`` with Cartesian coordinates in
ångström.  Bare atom lines (no count, no comment) are accepted as well.
Inside ks1d coordinates are stored in bohr.
"""
from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..elements import element
from ..errors import GeometryError, UnknownElement
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


def _parse_atom_line(line: str, lineno: int) -> tuple[str, int, tuple[float, float, float]]:
    fields = line.split()
    if len(fields) < 4:
        raise GeometryError(f"XYZ line {lineno}: expected 'SYMBOL x y z', got {line.strip()!r}")
    label = fields[0]
    key: str | int = int(label) if label.isdigit() else label
    try:
        el = element(key)
    except UnknownElement as exc:
        raise GeometryError(f"XYZ line {lineno}: unknown element symbol {label!r} ({exc})") from None
    coords = []
    for axis, text in zip("xyz", fields[1:4]):
        try:
            value = float(text.replace("D", "E").replace("d", "e"))
        except ValueError:
            raise GeometryError(
                f"XYZ line {lineno}: {axis} coordinate {text!r} of atom {label!r} is not a number"
            ) from None
        if not np.isfinite(value):
            raise GeometryError(f"XYZ line {lineno}: {axis} coordinate of atom {label!r} is not finite")
        coords.append(value)
    return el.symbol, el.Z, tuple(coords)


def parse_xyz(text: str) -> Geometry:
    """Parse XYZ text (coordinates in ångström) into a :class:`Geometry`."""
    lines = text.strip("\n").splitlines()
    while lines and not lines[-1].strip():
        lines.pop()
    if not lines:
        raise GeometryError("empty geometry: no atoms given")
    head = lines[0].split()
    comment = ""
    if len(head) == 1 and head[0].lstrip("+-").isdigit():
        count = int(head[0])
        if count < 1:
            raise GeometryError(f"XYZ header gives {count} atoms; a molecule needs at least one")
        comment = lines[1].strip() if len(lines) > 1 else ""
        body = [(i + 3, ln) for i, ln in enumerate(lines[2:]) if ln.strip()]
        if len(body) != count:
            raise GeometryError(
                f"XYZ header announces {count} atoms but {len(body)} atom lines follow"
            )
    else:
        body = [(i + 1, ln) for i, ln in enumerate(lines) if ln.strip()]
    atoms = [_parse_atom_line(ln, no) for no, ln in body]
    symbols = tuple(a[0] for a in atoms)
    numbers = tuple(a[1] for a in atoms)
    xyz = np.array([a[2] for a in atoms], dtype=float) * ANGSTROM_TO_BOHR
    geometry = Geometry(symbols, numbers, xyz, comment)
    check_distances(geometry)
    return geometry


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
    """A :class:`Geometry` from a Geometry, an XYZ file path or XYZ text."""
    if isinstance(source, Geometry):
        return source
    if isinstance(source, Path) or (isinstance(source, str) and "\n" not in source.strip()
                                    and (source.lower().endswith(".xyz") or os.path.exists(source))):
        path = Path(source)
        if not path.is_file():
            raise GeometryError(f"geometry file '{path}' does not exist")
        return parse_xyz(path.read_text())
    if isinstance(source, str):
        return parse_xyz(source)
    raise GeometryError(
        f"geometry must be an XYZ file path, XYZ text or a Geometry, got {type(source).__name__}"
    )
