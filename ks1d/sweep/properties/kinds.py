"""The job kinds a sweep knows: what each yields, which systems and settings it takes, which solvers it calls.

This module only *declares* the kinds (no solver code is imported here, so
planners, checks and the output layer can read it cheaply); their
computations live in :mod:`.basic`, :mod:`.diatomic` and :mod:`.atom_survey`
and are attached in :mod:`.registry`.

Definitions (E = total energy of the stated species, each in its own
spin-polarized ground state unless noted; units from :mod:`ks1d.quantities`):

* ``total_energy``          E                                         (hartree)
* ``ionisation_potential``  IP = E(X⁺) − E(X)                          (eV)
* ``electron_affinity``     EA = E(X) − E(X⁻)                          (eV)
* ``atomization_energy``    D_e = Σ_atoms E(A) − E(M)                  (kcal/mol)
* ``diatomic_curve``        r_e and ω_e = √(E″(r_e)/μ) from analytic gradients (Å, cm⁻¹)
* ``diatomic_curve_scan``   the same from an energy scan and a quartic fit (the earlier method)
* ``spin_splitting``        E(state 2) − E(state 1) of a spin-state pair (eV)
* ``sd_promotion``          E(dⁿ⁺¹s¹) − E(dⁿs²) of a transition-metal atom (eV)
* ``homo_vs_ip``            −ε_HOMO, to compare with the experimental IP (eV)
* ``optimized_geometry``    largest change of a bond length r_opt − r_ref (Å) and of a bond angle (degrees)
                            after a geometry optimisation from the system's geometry (:mod:`.geometry`)
* ``vibrations``            harmonic zero-point energy ½Σħω (kcal/mol) and the lowest harmonic
                            wavenumber (cm⁻¹, negative if imaginary) at the optimised geometry
* ``atom_survey``, ``atom_survey_basis``, ``basis_set_error``, ``diatomic_survey``:
  the report's battery (:mod:`.atom_survey`, :mod:`.diatomic`)

Each kind's ``cost`` is a rough relative cost of one job (seconds per job in
the example sweep, def2-TZVP molecules, two workers), used to start expensive
jobs first and to weigh the progress ETA; it never changes a number.
"""
from __future__ import annotations

import difflib
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, NamedTuple

from ...errors import InputError
from ...quantities import QUANTITIES
from .configurations import sd_configurations
from .systems import System

#: keywords of solve_molecule that ks1d.optimize_molecule and ks1d.harmonic_frequencies pass on
GEOMETRY_SOLVER_OPTIONS = ("spin", "grid", "guess", "ao_cache_mb", "coulomb_fitting", "fit_switch")


class SolverUse(NamedTuple):
    """One solver a job calls: ``"radial"`` (basis is None) or ``"gaussian"`` in ``basis``."""

    solver: str
    basis: str | None = None


RADIAL = SolverUse("radial")


@dataclass(frozen=True)
class PropertyKind:
    """A job kind: what it yields, which systems it takes, which settings it reads, which solvers it calls.

    ``check(system)`` says why a system does not suit the kind (None when it does);
    ``settings_check(settings)`` the same for the job's settings; ``solvers(system,
    settings)`` lists the solver calls a job makes (for the up-front checks of
    :mod:`.checks`).  ``molecule_cost`` is the cost for a molecule when it differs; ``scale(system)``
    multiplies the cost by how the job grows with the system (see :func:`_by_element`).
    """

    name: str
    quantities: tuple[str, ...]
    settings_keys: tuple[str, ...]
    check: Callable[[System], str | None]
    solvers: Callable[[System, dict[str, Any]], tuple[SolverUse, ...]]
    cost: float
    description: str = ""
    molecule_cost: float | None = None
    settings_check: Callable[[dict[str, Any]], str | None] | None = None
    scale: Callable[[System], float] | None = None

    def cost_for(self, system: System) -> float:
        base = self.molecule_cost if self.molecule_cost is not None and not system.is_atom else self.cost
        return base * (self.scale(system) if self.scale is not None else 1.0)


# ------------------------------------------------------------------ checks
def _any(_: System) -> str | None:
    return None


def _atom_or_molecule_ion(s: System) -> str | None:
    if s.pair:
        return "a spin-state pair is only for spin_splitting"
    if s.charge != 0:
        return "give the neutral species; the property forms the ion itself"
    return None


def _molecule_only(s: System) -> str | None:
    if s.is_atom:
        return "needs a molecule"
    if s.pair:
        return "a spin-state pair is only for spin_splitting"
    return None


def _diatomic_only(s: System) -> str | None:
    if s.is_atom or not s.is_diatomic:
        return "needs a diatomic molecule"
    return None


def _pair_only(s: System) -> str | None:
    if len(s.pair) != 2:
        return ("needs two spin states: a built-in pair such as 'g2-1-pair:CH2' or a table with "
                "multiplicities = [m1, m2]")
    return None


