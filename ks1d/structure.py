"""The one structure reader: XYZ and extended XYZ by ks1d, every other format through ASE.

:func:`read_structure` takes a file path (any format that ``ase.io.read``
reads: CIF, PDB, extended XYZ, the structure inputs of the common plane-wave
codes, and more) or XYZ text, and returns a
:class:`Structure` — elements, positions in ångström, cell and periodicity.
The molecule solver, the report, sweeps and ``basis-error --xyz`` all read
through it.

XYZ (and extended XYZ) is parsed by ks1d itself so that every error names the
file and the line.  The format: line 1 holds the number of atoms, line 2 a
comment, then one line per atom ``SYMBOL x y z`` in ångström.  Bare atom lines
(no count, no comment) are accepted in XYZ *text*.  Extended XYZ puts
key=value pairs on the comment line; two of them matter here:

* ``Properties=species:S:1:pos:R:3:...`` — which columns hold the element and
  the Cartesian position (default: column 1 and columns 2–4);
* ``Lattice="ax ay az bx by bz cx cy cz"`` (Å) with optional ``pbc="T T T"``.

Two atoms count as bonded (:func:`bonded_pairs`) when

    d(A, B) < f · (r_cov(A) + r_cov(B)),   f = 1.2

with the covalent radii of B. Cordero et al., Dalton Trans. 2008, 2832 (as
tabulated in ``pyscf.data.radii.COVALENT``: carbon takes its sp² value 0.73 Å,
iron the mean of its low- and high-spin values); the factor 1.2 is common
practice for bond perception.  Along periodic directions the minimum image
over the 27 neighbouring cells counts.

Text is decoded as UTF-8; a file that is not valid UTF-8 is decoded as
Latin-1 (every byte is a Latin-1 character, and the numbers and element
symbols of a structure file are ASCII either way).
"""
from __future__ import annotations

import io
import os
import re
import shlex
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .elements import element
from .errors import GeometryError, UnknownElement

#: file extensions read by ks1d's own XYZ parser (everything else goes to ASE)
XYZ_SUFFIXES = (".xyz", ".extxyz")
#: formats named in error messages; ASE reads many more (``ase.io.formats.ioformats``)
COMMON_FORMATS = ("xyz", "extxyz", "cif", "pdb", "cube", "json/db (ASE)",
                  "the structure inputs of the common plane-wave and molecular codes (by ASE format name)")


#: bond perception: d(A, B) < BOND_FACTOR · (r_cov,A + r_cov,B) (common practice)
BOND_FACTOR = 1.2


class StructureError(GeometryError):
    """A structure that cannot be read: names the file, the line where known, and what is wrong."""


@dataclass(frozen=True, eq=False)
class Structure:
    """Atoms of one structure: symbols, positions (Å), cell (Å, rows a b c) and periodicity."""

    source: str
    symbols: tuple[str, ...]
    positions: np.ndarray  # (N, 3) in Å
    cell: np.ndarray | None  # (3, 3) rows a, b, c in Å, or None
    pbc: tuple[bool, bool, bool]
    comment: str = ""
    format: str = "xyz"

    @property
    def numbers(self) -> tuple[int, ...]:
        return tuple(element(s).Z for s in self.symbols)

    @property
    def elements(self) -> tuple[str, ...]:
        """Distinct elements in order of first appearance."""
        return tuple(dict.fromkeys(self.symbols))

    @property
    def periodic(self) -> bool:
        return self.cell is not None and any(self.pbc)

    @property
    def natom(self) -> int:
        return len(self.symbols)

    def bonded_pairs(self, factor: float | None = None) -> tuple[tuple[str, str], ...]:
        """Element pairs (sorted by Z) with at least one bond (see :func:`bonded_pairs`)."""
        return bonded_pairs(self.symbols, self.positions, self.cell, self.pbc,
                            BOND_FACTOR if factor is None else factor)

    def to_xyz(self, comment: str | None = None) -> str:
        """Plain XYZ text (Å), 10 decimals."""
        lines = [str(self.natom), self.comment if comment is None else comment]
        lines += [f"{s} {x:.10f} {y:.10f} {z:.10f}" for s, (x, y, z) in zip(self.symbols, self.positions)]
        return "\n".join(lines) + "\n"


# ------------------------------------------------------------------ entry point
def read_structure(source, format: str | None = None) -> Structure:
    """A :class:`Structure` from a file path (any ASE format; XYZ by ks1d) or XYZ text.

    ``format`` forces an ASE format name for files without a telling extension.
    Multi-frame files give their first frame.
    """
    if isinstance(source, Structure):
        return source
    if isinstance(source, Path) or (isinstance(source, str) and _looks_like_path(source)):
        return _read_file(str(source), format)
    if isinstance(source, str):
        return parse_xyz_text(source)
    raise StructureError(f"a structure must be a file path or XYZ text, got {type(source).__name__}")


