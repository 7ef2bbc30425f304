"""Curated reference data shipped with ks1d, and its loader.

Every number lives in a CSV file beside this module with the columns

    quantity, key, value, unit, source, from_memory, note

one value per row.  ``source`` names the publication or dataset the value
comes from; ``from_memory`` is ``true`` when the value was recalled by the
person who entered it rather than read from a file or package installed at
the time (such values are exactly as trustworthy as that memory, and a value
that fails a check is removed, never adjusted).  Statements that are not
numbers (e.g. "He has no bound anion") live in files with a ``statement``
column instead of ``value`` and ``unit``.

Files are read once and cached; values are returned as immutable
:class:`ReferenceValue` objects.  Units are converted only through
:mod:`ks1d.units` (CODATA via scipy.constants).
"""
from __future__ import annotations

import csv
import io
import math
from dataclasses import asdict, dataclass
from functools import cache
from importlib import resources

from .. import units
from ..elements import symbol as _element_symbol
from ..errors import InputError, Ks1dError, UnknownElement


class UnknownReference(InputError):
    """A reference quantity, or an entry of it, that ks1d does not carry."""


class NoReferenceValue(UnknownReference):
    """The quantity does not exist for this key (e.g. the electron affinity of
    an element without a bound anion); the message cites the source."""


class ReferenceDataError(Ks1dError, RuntimeError):
    """A shipped reference file is malformed (a packaging bug, not bad input)."""


@dataclass(frozen=True)
class Quantity:
    """What a reference quantity is: its stored unit and how its keys look."""

    name: str
    unit: str
    key_kind: str  # "element" (symbol or Z accepted) or "molecule" (formula, case-sensitive)
    description: str


#: The quantities ks1d carries.  Values of one quantity are all stored in one unit.
QUANTITIES: dict[str, Quantity] = {
    q.name: q
    for q in (
        Quantity("nist_lda_total_energy", "hartree", "element",
                 "non-relativistic spin-restricted LDA (Slater exchange + VWN correlation) total energy "
                 "of the neutral atom, spherically averaged, NIST SRD 141"),
        Quantity("nist_lsd_total_energy", "hartree", "element",
                 "non-relativistic spin-polarized LSD (Slater exchange + VWN correlation) total energy "
                 "of the neutral atom, spherically averaged, NIST SRD 141"),
        Quantity("nist_lda_homo_eigenvalue", "hartree", "element",
                 "highest occupied orbital eigenvalue of the spin-restricted LDA atom (as nist_lda_total_energy), "
                 "NIST SRD 141"),
        Quantity("hf_limit_total_energy", "hartree", "element",
                 "non-relativistic numerical Hartree-Fock (basis-set limit) total energy of the neutral atom"),
        Quantity("ionisation_energy", "eV", "element",
                 "experimental first ionisation energy of the neutral atom"),
        Quantity("electron_affinity", "eV", "element",
                 "experimental electron affinity of the neutral atom (bound anions only)"),
        Quantity("sd_promotion_energy", "eV", "element",
                 "experimental E(3d^(n+1) 4s^1) - E(3d^n 4s^2), J-averaged lowest terms"),
        Quantity("sp_promotion_energy", "eV", "element",
                 "experimental E(ns^1 np^(k+1)) - E(ns^2 np^k) of a p-block atom, J-averaged high-spin terms"),
        Quantity("diatomic_bond_length", "angstrom", "molecule",
                 "experimental equilibrium bond length r_e of the ground electronic state"),
        Quantity("diatomic_harmonic_frequency", "cm^-1", "molecule",
                 "experimental harmonic vibrational wavenumber omega_e of the ground electronic state"),
        Quantity("diatomic_dissociation_energy", "eV", "molecule",
                 "experimental dissociation energy D_0 (from the v = 0 level) of the ground state"),
    )
}

#: Quantities whose entries are statements rather than numbers.
STATEMENTS: dict[str, Quantity] = {
    q.name: q
    for q in (
        Quantity("no_stable_anion", "", "element",
                 "elements whose singly charged anion has no bound state (negative electron affinity)"),
    )
}

_ALIASES = {"ionization_energy": "ionisation_energy", "ionisation_potential": "ionisation_energy",
            "ionization_potential": "ionisation_energy"}

