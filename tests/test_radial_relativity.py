"""Relativistic radial atoms: hydrogen-like ions, spectra, limits, internal checks and bad input.

Exact references: the Dirac energy of a point-nucleus hydrogen-like ion (Sommerfeld's
fine-structure formula; C. G. Darwin, Proc. R. Soc. A 118, 654 (1928); W. Gordon,
Z. Phys. 48, 11 (1928)), implemented independently of the solver in this file.
"""
import json
import math
import subprocess
import sys

import numpy as np
import pytest
from scipy import constants

import ks1d
from ks1d.errors import ConfigurationError, InputError, SettingsError, SpinError, UnsupportedFunctional
from ks1d.radial.mesh import MeshSpec

C = 1.0 / constants.fine_structure  # CODATA via scipy (2022 for scipy >= 1.15)


def sommerfeld(Z, n, kappa, c=C):
    # E = c^2 [1 + (Z/c / (n - |kappa| + sqrt(kappa^2 - Z^2/c^2)))^2]^(-1/2) - c^2  (textbook formula)
    g = math.sqrt(kappa * kappa - (Z / c) ** 2)
    x = (Z / c / (n - abs(kappa) + g)) ** 2
    return c * c * (1.0 / math.sqrt(1.0 + x) - 1.0)


# every sub-shell from 1s1/2 to 4f7/2 with one electron
ALL_J = "1s1/2(1) 2s1/2(1) 2p1/2(1) 2p3/2(1) 3s1/2(1) 3p1/2(1) 3p3/2(1) 3d3/2(1) 3d5/2(1) " \
        "4s1/2(1) 4p1/2(1) 4p3/2(1) 4d3/2(1) 4d5/2(1) 4f5/2(1) 4f7/2(1)"


def hydrogenic_mesh(Z):
    # n = 4 states of Z = 1 reach ~150 bohr; fine grading toward the r^gamma behaviour at the nucleus,
    # gamma = sqrt(kappa^2 - (Z/c)^2), which is far from 1 only for heavy ions
    return MeshSpec(n_elements=40, order=12, r_first=1e-5 if Z > 20 else 1e-4, r_max=max(60.0, 160.0 / Z))


@pytest.mark.parametrize("Z", [1, 2, 10, 36, 54, 80, 92])
def test_dirac_hydrogen_like_levels_match_sommerfeld(Z):
    res = ks1d.solve_atom(Z, charge=Z - 16, config=ALL_J, relativity="dirac", electron_interaction=False,
                          estimate_error=False, mesh=hydrogenic_mesh(Z))
    assert len(res.orbitals) == 16
    for o in res.orbitals:
        exact = sommerfeld(Z, o.n, o.kappa)
        assert o.energy == pytest.approx(exact, rel=1e-10), o.label
        assert o.j == abs(o.kappa) - 0.5
    # independent electrons: the total is the sum of the levels
    assert res.total_energy == pytest.approx(sum(sommerfeld(Z, o.n, o.kappa) for o in res.orbitals), rel=1e-10)
    # Dirac's degeneracy of 2s1/2 and 2p1/2 for the Coulomb potential (same n and |kappa|)
    e = {o.label: o.energy for o in res.orbitals}
    assert abs(e["2s1/2"] - e["2p1/2"]) <= 1e-10 * abs(e["2s1/2"])
    assert abs(e["3p3/2"] - e["3d3/2"]) <= 1e-10 * abs(e["3p3/2"])


