"""Ionisation potentials and electron affinities by ΔSCF, and the −ε_HOMO estimate.

With E(N) the total energy of the N-electron species, each species in its own
spin-polarized ground state:

    IP = E(N−1) − E(N)            (vertical for molecules: same geometry)
    EA = E(N) − E(N+1)

and the orbital-energy estimates (Janak's theorem; exact for the HOMO of the
exact Kohn–Sham potential: J. F. Janak, Phys. Rev. B 18, 7165 (1978);
J. P. Perdew, R. G. Parr, M. Levy and J. L. Balduz, Phys. Rev. Lett. 49,
1691 (1982))

    IP ≈ −ε_HOMO(N),   EA ≈ −ε_HOMO(N+1).

Semilocal functionals put −ε_HOMO several eV below the IP (self-interaction
error); the ΔSCF differences are the quantities to compare with experiment.

Atoms use the radial solver (spherical, basis-set limit).  Spin states:
the neutral atom and its ions take the Hund's-rule high-spin occupations of
:func:`ks1d.occupations.build_configuration` (ions by its ionisation rules);
a bare nucleus (H⁺, He²⁺ …) has E = 0.  Anions are solved in the solver's
confining box (``ks1d.radial.scf.ANION_R_MAX``); an unbound anion HOMO is
reported in ``warnings`` because the EA then depends on the box radius.

Molecules use the Gaussian solver at one geometry (vertical IP/EA).  The
neutral's multiplicity is given or follows the parity rule (singlet for an
even electron count, doublet for odd); an ion's is given or follows
:func:`ion_multiplicity`.
"""
from __future__ import annotations

from dataclasses import asdict, dataclass, field
from typing import Any

from .. import units
from .._version import __version__
from ..elements import element as _element
from ..errors import ConfigurationError, SpinError
from ..occupations import ground_state_multiplicity  # noqa: F401  (re-exported)

EV = units.HARTREE_TO_EV


# --------------------------------------------------------------- spin rules
def parity_multiplicity(n_electrons: int) -> int:
    """Lowest multiplicity compatible with the electron count: 1 if even, 2 if odd."""
    return 1 if n_electrons % 2 == 0 else 2


def ion_multiplicity(multiplicity: int) -> int:
    """2S+1 of the species with one electron more or fewer than one of ``multiplicity``.

    One electron changes 2S by ±1; the lower spin is taken when it exists
    (doublet → singlet, triplet → doublet), a singlet goes to a doublet.
    This is the parity rule applied from the parent's spin (common practice
    for vertical IPs/EAs; give the ion's multiplicity explicitly otherwise).
    """
    if int(multiplicity) != multiplicity or multiplicity < 1:
        raise SpinError(f"multiplicity must be a positive integer, got {multiplicity!r}")
    return int(multiplicity) - 1 if multiplicity > 1 else 2


# --------------------------------------------------------------- formulas
def delta_scf_ionisation_potential(e_n: float, e_n_minus_1: float) -> float:
    """IP = E(N−1) − E(N) (hartree in, hartree out)."""
    return e_n_minus_1 - e_n


def delta_scf_electron_affinity(e_n: float, e_n_plus_1: float) -> float:
    """EA = E(N) − E(N+1) (hartree in, hartree out)."""
    return e_n - e_n_plus_1


# --------------------------------------------------------------- results
@dataclass(frozen=True)
class SpeciesEnergy:
    """One solver call of a ΔSCF difference: species, charge, 2S+1, energy (hartree), HOMO (hartree)."""

    label: str
    charge: int
    multiplicity: int
    total_energy: float
    homo_energy: float | None
    configuration: str = ""
    converged: bool = True

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True)
class DeltaSCFResult:
    """An ionisation potential or electron affinity from total-energy differences.

    ``quantity`` is ``"ionisation_potential"`` or ``"electron_affinity"``;
    ``value_ev`` the ΔSCF value and ``homo_estimate_ev`` −ε_HOMO of the
    N-electron species (IP) or of the N+1-electron species (EA), both in eV;
    ``species`` the two solver calls (parent first).
    """

    system: str
    quantity: str
    xc: str
    solver: str
    value_ev: float
    homo_estimate_ev: float | None
    species: tuple
    warnings: tuple = ()
    settings: dict = field(default_factory=dict)
    version: str = __version__

    @property
    def value(self) -> float:
        """The ΔSCF value in hartree."""
        return self.value_ev / EV

    def to_dict(self) -> dict[str, Any]:
        d = {k: getattr(self, k) for k in ("system", "quantity", "xc", "solver", "value_ev",
                                            "homo_estimate_ev", "settings", "version")}
        d["value_hartree"] = self.value
        d["species"] = [s.to_dict() for s in self.species]
        d["warnings"] = list(self.warnings)
        return d