# unit -> factor that converts a value in that unit to atomic units (hartree or bohr)
_TO_ATOMIC: dict[str, tuple[str, float]] = {
    "hartree": ("energy", 1.0),
    "eV": ("energy", 1.0 / units.HARTREE_TO_EV),
    "kcal/mol": ("energy", 1.0 / units.HARTREE_TO_KCAL_MOL),
    "kJ/mol": ("energy", 1.0 / units.HARTREE_TO_KJ_MOL),
    "cm^-1": ("energy", 1.0 / units.HARTREE_TO_INV_CM),
    "mhartree": ("energy", 1e-3),
    "bohr": ("length", 1.0),
    "angstrom": ("length", units.ANGSTROM_TO_BOHR),
}


def convert(value: float, from_unit: str, to_unit: str) -> float:
    """Convert ``value`` between two of the units above (energies or lengths)."""
    for u in (from_unit, to_unit):
        if u not in _TO_ATOMIC:
            raise UnknownReference(f"unknown unit {u!r}; known units: {', '.join(_TO_ATOMIC)}")
    dim_a, fa = _TO_ATOMIC[from_unit]
    dim_b, fb = _TO_ATOMIC[to_unit]
    if dim_a != dim_b:
        raise UnknownReference(f"cannot convert {from_unit} ({dim_a}) to {to_unit} ({dim_b})")
    return value * fa / fb


@dataclass(frozen=True)
class ReferenceValue:
    """One reference number with its provenance."""

    quantity: str
    key: str
    value: float
    unit: str
    source: str
    from_memory: bool
    note: str = ""

    def to(self, unit: str) -> float:
        """The value in another unit, e.g. ``ref.to("hartree")`` or ``ref.to("bohr")``."""
        return convert(self.value, self.unit, unit)

    @property
    def atomic_units(self) -> float:
        """The value in hartree (energies) or bohr (lengths)."""
        return self.to("bohr" if _TO_ATOMIC[self.unit][0] == "length" else "hartree")

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True)
class ReferenceStatement:
    """One non-numerical reference fact with its provenance."""

    quantity: str
    key: str
    statement: str
    source: str
    from_memory: bool
    note: str = ""

    def to_dict(self) -> dict:
        return asdict(self)


_VALUE_COLUMNS = ("quantity", "key", "value", "unit", "source", "from_memory", "note")
_STATEMENT_COLUMNS = ("quantity", "key", "statement", "source", "from_memory", "note")


def _parse_bool(text: str, where: str) -> bool:
    t = text.strip().lower()
    if t in ("true", "false"):
        return t == "true"
    raise ReferenceDataError(f"{where}: from_memory must be 'true' or 'false', got {text!r}")


def _read(name: str) -> tuple[list[str], list[dict[str, str]]]:
    text = resources.files(__package__).joinpath(name).read_text(encoding="utf-8")
    reader = csv.DictReader(io.StringIO(text))
    rows = list(reader)
    return list(reader.fieldnames or []), rows


def _csv_files() -> list[str]:
    return sorted(p.name for p in resources.files(__package__).iterdir() if p.name.endswith(".csv"))


@cache
def _load() -> tuple[dict[str, dict[str, ReferenceValue]], dict[str, dict[str, ReferenceStatement]]]:
    """Read every CSV file of the package once: (values by quantity and key, statements likewise)."""
    values: dict[str, dict[str, ReferenceValue]] = {q: {} for q in QUANTITIES}
    statements: dict[str, dict[str, ReferenceStatement]] = {q: {} for q in STATEMENTS}
    for name in _csv_files():
        header, rows = _read(name)
        if tuple(header) == _VALUE_COLUMNS:
            parse, store = _value_from_row, values
        elif tuple(header) == _STATEMENT_COLUMNS:
            parse, store = _statement_from_row, statements
        else:
            raise ReferenceDataError(f"{name}: unexpected header {header}; expected {_VALUE_COLUMNS} "
                                     f"or {_STATEMENT_COLUMNS}")
        for line, row in enumerate(rows, start=2):
            entry = parse(row, f"{name}:{line}")
            table = store[entry.quantity]
            if entry.key in table:
                raise ReferenceDataError(f"{name}:{line}: duplicate entry {entry.quantity}[{entry.key}]")
            table[entry.key] = entry
    return values, statements


