"""Optimised geometries, harmonic frequencies and zero-point energies of molecules.

``optimized_geometry`` minimises the energy over the nuclear positions
(:func:`ks1d.optimize.optimize_molecule`: geomeTRIC steps on ks1d's analytic gradients,
the criteria in common practice, max force 4.5e-4 Ha/bohr) from the system's geometry,
and compares the result with that geometry bond by bond (:mod:`.internal`):

* ``geometry_bond_deviation``   the largest r_opt − r_ref over the bonds, with its sign (Å);
* ``geometry_angle_deviation``  the largest θ_opt − θ_ref over the bond angles (degrees;
  none for a diatomic).

The reference is the system's own geometry: for the G2-1 molecules the MP2(full)/6-31G(d)
structures ASE carries (``ase.data.g2_1``: the set's geometries are computed, not measured),
for a diatomic of ks1d's data its experimental r_e, for a structure file the file.  The
full optimised geometry (XYZ), every bond and angle, and the optimisation history are in
the job's details.

``vibrations`` adds the harmonic analysis at the optimised geometry
(:func:`ks1d.frequencies.harmonic_frequencies`: central differences of analytic
gradients, ±0.005 bohr, rigid motions projected out, most abundant isotopes):

* ``zero_point_energy``          ½ Σ_i ħω_i over the real harmonic modes (kcal/mol);
* ``lowest_harmonic_frequency``  the lowest harmonic wavenumber (cm⁻¹; an imaginary mode is
  negative: the structure is a saddle point, not a minimum).

Every wavenumber, the reduced masses and the warnings are in the details.  Harmonic
wavenumbers are not compared with measured fundamentals (they differ by the
anharmonicity, typically 3–5 % for X–H stretches); for diatomics the references are the
harmonic constants ω_e of Huber & Herzberg.
"""
from __future__ import annotations

import numpy as np

from ... import units
from ...errors import CalculationError
from . import calculations
from .context import Context, name_step
from .internal import compare_geometries


def _positions(xyz: str) -> tuple[tuple[str, ...], np.ndarray]:
    from ...structure import parse_xyz_text

    st = parse_xyz_text(xyz)
    return tuple(st.symbols), np.asarray(st.positions, dtype=float)


def _record_optimisation(c: Context, summary: dict, seconds: float) -> None:
    s = c.system
    if not summary["converged"]:  # optimize_molecule raises instead; kept as a guard
        raise CalculationError(f"{s.name}: the geometry optimisation did not converge")
    c.record({"label": f"{s.name} geometry optimisation ({summary['steps']} gradients)",
              "solver": "gaussian (optimize_molecule)", "species": s.name, "charge": s.charge,
              "basis": c.settings["basis"], **{k: v for k, v in summary.items() if k not in ("geometry", "history")}},
             seconds)


def reference_geometry(system) -> str:
    """What the geometry a job compares with is, in words."""
    if system.dataset == "g2-1":
        return ("the G2-1 geometry of ASE's ase.data.g2_1: MP2(full)/6-31G(d), computed, not measured "
                f"({system.source})")
    return system.source or "the input geometry"


def _geometry_details(c: Context, summary: dict) -> dict[str, float]:
    symbols, ref = _positions(c.system.geometry_xyz())
    _, opt = _positions(summary["geometry"])
    cmp = compare_geometries(symbols, ref, opt)
    c.details.update({"reference_geometry": reference_geometry(c.system),
                      "optimised_geometry": summary["geometry"], "bonds": cmp["bonds"], "angles": cmp["angles"],
                      "optimisation": {"steps": summary["steps"], "max_force": summary["max_force"],
                                       "criteria": summary["criteria"], "history": summary["history"]},
                      "optimised_energy": summary["total_energy"]})
    values = {}
    if cmp["bond_deviation"] is not None:
        values["geometry_bond_deviation"] = cmp["bond_deviation"]
    if cmp["angle_deviation"] is not None:
        values["geometry_angle_deviation"] = cmp["angle_deviation"]
    return values


def _label(c: Context, what: str) -> str:
    return f"{c.system.name} {what}"


def optimized_geometry(c: Context) -> dict[str, float]:
    s = c.system
    try:
        opt, dt = calculations.optimisation(s.geometry_xyz(), c.functional, c.settings["basis"], charge=s.charge,
                                            multiplicity=s.ground_multiplicity(),
                                            options=c.settings.get("molecule_options"))
    except Exception as exc:
        name_step(exc, _label(c, "geometry optimisation"))
        raise
    summary = calculations.optimisation_summary(opt)
    _record_optimisation(c, summary, dt)
    return _geometry_details(c, summary)


def vibrations(c: Context) -> dict[str, float]:
    s = c.system
    try:
        opt, harm, t_opt, t_h = calculations.vibrations(s.geometry_xyz(), c.functional, c.settings["basis"],
                                                        charge=s.charge, multiplicity=s.ground_multiplicity(),
                                                        options=c.settings.get("molecule_options"))
    except Exception as exc:
        name_step(exc, _label(c, "geometry optimisation and harmonic frequencies"))
        raise
    _record_optimisation(c, opt, t_opt)
    c.record({"label": f"{s.name} harmonic frequencies ({harm['gradients']} gradients, ±{harm['step_bohr']} bohr)",
              "solver": "gaussian (harmonic_frequencies)", "species": s.name, "charge": s.charge,
              "basis": c.settings["basis"],
              **{k: v for k, v in harm.items() if k not in ("wavenumbers", "reduced_masses", "warnings")}}, t_h)
    _geometry_details(c, opt)
    wn = harm["wavenumbers"]
    c.details.update({"wavenumbers": wn, "reduced_masses_amu": harm["reduced_masses"],
                      "imaginary_modes": harm["imaginary_modes"], "linear": harm["linear"],
                      "masses": harm["masses"], "finite_difference_step_bohr": harm["step_bohr"],
                      "zero_point_energy_hartree": harm["zero_point_energy"]})
    if harm["warnings"]:
        c.details["warnings"] = list(harm["warnings"])
    return {"zero_point_energy": harm["zero_point_energy"] * units.HARTREE_TO_KCAL_MOL,
            "lowest_harmonic_frequency": float(min(wn))}