def test_restricted_kinetic_balance_spectrum_has_no_spurious_levels():
    # RKB (Stanton and Havriliak, J. Chem. Phys. 81, 1910 (1984)): exactly N eigenvalues below -2c^2
    # (negative-energy continuum) and none between -2c^2 and the lowest Sommerfeld level of each kappa
    from ks1d.radial import relativity as rel
    from ks1d.radial.mesh import RadialMesh

    Z = 80
    m = RadialMesh.for_atom(Z, MeshSpec(n_elements=24, order=10, r_first=1e-4))
    one = np.ones_like(m.r)
    S = m.assemble(m.weighted_blocks(one))
    V = m.assemble(m.weighted_blocks(-Z / m.r))
    N = m.size
    for kappa in (-1, 1, -2, 2, -3):
        s, _ = rel.small_basis_dirac(m, kappa)
        T = 0.5 * rel.small_gram_dirac(m, s, one)
        W = rel.small_gram_dirac(m, s, -Z / m.r) / (4 * C * C)
        H, M = rel.rkb_matrices(S, T, V, W, C)
        import scipy.linalg as sl

        E = sl.eigh(H, M, eigvals_only=True)
        n_low = rel.l_of_kappa(kappa) + 1
        lowest = sommerfeld(Z, n_low, kappa)
        assert np.all(E[:N] < -2 * C * C)
        assert E[N] == pytest.approx(lowest, rel=1e-8)
        assert not np.any((E > -2 * C * C) & (E < lowest * (1 + 1e-8)))


@pytest.mark.parametrize("Z", [1, 36, 92])
def test_scalar_and_x2c_s_levels_equal_dirac_s_one_half(Z):
    # For l = 0 both the Koelling-Harmon equation and spin-free X2C-1e are exactly the Dirac equation
    # of s1/2 (kappa = -1), so their ns levels follow Sommerfeld's formula with kappa = -1.
    for relativity in ("scalar", "x2c"):
        res = ks1d.solve_atom(Z, charge=Z - 4, config="1s1 2s1 3s1 4s1", spin="restricted",
                              relativity=relativity, electron_interaction=False, estimate_error=False,
                              mesh=hydrogenic_mesh(Z))
        for o in res.orbitals:
            assert o.energy == pytest.approx(sommerfeld(Z, o.n, -1), rel=1e-10), (relativity, o.label)


def test_x2c_levels_equal_the_spin_free_dirac_matrix_equation():
    # X2C is exact decoupling: h_X2C reproduces the electronic eigenvalues of the spin-free RKB Dirac
    # matrix problem in the same basis (Kutzelnigg and Liu 2005; an identity, checked to rounding)
    import scipy.linalg as sl

    from ks1d.radial import relativity as rel
    from ks1d.radial.mesh import RadialMesh

    Z = 80
    m = RadialMesh.for_atom(Z, MeshSpec(n_elements=24, order=10, r_first=1e-4))
    one = np.ones_like(m.r)
    S = m.assemble(m.weighted_blocks(one))
    V = m.assemble(m.weighted_blocks(-Z / m.r))
    for l in (1, 2):
        T = 0.5 * rel.spin_free_gram(m, l, one)
        W = rel.spin_free_gram(m, l, -Z / m.r) / (4 * C * C)
        H, M = rel.rkb_matrices(S, T, V, W, C)
        e4 = rel.positive_energy_states(H, M, 3)[0]
        e2 = sl.eigh(rel.x2c_one_electron(S, T, V, W, C), S, eigvals_only=True, driver="gvd")[:3]
        assert np.allclose(e2, e4, rtol=1e-11)
        # and the spin-free level lies between the Dirac j = l - 1/2 and j = l + 1/2 levels
        n = l + 1
        assert sommerfeld(Z, n, l) < e4[0] < sommerfeld(Z, n, -(l + 1))


@pytest.mark.parametrize("relativity", ["scalar", "x2c"])
@pytest.mark.parametrize("symbol, xc", [("He", "lda"), ("Ne", "pbe")])
def test_large_speed_of_light_gives_the_non_relativistic_atom(symbol, xc, relativity):
    # c -> infinity is the Schroedinger limit (relativistic corrections scale as 1/c^2; common practice)
    ref = ks1d.solve_atom(symbol, xc=xc, spin="restricted", estimate_error=False)
    res = ks1d.solve_atom(symbol, xc=xc, spin="restricted", estimate_error=False, relativity=relativity,
                          speed_of_light=1e7, mesh=ks1d.radial.scf.PRECISION["normal"])
    assert res.total_energy == pytest.approx(ref.total_energy, abs=1e-9)