def _looks_like_path(text: str) -> bool:
    s = text.strip()
    return bool(s) and "\n" not in s and (os.path.exists(s) or Path(s).suffix != "" or os.sep in s)


def _decode(raw: bytes) -> str:
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        return raw.decode("latin-1")


def _read_file(path: str, format: str | None) -> Structure:
    if not os.path.exists(path):
        raise StructureError(f"structure file '{path}' does not exist")
    if os.path.isdir(path):
        raise StructureError(f"'{path}' is a directory, not a structure file")
    try:
        with open(path, "rb") as fh:
            raw = fh.read()
    except OSError as exc:
        raise StructureError(f"cannot read structure file '{path}': {exc.strerror}") from None
    if b"\x00" in raw[:4096] and not (format or "").lower().startswith(("json", "db", "traj")) \
            and not path.lower().endswith((".traj", ".db", ".json")):
        raise StructureError(f"'{path}' is a binary file, not a structure file "
                             f"(supported formats include {', '.join(COMMON_FORMATS)})")
    text = _decode(raw)
    fmt = (format or "").lower()
    if fmt in ("xyz", "extxyz") or (not fmt and path.lower().endswith(XYZ_SUFFIXES)):
        return parse_xyz_text(text, path, require_header=True)
    return _read_with_ase(path, text, format)


def _read_with_ase(path: str, text: str, format: str | None) -> Structure:
    """Any format ASE reads; its errors become one line naming the file and the formats."""
    import ase.io
    from ase.io.formats import UnknownFileTypeError

    supported = f"supported formats include {', '.join(COMMON_FORMATS)} (anything ase.io.read reads)"
    try:
        try:
            atoms = ase.io.read(path, index=0, format=format)
        except UnicodeDecodeError:  # a reader that opened the file as UTF-8 text: hand it the decoded text
            from ase.io.formats import filetype

            fmt = format or filetype(io.BytesIO(text.encode("latin-1")), guess=True)
            atoms = ase.io.read(io.StringIO(text), index=0, format=fmt)
    except UnknownFileTypeError:
        raise StructureError(f"cannot tell the format of '{path}'; {supported}, "
                             "or name the format explicitly") from None
    except StructureError:
        raise
    except Exception as exc:  # noqa: BLE001 - the readers raise anything; keep one line
        first = (str(exc).strip().splitlines() or [type(exc).__name__])[0]
        raise StructureError(f"cannot read '{path}' as a structure ({type(exc).__name__}: {first}); "
                             f"{supported}") from None
    if isinstance(atoms, list):  # some readers return all frames regardless of index
        if not atoms:
            raise StructureError(f"'{path}' holds no structure")
        atoms = atoms[0]
    symbols = []
    for i, sym in enumerate(atoms.get_chemical_symbols(), 1):
        try:
            symbols.append(element(sym).symbol)
        except UnknownElement:
            raise StructureError(f"{path}: atom {i} is {sym!r}, outside ks1d's elements Z = 1-92") from None
    if not symbols:
        raise StructureError(f"'{path}' holds no atoms")
    pbc = tuple(bool(p) for p in atoms.pbc)
    cell = np.array(atoms.cell[:], dtype=float)
    has_cell = abs(np.linalg.det(cell)) > 1e-6
    positions = np.array(atoms.get_positions(), dtype=float)
    if not np.all(np.isfinite(positions)):
        raise StructureError(f"{path}: a coordinate is not finite")
    fmt = format or _ase_format_name(path)
    return Structure(source=path, symbols=tuple(symbols), positions=positions,
                     cell=cell if has_cell else None, pbc=pbc if has_cell else (False, False, False),
                     comment=str(atoms.info.get("comment", "")), format=fmt)


def _ase_format_name(path: str) -> str:
    try:
        from ase.io.formats import filetype

        return str(filetype(path, guess=True))
    except Exception:  # noqa: BLE001
        return "unknown"


