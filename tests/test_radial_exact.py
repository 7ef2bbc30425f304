"""Radial solver against exact results: hydrogen-like ions and the virial theorem."""
import numpy as np
import pytest

import ks1d


@pytest.mark.parametrize("Z, config", [(1, "1s1"), (2, "2s1"), (26, "3d1"), (54, "4f1"), (92, "1s1"),
                                       (92, "1s2 2s2 2p6")])
def test_independent_electrons_give_hydrogenic_energies(Z, config):
    # exact non-relativistic hydrogen-like levels: E = -Z^2 / (2 n^2) per electron (textbook result)
    shells = [(int(tok[0]), float(tok[2:] or 1)) for tok in config.split()]
    n_el = sum(f for _, f in shells)
    exact = sum(-Z**2 / (2 * n**2) * f for n, f in shells)
    res = ks1d.solve_atom(Z, charge=Z - n_el, config=config, spin="restricted", electron_interaction=False,
                          estimate_error=False)
    assert res.total_energy == pytest.approx(exact, rel=1e-11, abs=1e-9)
    for o in res.orbitals:
        assert o.energy == pytest.approx(-Z**2 / (2 * o.n**2), rel=1e-11)
    # virial theorem for a Coulomb potential: -V/T = 2 exactly
    assert res.virial_ratio == pytest.approx(2.0, abs=1e-9)


@pytest.mark.parametrize("symbol, xc, spin", [("Ne", "lda", "restricted"), ("O", "pbe", "polarized"),
                                              ("Fe", "lda", "polarized"), ("Ar", "blyp", "restricted")])
def test_scaling_virial_theorem_holds_at_convergence(symbol, xc, spin):
    # Uniform-scaling virial theorem of Kohn-Sham DFT (M. Levy and J. P. Perdew, Phys. Rev. A 32, 2010 (1985)):
    # 2 T_s + E_ne + E_H + dE_xc[rho_lambda]/dlambda = 0 at the self-consistent solution.
    res = ks1d.solve_atom(symbol, xc=xc, spin=spin, estimate_error=False)
    assert abs(res.virial_residual) < 1e-8


def test_gauss_law_and_electron_count():
    # Gauss's law at r_max: the Hartree potential there is N / r_max, i.e. all charge inside (exact electrostatics)
    res = ks1d.solve_atom("Kr", xc="lda", spin="restricted", estimate_error=False)
    assert res.gauss_law_error < 1e-8
    rad = res.radial
    r_max = res.settings["mesh"]["r_max"]
    i = np.argmax(rad.r)
    assert rad.v_hartree[i] == pytest.approx(36.0 / rad.r[i], rel=1e-6)
    assert r_max > rad.r[i]


def test_nuclear_cusp_condition():
    # Kato's cusp condition (T. Kato, Commun. Pure Appl. Math. 10, 151 (1957)): dρ/dr = -2 Z ρ at r = 0
    res = ks1d.solve_atom("Ne", xc="lda", spin="restricted", estimate_error=False)
    r = np.array([1e-6, 2e-6])
    rho = res.radial.density_at(r)[0]
    slope = (np.log(rho[1]) - np.log(rho[0])) / (r[1] - r[0])
    assert slope == pytest.approx(-2 * 10, rel=2e-3)


def test_error_estimate_bounds_the_precision_levels():
    # the 'low' level's error must be visible to the estimator and the estimate must be honest:
    # |E_low - E_high| <= a few times the estimate (self-consistency of the estimator, common practice)
    low = ks1d.solve_atom("Ar", xc="lda", spin="restricted", precision="low")
    high = ks1d.solve_atom("Ar", xc="lda", spin="restricted", precision="high", estimate_error=False)
    err = abs(low.total_energy - high.total_energy)
    assert low.error_estimate is not None
    assert err <= 3 * low.error_estimate + 1e-9
    assert low.error_estimate <= 10 * err + 1e-9