def test_dirac_non_relativistic_limit_by_extrapolation_in_one_over_c_squared():
    # The RKB pencil spans -2c^2 .. O(1), so c >~ 1e5 is beyond double precision; the 1/c^2 expansion
    # E(c) = E_nr + a/c^2 + O(1/c^4) (common practice) is extrapolated from c = 5000 and 10000 instead.
    ref = ks1d.solve_atom("Ne", spin="restricted", estimate_error=False).total_energy
    mesh = ks1d.radial.scf.PRECISION["normal"]
    e1, e2 = (ks1d.solve_atom("Ne", relativity="dirac", estimate_error=False, speed_of_light=c, mesh=mesh).total_energy
              for c in (5e3, 1e4))
    assert (4 * e2 - e1) / 3 == pytest.approx(ref, abs=1e-9)


def test_dirac_virial_theorem_and_gauss_law():
    # Relativistic virial theorem from coordinate scaling (V. Fock, Z. Phys. 63, 855 (1930), for DKS
    # with the xc scaling term): <c alpha.p> + <r.grad V_N> + E_H + dE_xc[rho_lambda]/dlambda = 0
    res = ks1d.solve_atom("Kr", relativity="dirac", estimate_error=False)
    assert abs(res.virial_residual) < 1e-8
    assert res.gauss_law_error < 1e-8
    gga = ks1d.solve_atom("Ar", xc="pbe", relativity="dirac", estimate_error=False, nucleus="gaussian")
    assert abs(gga.virial_residual) < 1e-8
    # Gauss's law (all charge inside r_max, the FEM Poisson solve) for the other Hamiltonians; their
    # scaling virial has no simple form and is reported as NaN
    for relativity in ("scalar", "x2c"):
        res = ks1d.solve_atom("Kr", relativity=relativity, estimate_error=False)
        assert res.gauss_law_error < 1e-8
        assert math.isnan(res.virial_residual) and res.to_dict()["virial_residual"] is None


def test_default_relativistic_result_says_what_it_is():
    res = ks1d.solve_atom("Hg", relativity="dirac", estimate_error=False)
    d = res.to_dict()
    assert d["relativity"] == "dirac" and d["nucleus"] == "point" and d["spin"] == "restricted"
    assert d["settings"]["relativity"] == "dirac" and d["settings"]["speed_of_light"] == pytest.approx(C)
    labels = [o["label"] for o in d["orbitals"]]
    assert "6s1/2" in labels and "5d5/2" in labels
    o = next(o for o in d["orbitals"] if o["label"] == "5d3/2")
    assert o["kappa"] == 2 and o["j"] == 1.5 and o["occupation"] == pytest.approx(4.0)
    # spin-orbit: 5d3/2 lies below 5d5/2
    e = {o["label"]: o["energy"] for o in d["orbitals"]}
    assert e["5d3/2"] < e["5d5/2"] and e["6p1/2"] if "6p1/2" in e else True
    json.dumps(d)
    nr = ks1d.solve_atom("Ne", estimate_error=False).to_dict()
    assert nr["relativity"] == "none" and nr["nucleus"] == "point"


def test_j_resolved_occupation_changes_the_atom():
    # Pb with both 6p electrons in 6p1/2 (the jj-coupled ground state) lies below the j-averaged 6p2
    avg = ks1d.solve_atom("Pb", relativity="dirac", estimate_error=False)
    jj = ks1d.solve_atom("Pb", relativity="dirac", config="[Xe] 4f14 5d10 6s2 6p1/2(2) 6p3/2(0)",
                         estimate_error=False)
    assert jj.total_energy < avg.total_energy
    assert {o.label: o.occupation for o in jj.orbitals}["6p3/2"] == 0.0


