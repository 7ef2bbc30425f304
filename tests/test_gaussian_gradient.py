"""Analytic nuclear gradients of the Gaussian solver.

References:
* ks1d's own central finite differences of the total energy (step 1e-3 bohr, SCFs converged to
  an orbital gradient of 1e-9).  ks1d's grid moves with the atoms and the analytic gradient
  includes the grid response, so the two must agree on every grid level up to the O(h²) error of
  the difference quotient (~2e-7 Ha/bohr measured).  Brief: ≤ 2e-5 Ha/bohr on the fine grid.
* pyscf's analytic gradients (``pyscf.grad``, computed at test time, reference only):
  - on ks1d's grid handed to pyscf (as in tests/test_gaussian_vs_pyscf.py).  pyscf's gradient
    holds the grid fixed, so it is compared with ks1d's gradient minus its grid-response term.
    The two assemble the same derivative integrals and the same libxc derivatives, so they agree
    to ~1e-8 (measured ≤ 6e-9); tolerance 1e-6 Ha/bohr (brief: "tighter on a shared grid");
  - each code on its own fine grid, full gradients: brief tolerance 1e-4 Ha/bohr.
Geometries: experimental water (NIST CCCBDB, from memory) and distorted NH2 / water structures
of our own (non-zero forces on every atom), identical coordinates in bohr for both codes.
"""
from __future__ import annotations

import json

import numpy as np
import pytest
from scipy import constants

pyscf = pytest.importorskip("pyscf")
from pyscf import dft, gto, scf  # noqa: E402

from ks1d.errors import SettingsError  # noqa: E402
from ks1d.gaussian.geometry import Geometry, read_geometry  # noqa: E402
from ks1d.gaussian.grid import build_grid  # noqa: E402
from ks1d.gaussian.scf import solve_molecule  # noqa: E402
from ks1d.serialize import dumps  # noqa: E402
from ks1d.xc import resolve_functional  # noqa: E402

WATER = "O 0 0 0.1173\nH 0 0.7572 -0.4692\nH 0 -0.7572 -0.4692\n"
WATER_DISTORTED = "O 0.02 0 0.12\nH 0 0.80 -0.45\nH 0.03 -0.72 -0.50\n"
NH2 = "N 0 0 0.1\nH 0 0.80 -0.45\nH 0.05 -0.78 -0.50\n"
TIGHT = {"residual_tolerance": 1e-9, "energy_tolerance": 1e-12}


def _pyscf_gradient(geom, basis, xc, multiplicity, grid=None, level=None):
    mol = gto.M(atom=[(s, tuple(x)) for s, x in zip(geom.symbols, geom.coordinates)], unit="Bohr",
                basis=basis, spin=multiplicity - 1, verbose=0)
    func = resolve_functional(xc)
    if func.family == "hf":
        mf = scf.RHF(mol) if multiplicity == 1 else scf.UHF(mol)
    else:
        mf = dft.RKS(mol) if multiplicity == 1 else dft.UKS(mol)
        mf.xc = func.libxc
        mf.small_rho_cutoff = 0.0
        if grid is not None:
            mf.grids.coords, mf.grids.weights = grid.coords, grid.weights
        else:
            mf.grids.level = level
    mf.conv_tol = 1e-12
    mf.conv_tol_grad = 1e-8
    mf.kernel()
    assert mf.converged
    return mf.nuc_grad_method().kernel()


SHARED_GRID_CASES = [
    # (id, geometry, basis, xc, multiplicity)
    ("rks-lda", WATER_DISTORTED, "6-31g", "lda", 1),
    ("rks-pbe", WATER_DISTORTED, "6-31g", "pbe", 1),
    ("uks-pbe", NH2, "6-31g", "pbe", 2),
    ("rks-r2scan", WATER_DISTORTED, "6-31g", "r2scan", 1),
    ("uks-r2scan", NH2, "6-31g", "r2scan", 2),
    ("rks-pbe0", WATER_DISTORTED, "6-31g", "pbe0", 1),
    ("uks-pbe0", NH2, "6-31g", "pbe0", 2),
    ("rks-wb97x", WATER_DISTORTED, "6-31g", "wb97x", 1),
    ("uks-wb97x", NH2, "6-31g", "wb97x", 2),
    ("uks-hf", NH2, "6-31g", "hf", 2),
]


