"""The ASE calculator ks1d.ase.KS1D.

References:
* ASE's own finite-difference forces (``ase.calculators.fd.calculate_numerical_forces``, the
  helper behind ``ase.calculators.test.gradient_test``), ε = 1e-3 Å: agreement within 1e-4 eV/Å
  (measured 2.4e-5 eV/Å for water PBE/6-31G, the O(ε²) error).
* Units: CODATA via scipy.constants (eV, Å, e·Å), independently of ks1d.units.
* ``ase.optimize.BFGS`` to fmax 0.02 eV/Å on water (issue 14), continued to 1e-3 eV/Å, must
  reach the structure of ks1d.optimize_molecule at the same level (tight criteria): bond length
  within 2e-4 Å, angle within 0.05° — what a residual force of 1e-3 eV/Å (2e-5 Ha/bohr) allows.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy import constants

pytest.importorskip("pyscf")
ase = pytest.importorskip("ase")
from ase import Atoms  # noqa: E402
from ase.build import molecule  # noqa: E402
from ase.calculators.fd import calculate_numerical_forces  # noqa: E402
from ase.optimize import BFGS  # noqa: E402

from ks1d.ase import KS1D  # noqa: E402
from ks1d.errors import GeometryError, SettingsError  # noqa: E402
from ks1d.gaussian.geometry import read_geometry  # noqa: E402
from ks1d.optimize import optimize_molecule  # noqa: E402

BOHR_A = constants.physical_constants["Bohr radius"][0] * 1e10
HARTREE_EV = constants.physical_constants["Hartree energy in eV"][0]
LEVEL = {"basis": "6-31g", "xc": "pbe", "grid": "coarse"}


def test_properties_follow_ase_units_and_match_the_solver():
    atoms = molecule("H2O")
    atoms.calc = calc = KS1D(**LEVEL)
    e = atoms.get_potential_energy()
    f = atoms.get_forces()
    d = atoms.get_dipole_moment()
    res = calc.last_result
    assert set(KS1D.implemented_properties) >= {"energy", "forces", "dipole"}
    assert e == pytest.approx(res.total_energy * HARTREE_EV, rel=1e-14)
    assert np.allclose(f, -np.asarray(res.gradient) * HARTREE_EV / BOHR_A, rtol=1e-12, atol=0)
    assert np.allclose(d, np.asarray(res.dipole) * BOHR_A, rtol=1e-12, atol=0)
    assert atoms.get_potential_energy(force_consistent=True) == pytest.approx(e)


def test_forces_pass_ase_finite_difference_check():
    atoms = molecule("H2O")
    atoms.positions[1] += [0.0, 0.05, -0.03]
    atoms.calc = KS1D(**LEVEL)
    analytic = atoms.get_forces()
    numeric = calculate_numerical_forces(atoms, eps=1e-3)
    assert np.abs(analytic - numeric).max() < 1e-4
    assert np.abs(analytic).max() > 0.1


def test_bfgs_reaches_the_optimize_molecule_geometry_and_restarts_the_scf():
    atoms = molecule("H2O")
    atoms.positions[1] += [0.0, 0.08, -0.05]
    atoms.calc = calc = KS1D(**LEVEL)
    first_iterations = None
    opt = BFGS(atoms, logfile=None)
    assert opt.run(fmax=0.02, steps=50)          # issue 14: fmax 0.02 eV/Å
    first_iterations = calc.last_result.iterations
    assert calc.last_result.settings["guess"] == "previous result"
    assert opt.run(fmax=1e-3, steps=100)
    ref = optimize_molecule(_xyz(molecule("H2O")), criteria={
        "max_force": 1e-5, "rms_force": 1e-5, "max_step": 1e-4, "rms_step": 1e-4, "energy_change": 1e-9}, **LEVEL)
    X = read_geometry(ref.geometry).coordinates * BOHR_A
    r_ref = np.linalg.norm(X[1] - X[0])
    ang_ref = np.degrees(np.arccos((X[1] - X[0]) @ (X[2] - X[0]) / (np.linalg.norm(X[1] - X[0])
                                                                     * np.linalg.norm(X[2] - X[0]))))
    assert atoms.get_distance(0, 1) == pytest.approx(r_ref, abs=2e-4)
    assert atoms.get_distance(0, 2) == pytest.approx(r_ref, abs=2e-4)
    assert atoms.get_angle(1, 0, 2) == pytest.approx(ang_ref, abs=0.05)
    assert first_iterations < 15  # restarted SCFs need few iterations


def _xyz(atoms) -> str:
    return "".join(f"{s} {x:.10f} {y:.10f} {z:.10f}\n" for s, (x, y, z) in zip(atoms.get_chemical_symbols(),
                                                                               atoms.positions))


def test_bad_input_is_refused():
    with pytest.raises(SettingsError, match="unknown KS1D parameter"):
        KS1D(functional="pbe")
    calc = KS1D(**LEVEL)
    with pytest.raises(SettingsError, match="unknown KS1D parameter"):
        calc.set(basis_set="sto-3g")
    periodic = Atoms("H2", positions=[[0, 0, 0], [0, 0, 0.74]], cell=[5, 5, 5], pbc=True)
    periodic.calc = KS1D(**LEVEL)
    with pytest.raises(GeometryError, match="periodic"):
        periodic.get_potential_energy()
    close = Atoms("H2", positions=[[0, 0, 0], [0, 0, 0.05]])
    close.calc = KS1D(**LEVEL)
    with pytest.raises(GeometryError, match="closer than"):
        close.get_potential_energy()


def test_changing_a_parameter_drops_the_restart():
    atoms = molecule("H2")
    atoms.calc = calc = KS1D(basis="sto-3g", xc="lda", grid="coarse")
    e1 = atoms.get_potential_energy()
    calc.set(xc="pbe")
    assert calc.last_result is None
    e2 = atoms.get_potential_energy()
    assert calc.last_result.settings["guess"] != "previous result"
    assert e1 != e2
