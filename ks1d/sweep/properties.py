"""Properties a sweep computes, each from one or more solver calls.

Every property is a pure function of (system, functional, settings) returning
its quantities in display units (see :data:`ks1d.sweep.datasets.UNITS`), the
summaries of the solver calls it made, and property-specific details.

Definitions (E = total energy of the stated species, each in its own
spin-polarized ground state unless noted):

* ``total_energy``          E                                         (hartree)
* ``ionisation_potential``  IP = E(X⁺) − E(X)                          (eV)
* ``electron_affinity``     EA = E(X) − E(X⁻)                          (eV)
* ``atomization_energy``    D_e = Σ_atoms E(A) − E(M)                  (kcal/mol)
* ``diatomic_curve``        r_e and ω_e from a polynomial fit to E(R) on an
  even grid of bond lengths: r_e where E′(R) = 0 and
  ω_e = √(k/μ), k = E″(r_e), μ = m_A m_B / (m_A + m_B)               (Å, cm⁻¹)
* ``spin_splitting``        E(state 2) − E(state 1) for the two multiplicities
  of the pair (adiabatic when each state has its own geometry)        (eV)
* ``sd_promotion``          E(dⁿ⁺¹s¹) − E(dⁿs²) of a transition-metal atom,
  each configuration spherically averaged, high spin                   (eV)
* ``homo_vs_ip``            −ε_HOMO, to compare with the experimental IP (eV)
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Callable

from .. import units
from ..errors import CalculationError, InputError
from . import calculations, survey
from .curvefit import fit_curve, harmonic_wavenumber, isotope_masses
from .systems import System, atom_multiplicity, diatomic_xyz, expand_configuration

EV = units.HARTREE_TO_EV
KCAL = units.HARTREE_TO_KCAL_MOL


@dataclass(frozen=True)
class PropertyKind:
    """A job kind: what it yields, which systems it takes, which settings it reads."""

    name: str
    quantities: tuple[str, ...]
    settings_keys: tuple[str, ...]
    check: Callable[[System], str | None]
    compute: Callable[["Context"], dict[str, float]]
    description: str = ""


class Context:
    """What a property computation needs and records: settings, calls made, details."""

    def __init__(self, system: System, functional: str, settings: dict[str, Any]):
        self.system = system
        self.functional = functional
        self.settings = settings
        self.calculations: list[dict[str, Any]] = []
        self.seconds: list[float] = []
        self.details: dict[str, Any] = {}

    # -- one energy of one species -------------------------------------------
    def energy(self, label: str, system: System | None = None, charge: int | None = None,
               multiplicity: int | None = None, config: str | None = None, xyz: str | None = None,
               force_basis: bool = False, spin: str | None = None,
               atom_options: dict[str, Any] | None = None) -> dict[str, Any]:
        """One solver call; an exception leaving it names the step in ``exc.sweep_step``.

        ``spin`` and ``atom_options`` override the settings' radial spin
        treatment and solver options for this call only.
        """
        try:
            return self._energy(label, system, charge, multiplicity, config, xyz, force_basis, spin,
                                atom_options)
        except Exception as exc:
            if not hasattr(exc, "sweep_step"):
                exc.sweep_step = label  # type: ignore[attr-defined]
            raise

    def _energy(self, label, system, charge, multiplicity, config, xyz, force_basis, spin=None,
                atom_options=None) -> dict[str, Any]:
        s = system or self.system
        q = s.charge if charge is None else charge
        st = self.settings
        if s.is_atom and _electrons(s.symbol, q) == 0:  # a bare nucleus, e.g. H+ in the IP of H
            summary = {"total_energy": 0.0, "converged": True, "iterations": 0, "homo_energy": None,
                       "configuration": "", "multiplicity": None, "error_estimate": 0.0,
                       "scf_last_change": 0.0}
            self.calculations.append({"label": label, "solver": "none (bare nucleus)", "species": s.symbol,
                                      "charge": q, **summary})
            self.seconds.append(0.0)
            return summary
        radial = s.is_atom and xyz is None and not force_basis and st.get("atoms", "radial") == "radial"
        if radial:
            spin = spin or st.get("spin", "polarized")
            options = st.get("atom_options") if atom_options is None else atom_options
            summary, dt = calculations.atom(s.symbol, self.functional, charge=q, spin=spin,
                                            config=config, precision=st.get("precision", "normal"),
                                            options=options)
            record = {"label": label, "solver": "radial", "species": s.symbol, "charge": q, "config": config,
                      "spin": spin}
        else:
            if config is not None:
                raise InputError(f"{label}: a configuration can only be set for radial atoms")
            geom = xyz or s.geometry_xyz()
            if multiplicity is None:
                if s.is_atom:
                    multiplicity = atom_multiplicity(s.symbol, q)
                elif q == s.charge:
                    multiplicity = s.ground_multiplicity()
                else:
                    m0 = s.ground_multiplicity()
                    multiplicity = m0 - 1 if m0 > 1 else 2
            summary, dt = calculations.molecule(geom, self.functional, st["basis"], charge=q,
                                                multiplicity=multiplicity, options=st.get("molecule_options"))
            record = {"label": label, "solver": "gaussian", "species": s.name, "charge": q,
                      "multiplicity": multiplicity, "basis": st["basis"]}
        if not summary["converged"]:
            raise CalculationError(f"{label}: the SCF did not converge")
        record.update(summary)
        self.calculations.append(record)
        self.seconds.append(dt)
        return summary


def _electrons(symbol: str, charge: int) -> int:
    from .. import elements

    return elements.atomic_number(symbol) - charge


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


def sd_configurations(symbol: str) -> tuple[str, str]:
    """(dⁿs², dⁿ⁺¹s¹) configurations of a d-block atom from its ground configuration."""
    from .. import elements

    ground = elements.element(symbol).ground_configuration
    core, _, rest = ground.partition("] ")
    if not ground.startswith("[") or not rest:
        raise InputError(f"{symbol} is not a d-block atom")
    shells = expand_configuration(ground)
    d = [s for s in shells if s[1] == 2]
    if not d:
        raise InputError(f"{symbol} has no d shell; s-d promotion applies to transition metals")
    nd = max(s[0] for s in d)
    ns = nd + 1
    toks = rest.split()
    d_occ = sum(int(t[len(f"{nd}d"):]) for t in toks if t.startswith(f"{nd}d"))
    s_occ = sum(int(t[len(f"{ns}s"):]) for t in toks if t.startswith(f"{ns}s"))
    others = [t for t in toks if not (t.startswith(f"{nd}d") or t.startswith(f"{ns}s"))]
    if any("p" in t for t in others):
        raise InputError(f"{symbol} has an open p shell; s-d promotion applies to transition metals")
    v = d_occ + s_occ
    if v < 3 or v > 11:
        raise InputError(f"{symbol}: s-d promotion needs 1-9 d electrons in the d^n s^2 configuration")
    pre = " ".join(others)
    pre = (pre + " ") if pre else ""
    a = f"{core}] {pre}{nd}d{v - 2} {ns}s2"
    b = f"{core}] {pre}{nd}d{v - 1} {ns}s1"
    return a, b


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


# ---------------------------------------------------------------- computes
def _total_energy(c: Context) -> dict[str, float]:
    if c.system.pair:
        raise InputError("total_energy takes single systems, not spin-state pairs")
    return {"total_energy": c.energy(c.system.name)["total_energy"]}


def _ionisation_potential(c: Context) -> dict[str, float]:
    e0 = c.energy(c.system.name)["total_energy"]
    e1 = c.energy(f"{c.system.name} cation", charge=c.system.charge + 1)["total_energy"]
    return {"ionisation_potential": (e1 - e0) * EV}


def _electron_affinity(c: Context) -> dict[str, float]:
    e0 = c.energy(c.system.name)["total_energy"]
    e1 = c.energy(f"{c.system.name} anion", charge=c.system.charge - 1)["total_energy"]
    return {"electron_affinity": (e0 - e1) * EV}


def _atomization_energy(c: Context) -> dict[str, float]:
    s = c.system
    e_mol = c.energy(s.name)["total_energy"]
    total_atoms = 0.0
    for sym in s.symbols:
        atom = System(name=sym, kind="atom", symbol=sym)
        total_atoms += c.energy(f"{sym} atom", system=atom)["total_energy"]
    return {"atomization_energy": (total_atoms - e_mol) * KCAL}


def _diatomic_curve(c: Context) -> dict[str, float]:
    from .systems import bond_length

    s = c.system
    st = c.settings
    npts = int(st.get("scan_points", 7))
    step = float(st.get("scan_step", 0.02))  # angstrom
    sym_a, sym_b = s.symbols
    mult = s.ground_multiplicity()
    r0 = bond_length(s)
    scans: list[dict[str, Any]] = []
    for _round in range(3):
        grid = [r0 + (i - (npts - 1) / 2) * step for i in range(npts)]
        energies = [c.energy(f"{s.name} at R = {r:.4f} A", multiplicity=mult,
                             xyz=diatomic_xyz(sym_a, sym_b, r))["total_energy"] for r in grid]
        scans.append({"r_angstrom": grid, "energy": energies})
        i_min = min(range(npts), key=lambda i: energies[i])
        if 0 < i_min < npts - 1:
            break
        r0 = grid[i_min]  # minimum at the edge: recentre the scan there
    else:
        raise CalculationError(f"{s.name}: the energy minimum stays at the edge of the scan after 3 rounds")
    r_b = [r * units.ANGSTROM_TO_BOHR for r in grid]
    r_e, k, coef = fit_curve(r_b, energies)
    ma, mb = isotope_masses(sym_a, sym_b)
    c.details.update({"scans": scans, "fit_coefficients": coef, "force_constant": k,
                      "reduced_mass_amu": ma * mb / (ma + mb),
                      "masses": "most abundant isotopes (pyscf.data.elements)"})
    return {"bond_length": r_e * units.BOHR_TO_ANGSTROM, "harmonic_frequency": harmonic_wavenumber(k, ma, mb)}


def _spin_splitting(c: Context) -> dict[str, float]:
    s = c.system
    m1, m2 = s.pair
    e1 = c.energy(f"{s.name} 2S+1 = {m1}", multiplicity=m1, xyz=s.geometry_xyz(),
                  force_basis=True)["total_energy"]
    e2 = c.energy(f"{s.name} 2S+1 = {m2}", multiplicity=m2, xyz=s.xyz_b or s.geometry_xyz(),
                  force_basis=True)["total_energy"]
    return {"spin_splitting": (e2 - e1) * EV}


def _sd_promotion(c: Context) -> dict[str, float]:
    a, b = sd_configurations(c.system.symbol)
    if c.settings.get("atoms", "radial") != "radial":
        raise InputError("sd_promotion needs radial atoms (configurations are set on the radial solver)")
    ea = c.energy(f"{c.system.symbol} {a}", config=a)["total_energy"]
    eb = c.energy(f"{c.system.symbol} {b}", config=b)["total_energy"]
    c.details.update({"from": a, "to": b})
    return {"sd_promotion": (eb - ea) * EV}


def _homo_vs_ip(c: Context) -> dict[str, float]:
    summary = c.energy(c.system.name)
    if summary["homo_energy"] is None:
        raise CalculationError(f"{c.system.name}: the solver result carries no HOMO energy")
    return {"homo_vs_ip": -summary["homo_energy"] * EV}


_ATOM_SETTINGS = ("atoms", "precision", "spin", "atom_options", "basis", "molecule_options")
_MOL_SETTINGS = ("basis", "molecule_options")

KINDS: dict[str, PropertyKind] = {
    k.name: k
    for k in (
        PropertyKind("total_energy", ("total_energy",), _ATOM_SETTINGS, _any, _total_energy,
                     "total energy of the system"),
        PropertyKind("ionisation_potential", ("ionisation_potential",), _ATOM_SETTINGS, _atom_or_molecule_ion,
                     _ionisation_potential, "E(X+) - E(X)"),
        PropertyKind("electron_affinity", ("electron_affinity",), _ATOM_SETTINGS, _atom_or_molecule_ion,
                     _electron_affinity, "E(X) - E(X-)"),
        PropertyKind("atomization_energy", ("atomization_energy",), ("atoms", "basis", "molecule_options",
                                                                      "precision", "spin", "atom_options"),
                     _molecule_only, _atomization_energy, "sum of atom energies minus molecule energy"),
        PropertyKind("diatomic_curve", ("bond_length", "harmonic_frequency"),
                     _MOL_SETTINGS + ("scan_points", "scan_step"), _diatomic_only, _diatomic_curve,
                     "bond length and harmonic frequency from an energy scan"),
        PropertyKind("spin_splitting", ("spin_splitting",), _MOL_SETTINGS, _pair_only, _spin_splitting,
                     "E(second multiplicity) - E(first multiplicity)"),
        PropertyKind("sd_promotion", ("sd_promotion",), ("precision", "spin", "atom_options", "atoms"), _sd_check,
                     _sd_promotion, "E(d^(n+1) s^1) - E(d^n s^2)"),
        PropertyKind("homo_vs_ip", ("homo_vs_ip",), _ATOM_SETTINGS, _atom_or_molecule_ion, _homo_vs_ip,
                     "-HOMO eigenvalue, compared with the experimental IP"),
        PropertyKind("atom_survey", ("ionisation_potential", "electron_affinity", "homo_vs_ip",
                                     "spin_polarization_energy", "sd_promotion", "sp_promotion"),
                     ("precision", "atom_options"), _neutral_atom_only, survey.atom_survey,
                     "IP, EA, -HOMO, spin-polarization, s-d and s-p promotion energies of one atom (radial)"),
        PropertyKind("atom_survey_basis", ("ionisation_potential", "electron_affinity", "homo_vs_ip"), ("basis",),
                     _neutral_atom_only, survey.atom_survey_basis,
                     "IP, EA and -HOMO of one atom from Gaussian-basis atoms with integer occupations"),
        PropertyKind("basis_set_error", ("basis_set_error",), ("basis", "precision"), _neutral_atom_only,
                     survey.basis_set_error, "E(basis) - E(radial limit) of one atom"),
        PropertyKind("diatomic_survey", ("bond_length", "harmonic_frequency", "dissociation_energy"),
                     _MOL_SETTINGS + ("scan_points", "scan_step"), _diatomic_only, survey.diatomic_survey,
                     "r_e, omega_e and D_0 = D_e - ZPE of a diatomic in a basis"),
    )
}

#: Property names a spec may use → the job kind computing them.
PROPERTY_NAMES: dict[str, str] = {
    **{k: k for k in KINDS},
    "bond_length": "diatomic_curve",
    "harmonic_frequency": "diatomic_curve",
    "ionization_potential": "ionisation_potential",
    "ionisation_energy": "ionisation_potential",
    "ionization_energy": "ionisation_potential",
    "atomisation_energy": "atomization_energy",
}


def kind_of(name: str) -> PropertyKind:
    key = name.strip().lower()
    if key not in PROPERTY_NAMES:
        import difflib

        close = difflib.get_close_matches(key, list(PROPERTY_NAMES), n=3)
        hint = f"; did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
        raise InputError(f"'{name}' is not a sweep property{hint} (known: {', '.join(sorted(PROPERTY_NAMES))})")
    return KINDS[PROPERTY_NAMES[key]]


def run_property(kind: str, system: System, functional: str, settings: dict[str, Any]) -> dict[str, Any]:
    """Compute one job's property: values, solver-call summaries, details, seconds per call."""
    k = KINDS[kind]
    ctx = Context(system, functional, settings)
    values = k.compute(ctx)
    return {"values": values, "calculations": ctx.calculations, "details": ctx.details,
            "solver_seconds": ctx.seconds}
