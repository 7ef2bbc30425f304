"""Systems a sweep runs over: atoms and ions by symbol, molecules from XYZ.

A :class:`System` is an immutable description with everything a solver call
needs (element and charge, or XYZ text, charge and multiplicity).  Its
:meth:`System.identity` is what enters the job hash, so editing an XYZ file
gives new jobs while renaming nothing does not.

Atomic ground-state multiplicities follow Hund's first rule applied to each
open subshell of the ground configuration in :mod:`ks1d.elements`:
2S + 1 = 1 + Σ_shells min(n, 2(2l+1) − n).
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any

from ..occupations import ground_state_multiplicity
from .. import elements
from ..errors import ConfigurationError, GeometryError, InputError

_L_OF = {"s": 0, "p": 1, "d": 2, "f": 3, "g": 4}
_ION = re.compile(r"^([A-Za-z]{1,2})(\d*)([+-])?$")


@dataclass(frozen=True)
class System:
    """One atom, ion or molecule.

    ``kind`` is ``"atom"`` (solved on the radial grid unless a property asks
    for a Gaussian basis) or ``"molecule"``.  ``pair`` holds two
    multiplicities for spin-state splittings; ``xyz_b`` the geometry of the
    second state when the two states have their own geometries (adiabatic).  For atoms ``symbol``/``charge``
    are set and ``xyz`` is built on demand; for molecules ``xyz`` holds the
    geometry (Å) as XYZ text.  ``dataset``/``key`` name where a built-in
    system came from (e.g. ``"g2-1"``/``"CH4"``) so that references can be
    looked up; ``source`` says the same in words.
    """

    name: str
    kind: str
    symbol: str | None = None
    charge: int = 0
    multiplicity: int | None = None
    xyz: str | None = None
    dataset: str | None = None
    key: str | None = None
    source: str = ""
    pair: tuple[int, ...] = field(default=())
    xyz_b: str | None = None

    # ------------------------------------------------------------------ helpers
    @property
    def is_atom(self) -> bool:
        return self.kind == "atom"

    @property
    def symbols(self) -> tuple[str, ...]:
        if self.is_atom:
            return (self.symbol,)
        return _structure(self.xyz).symbols

    @property
    def is_diatomic(self) -> bool:
        return not self.is_atom and len(self.symbols) == 2

    def geometry_xyz(self) -> str:
        """XYZ text of the system (a single atom at the origin for atoms)."""
        if self.xyz is not None:
            return self.xyz
        return f"1\n{self.name}\n{self.symbol} 0.0 0.0 0.0\n"

    def ground_multiplicity(self) -> int:
        """2S+1 of the system as used for Gaussian-basis calculations."""
        if self.multiplicity is not None:
            return self.multiplicity
        if self.is_atom:
            return atom_multiplicity(self.symbol, self.charge)
        nelec = sum(elements.atomic_number(s) for s in self.symbols) - self.charge
        return 1 if nelec % 2 == 0 else 2

    def identity(self) -> dict[str, Any]:
        """The fields that define the calculation (what the job hash sees)."""
        d: dict[str, Any] = {"kind": self.kind, "charge": self.charge}
        if self.is_atom:
            d["symbol"] = self.symbol
        else:
            d["xyz"] = normalise_xyz(self.xyz)
        if self.multiplicity is not None:
            d["multiplicity"] = self.multiplicity
        if self.pair:
            d["pair"] = list(self.pair)
        if self.xyz_b is not None:
            d["xyz_b"] = normalise_xyz(self.xyz_b)
        return d

    def to_dict(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "kind": self.kind,
            "symbol": self.symbol,
            "charge": self.charge,
            "multiplicity": self.multiplicity,
            "xyz": self.xyz,
            "dataset": self.dataset,
            "key": self.key,
            "source": self.source,
            "pair": list(self.pair),
            "xyz_b": self.xyz_b,
        }

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> "System":
        d = dict(d)
        d["pair"] = tuple(d.get("pair") or ())
        return cls(**d)


# ---------------------------------------------------------------------- atoms
def expand_configuration(config: str) -> list[tuple[int, int, int]]:
    """'[Ar] 3d6 4s2' → [(1,0,2), (2,0,2), (2,1,6), ..., (3,2,6), (4,0,2)] as (n, l, occupation)."""
    text = config.strip()
    out: list[tuple[int, int, int]] = []
    m = re.match(r"^\[([A-Z][a-z]?)\]\s*(.*)$", text)
    if m:
        core = elements.CORES.get(m.group(1))
        if core is None:
            raise ConfigurationError(f"unknown core [{m.group(1)}] in configuration '{config}'")
        out.extend(expand_configuration(core))
        text = m.group(2)
    for tok in text.split():
        t = re.match(r"^(\d+)([spdfg])(\d+)$", tok)
        if not t:
            raise ConfigurationError(f"cannot read subshell '{tok}' in configuration '{config}'")
        out.append((int(t.group(1)), _L_OF[t.group(2)], int(t.group(3))))
    return out


def hund_unpaired(config: str) -> int:
    """Number of unpaired electrons by Hund's first rule: Σ min(n, 2(2l+1) − n)."""
    total = 0
    for _, l, occ in expand_configuration(config):
        cap = 2 * (2 * l + 1)
        if occ > cap:
            raise ConfigurationError(f"subshell with l={l} holds at most {cap} electrons, got {occ}")
        total += min(occ, cap - occ)
    return total


