"""The sweep specification: functionals × systems × properties, in TOML.

A spec file reads like this::

    name = "second-row check"
    functionals = ["lda", "pbe", "pbe0"]

    [solver]                  # defaults for every study
    precision = "normal"      # radial atoms
    basis = "def2-svp"        # Gaussian-basis calculations

    [[study]]
    property = "ionisation_potential"
    systems = ["Li", "C", "N", "O"]

    [[study]]
    properties = ["bond_length", "harmonic_frequency"]    # analytic gradients
    systems = ["g2-1:N2", "g2-1:CO", { xyz = "mine.xyz", name = "X2" }]

    [[study]]
    properties = ["optimized_geometry", "zero_point_energy"]
    systems = ["g2-1:H2O", "g2-1:NH3"]

Systems are written as

* an atom or ion: ``"Fe"``, ``"Na+"``, ``"O-"``, ``"Fe2+"`` (or ``{ atom = "C", charge = 0 }``);
* a G2-1 molecule: ``"g2-1:H2O"``; the whole set ``"g2-1:*"``; its diatomics ``"g2-1:diatomics"``;
* a G2-1 singlet–triplet pair: ``"g2-1-pair:CH2"``;
* a diatomic at its experimental r_e from ks1d's reference data: ``"diatomics:N2"``, all of them ``"diatomics:*"``;
* an XYZ file (relative to the spec file): ``"water.xyz"`` or
  ``{ xyz = "water.xyz", name = "water", charge = 0, multiplicity = 1 }``;
* a spin-state pair of one geometry: ``{ atom = "C", multiplicities = [3, 1] }``.

A study may carry a ``label`` (free text) and its own ``functionals``.
Solver keys (in ``[solver]`` or any study, the study winning):
``precision``, ``spin`` (radial atoms), ``atoms`` (``"radial"`` or ``"basis"``:
how atoms are solved), ``basis``, ``scan_points`` and ``scan_step`` (read only by
``diatomic_curve_scan``, the energy-scan method kept for comparison), and the
pass-through tables ``atom_options`` / ``molecule_options``: extra keyword
arguments of :func:`ks1d.radial.scf.solve_atom` / :func:`ks1d.gaussian.scf.solve_molecule`,
with the SCF options of :class:`ks1d.results.SCFOptions` given flat in the
same table (``damping``, ``residual_tolerance``, ``max_iterations``,
``history``, ``energy_tolerance``; ``level_shift`` and ``smearing`` for molecules).
Relativistic radial atoms: ``atom_options = { relativity = "scalar" }`` (or
``"x2c"``; ``nucleus = "gaussian"`` likewise); the options are part of each job's
settings and so of its key, so a stored non-relativistic result is never reused.

Everything is checked while the spec is read, before any job runs and with
the same checks as ``ks1d report`` (:mod:`ks1d.sweep.properties.checks`):
keys, systems, functionals, bases (known, with every element, all-electron),
and that each job's solver can do its functional (the radial solver has no
range-separated hybrids).  A spec file must be UTF-8 (TOML's own rule).
"""
from __future__ import annotations

import difflib
import os

try:
    import tomllib
except ImportError:  # Python 3.10: the same parser as the 'tomli' package
    import tomli as tomllib  # type: ignore[no-redef]
from dataclasses import dataclass
from typing import Any

from .. import elements
from ..errors import InputError
from .engine.jobs import Job, freeze_settings
from .properties import datasets
from .properties.checks import check_jobs
from .properties.kinds import KINDS, kind_of
from .properties.systems import System, normalise_xyz, parse_atom

#: Solver settings and their defaults.
SOLVER_DEFAULTS: dict[str, Any] = {
    "precision": "normal",
    "spin": "polarized",
    "atoms": None,  # per property: "radial", except atomization energies ("basis")
    "basis": "def2-svp",
    "scan_points": 7,
    "scan_step": 0.02,
    "atom_options": {},
    "molecule_options": {},
}

_TOP_KEYS = {"name", "description", "functionals", "solver", "study"}
_STUDY_KEYS = {"property", "properties", "systems", "functionals", "label"} | set(SOLVER_DEFAULTS)
_SYSTEM_KEYS = {"atom", "charge", "xyz", "name", "multiplicity", "multiplicities"}


#: Option names of earlier ks1d versions → (the name now, how the value translates).
RENAMED_OPTIONS: dict[str, tuple[str, str]] = {
    "mixing": ("damping", "damping = 1 − mixing, the fraction of the previous input kept"),
    "density_tol": ("residual_tolerance", "the same number: ∫|ρ_out − ρ_in| in electrons"),
    "energy_tol": ("energy_tolerance", "the same number, hartree"),
    "gradient_tolerance": ("residual_tolerance", "the same number: max |Xᵀ(FDS − SDF)X|, hartree"),
    "diis_size": ("history", "the same number: the Pulay/DIIS subspace length"),
}