@pytest.mark.parametrize("case", SHARED_GRID_CASES, ids=[c[0] for c in SHARED_GRID_CASES])
def test_gradient_matches_pyscf_on_shared_grid(case):
    _, xyz, basis, xc, mult = case
    geom = read_geometry(xyz)
    res = solve_molecule(geom, basis=basis, xc=xc, multiplicity=mult, grid="coarse", gradient=True, scf=TIGHT)
    ref = _pyscf_gradient(geom, basis, xc, mult, grid=build_grid(geom, "coarse"))
    fixed_grid = np.asarray(res.gradient) - res.gradient_terms.grid_response
    assert np.abs(fixed_grid - ref).max() < 1e-6
    assert np.abs(ref).max() > 1e-2  # a real test: the forces are far from zero


def test_pbe_gradient_matches_pyscf_each_on_its_fine_grid():
    geom = read_geometry(WATER_DISTORTED)
    res = solve_molecule(geom, basis="6-31g", xc="pbe", grid="fine", gradient=True)
    ref = _pyscf_gradient(geom, "6-31g", "pbe", 1, level=5)
    assert np.abs(np.asarray(res.gradient) - ref).max() < 1e-4


def _fd_gradient(geom, res, coords, basis, xc, mult, grid, h=1e-3):
    out = []
    for A, x in coords:
        e = []
        for sign in (1.0, -1.0):
            X = geom.coordinates.copy()
            X[A, x] += sign * h
            e.append(solve_molecule(Geometry(geom.symbols, geom.numbers, X), basis=basis, xc=xc,
                                    multiplicity=mult, grid=grid, scf=TIGHT, start=res).total_energy)
        out.append((e[0] - e[1]) / (2 * h))
    return np.array(out)


FD_CASES = [
    # (id, geometry, basis, xc, multiplicity, grid)
    ("rks-pbe-fine", WATER_DISTORTED, "6-31g", "pbe", 1, "fine"),
    ("rks-lda", WATER_DISTORTED, "sto-3g", "lda", 1, "coarse"),
    ("uks-pbe", NH2, "sto-3g", "pbe", 2, "coarse"),
    ("rks-r2scan", WATER_DISTORTED, "sto-3g", "r2scan", 1, "coarse"),
    ("rks-pbe0", WATER_DISTORTED, "sto-3g", "pbe0", 1, "coarse"),
    ("uks-wb97x", NH2, "sto-3g", "wb97x", 2, "coarse"),
]


@pytest.mark.parametrize("case", FD_CASES, ids=[c[0] for c in FD_CASES])
def test_gradient_matches_finite_differences_of_the_energy(case):
    _, xyz, basis, xc, mult, grid = case
    geom = read_geometry(xyz)
    res = solve_molecule(geom, basis=basis, xc=xc, multiplicity=mult, grid=grid, gradient=True, scf=TIGHT)
    coords = [(0, 2), (1, 1)] if grid == "fine" else [(0, 0), (0, 2), (1, 1), (2, 2)]
    fd = _fd_gradient(geom, res, coords, basis, xc, mult, grid)
    analytic = np.array([res.gradient[A, x] for A, x in coords])
    assert np.abs(analytic - fd).max() < 2e-6   # brief: 2e-5; measured ~2e-7 (the O(h²) error)