# --------------------------------------------------------------- atoms (radial)
def _integer_charge(charge) -> int:
    if isinstance(charge, bool) or int(charge) != charge:
        raise ConfigurationError(f"ΔSCF needs an integer charge, got {charge!r}")
    return int(charge)


def radial_species(element, xc: str, charge: int = 0, precision: str = "normal",
                   relativity: str = "none") -> tuple[SpeciesEnergy, tuple]:
    """Energy of one atomic species in its spin-polarized ground state, and the solver's warnings.

    ``relativity`` is the radial Hamiltonian (``"none"``, ``"scalar"``, ``"x2c"``; see
    :func:`ks1d.radial.scf.solve_atom`).
    """
    from ..radial.scf import solve_atom

    el = _element(element)
    label = el.symbol + ("" if charge == 0 else f"{abs(charge) if abs(charge) > 1 else ''}{'+' if charge > 0 else '-'}")
    if el.Z - charge == 0:
        return SpeciesEnergy(label, charge, 1, 0.0, None, "(bare nucleus)"), ()
    res = solve_atom(el.symbol, xc=xc, charge=charge, spin="polarized", precision=precision,
                     estimate_error=False, relativity=relativity)
    sp = SpeciesEnergy(label, charge, ground_state_multiplicity(el.symbol, charge), res.total_energy,
                       res.homo_energy, res.configuration, res.converged)
    return sp, tuple(f"{label}: {w}" for w in res.warnings)


def atom_ionisation_potential(element, xc: str = "pbe", charge: int = 0,
                              precision: str = "normal", relativity: str = "none") -> DeltaSCFResult:
    """ΔSCF IP of an atom (or atomic ion of ``charge``) with the radial solver."""
    charge = _integer_charge(charge)
    el = _element(element)
    if el.Z - charge <= 0:
        raise ConfigurationError(f"{el.symbol} with charge {charge:+d} has no electron to remove")
    parent, w0 = radial_species(el.symbol, xc, charge, precision, relativity)
    ion, w1 = radial_species(el.symbol, xc, charge + 1, precision, relativity)
    ip = delta_scf_ionisation_potential(parent.total_energy, ion.total_energy)
    return DeltaSCFResult(parent.label, "ionisation_potential", xc, "radial", ip * EV,
                          None if parent.homo_energy is None else -parent.homo_energy * EV,
                          (parent, ion), w0 + w1, {"precision": precision, "relativity": relativity})


def atom_electron_affinity(element, xc: str = "pbe", charge: int = 0,
                           precision: str = "normal", relativity: str = "none") -> DeltaSCFResult:
    """ΔSCF EA of an atom (or atomic ion of ``charge``) with the radial solver.

    The anion is solved in the solver's confining box; when its HOMO is
    unbound (ε ≥ 0, typical of semilocal functionals) a warning says that
    the value depends on the box radius.
    """
    charge = _integer_charge(charge)
    el = _element(element)
    parent, w0 = radial_species(el.symbol, xc, charge, precision, relativity)
    anion, w1 = radial_species(el.symbol, xc, charge - 1, precision, relativity)
    ea = delta_scf_electron_affinity(parent.total_energy, anion.total_energy)
    warnings = list(w0 + w1)
    if anion.homo_energy is not None and anion.homo_energy >= 0:
        from ..radial.scf import ANION_R_MAX

        warnings.append(f"the HOMO of {anion.label} is unbound (ε = {anion.homo_energy * EV:+.3f} eV) with {xc}: "
                        f"the EA refers to a {ANION_R_MAX:g}-bohr box and changes with its radius")
    return DeltaSCFResult(parent.label, "electron_affinity", xc, "radial", ea * EV,
                          None if anion.homo_energy is None else -anion.homo_energy * EV,
                          (parent, anion), tuple(warnings), {"precision": precision, "relativity": relativity})