class SpecError(InputError):
    """A sweep specification that cannot be run as written."""


@dataclass(frozen=True)
class Study:
    """One block of a spec: some properties of some systems with some functionals."""

    kinds: tuple[str, ...]
    systems: tuple[System, ...]
    functionals: tuple[str, ...]
    settings: tuple[tuple[str, Any], ...]
    label: str = ""

    def jobs(self) -> list[Job]:
        """The study's jobs: kinds × systems × functionals, each with the settings it reads."""
        solver = dict(self.settings)
        return [Job(system=system, property=kind, functional=func,
                    settings=freeze_settings(job_settings(kind, solver, system)))
                for kind in self.kinds for system in self.systems for func in self.functionals]


@dataclass(frozen=True)
class SweepSpec:
    name: str
    description: str
    functionals: tuple[str, ...]
    studies: tuple[Study, ...]
    source_text: str = ""
    base_dir: str = "."

    def jobs(self) -> list[Job]:
        """Every job of the sweep, in spec order, without duplicates."""
        seen: dict[str, Job] = {}
        for st in self.studies:
            for job in st.jobs():
                seen.setdefault(job.key, job)
        return list(seen.values())


def job_settings(kind: str, solver: dict[str, Any], system: System) -> dict[str, Any]:
    """The solver settings a job of ``kind`` on ``system`` depends on (only these enter its hash)."""
    keys = set(KINDS[kind].settings_keys)
    s = {k: solver[k] for k in keys if k in solver}
    if "atoms" in keys:
        atoms = solver.get("atoms") or ("basis" if kind == "atomization_energy" else "radial")
        s["atoms"] = atoms
        uses_radial = atoms == "radial" and (system.is_atom or kind == "atomization_energy")
        uses_basis = (not system.is_atom) or atoms == "basis"
        if not uses_radial:
            for k in ("precision", "spin", "atom_options"):
                s.pop(k, None)
        if not uses_basis:
            for k in ("basis", "molecule_options"):
                s.pop(k, None)
        if not system.is_atom and kind != "atomization_energy":
            s.pop("atoms")
    return {k: v for k, v in s.items() if v not in ({}, None)}


def _check_keys(where: str, got: dict, allowed: set[str]) -> None:
    for k in got:
        if k not in allowed:
            close = difflib.get_close_matches(k, sorted(allowed), n=2)
            hint = f"; did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
            raise SpecError(f"{where}: unknown key '{k}'{hint}")


def _functionals(where: str, value: Any) -> tuple[str, ...]:
    from ..xc import resolve_functional

    if isinstance(value, str):
        value = [v for v in value.split(";")]
    if not isinstance(value, list) or not value or not all(isinstance(v, str) for v in value):
        raise SpecError(f"{where}: 'functionals' must be a non-empty list of names")
    out = []
    for v in value:
        try:
            resolve_functional(v)
        except InputError as exc:
            raise SpecError(f"{where}: {exc}") from None
        out.append(v.strip())
    return tuple(dict.fromkeys(out))


def _settings(where: str, table: dict[str, Any], base: dict[str, Any]) -> dict[str, Any]:
    s = dict(base)
    for k, v in table.items():
        if k in SOLVER_DEFAULTS:
            s[k] = v
    if s.get("atoms") not in (None, "radial", "basis"):
        raise SpecError(f"{where}: 'atoms' must be \"radial\" or \"basis\", got {s['atoms']!r}")
    if s.get("spin") not in ("polarized", "restricted"):
        raise SpecError(f"{where}: 'spin' must be \"polarized\" or \"restricted\", got {s['spin']!r}")
    if not isinstance(s.get("basis"), str) or not s["basis"].strip():
        raise SpecError(f"{where}: 'basis' must be a basis-set name")
    try:
        n = int(s["scan_points"])
        h = float(s["scan_step"])
    except (TypeError, ValueError):
        raise SpecError(f"{where}: 'scan_points' must be an integer and 'scan_step' a number (angstrom)") from None
    if n < 5 or n > 25:
        raise SpecError(f"{where}: 'scan_points' must be 5-25, got {n}")
    if not 0.002 <= h <= 0.2:
        raise SpecError(f"{where}: 'scan_step' must be 0.002-0.2 angstrom, got {h}")
    s["scan_points"], s["scan_step"] = n, h
    for k in ("atom_options", "molecule_options"):
        if not isinstance(s.get(k), dict):
            raise SpecError(f"{where}: '{k}' must be a table of keyword arguments")
        if s[k]:
            allowed = _solver_keywords(k)
            for name in s[k]:
                if name in RENAMED_OPTIONS and name not in allowed:
                    new, how = RENAMED_OPTIONS[name]
                    raise SpecError(f"{where}: '{name}' in {k} is the old name of '{new}' ({how})")
                if name not in allowed:
                    close = difflib.get_close_matches(name, sorted(allowed), n=2)
                    hint = f"; did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
                    raise SpecError(f"{where}: '{name}' in {k} is not an option of the solver{hint} "
                                    f"(options: {', '.join(sorted(allowed))})")
    return s