def test_gradient_is_translationally_invariant_with_the_grid_response():
    # the grid energy depends on relative positions only, so Σ_A ∂E/∂R_A = 0 exactly; without the
    # grid response r2SCAN on the coarse grid violates it by ~1e-3 Ha/bohr
    res = solve_molecule(WATER_DISTORTED, basis="6-31g", xc="r2scan", grid="coarse", gradient=True)
    assert np.abs(np.asarray(res.gradient).sum(axis=0)).max() < 1e-10
    fixed = np.asarray(res.gradient) - res.gradient_terms.grid_response
    assert np.abs(fixed.sum(axis=0)).max() > 1e-4
    assert res.settings["gradient"]["translation_defect"] < 1e-10


def test_forces_are_minus_the_gradient_in_ev_per_angstrom():
    res = solve_molecule(WATER, basis="sto-3g", xc="lda", grid="coarse", gradient=True)
    # CODATA via scipy.constants: 1 Ha/bohr = E_h / (e a_0) · 1e-10 eV/Å
    factor = constants.physical_constants["Hartree energy"][0] / constants.e / (
        constants.physical_constants["Bohr radius"][0] * 1e10)
    assert np.allclose(res.forces, -np.asarray(res.gradient) * factor, rtol=1e-12, atol=0)
    assert res.gradient.shape == (3, 3)


def test_gradient_is_none_unless_asked_and_serialises_without_the_state():
    plain = solve_molecule(WATER, basis="sto-3g", xc="lda", grid="coarse")
    assert plain.gradient is None and plain.forces is None
    res = solve_molecule(WATER, basis="sto-3g", xc="lda", grid="coarse", gradient=True)
    d = json.loads(dumps(res.to_dict()))
    assert np.allclose(d["gradient"], res.gradient)
    assert "state" not in d and "gradient_terms" not in d
    assert res.timings["gradient"] > 0


def test_restart_from_a_previous_result_converges_faster_to_the_same_energy():
    cold = solve_molecule(WATER, basis="6-31g", xc="pbe", grid="coarse", scf=TIGHT)
    geom = read_geometry(WATER)
    X = geom.coordinates.copy()
    X[1, 1] += 0.02
    moved = Geometry(geom.symbols, geom.numbers, X)
    fresh = solve_molecule(moved, basis="6-31g", xc="pbe", grid="coarse", scf=TIGHT)
    warm = solve_molecule(moved, basis="6-31g", xc="pbe", grid="coarse", scf=TIGHT, start=cold)
    assert warm.total_energy == pytest.approx(fresh.total_energy, abs=1e-9)
    assert warm.iterations < fresh.iterations
    assert warm.settings["guess"] == "previous result"


def test_restart_from_another_molecule_or_basis_is_refused():
    water = solve_molecule(WATER, basis="sto-3g", xc="lda", grid="coarse")
    with pytest.raises(SettingsError, match="other atoms or another basis"):
        solve_molecule(WATER, basis="6-31g", xc="lda", grid="coarse", start=water)
    with pytest.raises(SettingsError, match="other atoms or another basis"):
        solve_molecule("N 0 0 0\nN 0 0 1.1\n", basis="sto-3g", xc="lda", grid="coarse", start=water)
    with pytest.raises(SettingsError, match="MoleculeResult"):
        solve_molecule(WATER, basis="sto-3g", xc="lda", grid="coarse", start="previous")


def test_qcschema_of_a_gradient_run_uses_the_gradient_driver():
    # QCSchema's AtomicResult (qcelemental, test extra): driver "gradient", return_result natoms × 3 Ha/bohr
    models = pytest.importorskip("qcelemental.models")
    from ks1d.qcschema import molecule_to_qcschema

    res = solve_molecule(WATER, basis="sto-3g", xc="lda", grid="coarse", gradient=True)
    doc = json.loads(dumps(molecule_to_qcschema(res)))
    parsed = models.AtomicResult(**doc)
    assert parsed.driver == "gradient"
    assert np.allclose(np.asarray(parsed.return_result).reshape(-1, 3), res.gradient)
