"""Harmonic frequencies (ks1d.harmonic_frequencies and ``ks1d molecule --frequencies``).

References:
* pyscf's analytic Hessian (``pyscf.hessian`` + ``pyscf.hessian.thermo.harmonic_analysis``,
  computed at test time, reference only) at the same geometry, on ks1d's grid handed to pyscf,
  with the same isotope masses.  Brief: within 2 cm⁻¹; measured ≤ 0.4 cm⁻¹ for water PBE/6-31G
  on the default grid.  What is left is mostly the grid response, which ks1d's gradients contain
  and pyscf's Hessian does not; the central-difference error of the 0.005-bohr step is below
  0.1 cm⁻¹ (halving the step changes the wavenumbers by ≤ 0.05 cm⁻¹; benchmarks/bench_gradient.py).
* The textbook diatomic ω = √(k/μ) with CODATA constants (scipy.constants) for the unit chain.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy import constants

pyscf = pytest.importorskip("pyscf")
from pyscf import dft, gto  # noqa: E402
from pyscf.hessian import thermo  # noqa: E402

from ks1d.cli import main  # noqa: E402
from ks1d.errors import GeometryError, SettingsError  # noqa: E402
from ks1d.frequencies import harmonic_analysis, harmonic_frequencies, isotope_masses  # noqa: E402
from ks1d.gaussian.geometry import read_geometry  # noqa: E402
from ks1d.gaussian.grid import build_grid  # noqa: E402
from ks1d.optimize import optimize_molecule  # noqa: E402

WATER = "O 0 0 0.1173\nH 0 0.7572 -0.4692\nH 0 -0.7572 -0.4692\n"
CO = "C 0 0 0\nO 0 0 1.1283\n"
GRID = "default"


def _pyscf_frequencies(geometry_xyz, basis, xc):
    g = read_geometry(geometry_xyz)
    grid = build_grid(g, GRID)
    mol = gto.M(atom=[(s, tuple(x)) for s, x in zip(g.symbols, g.coordinates)], unit="Bohr", basis=basis,
                verbose=0)
    mf = dft.RKS(mol)
    mf.xc = xc
    mf.small_rho_cutoff = 0.0
    mf.grids.coords, mf.grids.weights = grid.coords, grid.weights
    mf.conv_tol = 1e-12
    mf.kernel()
    hess = mf.Hessian().kernel()
    res = thermo.harmonic_analysis(mol, hess, mass=isotope_masses(g.symbols))
    zpe = thermo.thermo(mf, res["freq_au"], 298.15)["ZPE"][0]
    return np.asarray(res["freq_wavenumber"]).real, zpe


@pytest.mark.parametrize("xyz,basis,nmodes", [(WATER, "6-31g", 3), (CO, "6-31g", 1)], ids=["water", "co"])
def test_wavenumbers_and_zpe_match_pyscf_hessian(xyz, basis, nmodes):
    opt = optimize_molecule(xyz, basis=basis, xc="pbe", grid=GRID)
    fr = harmonic_frequencies(opt.geometry, basis=basis, xc="pbe", grid=GRID, start=opt.result)
    ref, zpe_ref = _pyscf_frequencies(opt.geometry, basis, "pbe")
    assert len(fr.wavenumbers) == nmodes and fr.linear == (nmodes == 1)
    assert np.allclose(fr.wavenumbers, np.sort(ref), atol=2.0)
    # ZPE: ½ Σ ħω, consistent with pyscf's thermochemistry to the 2 cm⁻¹-per-mode tolerance
    cm = 1.0 / (constants.physical_constants["hartree-inverse meter relationship"][0] / 100.0)
    assert fr.zero_point_energy == pytest.approx(0.5 * sum(fr.wavenumbers) * cm, rel=1e-12)
    assert fr.zero_point_energy == pytest.approx(zpe_ref, abs=0.5 * 2.0 * nmodes * cm)
    assert fr.normal_modes.shape == (nmodes, len(fr.symbols), 3)
    assert np.allclose(np.linalg.norm(fr.normal_modes.reshape(nmodes, -1), axis=1), 1.0)
    assert fr.warnings == ()


def test_diatomic_harmonic_analysis_follows_the_textbook_formula():
    # a diatomic along z with force constant k: ω = √(k/μ), ν̃ = ω / (2πc); CODATA via scipy.constants
    k = 0.5  # Ha/bohr²
    H = np.zeros((6, 6))
    H[2, 2] = H[5, 5] = k
    H[2, 5] = H[5, 2] = -k
    masses = [1.00782503223, 34.968852682]  # 1H and 35Cl, AME2016 (from memory)
    wn, modes, mu, linear = harmonic_analysis(H, masses, np.array([[0, 0, 0], [0, 0, 2.4]]))
    m_red = masses[0] * masses[1] / (masses[0] + masses[1]) * constants.physical_constants["atomic mass constant"][0]
    k_si = k * constants.physical_constants["Hartree energy"][0] / constants.physical_constants["Bohr radius"][0]**2
    expected = np.sqrt(k_si / m_red) / (2 * np.pi * constants.c) / 100.0
    assert linear and len(wn) == 1
    assert wn[0] == pytest.approx(expected, rel=1e-10)
    # the mode's reduced mass 1/Σ_i L_i²/m_i (unit mass-weighted L) is m1 m2 (m1 + m2)/(m1² + m2²) here
    m1, m2 = masses
    assert mu[0] == pytest.approx(m1 * m2 * (m1 + m2) / (m1**2 + m2**2), rel=1e-10)


def test_imaginary_mode_is_a_negative_wavenumber():
    # a negative curvature along the bond: the mode is imaginary and reported as −√|λ|
    H = np.zeros((6, 6))
    H[2, 2] = H[5, 5] = -0.1
    H[2, 5] = H[5, 2] = 0.1
    wn, _, _, _ = harmonic_analysis(H, [1.0, 1.0], np.array([[0, 0, 0], [0, 0, 1.4]]))
    assert wn[0] < 0


def test_large_forces_warn_with_the_largest_force():
    with pytest.warns(UserWarning, match=r"largest force at this structure is [0-9.e+-]+ Ha/bohr"):
        fr = harmonic_frequencies("H 0 0 0\nH 0 0 0.9\n", basis="sto-3g", xc="lda", grid="coarse")
    assert fr.max_force > 1e-2
    assert any("not a stationary point" in w for w in fr.warnings)


def test_bad_input_is_refused():
    with pytest.raises(GeometryError, match="single atom"):
        harmonic_frequencies("He 0 0 0\n", basis="sto-3g")
    with pytest.raises(SettingsError, match="finite-difference step"):
        harmonic_frequencies(WATER, basis="sto-3g", step=0.5)
    with pytest.raises(SettingsError, match="unknown option"):
        harmonic_frequencies(WATER, basis="sto-3g", method="analytic")


def test_cli_frequencies_prints_modes_and_zpe(tmp_path, capsys):
    src = tmp_path / "h2.xyz"
    src.write_text("2\nH2\nH 0 0 0\nH 0 0 0.7414\n")
    code = main(["molecule", str(src), "--basis", "sto-3g", "--xc", "lda", "--grid", "coarse", "--frequencies",
                 "--quiet"])
    cap = capsys.readouterr()
    assert code == 0
    assert "zero-point energy" in cap.out and "wavenumber / cm^-1" in cap.out
    assert main(["molecule", str(src), "--fd-step", "0.01"]) == 2
    assert "--fd-step applies to --frequencies" in capsys.readouterr().err