def _neutral_atom_only(s: System) -> str | None:
    if not s.is_atom or s.charge != 0 or s.pair:
        return "needs a neutral atom"
    return None


def _sd_check(s: System) -> str | None:
    if not s.is_atom or s.charge != 0:
        return "needs a neutral transition-metal atom"
    try:
        sd_configurations(s.symbol)
    except InputError as exc:
        return str(exc)
    return None


def _geometry_options(settings: dict[str, Any]) -> str | None:
    """Geometry optimisations and frequencies pass only some solver keywords on (plus the SCF options)."""
    from ...results import SCFOptions

    allowed = set(GEOMETRY_SOLVER_OPTIONS) | set(SCFOptions.names())
    bad = sorted(set(settings.get("molecule_options") or {}) - allowed)
    if bad:
        return (f"molecule_options {', '.join(map(repr, bad))} cannot be passed to a geometry optimisation "
                f"(it takes {', '.join(GEOMETRY_SOLVER_OPTIONS)} and the SCF options)")
    return None


def _radial_atoms_only(settings: dict[str, Any]) -> str | None:
    if settings.get("atoms", "radial") != "radial":
        return "needs radial atoms (configurations are set on the radial solver); remove atoms = \"basis\""
    return None


# ------------------------------------------------------------ cost scales
def _by_element(exponent: float) -> Callable[[System], float]:
    """Cost relative to oxygen, (Z/8)^exponent for the heaviest atom: a rule fitted to the job times of the
    README report (def2-TZVP and aug-cc-pVTZ, Cu against O): radial atoms grow as Z^0.8 (Cu 3x O), Gaussian
    atoms with exact exchange as Z^2.4 (Cu with HSE06 in aug-cc-pVTZ 21x O).  It only orders the jobs."""
    from ...elements import atomic_number

    def scale(s: System) -> float:
        return (max(atomic_number(x) for x in s.symbols) / 8.0) ** exponent
    return scale


def _by_atoms(s: System) -> float:
    """Harmonic frequencies take 6N gradients: the cost grows with the number of atoms (water = 1)."""
    return len(s.symbols) / 3.0


# ----------------------------------------------------------- solver calls
def _single_species(s: System, st: dict[str, Any]) -> tuple[SolverUse, ...]:
    """One species and its ions: radial for atoms (unless atoms = "basis"), else Gaussian."""
    if s.is_atom and st.get("atoms", "radial") == "radial":
        return (RADIAL,)
    return (SolverUse("gaussian", st.get("basis")),)


def _atomization(s: System, st: dict[str, Any]) -> tuple[SolverUse, ...]:
    molecule = SolverUse("gaussian", st.get("basis"))
    return (molecule, RADIAL) if st.get("atoms") == "radial" else (molecule,)


def _gaussian(s: System, st: dict[str, Any]) -> tuple[SolverUse, ...]:
    return (SolverUse("gaussian", st.get("basis")),)


def _radial(s: System, st: dict[str, Any]) -> tuple[SolverUse, ...]:
    return (RADIAL,)


def _atom_survey(s: System, st: dict[str, Any]) -> tuple[SolverUse, ...]:
    sb = st.get("symmetry_broken_basis")
    return (RADIAL, SolverUse("gaussian", sb)) if sb else (RADIAL,)


def _radial_and_basis(s: System, st: dict[str, Any]) -> tuple[SolverUse, ...]:
    return (RADIAL, SolverUse("gaussian", st.get("basis")))


_ATOM_SETTINGS = ("atoms", "precision", "spin", "atom_options", "basis", "molecule_options")
_MOL_SETTINGS = ("basis", "molecule_options")
_SCAN_SETTINGS = _MOL_SETTINGS + ("scan_points", "scan_step")