def _common(row: dict[str, str], where: str, registry: dict[str, Quantity]) -> tuple[Quantity, str, str, bool]:
    q = registry.get(row["quantity"].strip())
    if q is None:
        raise ReferenceDataError(f"{where}: unknown quantity {row['quantity']!r}")
    key = row["key"].strip()
    if q.key_kind == "element":
        try:
            canonical = _element_symbol(key)
        except UnknownElement as exc:
            raise ReferenceDataError(f"{where}: {exc}") from None
        if canonical != key:
            raise ReferenceDataError(f"{where}: write the element as {canonical!r}, not {key!r}")
    source = row["source"].strip()
    if not source:
        raise ReferenceDataError(f"{where}: every entry needs a source")
    return q, key, source, _parse_bool(row["from_memory"], where)


def _value_from_row(row: dict[str, str], where: str) -> ReferenceValue:
    q, key, source, mem = _common(row, where, QUANTITIES)
    unit = row["unit"].strip()
    if unit != q.unit:
        raise ReferenceDataError(f"{where}: {q.name} is stored in {q.unit}, not {unit!r}")
    try:
        value = float(row["value"])
    except ValueError:
        raise ReferenceDataError(f"{where}: value {row['value']!r} is not a number") from None
    if not math.isfinite(value):
        raise ReferenceDataError(f"{where}: value {row['value']!r} is not finite")
    return ReferenceValue(q.name, key, value, unit, source, mem, (row.get("note") or "").strip())


def _statement_from_row(row: dict[str, str], where: str) -> ReferenceStatement:
    q, key, source, mem = _common(row, where, STATEMENTS)
    statement = row["statement"].strip()
    if not statement:
        raise ReferenceDataError(f"{where}: empty statement")
    return ReferenceStatement(q.name, key, statement, source, mem, (row.get("note") or "").strip())


def _quantity(name: str, registry: dict[str, Quantity]) -> Quantity:
    n = _ALIASES.get(name, name)
    if n not in registry:
        import difflib

        close = difflib.get_close_matches(name, list(registry), n=1)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        raise UnknownReference(f"no reference quantity {name!r}{hint} (available: {', '.join(registry)})")
    return registry[n]


def _canonical_key(q: Quantity, key: str | int) -> str:
    if q.key_kind == "element":
        try:
            return _element_symbol(key)
        except UnknownElement as exc:
            raise UnknownReference(f"{q.name}: {exc}") from None
    if not isinstance(key, str):
        raise UnknownReference(f"{q.name} is keyed by molecular formula (e.g. 'N2'), got {key!r}")
    return key.strip()


def reference_value(quantity: str, key: str | int) -> ReferenceValue:
    """The reference value of ``quantity`` for ``key``.

    ``key`` is an element (symbol in any case, or atomic number) for atomic
    quantities and a formula such as ``"CO"`` (case-sensitive) for diatomics.

    >>> reference_value("nist_lda_total_energy", "Ne").value  # doctest: +SKIP
    -128.233481
    """
    q = _quantity(quantity, QUANTITIES)
    k = _canonical_key(q, key)
    table = _load()[0][q.name]
    if k in table:
        return table[k]
    if q.name == "electron_affinity":
        st = _load()[1]["no_stable_anion"].get(k)
        if st is not None:
            raise NoReferenceValue(f"{k} has no electron affinity to compare with: {st.statement} "
                                   f"(source: {st.source})")
    raise UnknownReference(f"no {q.name} reference for {k!r}; available: {', '.join(table) or 'none'}")


def reference_table(quantity: str) -> tuple[ReferenceValue, ...]:
    """All values of ``quantity`` (in file order: by Z for elements)."""
    q = _quantity(quantity, QUANTITIES)
    return tuple(_load()[0][q.name].values())


def reference_statement(quantity: str, key: str | int) -> ReferenceStatement:
    """The reference statement of ``quantity`` (e.g. ``"no_stable_anion"``) for ``key``."""
    q = _quantity(quantity, STATEMENTS)
    k = _canonical_key(q, key)
    table = _load()[1][q.name]
    if k not in table:
        raise UnknownReference(f"no {q.name} statement for {k!r}; available: {', '.join(table)}")
    return table[k]


def reference_statements(quantity: str) -> tuple[ReferenceStatement, ...]:
    """All statements of ``quantity``."""
    q = _quantity(quantity, STATEMENTS)
    return tuple(_load()[1][q.name].values())


def has_stable_anion(element: str | int) -> bool | None:
    """True if ks1d carries a measured electron affinity for the element, False if
    the reference data state it has no bound anion, None if ks1d does not know."""
    s = _canonical_key(QUANTITIES["electron_affinity"], element)
    values, statements = _load()
    if s in values["electron_affinity"]:
        return True
    if s in statements["no_stable_anion"]:
        return False
    return None