# --------------------------------------------------------------- molecules (Gaussian)
def _molecule_species(geom, label, basis, xc, charge, multiplicity, options) -> SpeciesEnergy:
    from ..gaussian.scf import solve_molecule
    from ..results import split_scf_options

    scf, rest = split_scf_options(options)
    res = solve_molecule(geom, basis=basis, xc=xc, charge=charge, multiplicity=multiplicity, scf=scf, **rest)
    return SpeciesEnergy(label, charge, multiplicity, res.total_energy, res.homo_energy,
                         f"{res.n_alpha} alpha, {res.n_beta} beta", res.converged)


def _molecule_parent(geometry, charge, multiplicity):
    from ..gaussian.geometry import read_geometry

    geom = read_geometry(geometry)
    charge = _integer_charge(charge)
    n = geom.nuclear_charge - charge
    if multiplicity is None:
        multiplicity = (ground_state_multiplicity(geom.symbols[0], charge) if geom.natom == 1
                        else parity_multiplicity(n))
    name = geom.comment.strip() or "".join(geom.symbols)
    return geom, charge, int(multiplicity), name, n


def _ion_mult(geom, charge_ion, parent_mult, given):
    if given is not None:
        return int(given)
    if geom.natom == 1:
        return ground_state_multiplicity(geom.symbols[0], charge_ion)
    return ion_multiplicity(parent_mult)


def molecule_ionisation_potential(geometry, basis: str = "def2-svp", xc: str = "pbe", charge: int = 0,
                                  multiplicity: int | None = None, ion_multiplicity: int | None = None,
                                  **options) -> DeltaSCFResult:
    """Vertical ΔSCF IP of a molecule with the Gaussian solver (same geometry and basis).

    ``options`` go to :func:`ks1d.solve_molecule` (grid, smearing, …).  A
    single-atom geometry takes the radial solver's ground-state spins.
    """
    geom, charge, mult, name, n = _molecule_parent(geometry, charge, multiplicity)
    if n <= 1:
        raise ConfigurationError(f"{name} (charge {charge:+d}) has {n} electron(s); the IP needs the "
                                 "ion to keep at least one")
    m_ion = _ion_mult(geom, charge + 1, mult, ion_multiplicity)
    parent = _molecule_species(geom, name, basis, xc, charge, mult, options)
    ion = _molecule_species(geom, f"{name} (charge {charge + 1:+d})", basis, xc, charge + 1, m_ion, options)
    ip = delta_scf_ionisation_potential(parent.total_energy, ion.total_energy)
    return DeltaSCFResult(name, "ionisation_potential", xc, "gaussian", ip * EV,
                          None if parent.homo_energy is None else -parent.homo_energy * EV,
                          (parent, ion), (), {"basis": basis, **{k: str(v) for k, v in options.items()}})


def molecule_electron_affinity(geometry, basis: str = "def2-svpd", xc: str = "pbe", charge: int = 0,
                               multiplicity: int | None = None, ion_multiplicity: int | None = None,
                               **options) -> DeltaSCFResult:
    """Vertical ΔSCF EA of a molecule with the Gaussian solver.

    Anions need diffuse functions (augmented basis sets); a positive anion
    HOMO (unbound electron, confined only by the basis) is flagged.
    """
    geom, charge, mult, name, n = _molecule_parent(geometry, charge, multiplicity)
    m_ion = _ion_mult(geom, charge - 1, mult, ion_multiplicity)
    parent = _molecule_species(geom, name, basis, xc, charge, mult, options)
    anion = _molecule_species(geom, f"{name} (charge {charge - 1:+d})", basis, xc, charge - 1, m_ion, options)
    ea = delta_scf_electron_affinity(parent.total_energy, anion.total_energy)
    warnings = []
    if anion.homo_energy is not None and anion.homo_energy >= 0:
        warnings.append(f"the HOMO of the anion is unbound (ε = {anion.homo_energy * EV:+.3f} eV): the extra "
                        f"electron is held only by the finite basis {basis!r} and the EA depends on it")
    return DeltaSCFResult(name, "electron_affinity", xc, "gaussian", ea * EV,
                          None if anion.homo_energy is None else -anion.homo_energy * EV,
                          (parent, anion), tuple(warnings), {"basis": basis, **{k: str(v) for k, v in options.items()}})