KINDS: dict[str, PropertyKind] = {
    k.name: k
    for k in (
        PropertyKind("total_energy", ("total_energy",), _ATOM_SETTINGS, _any, _single_species, 0.5,
                     "total energy of the system", molecule_cost=1.0),
        PropertyKind("ionisation_potential", ("ionisation_potential",), _ATOM_SETTINGS, _atom_or_molecule_ion,
                     _single_species, 1.1, "E(X+) - E(X)", molecule_cost=2.2),
        PropertyKind("electron_affinity", ("electron_affinity",), _ATOM_SETTINGS, _atom_or_molecule_ion,
                     _single_species, 1.0, "E(X) - E(X-)", molecule_cost=2.0),
        PropertyKind("atomization_energy", ("atomization_energy",),
                     ("atoms", "basis", "molecule_options", "precision", "spin", "atom_options"),
                     _molecule_only, _atomization, 4.6, "sum of atom energies minus molecule energy"),
        PropertyKind("diatomic_curve", ("bond_length", "harmonic_frequency"), _MOL_SETTINGS, _diatomic_only,
                     _gaussian, 8.0, "bond length and harmonic frequency from analytic gradients"),
        PropertyKind("diatomic_curve_scan", ("bond_length", "harmonic_frequency"), _SCAN_SETTINGS, _diatomic_only,
                     _gaussian, 22.0, "bond length and harmonic frequency from an energy scan and a quartic fit"),
        PropertyKind("spin_splitting", ("spin_splitting",), _MOL_SETTINGS, _pair_only, _gaussian, 4.2,
                     "E(second multiplicity) - E(first multiplicity)"),
        PropertyKind("sd_promotion", ("sd_promotion",), ("precision", "spin", "atom_options", "atoms"), _sd_check,
                     _radial, 3.0, "E(d^(n+1) s^1) - E(d^n s^2)", settings_check=_radial_atoms_only),
        PropertyKind("homo_vs_ip", ("homo_vs_ip",), _ATOM_SETTINGS, _atom_or_molecule_ion, _single_species, 1.0,
                     "-HOMO eigenvalue, compared with the experimental IP", molecule_cost=2.0),
        PropertyKind("atom_survey", ("ionisation_potential", "electron_affinity", "homo_vs_ip",
                                     "spin_polarization_energy", "sd_promotion", "sp_promotion"),
                     ("precision", "atom_options"), _neutral_atom_only, _atom_survey, 3.0,
                     "IP, EA, -HOMO, spin-polarization, s-d and s-p promotion energies of one atom (radial)",
                     scale=_by_element(0.8)),
        PropertyKind("atom_survey_basis", ("ionisation_potential", "electron_affinity", "homo_vs_ip"), ("basis",),
                     _neutral_atom_only, _gaussian, 4.0,
                     "IP, EA and -HOMO of one atom from Gaussian-basis atoms with integer occupations",
                     scale=_by_element(2.4)),
        PropertyKind("basis_set_error", ("basis_set_error",), ("basis", "precision"), _neutral_atom_only,
                     _radial_and_basis, 2.0, "E(basis) - E(radial limit) of one atom", scale=_by_element(0.8)),
        PropertyKind("diatomic_survey", ("bond_length", "harmonic_frequency", "dissociation_energy"),
                     _MOL_SETTINGS, _diatomic_only, _gaussian, 10.0,
                     "r_e, omega_e (analytic gradients) and D_0 = D_e - ZPE of a diatomic in a basis"),
        PropertyKind("optimized_geometry", ("geometry_bond_deviation", "geometry_angle_deviation"), _MOL_SETTINGS,
                     _molecule_only, _gaussian, 30.0,
                     "geometry optimisation (analytic gradients); largest bond-length and angle change from the "
                     "input geometry", settings_check=_geometry_options),
        PropertyKind("vibrations", ("zero_point_energy", "lowest_harmonic_frequency"), _MOL_SETTINGS,
                     _molecule_only, _gaussian, 120.0,
                     "harmonic frequencies and zero-point energy at the optimised geometry",
                     settings_check=_geometry_options, scale=_by_atoms),
    )
}

_unknown = sorted({q for k in KINDS.values() for q in k.quantities} - set(QUANTITIES))
if _unknown:  # pragma: no cover - a programming error, caught by any import
    raise RuntimeError(f"quantities missing from ks1d.quantities.QUANTITIES: {_unknown}")

#: Property names a spec may use → the job kind computing them.
PROPERTY_NAMES: dict[str, str] = {
    **{k: k for k in KINDS},
    "bond_length": "diatomic_curve",
    "harmonic_frequency": "diatomic_curve",
    "optimised_geometry": "optimized_geometry",
    "geometry": "optimized_geometry",
    "harmonic_frequencies": "vibrations",
    "zero_point_energy": "vibrations",
    "ionization_potential": "ionisation_potential",
    "ionisation_energy": "ionisation_potential",
    "ionization_energy": "ionisation_potential",
    "atomisation_energy": "atomization_energy",
}


def kind_of(name: str) -> PropertyKind:
    """The kind computing the property ``name`` (kind names and a few aliases; a clear error otherwise)."""
    key = name.strip().lower()
    if key not in PROPERTY_NAMES:
        close = difflib.get_close_matches(key, list(PROPERTY_NAMES), n=3)
        hint = f"; did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
        raise InputError(f"'{name}' is not a sweep property{hint} (known: {', '.join(sorted(PROPERTY_NAMES))})")
    return KINDS[PROPERTY_NAMES[key]]


def quantities_of(kind: str) -> tuple[str, ...]:
    """The quantities a job of ``kind`` yields, in order (none for a kind this version does not know)."""
    k = KINDS.get(kind)
    return k.quantities if k is not None else ()
