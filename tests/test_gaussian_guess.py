"""The radial-atom guess (default) against the core-Hamiltonian guess.

Claim: superposed potentials of ks1d's radial atoms start the SCF closer to
the solution than the bare core Hamiltonian (fewer iterations, lower first
energy), and both starts reach the same state — checked against pyscf on the
same (shared) grid within 1e-6 Ha.
"""
from __future__ import annotations

import pytest

pyscf = pytest.importorskip("pyscf")
from pyscf import dft  # noqa: E402

from ks1d.gaussian.basis import build_basis  # noqa: E402
from ks1d.gaussian.geometry import read_geometry  # noqa: E402
from ks1d.gaussian.grid import build_grid  # noqa: E402
from ks1d.gaussian.scf import solve_molecule  # noqa: E402

ETHYLENE = """6
ethylene, D2h
C  0.000000  0.000000  0.666500
C  0.000000  0.000000 -0.666500
H  0.000000  0.923000  1.238500
H  0.000000 -0.923000  1.238500
H  0.000000  0.923000 -1.238500
H  0.000000 -0.923000 -1.238500
"""


def test_radial_atom_guess_beats_core_guess_and_both_match_pyscf():
    atoms = solve_molecule(ETHYLENE, basis="6-31g", xc="pbe", grid="coarse")
    core = solve_molecule(ETHYLENE, basis="6-31g", xc="pbe", grid="coarse", guess="core")
    assert atoms.settings["guess"] == "atoms"
    assert atoms.history[0].energy < core.history[0].energy
    assert atoms.iterations < core.iterations
    geom = read_geometry(ETHYLENE)
    grid = build_grid(geom, "coarse")
    mf = dft.RKS(build_basis(geom, "6-31g").mol)
    mf.xc = "gga_x_pbe,gga_c_pbe"
    mf.grids.coords, mf.grids.weights = grid.coords, grid.weights
    mf.small_rho_cutoff = 0.0
    mf.conv_tol = 1e-11
    e_ref = mf.kernel()
    assert atoms.total_energy == pytest.approx(e_ref, abs=1e-6)
    assert core.total_energy == pytest.approx(e_ref, abs=1e-6)


def test_damping_and_level_shift_reach_the_same_state():
    # damping 0.4 and a 0.5 Ha virtual shift only change the path, not the fixed point:
    # OH (doublet, UKS) must still match pyscf on the shared grid within 1e-6 Ha
    xyz = "O 0 0 0\nH 0 0 0.9697\n"
    res = solve_molecule(xyz, basis="6-31g", xc="pbe", multiplicity=2, grid="coarse",
                         scf={"damping": 0.4, "level_shift": 0.5})
    geom = read_geometry(xyz)
    grid = build_grid(geom, "coarse")
    mf = dft.UKS(build_basis(geom, "6-31g", multiplicity=2).mol)
    mf.xc = "gga_x_pbe,gga_c_pbe"
    mf.grids.coords, mf.grids.weights = grid.coords, grid.weights
    mf.small_rho_cutoff = 0.0
    mf.conv_tol = 1e-11
    e_ref = mf.kernel()
    assert res.total_energy == pytest.approx(e_ref, abs=1e-6)
    assert res.spin_square == pytest.approx(mf.spin_square()[0], abs=1e-5)
