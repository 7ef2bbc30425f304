"""Element symbols, atomic numbers and ground-state configurations, Z = 1-92.

Ground-state configurations are those of the NIST Atomic Spectra Database,
"Ground levels and ionization energies for the neutral atoms" (Kramida,
Ralchenko, Reader and NIST ASD Team), which include the d- and f-block
exceptions (Cr 3d5 4s1, Cu 3d10 4s1, Nb 4d4 5s1, Pd 4d10, Ce 4f1 5d1 6s2,
Pt 4f14 5d9 6s1, Pa 5f2 6d1 7s2, U 5f3 6d1 7s2, ...).  Entries here are
written from that table (from memory) with the noble-gas core in brackets.
"""
from __future__ import annotations

from dataclasses import dataclass

from .errors import UnknownElement

SYMBOLS: tuple[str, ...] = (
    "H", "He",
    "Li", "Be", "B", "C", "N", "O", "F", "Ne",
    "Na", "Mg", "Al", "Si", "P", "S", "Cl", "Ar",
    "K", "Ca", "Sc", "Ti", "V", "Cr", "Mn", "Fe", "Co", "Ni", "Cu", "Zn",
    "Ga", "Ge", "As", "Se", "Br", "Kr",
    "Rb", "Sr", "Y", "Zr", "Nb", "Mo", "Tc", "Ru", "Rh", "Pd", "Ag", "Cd",
    "In", "Sn", "Sb", "Te", "I", "Xe",
    "Cs", "Ba", "La", "Ce", "Pr", "Nd", "Pm", "Sm", "Eu", "Gd", "Tb", "Dy",
    "Ho", "Er", "Tm", "Yb", "Lu", "Hf", "Ta", "W", "Re", "Os", "Ir", "Pt",
    "Au", "Hg", "Tl", "Pb", "Bi", "Po", "At", "Rn",
    "Fr", "Ra", "Ac", "Th", "Pa", "U",
)

NAMES: tuple[str, ...] = (
    "hydrogen", "helium", "lithium", "beryllium", "boron", "carbon", "nitrogen", "oxygen",
    "fluorine", "neon", "sodium", "magnesium", "aluminium", "silicon", "phosphorus", "sulfur",
    "chlorine", "argon", "potassium", "calcium", "scandium", "titanium", "vanadium", "chromium",
    "manganese", "iron", "cobalt", "nickel", "copper", "zinc", "gallium", "germanium", "arsenic",
    "selenium", "bromine", "krypton", "rubidium", "strontium", "yttrium", "zirconium", "niobium",
    "molybdenum", "technetium", "ruthenium", "rhodium", "palladium", "silver", "cadmium", "indium",
    "tin", "antimony", "tellurium", "iodine", "xenon", "caesium", "barium", "lanthanum", "cerium",
    "praseodymium", "neodymium", "promethium", "samarium", "europium", "gadolinium", "terbium",
    "dysprosium", "holmium", "erbium", "thulium", "ytterbium", "lutetium", "hafnium", "tantalum",
    "tungsten", "rhenium", "osmium", "iridium", "platinum", "gold", "mercury", "thallium", "lead",
    "bismuth", "polonium", "astatine", "radon", "francium", "radium", "actinium", "thorium",
    "protactinium", "uranium",
)

#: Noble-gas cores usable in configuration strings.
CORES: dict[str, str] = {
    "He": "1s2",
    "Ne": "[He] 2s2 2p6",
    "Ar": "[Ne] 3s2 3p6",
    "Kr": "[Ar] 3d10 4s2 4p6",
    "Xe": "[Kr] 4d10 5s2 5p6",
    "Rn": "[Xe] 4f14 5d10 6s2 6p6",
}