def atom_multiplicity(symbol: str, charge: int = 0) -> int:
    """Ground-state 2S+1 of an atom or atomic ion, as the radial solver assigns it
    (Hund's rule on the NIST ground configuration, ions by ks1d.occupations' rules)."""
    return ground_state_multiplicity(symbol, charge)


def parse_atom(text: str) -> System:
    """'Fe' → neutral Fe; 'Na+' / 'O-' / 'Fe2+' / 'O2-' → ions."""
    m = _ION.match(text.strip())
    if not m:
        raise InputError(f"'{text}' is not an atom or ion such as 'Fe', 'Na+', 'O-' or 'Fe2+'")
    sym = elements.symbol(m.group(1))
    mag = int(m.group(2)) if m.group(2) else 1
    if m.group(3) is None:
        if m.group(2):
            raise InputError(f"'{text}': a charge number needs a sign, e.g. '{sym}{m.group(2)}+'")
        charge = 0
    else:
        charge = mag if m.group(3) == "+" else -mag
    name = sym if charge == 0 else f"{sym}{'' if abs(charge) == 1 else abs(charge)}{'+' if charge > 0 else '-'}"
    if elements.atomic_number(sym) - charge <= 0:
        raise ConfigurationError(f"'{text}' has no electrons left")
    return System(name=name, kind="atom", symbol=sym, charge=charge, source="element symbol")


# ------------------------------------------------------------------ molecules
def _structure(xyz: str):
    from ..structure import parse_xyz_text

    return parse_xyz_text(xyz)


def normalise_xyz(xyz: str) -> str:
    """Canonical XYZ text: count, empty comment, 'Sym x y z' with 8 decimals (for hashing)."""
    st = _structure(xyz)
    rows = [f"{sym} {x:.8f} {y:.8f} {z:.8f}" for sym, (x, y, z) in zip(st.symbols, st.positions)]
    return f"{len(rows)}\n\n" + "\n".join(rows) + "\n"


def molecule_from_xyz_file(path: str, name: str | None = None, charge: int = 0,
                           multiplicity: int | None = None) -> System:
    """A molecule from a structure file (any format :func:`ks1d.structure.read_structure` reads)."""
    import os

    from ..gaussian.geometry import geometry_from_structure
    from ..structure import read_structure

    st = read_structure(path)
    geometry_from_structure(st)  # refuses periodic cells and overlapping nuclei, with the file named
    xyz = normalise_xyz(st.to_xyz(comment=""))
    stem = os.path.splitext(os.path.basename(path))[0]
    return System(name=name or stem, kind="molecule", charge=int(charge), multiplicity=multiplicity,
                  xyz=xyz, source=f"structure file {os.path.basename(path)}")


def bond_length(system: System) -> float:
    """Distance (Å) between the two atoms of a diatomic."""
    import math

    st = _structure(system.xyz)
    if st.natom != 2:
        raise GeometryError(f"'{system.name}' is not a diatomic ({st.natom} atoms)")
    return math.dist(st.positions[0], st.positions[1])


def diatomic_xyz(sym_a: str, sym_b: str, r_angstrom: float) -> str:
    """XYZ text of a diatomic along z, centred at the origin."""
    h = 0.5 * r_angstrom
    return f"2\n\n{sym_a} 0.0 0.0 {-h:.10f}\n{sym_b} 0.0 0.0 {h:.10f}\n"
