"""Structure files for the report: which elements a system has and which of them are bonded.

Reads XYZ and extended XYZ (the first frame).  Extended XYZ puts key=value
pairs on the comment line; two of them matter here:

* ``Properties=species:S:1:pos:R:3:...`` — which columns hold the element
  and the Cartesian position (default: column 1 and columns 2–4);
* ``Lattice="ax ay az bx by bz cx cy cz"`` (Å) with optional
  ``pbc="T T T"`` — bonds across the cell faces are found by the minimum
  image over the 27 neighbouring cells along periodic directions.

Two atoms count as bonded when

    d(A, B) < f · (r_cov(A) + r_cov(B)),   f = 1.2

with the covalent radii of B. Cordero et al., Dalton Trans. 2008, 2832
(as tabulated in ``pyscf.data.radii.COVALENT``: carbon takes its sp² value
0.73 Å, iron the mean of its low- and high-spin values); the factor 1.2 is
common practice for bond perception.
"""
from __future__ import annotations

import os
import re
import shlex
from dataclasses import dataclass

import numpy as np

from ..elements import element
from ..errors import InputError, UnknownElement

BOND_FACTOR = 1.2


class StructureError(InputError):
    """A structure file that cannot be read: names the file, the line and what is wrong."""


@dataclass(frozen=True)
class Structure:
    """Elements (in order of first appearance) and bonded element pairs of one structure."""

    path: str
    symbols: tuple[str, ...]
    positions: np.ndarray  # (N, 3) in Å
    lattice: np.ndarray | None  # (3, 3) rows a, b, c in Å
    pbc: tuple[bool, bool, bool]
    comment: str

    @property
    def elements(self) -> tuple[str, ...]:
        return tuple(dict.fromkeys(self.symbols))

    def bonded_pairs(self, factor: float = BOND_FACTOR) -> tuple[tuple[str, str], ...]:
        """Element pairs (sorted by Z, then symbol) with at least one bond in the structure."""
        return bonded_pairs(self.symbols, self.positions, self.lattice, self.pbc, factor)


def covalent_radius(symbol: str) -> float:
    """Covalent radius (Å) of Cordero et al. (2008), from pyscf.data.radii.COVALENT (bohr)."""
    from pyscf.data.radii import COVALENT

    from ..units import BOHR_TO_ANGSTROM

    return float(COVALENT[element(symbol).Z]) * BOHR_TO_ANGSTROM


def bonded_pairs(symbols, positions, lattice=None, pbc=(False, False, False),
                 factor: float = BOND_FACTOR) -> tuple[tuple[str, str], ...]:
    """Element pairs joined by d < factor·(r_A + r_B) (minimum image along periodic axes)."""
    syms = list(symbols)
    n = len(syms)
    if n < 2 and not (lattice is not None and any(pbc)):
        return ()
    pos = np.asarray(positions, dtype=float)
    radii = np.array([covalent_radius(s) for s in syms])
    shifts = [np.zeros(3)]
    if lattice is not None and any(pbc):
        ranges = [(-1, 0, 1) if p else (0,) for p in pbc]
        shifts = [i * lattice[0] + j * lattice[1] + k * lattice[2]
                  for i in ranges[0] for j in ranges[1] for k in ranges[2]]
    cut = factor * (radii[:, None] + radii[None, :])
    found: set[tuple[str, str]] = set()
    for t in shifts:
        d = np.linalg.norm(pos[:, None, :] - (pos[None, :, :] + t), axis=-1)
        if not np.any(t):
            d[np.diag_indices(n)] = np.inf
        ii, jj = np.nonzero(d < cut)
        for i, j in zip(ii.tolist(), jj.tolist()):
            found.add(_ordered_pair(syms[i], syms[j]))
    return tuple(sorted(found, key=lambda p: (element(p[0]).Z, element(p[1]).Z)))


def _ordered_pair(a: str, b: str) -> tuple[str, str]:
    return (a, b) if (element(a).Z, a) <= (element(b).Z, b) else (b, a)


def _key_values(comment: str) -> dict[str, str]:
    """key=value pairs of an extended-XYZ comment line (values may be quoted)."""
    out: dict[str, str] = {}
    try:
        tokens = shlex.split(comment)
    except ValueError:
        return out
    for tok in tokens:
        if "=" in tok:
            k, _, v = tok.partition("=")
            out[k.strip().lower()] = v.strip()
    return out