_GROUND: dict[str, str] = {
    "H": "1s1", "He": "1s2",
    "Li": "[He] 2s1", "Be": "[He] 2s2", "B": "[He] 2s2 2p1", "C": "[He] 2s2 2p2",
    "N": "[He] 2s2 2p3", "O": "[He] 2s2 2p4", "F": "[He] 2s2 2p5", "Ne": "[He] 2s2 2p6",
    "Na": "[Ne] 3s1", "Mg": "[Ne] 3s2", "Al": "[Ne] 3s2 3p1", "Si": "[Ne] 3s2 3p2",
    "P": "[Ne] 3s2 3p3", "S": "[Ne] 3s2 3p4", "Cl": "[Ne] 3s2 3p5", "Ar": "[Ne] 3s2 3p6",
    "K": "[Ar] 4s1", "Ca": "[Ar] 4s2", "Sc": "[Ar] 3d1 4s2", "Ti": "[Ar] 3d2 4s2",
    "V": "[Ar] 3d3 4s2", "Cr": "[Ar] 3d5 4s1", "Mn": "[Ar] 3d5 4s2", "Fe": "[Ar] 3d6 4s2",
    "Co": "[Ar] 3d7 4s2", "Ni": "[Ar] 3d8 4s2", "Cu": "[Ar] 3d10 4s1", "Zn": "[Ar] 3d10 4s2",
    "Ga": "[Ar] 3d10 4s2 4p1", "Ge": "[Ar] 3d10 4s2 4p2", "As": "[Ar] 3d10 4s2 4p3",
    "Se": "[Ar] 3d10 4s2 4p4", "Br": "[Ar] 3d10 4s2 4p5", "Kr": "[Ar] 3d10 4s2 4p6",
    "Rb": "[Kr] 5s1", "Sr": "[Kr] 5s2", "Y": "[Kr] 4d1 5s2", "Zr": "[Kr] 4d2 5s2",
    "Nb": "[Kr] 4d4 5s1", "Mo": "[Kr] 4d5 5s1", "Tc": "[Kr] 4d5 5s2", "Ru": "[Kr] 4d7 5s1",
    "Rh": "[Kr] 4d8 5s1", "Pd": "[Kr] 4d10", "Ag": "[Kr] 4d10 5s1", "Cd": "[Kr] 4d10 5s2",
    "In": "[Kr] 4d10 5s2 5p1", "Sn": "[Kr] 4d10 5s2 5p2", "Sb": "[Kr] 4d10 5s2 5p3",
    "Te": "[Kr] 4d10 5s2 5p4", "I": "[Kr] 4d10 5s2 5p5", "Xe": "[Kr] 4d10 5s2 5p6",
    "Cs": "[Xe] 6s1", "Ba": "[Xe] 6s2", "La": "[Xe] 5d1 6s2", "Ce": "[Xe] 4f1 5d1 6s2",
    "Pr": "[Xe] 4f3 6s2", "Nd": "[Xe] 4f4 6s2", "Pm": "[Xe] 4f5 6s2", "Sm": "[Xe] 4f6 6s2",
    "Eu": "[Xe] 4f7 6s2", "Gd": "[Xe] 4f7 5d1 6s2", "Tb": "[Xe] 4f9 6s2",
    "Dy": "[Xe] 4f10 6s2", "Ho": "[Xe] 4f11 6s2", "Er": "[Xe] 4f12 6s2",
    "Tm": "[Xe] 4f13 6s2", "Yb": "[Xe] 4f14 6s2", "Lu": "[Xe] 4f14 5d1 6s2",
    "Hf": "[Xe] 4f14 5d2 6s2", "Ta": "[Xe] 4f14 5d3 6s2", "W": "[Xe] 4f14 5d4 6s2",
    "Re": "[Xe] 4f14 5d5 6s2", "Os": "[Xe] 4f14 5d6 6s2", "Ir": "[Xe] 4f14 5d7 6s2",
    "Pt": "[Xe] 4f14 5d9 6s1", "Au": "[Xe] 4f14 5d10 6s1", "Hg": "[Xe] 4f14 5d10 6s2",
    "Tl": "[Xe] 4f14 5d10 6s2 6p1", "Pb": "[Xe] 4f14 5d10 6s2 6p2",
    "Bi": "[Xe] 4f14 5d10 6s2 6p3", "Po": "[Xe] 4f14 5d10 6s2 6p4",
    "At": "[Xe] 4f14 5d10 6s2 6p5", "Rn": "[Xe] 4f14 5d10 6s2 6p6",
    "Fr": "[Rn] 7s1", "Ra": "[Rn] 7s2", "Ac": "[Rn] 6d1 7s2", "Th": "[Rn] 6d2 7s2",
    "Pa": "[Rn] 5f2 6d1 7s2", "U": "[Rn] 5f3 6d1 7s2",
}

_Z_OF = {s.lower(): i + 1 for i, s in enumerate(SYMBOLS)}


@dataclass(frozen=True)
class Element:
    """An element: symbol, atomic number, English name, ground-state configuration."""

    symbol: str
    Z: int
    name: str
    ground_configuration: str


def element(key: str | int) -> Element:
    """Look an element up by symbol (any case), English name or atomic number."""
    if isinstance(key, bool):
        raise UnknownElement(f"element must be a symbol or an atomic number, got {key!r}")
    if isinstance(key, (int,)) or (hasattr(key, "__index__") and not isinstance(key, str)):
        z = int(key)
        if not 1 <= z <= len(SYMBOLS):
            raise UnknownElement(f"atomic number {z} is outside the supported range Z = 1-{len(SYMBOLS)}")
    elif isinstance(key, str):
        k = key.strip()
        if k.isdigit():
            return element(int(k))
        z = _Z_OF.get(k.lower())
        if z is None and k.lower() in NAMES:
            z = NAMES.index(k.lower()) + 1
        if z is None:
            import difflib

            close = difflib.get_close_matches(k.capitalize(), SYMBOLS, n=2)
            hint = f"; did you mean {' or '.join(close)}?" if close else ""
            raise UnknownElement(f"'{key}' is not an element symbol of Z = 1-{len(SYMBOLS)}{hint}")
    else:
        raise UnknownElement(f"element must be a symbol or an atomic number, got {key!r}")
    s = SYMBOLS[z - 1]
    return Element(symbol=s, Z=z, name=NAMES[z - 1], ground_configuration=_GROUND[s])


def atomic_number(key: str | int) -> int:
    return element(key).Z


def symbol(key: str | int) -> str:
    return element(key).symbol
