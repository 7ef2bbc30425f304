"""What a functional sanity report computes: validated input → the list of jobs.

Everything a user can get wrong is checked here, before any calculation:
element symbols, the structure file, functional names, the basis (that it
exists, has every element and needs no effective core potential), and
finally every planned job with the same checks as a sweep spec
(:func:`ks1d.sweep.properties.checks.check_jobs`).

Per element and functional (neutral atom, radial solver, basis-set limit):
an ``atom_survey`` job (IP, EA, −ε_HOMO, spin-polarization and s→d promotion
energies) and, with a planned basis, a ``basis_set_error`` job.  Per element
pair with experimental diatomic data (bonded pairs of a structure file, or
every pair of an element list) and functional: a ``diatomic_survey`` job in
the planned basis (``DEFAULT_DIATOMIC_BASIS`` when none is planned): r_e and ω_e
from analytic gradients, D_0 from the atoms in the same basis.

What a solver cannot do is skipped with a note: the radial solver has no
range-separated hybrids, so HSE06-type functionals get their IP, EA and
−ε_HOMO from Gaussian atoms with integer occupations (``atom_survey_basis``
in ``SYMMETRY_BROKEN_BASIS``), no spin-polarization or promotion energies,
and are shown beside the ranking rather than in it.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from ..errors import InputError
from ..structure import Structure, read_structure
from ..sweep.engine.jobs import Job, freeze_settings
from ..sweep.properties.checks import check_basis, check_jobs, radial_refusal, resolve_functional
from ..sweep.properties.datasets import diatomic, diatomic_names
from ..sweep.properties.systems import neutral_atom, parse_elements

#: The default ladder: LDA, two GGAs, a meta-GGA, two global hybrids and a screened hybrid.
DEFAULT_FUNCTIONALS = ("lda", "pbe", "pbesol", "r2scan", "pbe0", "hse06", "b3lyp")
#: Basis of the diatomics when no basis is planned (triple-zeta with polarization: common practice).
DEFAULT_DIATOMIC_BASIS = "def2-tzvp"
#: Basis of the symmetry-breaking correction when asked for without a name (diffuse functions for anions).
SYMMETRY_BROKEN_BASIS = "aug-cc-pvtz"

ATOM_SETTINGS = {"precision": "normal", "atom_options": {"estimate_error": False}}


@dataclass(frozen=True)
class Skip:
    """A part of the battery not computed, and why."""

    functional: str
    part: str
    reason: str


@dataclass(frozen=True)
class ReportPlan:
    """The validated request and its jobs."""

    elements: tuple[str, ...]
    functionals: tuple[str, ...]
    basis: str | None
    diatomic_basis: str | None
    diatomics: tuple[str, ...]  # formulas, e.g. ("N2", "CO")
    pairs_without_data: tuple[str, ...]  # bonded pairs with no experimental diatomic data
    source: str  # what the elements came from, in words
    structure_path: str | None
    skipped: tuple[Skip, ...]
    jobs: tuple[Job, ...]
    symmetry_broken: str | None = None  # basis of the integer-occupation correction of IPs and EAs

    @property
    def title(self) -> str:
        return f"{' '.join(self.elements)} × {', '.join(self.functionals)}"


def _functionals(names: Sequence[str] | None) -> tuple[str, ...]:
    if names is None:
        return DEFAULT_FUNCTIONALS
    out: list[str] = []
    if isinstance(names, str):
        names = [names]
    for name in names:
        resolve_functional(str(name))  # UnknownFunctional with a suggestion
        out.append(str(name).strip().lower())
    if not out:
        raise InputError("give at least one functional, e.g. --xc pbe,pbe0")
    return tuple(dict.fromkeys(out))


def pair_formula(a: str, b: str, known: Sequence[str]) -> str | None:
    """The reference-data formula of the pair (a, b) ('O2', 'CO', 'HCl'), or None when there is no data."""
    candidates = [f"{a}2"] if a == b else [f"{a}{b}", f"{b}{a}"]
    for c in candidates:
        if c in known:
            return c
    return None


def _pair_label(a: str, b: str) -> str:
    return f"{a}2" if a == b else f"{a}–{b}"


def plan_report(elements: Sequence[str] = (), structure: str | Structure | None = None,
                functionals: Sequence[str] | None = None, basis: str | None = None,
                diatomics: bool = True, symmetry_broken: str | None = None) -> ReportPlan:
    """Validate the request and list its jobs (no calculation runs here).

    ``symmetry_broken`` names a Gaussian basis (e.g. ``SYMMETRY_BROKEN_BASIS``): IPs and EAs then refer to
    integer-occupation atoms (see :func:`ks1d.sweep.properties.atom_survey._symmetry_broken`) instead of
    spherical ones.
    """
    if structure is not None and elements:
        raise InputError("give an element list or a structure file, not both")
    st: Structure | None = None
    if structure is not None:
        st = structure if isinstance(structure, Structure) else read_structure(str(structure))
        symbols = list(st.elements)
        source = f"structure file {st.source} ({len(st.symbols)} atoms)"
        pairs = list(st.bonded_pairs())
    else:
        symbols = parse_elements(elements)
        source = "element list"
        pairs = [(a, b) for i, a in enumerate(symbols) for b in symbols[i:]]
    xcs = _functionals(functionals)
    if basis is not None:
        basis = str(basis).strip()
        if not basis:
            raise InputError("the basis name is empty")
        check_basis(basis, symbols)  # BasisError: unknown name, missing element, needs an ECP

    if symmetry_broken is not None:
        symmetry_broken = str(symmetry_broken).strip()
        check_basis(symmetry_broken, symbols)

    known = set(diatomic_names())
    with_data: list[str] = []
    without: list[str] = []
    if diatomics:
        for a, b in pairs:
            f = pair_formula(a, b, known)
            if f is None:
                if structure is not None:
                    without.append(_pair_label(a, b))
            elif f not in with_data:
                with_data.append(f)
    diatomic_basis = (basis or DEFAULT_DIATOMIC_BASIS) if with_data else None
    if with_data and basis is None:
        check_basis(DEFAULT_DIATOMIC_BASIS, sorted({s for f in with_data for s in diatomic(f).symbols}))

    jobs: list[Job] = []
    skipped: list[Skip] = []
    atom_settings = freeze_settings(ATOM_SETTINGS if symmetry_broken is None else
                                    {**ATOM_SETTINGS, "symmetry_broken_basis": symmetry_broken})
    gaussian_atoms = symmetry_broken or SYMMETRY_BROKEN_BASIS
    gaussian_atoms_ok = True
    if any(radial_refusal(resolve_functional(xc)) for xc in xcs):
        try:
            check_basis(gaussian_atoms, symbols)
        except InputError:
            gaussian_atoms_ok = False
    for xc in xcs:
        reason = radial_refusal(resolve_functional(xc))
        radial_ok = reason is None
        if not radial_ok:
            if gaussian_atoms_ok:
                skipped.append(Skip(xc, "IP, EA and −ε_HOMO at the basis-set limit",
                                    f"{reason}: they come from Gaussian atoms in {gaussian_atoms} with integer "
                                    "occupations instead, and the functional is not ranked with the others"))
                skipped.append(Skip(xc, "spin polarization, s→d and s→p promotion", reason))
            else:
                skipped.append(Skip(xc, "atomic battery (IP, EA, −ε_HOMO, spin polarization, s→d, s→p)",
                                    f"{reason}, and {gaussian_atoms} lacks an element for Gaussian atoms"))
            if basis is not None:
                skipped.append(Skip(xc, "basis-set error", f"{reason} (no basis-set-limit atoms)"))
        for sym in symbols:
            system = neutral_atom(sym)
            if radial_ok:
                jobs.append(Job(system=system, property="atom_survey", functional=xc, settings=atom_settings))
                if basis is not None:
                    jobs.append(Job(system=system, property="basis_set_error", functional=xc,
                                    settings=freeze_settings({"basis": basis, "precision": "normal"})))
            elif gaussian_atoms_ok:
                jobs.append(Job(system=system, property="atom_survey_basis", functional=xc,
                                settings=freeze_settings({"basis": gaussian_atoms})))
        for f in with_data:
            jobs.append(Job(system=diatomic(f), property="diatomic_survey", functional=xc,
                            settings=freeze_settings({"basis": diatomic_basis})))
    check_jobs(jobs)  # the checks a sweep spec gets: every job's solver can do its functional, in its basis
    return ReportPlan(elements=tuple(symbols), functionals=xcs, basis=basis, diatomic_basis=diatomic_basis,
                      diatomics=tuple(with_data), pairs_without_data=tuple(without), source=source,
                      structure_path=None if st is None else st.source, skipped=tuple(skipped), jobs=tuple(jobs),
                      symmetry_broken=symmetry_broken)
