"""One table of the quantities ks1d's sweeps and reports compute: unit, titles, labels, decimals.

Every table, plot, statistic and report section reads the facts about a
quantity from :data:`QUANTITIES`, so a quantity is described once:

============  =================================================================
``unit``      the unit its values are stored and shown in ("eV", "hartree", …)
``title``     heading of its table (Unicode), e.g. "Bond length r_e"
``heading``   heading of its report section (plural), e.g. "Diatomic bond lengths r_e"
``short``     short label for column heads, e.g. "r_e"
``decimals``  decimals shown (values, errors and statistics alike)
``plot_title``  title in matplotlib mathtext (defaults to ``title``)
``signed``    values (not only errors) are shown with their sign (promotion energies
              change sign across the d block)
============  =================================================================

The cost of computing a quantity is not a fact about the quantity: one job
kind can yield several quantities from shared solver calls (the atomic
survey yields six), so each job kind carries its own cost weight
(:class:`ks1d.sweep.properties.kinds.PropertyKind`).
"""
from __future__ import annotations

from dataclasses import dataclass

#: Display text of the units (the stored unit names are ASCII).
UNIT_TEXT: dict[str, str] = {"angstrom": "Å", "cm^-1": "cm⁻¹", "mhartree": "mHa", "degree": "°"}
#: Decimals for a quantity this table does not know (e.g. from a store written by another version).
DEFAULT_DECIMALS = 4


@dataclass(frozen=True)
class Quantity:
    """What ks1d says about one computed quantity (see the module docstring)."""

    name: str
    unit: str
    title: str
    heading: str
    short: str
    decimals: int
    plot_title: str = ""
    signed: bool = False

    @property
    def unit_text(self) -> str:
        return unit_text(self.unit)

    @property
    def mathtext_title(self) -> str:
        return self.plot_title or self.title


def _q(name, unit, title, heading, short, decimals, plot_title="", signed=False) -> Quantity:
    return Quantity(name, unit, title, heading, short, decimals, plot_title, signed)


QUANTITIES: dict[str, Quantity] = {q.name: q for q in (
    _q("total_energy", "hartree", "Total energy", "Total energies", "E", 6),
    _q("ionisation_potential", "eV", "Ionisation potential", "Ionisation potentials", "IP", 3),
    _q("electron_affinity", "eV", "Electron affinity", "Electron affinities", "EA", 3),
    _q("atomization_energy", "kcal/mol", "Atomization energy D_e", "Atomization energies D_e", "D_e", 2,
       "Atomization energy $D_e$"),
    _q("bond_length", "angstrom", "Bond length r_e", "Diatomic bond lengths r_e", "r_e", 4, "Bond length $r_e$"),
    _q("harmonic_frequency", "cm^-1", "Harmonic frequency ω_e", "Diatomic harmonic frequencies ω_e", "ω_e", 1,
       r"Harmonic frequency $\omega_e$"),
    _q("spin_splitting", "eV", "Spin-state splitting", "Spin-state splittings", "ΔE_spin", 3),
    _q("sd_promotion", "eV", "s→d promotion energy E(dⁿ⁺¹s¹) − E(dⁿs²)", "s→d promotion energies", "s→d", 3,
       r"s$\to$d promotion $E(d^{n+1}s^1) - E(d^n s^2)$", signed=True),
    _q("sp_promotion", "eV", "s→p promotion energy E(ns¹npᵏ⁺¹) − E(ns²npᵏ)", "s→p promotion energies", "s→p", 3,
       signed=True),
    _q("homo_vs_ip", "eV", "−ε_HOMO against the experimental IP", "−ε_HOMO against the experimental IP",
       "−ε_HOMO − IP", 3, r"$-\varepsilon_\mathrm{HOMO}$ against the experimental IP"),
    _q("spin_polarization_energy", "eV", "Spin-polarization energy E_restricted − E_polarized",
       "Spin-polarization energies", "ΔE_pol", 3),
    _q("basis_set_error", "mhartree", "Basis-set error E(basis) − E(radial limit)",
       "Basis-set error of the planned basis", "ΔE_basis", 3),
    _q("dissociation_energy", "eV", "Dissociation energy D_0 = D_e − ½ω_e", "Diatomic dissociation energies D_0",
       "D_0", 3),
    _q("geometry_bond_deviation", "angstrom", "Largest bond-length change on optimisation r_opt − r_ref",
       "Bond-length changes on optimisation", "Δr_max", 4, r"Largest bond-length change $r_\mathrm{opt} - "
       r"r_\mathrm{ref}$", signed=True),
    _q("geometry_angle_deviation", "degree", "Largest bond-angle change on optimisation θ_opt − θ_ref",
       "Bond-angle changes on optimisation", "Δθ_max", 2, r"Largest bond-angle change $\theta_\mathrm{opt} - "
       r"\theta_\mathrm{ref}$", signed=True),
    _q("zero_point_energy", "kcal/mol", "Harmonic zero-point energy ½Σħω", "Harmonic zero-point energies", "ZPE",
       2, r"Harmonic zero-point energy $\frac{1}{2}\sum\hbar\omega$"),
    _q("lowest_harmonic_frequency", "cm^-1", "Lowest harmonic frequency (negative: imaginary)",
       "Lowest harmonic frequencies", "ω_min", 1, signed=True),
)}


def quantity(name: str) -> Quantity:
    """The table entry of ``name``; an unknown name gets a plain entry (no unit, its name as title)."""
    q = QUANTITIES.get(name)
    if q is None:
        return Quantity(name, "", name, name, name, DEFAULT_DECIMALS)
    return q


def unit_text(unit: str) -> str:
    """'angstrom' → 'Å', 'cm^-1' → 'cm⁻¹', 'mhartree' → 'mHa'; other units as they are."""
    return UNIT_TEXT.get(unit, unit)


def fmt(value: float | None, name: str, signed: bool = False) -> str:
    """``value`` of quantity ``name`` with its decimals ('' for None); ``signed`` forces a sign."""
    if value is None:
        return ""
    d = quantity(name).decimals
    return f"{value:+.{d}f}" if signed else f"{value:.{d}f}"