@pytest.mark.parametrize("kwargs, exc, pattern", [
    (dict(relativity="zora"), SettingsError, "relativity must be one of 'none', 'scalar', 'x2c', 'dirac'"),
    (dict(nucleus="fermi"), SettingsError, "nucleus must be one of 'point', 'gaussian'"),
    (dict(relativity="dirac", spin="polarized"), SpinError, "spin-restricted"),
    (dict(relativity="dirac", xc="pbe0"), UnsupportedFunctional, "LDA and GGA"),
    (dict(relativity="dirac", xc="r2scan"), UnsupportedFunctional, "relativity='x2c'"),
    (dict(relativity="scalar", xc="hf"), UnsupportedFunctional, "LDA and GGA"),
    (dict(relativity="dirac", config="[Ne] 3s2 3p1/2(3)", charge=-1), ConfigurationError, "at most 2j\\+1 = 2"),
    (dict(relativity="dirac", config="[Ne] 3s2 3s1/2(1)"), ConfigurationError, "both as a whole"),
    (dict(relativity="dirac", config="[Ne] 3s2 3s3/2(1) 3p0"), ConfigurationError, "j = 1/2"),
    (dict(relativity="scalar", config="[Ne] 3s2 3p1/2(1)"), ConfigurationError, "needs relativity='dirac'"),
    (dict(relativity="x2c", speed_of_light=-1), SettingsError, "speed_of_light"),
])
def test_bad_relativistic_input_is_refused_before_computing(kwargs, exc, pattern):
    with pytest.raises(exc, match=pattern) as info:
        ks1d.solve_atom("Al", **kwargs)
    assert isinstance(info.value, InputError)


def run_cli(*args):
    return subprocess.run([sys.executable, "-m", "ks1d", *args], capture_output=True, text=True, timeout=300)


@pytest.mark.parametrize("args, pattern", [
    (["atom", "Au", "--relativity", "zora"], "invalid choice"),
    (["atom", "Au", "--nucleus", "fermi"], "invalid choice"),
    (["atom", "Pb", "--relativity", "dirac", "--xc", "pbe0"], "LDA and GGA"),
    (["atom", "Pb", "--relativity", "dirac", "--spin", "2"], "spin-restricted"),
    (["atom", "Pb", "--relativity", "dirac", "--config", "[Xe] 4f14 5d10 6s2 6p1/2(3)"], "at most 2j+1 = 2"),
])
def test_cli_relativistic_bad_input_exits_2(args, pattern):
    p = run_cli(*args)
    assert p.returncode == 2
    assert pattern in p.stderr
    assert "Traceback" not in p.stderr


def test_cli_json_reports_relativity_and_j():
    p = run_cli("atom", "Ne", "--relativity", "dirac", "--nucleus", "gaussian", "--json", "--no-error-estimate")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    assert d["relativity"] == "dirac" and d["nucleus"] == "gaussian"
    assert {o["label"] for o in d["orbitals"]} == {"1s1/2", "2s1/2", "2p1/2", "2p3/2"}
    table = run_cli("atom", "Ne", "--relativity", "scalar", "--no-error-estimate")
    assert table.returncode == 0, table.stderr
    assert "scalar" in table.stdout


@pytest.mark.parametrize("relativity", ["none", "scalar", "x2c", "dirac"])
def test_relativistic_lda_exchange_works_with_every_hamiltonian(relativity):
    # libxc's lda_x_rel (the relativistic correction of Slater exchange, A. H. MacDonald and S. H. Vosko,
    # J. Phys. C 12, 2977 (1979); the exchange of the NIST RLDA tables) weakens exchange near the nucleus,
    # so the energy rises; its effect is larger with a relativistic (contracted) core
    plain = ks1d.solve_atom("Kr", xc="lda", spin="restricted", relativity=relativity, estimate_error=False)
    rel = ks1d.solve_atom("Kr", xc="lda_x_rel,lda_c_vwn", spin="restricted", relativity=relativity,
                          estimate_error=False)
    assert rel.converged and rel.functional["libxc"] == "lda_x_rel,lda_c_vwn"
    assert 0.5 < rel.total_energy - plain.total_energy < 10.0
