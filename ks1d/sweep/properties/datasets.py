"""Built-in systems and the experimental references a sweep compares against.

Two sources feed this layer:

* **ks1d's reference data** (:mod:`ks1d.reference.data`): experimental
  ionisation energies (NIST ASD) and electron affinities, diatomic bond
  lengths and harmonic frequencies (also the geometries of the built-in
  ``diatomics:`` systems, placed at the experimental r_e), s↔d promotion
  energies, and the NIST LSD/LDA and Hartree–Fock-limit total energies.
  Every value there carries its own source and from-memory flag, which this
  module passes on unchanged.
* **The G2-1 set as carried by ASE** (``ase.data.g2_1``; ASE is a core
  dependency of ks1d).  It supplies the
  55 molecules' geometries (MP2(full)/6-31G(d)), their multiplicities (from
  the magnetic moments), experimental adiabatic ionisation energies of its
  atoms and molecules (NIST CCCBDB) and the atomization energies D_e that
  ASE's ``get_atomization_energy`` extrapolates from experimental enthalpies
  of formation with zero-point and thermal corrections:
  Curtiss, Raghavachari, Redfern, Pople, J. Chem. Phys. 106, 1063 (1997);
  Staroverov, Scuseria, Tao, Perdew, J. Chem. Phys. 119, 12129 (2003).
  The G2-1 data are read through ASE at run time, not copied into ks1d.

A reference lookup returns a :class:`Reference` or ``None`` (no reference
known: the sweep still reports the computed value).
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from ... import elements, units
from ...errors import InputError
from ...quantities import quantity as quantity_entry
from ...reference import data
from .systems import System, diatomic_xyz, lowest_multiplicity

#: Description of the G2-1 source used in every reference it yields.
G2_SOURCE = (
    "G2-1 set (Curtiss et al., J. Chem. Phys. 106, 1063 (1997); Staroverov et al., "
    "J. Chem. Phys. 119, 12129 (2003)) as carried by ASE ase.data.g2_1"
)


@dataclass(frozen=True)
class Reference:
    """One reference value: quantity, value in ``unit``, where it comes from."""

    quantity: str
    key: str
    value: float
    unit: str
    source: str
    from_memory: bool = False

    def to_dict(self) -> dict[str, Any]:
        return {
            "quantity": self.quantity,
            "key": self.key,
            "value": self.value,
            "unit": self.unit,
            "source": self.source,
            "from_memory": self.from_memory,
        }


# ------------------------------------------------------------------ G2-1 / ASE
@lru_cache(maxsize=1)
def _g2():
    from ase.data import g2_1  # imported on first use: ASE's start-up is slow

    return g2_1


def g2_1_names() -> tuple[str, ...]:
    """Names of the 55 G2-1 molecules (ASE's keys, e.g. 'CH4', 'CH2_s3B1d')."""
    return tuple(_g2().molecule_names)


def g2_1_atom_names() -> tuple[str, ...]:
    return tuple(_g2().atom_names)


def _g2_entry(key: str) -> dict:
    g = _g2()
    if key not in g.data:
        import difflib

        pool = list(g.molecule_names) + list(g.atom_names)
        fixed = key.replace("0", "O")  # the digit zero for the letter O
        close = [n for n in pool if n.lower() in (key.lower(), fixed.lower())]
        close = close or difflib.get_close_matches(key, pool, n=3)
        hint = f"; did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
        raise InputError(f"'{key}' is not in the G2-1 set{hint}")
    return g.data[key]


def _g2_xyz(entry: dict) -> str:
    syms = list(_g2().string2symbols(entry["symbols"]))
    rows = [f"{s} {x:.8f} {y:.8f} {z:.8f}" for s, (x, y, z) in zip(syms, entry["positions"])]
    return f"{len(rows)}\n{entry['description']}\n" + "\n".join(rows) + "\n"


def g2_1_molecule(key: str) -> System:
    """A G2-1 molecule as a :class:`System` (geometry and multiplicity from ASE's data)."""
    entry = _g2_entry(key)
    if key in _g2().atom_names:
        raise InputError(f"'{key}' is an atom of the G2-1 set; give atoms by symbol")
    mags = entry.get("magmoms")
    mult = int(round(sum(mags))) + 1 if mags else 1
    return System(
        name=key,
        kind="molecule",
        charge=0,
        multiplicity=mult,
        xyz=_g2_xyz(entry),
        dataset="g2-1",
        key=key,
        source=G2_SOURCE + f": {entry['description']}",
    )


def g2_1_diatomics() -> tuple[str, ...]:
    return tuple(k for k in g2_1_names() if len(_g2().data[k]["positions"]) == 2)


#: Adiabatic singlet-triplet pairs of the G2-1 set: (triplet key, singlet key).
G2_STATE_PAIRS: dict[str, tuple[str, str]] = {
    "CH2": ("CH2_s3B1d", "CH2_s1A1d"),
    "SiH2": ("SiH2_s3B1d", "SiH2_s1A1d"),
}


def g2_1_state_pair(name: str) -> System:
    """A singlet-triplet pair of the G2-1 set; the splitting is E(singlet) − E(triplet)."""
    if name not in G2_STATE_PAIRS:
        raise InputError(f"'{name}' is not a G2-1 spin-state pair; known: {', '.join(G2_STATE_PAIRS)}")
    trip, sing = (g2_1_molecule(k) for k in G2_STATE_PAIRS[name])
    return System(
        name=name,
        kind="molecule",
        xyz=trip.xyz,
        xyz_b=sing.xyz,
        pair=(3, 1),
        dataset="g2-1-pair",
        key=name,
        source=G2_SOURCE + f": {G2_STATE_PAIRS[name][0]} and {G2_STATE_PAIRS[name][1]}",
    )


def g2_1_atomization_energy(key: str) -> Reference:
    """Experimental D_e (kcal/mol) of a G2-1 molecule via ASE's extrapolation (ZPE removed)."""
    _g2_entry(key)
    value = float(_g2().get_atomization_energy(key))
    return Reference("atomization_energy", key, value, "kcal/mol",
                     G2_SOURCE + " (D_e from experimental enthalpies of formation, ZPE and thermal corrections)")


def g2_1_ionization_energy(key: str) -> Reference | None:
    entry = _g2_entry(key)
    v = entry.get("ionization energy")
    if v is None:
        return None
    return Reference("ionisation_potential", key, float(v), "eV",
                     G2_SOURCE + " (experimental adiabatic ionisation energy, NIST CCCBDB)")


def g2_1_singlet_triplet(name: str) -> Reference:
    """E(singlet) − E(triplet) in eV from the two states' experimental D_e: D_e(triplet) − D_e(singlet)."""
    trip, sing = G2_STATE_PAIRS[name]
    kcal = float(_g2().get_atomization_energy(trip)) - float(_g2().get_atomization_energy(sing))
    ev = kcal / units.HARTREE_TO_KCAL_MOL * units.HARTREE_TO_EV
    return Reference("spin_splitting", name, ev, "eV",
                     G2_SOURCE + f" (D_e({trip}) − D_e({sing}), adiabatic, ZPE removed)")


# --------------------------------------------------------- ks1d.reference layer
def _from_loader(quantity: str, key: str, ours: str) -> Reference | None:
    """A value from :func:`ks1d.reference.data.reference_value`, or None when it has none."""
    try:
        rv = data.reference_value(quantity, key)
    except InputError:  # UnknownReference / NoReferenceValue: nothing to compare with
        return None
    return Reference(quantity=ours, key=str(rv.key), value=float(rv.value), unit=str(rv.unit),
                     source=str(rv.source), from_memory=bool(rv.from_memory))


def diatomic_names() -> tuple[str, ...]:
    """Diatomics with experimental r_e in ks1d's reference data (formula keys, e.g. 'N2', 'CO')."""
    return tuple(r.key for r in data.reference_table("diatomic_bond_length"))


def _split_formula(formula: str) -> tuple[str, str]:
    parts = re.findall(r"([A-Z][a-z]?)(\d*)", formula)
    syms: list[str] = []
    for sym, n in parts:
        syms.extend([sym] * (int(n) if n else 1))
    if len(syms) != 2 or "".join(f"{a}{b}" for a, b in parts) != formula:
        raise InputError(f"'{formula}' is not a diatomic formula such as 'N2' or 'CO'")
    return syms[0], syms[1]


def diatomic(formula: str) -> System:
    """A diatomic at its experimental r_e (ks1d reference data), in its ground-state multiplicity.

    The multiplicity is read from the ground-state term symbol in the reference
    data's note ('ground state X 3Sigma_g-'); without one it is the G2-1 one
    (from ASE's magnetic moments) when the molecule is in that set, else the
    lowest the electron count allows.  (For the 15 diatomics of ks1d's data the
    three agree wherever more than one applies.)
    """

    ref = _from_loader("diatomic_bond_length", formula, "bond_length")
    if ref is None:
        raise InputError(f"no experimental bond length for diatomic '{formula}' in ks1d's reference data "
                         f"(known: {', '.join(diatomic_names())})")
    a, b = _split_formula(formula)
    term = re.search(r"\bX\s+(\d)", data.reference_value("diatomic_bond_length", formula).note or "")
    if term:
        mult = int(term.group(1))
    elif formula in g2_1_names():
        mult = g2_1_molecule(formula).multiplicity
    else:
        mult = lowest_multiplicity(elements.atomic_number(a) + elements.atomic_number(b))
    return System(name=formula, kind="molecule", multiplicity=mult, xyz=diatomic_xyz(a, b, ref.value),
                  dataset="diatomics", key=formula,
                  source=f"at the experimental r_e = {ref.value} angstrom ({ref.source})")


# ------------------------------------------------------------------- dispatch
_UNIT_ALIASES = {
    "ha": "hartree", "hartree": "hartree", "eh": "hartree", "ev": "eV",
    "kcal/mol": "kcal/mol", "kj/mol": "kJ/mol", "angstrom": "angstrom", "å": "angstrom",
    "bohr": "bohr", "cm^-1": "cm^-1", "cm-1": "cm^-1", "1/cm": "cm^-1",
}


def convert(value: float, unit_from: str, unit_to: str) -> float:
    """Convert between the few units references arrive in."""
    a = _UNIT_ALIASES.get(unit_from.strip().lower(), unit_from)
    b = _UNIT_ALIASES.get(unit_to.strip().lower(), unit_to)
    if a == b or not a:
        return value
    to_ha = {"hartree": 1.0, "eV": 1 / units.HARTREE_TO_EV, "kcal/mol": 1 / units.HARTREE_TO_KCAL_MOL,
             "kJ/mol": 1 / units.HARTREE_TO_KJ_MOL, "cm^-1": 1 / units.HARTREE_TO_INV_CM}
    if a in to_ha and b in to_ha:
        return value * to_ha[a] / to_ha[b]
    to_ang = {"angstrom": 1.0, "bohr": units.BOHR_TO_ANGSTROM}
    if a in to_ang and b in to_ang:
        return value * to_ang[a] / to_ang[b]
    raise InputError(f"cannot convert a reference from '{unit_from}' to '{unit_to}'")


def _in_unit(ref: Reference | None, quantity: str) -> Reference | None:
    if ref is None:
        return None
    unit = quantity_entry(quantity).unit
    if ref.unit == unit:
        return ref if ref.quantity == quantity else Reference(quantity, ref.key, ref.value, unit, ref.source,
                                                              ref.from_memory)
    return Reference(quantity, ref.key, convert(ref.value, ref.unit or unit, unit), unit, ref.source,
                     ref.from_memory)


def _atom_ip(system: System) -> Reference | None:
    ref = _from_loader("ionisation_energy", system.symbol, "ionisation_potential")
    if ref is None and system.symbol in g2_1_atom_names():
        ref = g2_1_ionization_energy(system.symbol)
    return ref


#: Quantities of neutral atoms whose reference is one value per element in ks1d's data.
_ATOM_REFERENCES = {"electron_affinity": "electron_affinity", "sd_promotion": "sd_promotion_energy",
                    "sp_promotion": "sp_promotion_energy"}
#: Quantities of diatomics whose reference is one value per formula in ks1d's data.
_DIATOMIC_REFERENCES = {"bond_length": "diatomic_bond_length", "harmonic_frequency": "diatomic_harmonic_frequency",
                        "dissociation_energy": "diatomic_dissociation_energy"}


def reference_for(quantity: str, system: System, functional: str | None = None,
                  settings: dict[str, Any] | None = None) -> Reference | None:
    """The reference a computed ``quantity`` of ``system`` is compared with, or ``None``.

    Experimental for every quantity except ``total_energy``, whose reference
    (if any) depends on the functional and settings: the NIST LSD/LDA tables
    for the "lda" functional on radial atoms, the numerical Hartree-Fock limit
    for "hf".
    """
    settings = settings or {}
    ref: Reference | None = None
    neutral_atom = system.is_atom and system.charge == 0 and not system.pair
    if quantity in ("ionisation_potential", "homo_vs_ip"):
        if neutral_atom:
            ref = _atom_ip(system)
        elif system.dataset == "g2-1":
            ref = g2_1_ionization_energy(system.key)
    elif quantity in _ATOM_REFERENCES:
        if neutral_atom:
            ref = _from_loader(_ATOM_REFERENCES[quantity], system.symbol, quantity)
    elif quantity == "atomization_energy":
        if system.dataset == "g2-1":
            ref = g2_1_atomization_energy(system.key)
    elif quantity in _DIATOMIC_REFERENCES:
        if system.is_diatomic:
            ref = _from_loader(_DIATOMIC_REFERENCES[quantity], _diatomic_key(system), quantity)
    elif quantity in ("zero_point_energy", "lowest_harmonic_frequency"):
        if system.is_diatomic:  # harmonic constants exist for diatomics only (ks1d data: Huber & Herzberg)
            ref = _diatomic_harmonic(quantity, _diatomic_key(system))
    elif quantity == "spin_splitting":
        if system.dataset == "g2-1-pair":
            ref = g2_1_singlet_triplet(system.key)
    elif quantity == "total_energy":
        if neutral_atom and functional and settings.get("atoms", "radial") == "radial":
            ref = _total_energy_reference(system.symbol, functional, settings.get("spin", "polarized"))
    return _in_unit(ref, quantity)


def _diatomic_key(system: System) -> str:
    return system.key if system.dataset in ("g2-1", "diatomics") else _formula(system)


def _diatomic_harmonic(quantity: str, key: str) -> Reference | None:
    """ω_e (cm⁻¹) of a diatomic as its lowest harmonic wavenumber, or ½ω_e as its harmonic zero-point energy
    (kcal/mol): the harmonic quantities, without the anharmonic −¼ω_e x_e of the true zero-point level."""
    ref = _from_loader("diatomic_harmonic_frequency", key, quantity)
    if ref is None or quantity == "lowest_harmonic_frequency":
        return ref
    kcal = 0.5 * convert(ref.value, ref.unit, "hartree") * units.HARTREE_TO_KCAL_MOL
    return Reference(quantity, ref.key, kcal, "kcal/mol", f"½ω_e from {ref.source}", ref.from_memory)


def _total_energy_reference(symbol: str, functional: str, spin: str) -> Reference | None:
    f = functional.strip().lower()
    if f in ("hf", "hartree-fock"):
        return _from_loader("hf_limit_total_energy", symbol, "total_energy")
    if f in ("lda", "svwn5", "lsda", "lda_x,lda_c_vwn"):
        q = "nist_lsd_total_energy" if spin == "polarized" else "nist_lda_total_energy"
        return _from_loader(q, symbol, "total_energy")
    return None


def _formula(system: System) -> str:
    syms = system.symbols
    if len(syms) == 2 and syms[0] == syms[1]:
        return f"{syms[0]}2"
    return "".join(syms)