# ------------------------------------------------------------------ XYZ and extended XYZ
def parse_xyz_text(text: str, where: str = "<text>", require_header: bool = False) -> Structure:
    """Parse the first frame of XYZ / extended-XYZ text (coordinates in ångström).

    ``require_header`` (files) insists on the atom count on line 1; XYZ text may
    also be bare ``SYMBOL x y z`` lines.
    """
    lines = text.replace("\r\n", "\n").replace("\r", "\n").split("\n")
    while lines and not lines[-1].strip():
        lines.pop()
    if not lines or not any(ln.strip() for ln in lines):
        raise StructureError(f"{where}: empty structure: no atoms given")
    head = lines[0].split()
    comment = ""
    kv: dict[str, str] = {}
    if len(head) == 1 and head[0].lstrip("+-").isdigit():
        count = int(head[0])
        if count < 1:
            raise StructureError(f"{where}, line 1: the header announces {count} atoms; a structure needs at least one")
        comment = lines[1].strip() if len(lines) > 1 else ""
        kv = _key_values(comment)
        body = [(i + 3, ln) for i, ln in enumerate(lines[2:2 + count])]
        body = [(no, ln) for no, ln in body if ln.strip()]
        if len(body) < count:
            raise StructureError(f"{where}: the header announces {count} atoms but {len(body)} atom lines follow")
    elif require_header:
        raise StructureError(f"{where}, line 1: expected the number of atoms, got {lines[0].strip()!r}")
    else:
        body = [(i + 1, ln) for i, ln in enumerate(lines) if ln.strip()]
    species_col, pos_col = _columns(kv.get("properties"), f"{where}, line 2")
    cell, pbc = _lattice(kv, f"{where}, line 2")
    symbols, positions = [], []
    need = max(species_col + 1, pos_col + 3)
    for no, ln in body:
        loc = f"{where}, line {no}"
        fields = ln.split()
        if len(fields) < need:
            raise StructureError(f"{loc}: expected 'SYMBOL x y z', got {ln.strip()!r}")
        symbols.append(_symbol(fields[species_col], loc))
        xyz = []
        for axis, tok in zip("xyz", fields[pos_col:pos_col + 3]):
            try:
                v = float(tok.replace("D", "E").replace("d", "e"))
            except ValueError:
                raise StructureError(f"{loc}: {axis} coordinate {tok!r} of atom {fields[species_col]!r} "
                                     "is not a number") from None
            if not np.isfinite(v):
                raise StructureError(f"{loc}: {axis} coordinate of atom {fields[species_col]!r} is not finite")
            xyz.append(v)
        positions.append(xyz)
    fmt = "extxyz" if ("properties" in kv or "lattice" in kv) else "xyz"
    return Structure(source=where, symbols=tuple(symbols), positions=np.array(positions, dtype=float),
                     cell=cell, pbc=pbc, comment=comment, format=fmt)


def _key_values(comment: str) -> dict[str, str]:
    """key=value pairs of an extended-XYZ comment line (values may be quoted)."""
    out: dict[str, str] = {}
    if "=" not in comment:
        return out
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


def _lattice(kv: dict[str, str], where: str) -> tuple[np.ndarray | None, tuple[bool, bool, bool]]:
    if "lattice" not in kv:
        return None, (False, False, False)
    try:
        lat = np.array([float(x) for x in kv["lattice"].split()], dtype=float)
    except ValueError:
        raise StructureError(f"{where}: Lattice={kv['lattice']!r} holds a non-number") from None
    if lat.size != 9 or not np.all(np.isfinite(lat)):
        raise StructureError(f"{where}: Lattice needs 9 numbers (3 vectors in Å), got {lat.size}")
    cell = lat.reshape(3, 3)
    if abs(np.linalg.det(cell)) < 1e-6:
        raise StructureError(f"{where}: the Lattice vectors are linearly dependent")
    pbc = (True, True, True)
    if "pbc" in kv:
        flags = kv["pbc"].split()
        if len(flags) != 3 or any(f.upper() not in ("T", "F", "TRUE", "FALSE", "1", "0") for f in flags):
            raise StructureError(f"{where}: pbc={kv['pbc']!r} should be three of T/F")
        pbc = tuple(f.upper() in ("T", "TRUE", "1") for f in flags)  # type: ignore[assignment]
    return cell, pbc


def _symbol(label: str, where: str) -> str:
    """Element symbol of an atom label ('Fe', 'fe', '26', 'Fe1', 'O_a')."""
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
        raise StructureError(f"{where}: unknown element symbol {label!r}") from None


# ------------------------------------------------------------------ bonds
def covalent_radius(symbol: str) -> float:
    """Covalent radius (Å) of Cordero et al. (2008), from pyscf.data.radii.COVALENT (bohr)."""
    from pyscf.data.radii import COVALENT

    from .units import BOHR_TO_ANGSTROM

    return float(COVALENT[element(symbol).Z]) * BOHR_TO_ANGSTROM


def bonded_pairs(symbols, positions, cell=None, pbc=(False, False, False),
                 factor: float = BOND_FACTOR) -> tuple[tuple[str, str], ...]:
    """Element pairs joined by d < factor·(r_A + r_B) (minimum image along periodic axes), sorted by Z."""
    syms = list(symbols)
    n = len(syms)
    if n < 2 and not (cell is not None and any(pbc)):
        return ()
    pos = np.asarray(positions, dtype=float)
    radii = np.array([covalent_radius(s) for s in syms])
    shifts = [np.zeros(3)]
    if cell is not None and any(pbc):
        ranges = [(-1, 0, 1) if p else (0,) for p in pbc]
        shifts = [i * cell[0] + j * cell[1] + k * cell[2]
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
