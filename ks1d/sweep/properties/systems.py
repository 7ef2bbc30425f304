"""Systems a sweep runs over: atoms and ions by symbol, molecules from XYZ text.

A :class:`System` is an immutable description with everything a solver call
needs (element and charge, or XYZ text, charge and multiplicity).  Its
:meth:`System.identity` is what enters the job hash, so editing an XYZ file
gives new jobs while renaming nothing does not.

Multiplicities (:meth:`System.multiplicity_at`), one rule per kind of system:

* atoms and atomic ions: :func:`ks1d.occupations.ground_state_multiplicity`, the spin of the
  radial solver's spin-polarized ground state (Hund's first rule on the NIST ground
  configuration, ions by ks1d's ionisation rules), so Gaussian-basis atoms have the same spin;
* a molecule: its given multiplicity, else the lowest one its electron count allows
  (1 for an even, 2 for an odd count);
* a molecular ion formed by a property (IP, EA): one unpaired electron fewer than the
  molecule, or a doublet from a singlet.
"""
from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from ... import elements
from ...errors import ConfigurationError, GeometryError, InputError
from ...occupations import ground_state_multiplicity

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
        """2S+1 of the system itself as used for Gaussian-basis calculations (see the module docstring)."""
        if self.multiplicity is not None:
            return self.multiplicity
        if self.is_atom:
            return ground_state_multiplicity(self.symbol, self.charge)
        return lowest_multiplicity(sum(elements.atomic_number(s) for s in self.symbols) - self.charge)

    def multiplicity_at(self, charge: int) -> int:
        """2S+1 of this system's species at ``charge`` (its ions, for IPs and EAs; see the module docstring)."""
        if self.is_atom:
            return ground_state_multiplicity(self.symbol, charge)
        if charge == self.charge:
            return self.ground_multiplicity()
        m0 = self.ground_multiplicity()
        return m0 - 1 if m0 > 1 else 2

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
    def from_dict(cls, d: dict[str, Any]) -> System:
        d = dict(d)
        d["pair"] = tuple(d.get("pair") or ())
        return cls(**d)


def lowest_multiplicity(n_electrons: int) -> int:
    """1 for an even and 2 for an odd number of electrons."""
    return 1 if n_electrons % 2 == 0 else 2


# ---------------------------------------------------------------------- atoms
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


def neutral_atom(symbol: str) -> System:
    """The neutral atom ``symbol`` (a canonical element symbol)."""
    return System(name=symbol, kind="atom", symbol=symbol, source="element symbol")


def parse_elements(tokens: Sequence[str]) -> list[str]:
    """Symbols, atomic numbers and ranges ('Li-Ne', '3-10') → element symbols in order, without repeats."""
    out: list[str] = []
    for tok in tokens:
        for part in tok.replace(",", " ").split():
            m = re.match(r"^([A-Za-z]{1,2}|\d+)-([A-Za-z]{1,2}|\d+)$", part)
            if m:
                a, b = elements.atomic_number(m.group(1)), elements.atomic_number(m.group(2))
                if b < a:
                    raise InputError(f"element range '{part}' runs backwards")
                out.extend(elements.symbol(z) for z in range(a, b + 1))
            else:
                out.append(elements.symbol(part))
    if not out:
        raise InputError("give at least one element, e.g. 'ks1d refs H He Li-Ne --xc pbe'")
    return list(dict.fromkeys(out))


# ------------------------------------------------------------------ molecules
def _structure(xyz: str):
    from ...structure import parse_xyz_text

    return parse_xyz_text(xyz)


def normalise_xyz(xyz: str) -> str:
    """Canonical XYZ text: count, empty comment, 'Sym x y z' with 8 decimals (for hashing)."""
    st = _structure(xyz)
    rows = [f"{sym} {x:.8f} {y:.8f} {z:.8f}" for sym, (x, y, z) in zip(st.symbols, st.positions)]
    return f"{len(rows)}\n\n" + "\n".join(rows) + "\n"


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