def _columns(props: str | None, where: str) -> tuple[int, int]:
    """(species column, first position column) from a Properties= value."""
    if not props:
        return 0, 1
    parts = props.split(":")
    if len(parts) % 3:
        raise StructureError(f"{where}: Properties={props!r} is not name:type:count triples")
    col = 0
    species = pos = None
    for name, _typ, count in zip(parts[0::3], parts[1::3], parts[2::3]):
        try:
            c = int(count)
        except ValueError:
            raise StructureError(f"{where}: Properties count {count!r} is not an integer") from None
        if name.lower() == "species":
            species = col
        elif name.lower() == "pos":
            if c != 3:
                raise StructureError(f"{where}: Properties gives 'pos' {c} columns, expected 3")
            pos = col
        col += c
    if species is None or pos is None:
        raise StructureError(f"{where}: Properties={props!r} lacks a 'species' or a 'pos' column")
    return species, pos


def _symbol(label: str, where: str) -> str:
    m = re.match(r"^([A-Za-z]{1,2}|\d+)", label)
    if not m:
        raise StructureError(f"{where}: {label!r} is not an element symbol")
    key: str | int = int(m.group(1)) if m.group(1).isdigit() else m.group(1)
    try:
        return element(key).symbol
    except UnknownElement:
        # labels like 'Fe1' or 'O_a' keep the symbol in front
        if isinstance(key, str) and len(key) == 2:
            try:
                return element(key[0]).symbol
            except UnknownElement:
                pass
        raise StructureError(f"{where}: unknown element {label!r}") from None


def parse_structure(text: str, path: str = "<text>") -> Structure:
    """Parse the first frame of XYZ / extended-XYZ text."""
    lines = text.splitlines()
    if not lines or not lines[0].strip():
        raise StructureError(f"{path}: empty file; an XYZ file starts with the number of atoms")
    head = lines[0].split()
    if len(head) != 1 or not head[0].isdigit():
        raise StructureError(f"{path}, line 1: expected the number of atoms, got {lines[0].strip()!r}")
    count = int(head[0])
    if count < 1:
        raise StructureError(f"{path}, line 1: the file announces {count} atoms")
    if len(lines) < 2 + count:
        raise StructureError(f"{path}: announces {count} atoms but holds only {max(len(lines) - 2, 0)} atom lines")
    comment = lines[1].strip()
    kv = _key_values(comment)
    species_col, pos_col = _columns(kv.get("properties"), f"{path}, line 2")
    lattice = None
    pbc = (False, False, False)
    if "lattice" in kv:
        try:
            lat = np.array([float(x) for x in kv["lattice"].split()], dtype=float)
        except ValueError:
            raise StructureError(f"{path}, line 2: Lattice={kv['lattice']!r} holds a non-number") from None
        if lat.size != 9 or not np.all(np.isfinite(lat)):
            raise StructureError(f"{path}, line 2: Lattice needs 9 numbers (3 vectors in Å), got {lat.size}")
        lattice = lat.reshape(3, 3)
        if abs(np.linalg.det(lattice)) < 1e-6:
            raise StructureError(f"{path}, line 2: the Lattice vectors are linearly dependent")
        pbc = (True, True, True)
        if "pbc" in kv:
            flags = kv["pbc"].split()
            if len(flags) != 3 or any(f.upper() not in ("T", "F", "TRUE", "FALSE", "1", "0") for f in flags):
                raise StructureError(f"{path}, line 2: pbc={kv['pbc']!r} should be three of T/F")
            pbc = tuple(f.upper() in ("T", "TRUE", "1") for f in flags)  # type: ignore[assignment]
    symbols, positions = [], []
    for i in range(count):
        lineno = i + 3
        where = f"{path}, line {lineno}"
        fields = lines[i + 2].split()
        need = max(species_col + 1, pos_col + 3)
        if len(fields) < need:
            raise StructureError(f"{where}: expected at least {need} columns (element and x y z), "
                                 f"got {lines[i + 2].strip()!r}")
        symbols.append(_symbol(fields[species_col], where))
        try:
            xyz = [float(v.replace("D", "E").replace("d", "e")) for v in fields[pos_col:pos_col + 3]]
        except ValueError:
            raise StructureError(f"{where}: the coordinates {' '.join(fields[pos_col:pos_col + 3])!r} "
                                 "are not numbers") from None
        if not all(np.isfinite(xyz)):
            raise StructureError(f"{where}: a coordinate is not finite")
        positions.append(xyz)
    return Structure(path=path, symbols=tuple(symbols), positions=np.array(positions), lattice=lattice,
                     pbc=pbc, comment=comment)


def read_structure(path: str) -> Structure:
    """Read an XYZ or extended-XYZ file; :class:`StructureError` if it cannot be read."""
    if not os.path.exists(path):
        raise StructureError(f"structure file {path!r} does not exist")
    if os.path.isdir(path):
        raise StructureError(f"{path!r} is a directory, not a structure file")
    try:
        with open(path, "rb") as fh:
            raw = fh.read()
    except OSError as exc:
        raise StructureError(f"cannot read structure file {path!r}: {exc.strerror}") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise StructureError(f"{path!r} is not a text file (XYZ or extended XYZ expected)") from None
    return parse_structure(text, path)
