"""Diatomics: r_e and ω_e (``diatomic_curve``), plus D_0 (``diatomic_survey``), from analytic gradients.

``diatomic_curve`` finds the minimum of E(R) from analytic energies and gradients at
(typically) three bond lengths, each SCF restarted from the previous density
(:mod:`.bondmin`: the Hermite interpolant through E(R_i) and dE/dR(R_i)):

    r_e where E′(r_e) = 0,   ω_e = √(k/μ),   k = E″(r_e),   μ = m_A m_B / (m_A + m_B)      (Å, cm⁻¹)

``diatomic_survey`` adds the dissociation energy from the ground-state atoms
in the same basis:

    D_e = E(A) + E(B) − E(r_e),    D_0 ≈ D_e − ½ ω_e

(harmonic zero-point energy), reported as ``dissociation_energy`` (eV) so that
it compares with the experimental D_0.  The atoms are UKS determinants at
their Hund's-rule multiplicity with integer occupations (common practice for
binding energies).

``diatomic_curve_scan`` is the earlier method, kept for comparison: E(R) on an
even grid of ``scan_points`` bond lengths ``scan_step`` Å apart around the input
geometry (recentred on the lowest point, at most three rounds, until the
minimum lies inside), and a quartic least-squares fit (:mod:`.curvefit`).  Its
fit error is larger than the interpolation error of the gradient method
(benchmarks/bench_sweep_diatomic.py compares both with a dense scan).
"""
from __future__ import annotations

from typing import Any

from ... import units
from ...errors import CalculationError, InputError
from .context import Context
from .curvefit import fit_curve, harmonic_wavenumber, isotope_masses
from .systems import bond_length, diatomic_xyz, neutral_atom

EV = units.HARTREE_TO_EV


def _masses(c: Context) -> tuple[float, float]:
    ma, mb = isotope_masses(*c.system.symbols)
    c.details.update({"reduced_mass_amu": ma * mb / (ma + mb),
                      "masses": "most abundant isotopes (pyscf.data.elements)"})
    return ma, mb


def _diatomic(c: Context, kind: str) -> None:
    if not c.system.is_diatomic:
        raise InputError(f"{kind} needs a diatomic molecule")


def _gradient_minimum(c: Context) -> tuple[dict[str, float], float]:
    """(r_e and ω_e, E(r_e)) from the bond-length search on analytic gradients."""
    s = c.system
    found = c.bond_minimum(s.name, bond_length(s), s.ground_multiplicity())
    k = found["force_constant"]
    ma, mb = _masses(c)
    c.details.update({"method": "minimum of the Hermite interpolant through analytic energies and gradients "
                                "(ks1d.sweep.properties.bondmin); force constant from the "
                                + found["force_constant_from"],
                      "bond_search": found, "force_constant": k})
    values = {"bond_length": found["r_e_bohr"] * units.BOHR_TO_ANGSTROM,
              "harmonic_frequency": harmonic_wavenumber(k, ma, mb)}
    return values, found["energy"]


def diatomic_curve(c: Context) -> dict[str, float]:
    _diatomic(c, "diatomic_curve")
    return _gradient_minimum(c)[0]


def diatomic_survey(c: Context) -> dict[str, float]:
    _diatomic(c, "diatomic_survey")
    values, e_min = _gradient_minimum(c)
    return _with_dissociation(c, values, e_min)


def _with_dissociation(c: Context, values: dict[str, float], e_min: float) -> dict[str, float]:
    atoms = 0.0
    for sym in c.system.symbols:
        atoms += c.energy(f"{sym} atom in {c.settings['basis']}", system=neutral_atom(sym),
                          force_basis=True)["total_energy"]
    d_e = (atoms - e_min) * EV
    zpe = 0.5 * values["harmonic_frequency"] / units.HARTREE_TO_INV_CM * EV
    c.details.update({"minimum_energy": e_min, "D_e_eV": d_e, "zero_point_energy_eV": zpe})
    values["dissociation_energy"] = d_e - zpe
    return values


# --------------------------------------------------------------- energy scan (kept for comparison)
def diatomic_curve_scan(c: Context) -> dict[str, float]:
    _diatomic(c, "diatomic_curve_scan")
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
    ma, mb = _masses(c)
    c.details.update({"method": f"quartic fit to a {npts}-point energy scan, step {step} angstrom",
                      "scans": scans, "fit_coefficients": coef, "force_constant": k})
    return {"bond_length": r_e * units.BOHR_TO_ANGSTROM, "harmonic_frequency": harmonic_wavenumber(k, ma, mb)}
