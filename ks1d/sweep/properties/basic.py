"""Single-quantity ΔSCF properties: total energy, IP, EA, atomization energy, −ε_HOMO, spin splitting, s→d.

Each function takes a :class:`~.context.Context` and returns its quantity in
the unit of :mod:`ks1d.quantities` (E = total energy of the stated species,
each in its own spin-polarized ground state unless noted):

* total energy            E                                      (hartree)
* ionisation potential    IP = E(X⁺) − E(X)                       (eV)
* electron affinity       EA = E(X) − E(X⁻)                       (eV)
* atomization energy      D_e = Σ_atoms E(A) − E(M)               (kcal/mol)
* −ε_HOMO                 to compare with the experimental IP: for the exact functional
                          −ε_HOMO = IP (Perdew, Parr, Levy, Balduz, Phys. Rev. Lett. 49, 1691 (1982))  (eV)
* spin splitting          E(state 2) − E(state 1) for the two multiplicities of a pair
                          (adiabatic when each state has its own geometry)          (eV)
* s→d promotion           E(dⁿ⁺¹s¹) − E(dⁿs²) of a transition-metal atom, each
                          configuration spherically averaged, high spin             (eV)
"""
from __future__ import annotations

from ... import units
from ...errors import CalculationError, InputError
from .configurations import sd_configurations
from .context import Context
from .systems import neutral_atom

EV = units.HARTREE_TO_EV
KCAL = units.HARTREE_TO_KCAL_MOL


def total_energy(c: Context) -> dict[str, float]:
    if c.system.pair:
        raise InputError("total_energy takes single systems, not spin-state pairs")
    return {"total_energy": c.energy(c.system.name)["total_energy"]}


def ionisation_potential(c: Context) -> dict[str, float]:
    e0 = c.energy(c.system.name)["total_energy"]
    e1 = c.energy(f"{c.system.name} cation", charge=c.system.charge + 1)["total_energy"]
    return {"ionisation_potential": (e1 - e0) * EV}


def electron_affinity(c: Context) -> dict[str, float]:
    e0 = c.energy(c.system.name)["total_energy"]
    e1 = c.energy(f"{c.system.name} anion", charge=c.system.charge - 1)["total_energy"]
    return {"electron_affinity": (e0 - e1) * EV}


def atomization_energy(c: Context) -> dict[str, float]:
    s = c.system
    e_mol = c.energy(s.name)["total_energy"]
    total_atoms = 0.0
    for sym in s.symbols:
        total_atoms += c.energy(f"{sym} atom", system=neutral_atom(sym))["total_energy"]
    return {"atomization_energy": (total_atoms - e_mol) * KCAL}


def homo_vs_ip(c: Context) -> dict[str, float]:
    summary = c.energy(c.system.name)
    if summary["homo_energy"] is None:
        raise CalculationError(f"{c.system.name}: the solver result carries no HOMO energy")
    return {"homo_vs_ip": -summary["homo_energy"] * EV}


def spin_splitting(c: Context) -> dict[str, float]:
    s = c.system
    m1, m2 = s.pair
    e1 = c.energy(f"{s.name} 2S+1 = {m1}", multiplicity=m1, xyz=s.geometry_xyz(),
                  force_basis=True)["total_energy"]
    e2 = c.energy(f"{s.name} 2S+1 = {m2}", multiplicity=m2, xyz=s.xyz_b or s.geometry_xyz(),
                  force_basis=True)["total_energy"]
    return {"spin_splitting": (e2 - e1) * EV}


def sd_promotion(c: Context) -> dict[str, float]:
    a, b = sd_configurations(c.system.symbol)
    if c.settings.get("atoms", "radial") != "radial":
        raise InputError("sd_promotion needs radial atoms (configurations are set on the radial solver)")
    ea = c.energy(f"{c.system.symbol} {a}", config=a)["total_energy"]
    eb = c.energy(f"{c.system.symbol} {b}", config=b)["total_energy"]
    c.details.update({"from": a, "to": b})
    return {"sd_promotion": (eb - ea) * EV}