def _solver_keywords(table: str) -> set[str]:
    """Keyword options of solve_atom / solve_molecule that a spec may pass through (TOML-expressible ones),
    with the SCF options (:class:`ks1d.results.SCFOptions`) given flat in the same table."""
    import inspect

    from ..gaussian.scf import solve_molecule
    from ..radial.scf import solve_atom
    from ..results import SCFOptions

    if table == "atom_options":
        fn, managed = solve_atom, {"element", "xc", "charge", "spin", "config", "precision", "mesh", "scf"}
        scf = set(SCFOptions.names()) - {"level_shift", "smearing"}
    else:
        fn, managed = solve_molecule, {"geometry", "basis", "xc", "charge", "multiplicity", "scf"}
        scf = set(SCFOptions.names())
    return {n for n in inspect.signature(fn).parameters if n not in managed} | scf


def _system(where: str, item: Any, base_dir: str) -> list[System]:
    if isinstance(item, str):
        text = item.strip()
        low = text.lower()
        if low.startswith("g2-1-pair:"):
            return [datasets.g2_1_state_pair(text.split(":", 1)[1])]
        if low.startswith("diatomics:"):
            key = text.split(":", 1)[1]
            names = datasets.diatomic_names() if key == "*" else (key,)
            return [datasets.diatomic(k) for k in names]
        if low.startswith("g2-1:"):
            key = text.split(":", 1)[1]
            if key == "*":
                return [datasets.g2_1_molecule(k) for k in datasets.g2_1_names()]
            if key == "diatomics":
                return [datasets.g2_1_molecule(k) for k in datasets.g2_1_diatomics()]
            return [datasets.g2_1_molecule(key)]
        if low.endswith(".xyz"):
            return [molecule_from_xyz_file(os.path.join(base_dir, text))]
        return [parse_atom(text)]
    if isinstance(item, dict):
        _check_keys(where, item, _SYSTEM_KEYS)
        if ("atom" in item) == ("xyz" in item):
            raise SpecError(f"{where}: a system table needs exactly one of 'atom' or 'xyz'")
        if "atom" in item and "multiplicity" in item:
            raise SpecError(f"{where}: an atom takes no 'multiplicity' (it is solved in its Hund's-rule ground "
                            "state); for a spin-state pair give multiplicities = [m1, m2]")
        charge = item.get("charge", 0)
        if not isinstance(charge, int):
            raise SpecError(f"{where}: 'charge' must be an integer")
        mults = item.get("multiplicities")
        if mults is not None and (not isinstance(mults, list) or len(mults) != 2
                                  or not all(isinstance(m, int) and m >= 1 for m in mults)):
            raise SpecError(f"{where}: 'multiplicities' must be two positive integers, e.g. [3, 1]")
        if "atom" in item:
            base = parse_atom(str(item["atom"]))
            q = base.charge + charge
            s = System(name=item.get("name") or (base.name if charge == 0 else f"{base.symbol}({q:+d})"),
                       kind="atom", symbol=base.symbol, charge=q, multiplicity=item.get("multiplicity"),
                       source="element symbol")
        else:
            s = molecule_from_xyz_file(os.path.join(base_dir, str(item["xyz"])), name=item.get("name"),
                                       charge=charge, multiplicity=item.get("multiplicity"))
        if mults is not None:
            s = System(**{**s.__dict__, "pair": tuple(mults),
                          "name": item.get("name") or f"{s.name}({mults[0]}->{mults[1]})"})
        nelec = sum(elements.atomic_number(x) for x in s.symbols) - s.charge
        for m in ([s.multiplicity] if s.multiplicity is not None else []) + list(s.pair):
            if not isinstance(m, int) or m < 1 or m - 1 > nelec or (nelec - (m - 1)) % 2:
                raise SpecError(f"{where}: multiplicity {m} is impossible for {nelec} electrons "
                                f"({'odd counts need 2, 4, ...' if nelec % 2 else 'even counts need 1, 3, ...'})")
        return [s]
    raise SpecError(f"{where}: a system is a string or a table, got {item!r}")


