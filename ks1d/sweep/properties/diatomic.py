"""Diatomics from energy scans: r_e and ω_e (``diatomic_curve``), plus D_0 (``diatomic_survey``).

``diatomic_curve`` scans E(R) on an even grid of bond lengths around the
input geometry (recentred on the lowest point, at most three rounds, until
the minimum lies inside) and fits a polynomial (:mod:`.curvefit`):

    r_e where E′(R) = 0,   ω_e = √(k/μ),   k = E″(r_e),   μ = m_A m_B / (m_A + m_B)      (Å, cm⁻¹)

``diatomic_survey`` adds the dissociation energy from the ground-state atoms
in the same basis:

    D_e = E(A) + E(B) − E_fit(r_e),    D_0 ≈ D_e − ½ ω_e

(harmonic zero-point energy), reported as ``dissociation_energy`` (eV) so that
it compares with the experimental D_0.  The atoms are UKS determinants at
their Hund's-rule multiplicity with integer occupations (common practice for
binding energies).
"""
from __future__ import annotations

from typing import Any

import numpy as np

from ... import units
from ...errors import CalculationError, InputError
from .context import Context
from .curvefit import fit_curve, harmonic_wavenumber, isotope_masses
from .systems import bond_length, diatomic_xyz, neutral_atom

EV = units.HARTREE_TO_EV


def diatomic_curve(c: Context) -> dict[str, float]:
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


def diatomic_survey(c: Context) -> dict[str, float]:
    s = c.system
    if not s.is_diatomic:
        raise InputError("diatomic_survey needs a diatomic molecule")
    values = diatomic_curve(c)
    # the fit of the last scan is E(R) − min E = Σ_j c_j (R − R̄)^j (ks1d.sweep.properties.curvefit.fit_curve)
    scan = c.details["scans"][-1]
    r_b = np.asarray(scan["r_angstrom"]) * units.ANGSTROM_TO_BOHR
    r_e = values["bond_length"] * units.ANGSTROM_TO_BOHR
    fit = np.polynomial.Polynomial(c.details["fit_coefficients"])
    e_min = float(min(scan["energy"]) + fit(r_e - r_b.mean()))
    atoms = 0.0
    for sym in s.symbols:
        atoms += c.energy(f"{sym} atom in {c.settings['basis']}", system=neutral_atom(sym),
                          force_basis=True)["total_energy"]
    d_e = (atoms - e_min) * EV
    zpe = 0.5 * values["harmonic_frequency"] / units.HARTREE_TO_INV_CM * EV
    c.details.update({"fitted_minimum_energy": e_min, "D_e_eV": d_e, "zero_point_energy_eV": zpe})
    values["dissociation_energy"] = d_e - zpe
    return values