def parse_spec(text: str, base_dir: str = ".", origin: str = "spec") -> SweepSpec:
    """Parse TOML text into a :class:`SweepSpec`, checking every entry."""
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise SpecError(f"{origin}: not valid TOML: {exc}") from None
    _check_keys(origin, doc, _TOP_KEYS)
    top_funcs = _functionals(origin, doc["functionals"]) if "functionals" in doc else ()
    solver_table = doc.get("solver", {})
    if not isinstance(solver_table, dict):
        raise SpecError(f"{origin}: [solver] must be a table")
    _check_keys(f"{origin} [solver]", solver_table, set(SOLVER_DEFAULTS))
    base = _settings(f"{origin} [solver]", solver_table, SOLVER_DEFAULTS)
    studies_raw = doc.get("study")
    if not isinstance(studies_raw, list) or not studies_raw:
        raise SpecError(f"{origin}: needs at least one [[study]] with 'property' and 'systems'")
    studies = []
    for i, st in enumerate(studies_raw, 1):
        where = f"{origin} study {i}"
        if not isinstance(st, dict):
            raise SpecError(f"{where}: must be a table")
        _check_keys(where, st, _STUDY_KEYS)
        names = st.get("properties", [])
        if "property" in st:
            names = [st["property"]] + list(names)
        if isinstance(names, str):
            names = [names]
        if not names:
            raise SpecError(f"{where}: needs 'property' (or 'properties')")
        try:
            kinds = tuple(dict.fromkeys(kind_of(n).name for n in names))
        except InputError as exc:
            raise SpecError(f"{where}: {exc}") from None
        funcs = _functionals(where, st["functionals"]) if "functionals" in st else top_funcs
        if not funcs:
            raise SpecError(f"{where}: no functionals (set 'functionals' at the top or in the study)")
        raw_systems = st.get("systems")
        if isinstance(raw_systems, str):
            raw_systems = [raw_systems]
        if not isinstance(raw_systems, list) or not raw_systems:
            raise SpecError(f"{where}: 'systems' must be a non-empty list")
        systems: list[System] = []
        for j, item in enumerate(raw_systems, 1):
            try:
                systems.extend(_system(f"{where} system {j}", item, base_dir))
            except SpecError:
                raise
            except InputError as exc:
                raise SpecError(f"{where} system {j}: {exc}") from None
        for kind in kinds:
            for s in systems:
                why = KINDS[kind].check(s)
                if why:
                    raise SpecError(f"{where}: {kind} of '{s.name}': {why}")
        settings = _settings(where, st, base)
        study = Study(kinds=kinds, systems=tuple(dict.fromkeys(systems)), functionals=funcs,
                      settings=tuple(settings.items()), label=str(st.get("label", "")))
        try:
            check_jobs(study.jobs(), radial_hint='; set atoms = "basis" for Gaussian-basis atoms')
        except InputError as exc:
            raise SpecError(f"{where}: {exc}") from None
        studies.append(study)
    return SweepSpec(
        name=str(doc.get("name", os.path.splitext(os.path.basename(origin))[0])),
        description=str(doc.get("description", "")),
        functionals=top_funcs,
        studies=tuple(studies),
        source_text=text,
        base_dir=base_dir,
    )


def load_spec(path: str) -> SweepSpec:
    """Read and parse a spec file; XYZ paths in it are relative to its folder."""
    if not os.path.isfile(path):
        raise SpecError(f"sweep spec '{path}' does not exist")
    with open(path, "rb") as fh:
        raw = fh.read()
    return parse_spec(_decode(raw, path), base_dir=os.path.dirname(os.path.abspath(path)),
                      origin=os.path.basename(path))


def _decode(raw: bytes, path: str) -> str:
    """The text of a spec file, which TOML requires to be UTF-8; anything else is refused, naming the spot."""
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        hint = ""
        try:
            raw.decode("cp1252")
            hint = " (it looks like Latin-1/Windows-1252 text)"
        except UnicodeDecodeError:
            pass
        raise SpecError(f"sweep spec '{path}' is not UTF-8{hint}: byte 0x{raw[exc.start]:02x} on line {line}; "
                        "TOML files must be UTF-8, so re-save it as UTF-8 (e.g. iconv -f latin1 -t utf-8)") from None


def molecule_from_xyz_file(path: str, name: str | None = None, charge: int = 0,
                           multiplicity: int | None = None) -> System:
    """A molecule from a structure file (any format :func:`ks1d.structure.read_structure` reads)."""
    from ..gaussian.geometry import geometry_from_structure
    from ..structure import read_structure

    st = read_structure(path)
    geometry_from_structure(st)  # refuses periodic cells and overlapping nuclei, with the file named
    xyz = normalise_xyz(st.to_xyz(comment=""))
    stem = os.path.splitext(os.path.basename(path))[0]
    return System(name=name or stem, kind="molecule", charge=int(charge), multiplicity=multiplicity,
                  xyz=xyz, source=f"structure file {os.path.basename(path)}")
