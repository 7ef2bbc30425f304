"""Finite (Gaussian) nucleus: mass numbers against mendeleev and the 1s level against an ODE integration.

The reference energies come from integrating the radial Dirac equation of the Gaussian nucleus
with scipy.integrate.solve_ivp (8th-order Dormand-Prince, rtol 1e-13) by shooting and matching,
a method independent of the finite-element solver.
"""
import math

import numpy as np
import pytest
from scipy import constants
from scipy.integrate import solve_ivp
from scipy.optimize import brentq
from scipy.special import erf

import ks1d
from ks1d.nuclei import MASS_NUMBERS, gaussian_exponent, nuclear_potential, rms_radius
from ks1d.radial.mesh import MeshSpec

C = 1.0 / constants.fine_structure

SECONDS = {"nsec": 1e-9, "usec": 1e-6, "msec": 1e-3, "sec": 1.0, "minute": 60.0, "hour": 3600.0, "day": 86400.0,
           "year": 3.15576e7, "kyear": 3.15576e10, "Myear": 3.15576e13, "Gyear": 3.15576e16, "Eyear": 3.15576e25}


def test_mass_numbers_are_the_most_abundant_or_longest_lived_isotopes():
    # mendeleev's isotope table (abundances and half-lives from its bundled compilations)
    fetch = pytest.importorskip("mendeleev.fetch")
    table = fetch.fetch_table("isotopes")
    assert len(MASS_NUMBERS) == 92
    for Z, symbol in enumerate(MASS_NUMBERS, start=1):
        A = MASS_NUMBERS[symbol]
        rows = table[table.atomic_number == Z]
        natural = rows[rows.abundance > 0]
        if len(natural):
            assert A == int(natural.loc[natural.abundance.idxmax(), "mass_number"]), symbol
        else:
            known = rows[rows.half_life.notna() & rows.half_life_unit.isin(list(SECONDS))]
            seconds = known.half_life * known.half_life_unit.map(SECONDS)
            assert A == int(known.loc[seconds.idxmax(), "mass_number"]), symbol


def test_gaussian_nucleus_parameters():
    # Visscher and Dyall, At. Data Nucl. Data Tables 67, 207 (1997): <r^2>^1/2 = (0.836 A^1/3 + 0.570) fm
    fm = 1e-15 / constants.physical_constants["Bohr radius"][0]
    assert rms_radius(238) == pytest.approx((0.836 * 238 ** (1 / 3) + 0.570) * fm, rel=1e-14)
    xi = gaussian_exponent(238)
    r = np.array([1e-8, 1e-5, 1e-3, 1.0])
    v = nuclear_potential(92, r, "gaussian")
    assert np.allclose(v, -92 * erf(math.sqrt(xi) * r) / r, rtol=1e-14)
    assert v[-1] == pytest.approx(-92.0, rel=1e-15)  # a point charge outside the nucleus


def dirac_1s_by_shooting(Z, xi, c=C):
    """1s1/2 energy (without rest mass) in V = -Z erf(sqrt(xi) r)/r by outward/inward integration.

    G' = -(kappa/r) G + (2c + (E - V)/c) F,  F' = (kappa/r) F - ((E - V)/c) G,  kappa = -1;
    G ~ r, F ~ -(E - V(0)) r^2 / (3c) at the origin; G ~ exp(-lam r) outside, lam^2 = -E(2 + E/c^2).
    """
    a = math.sqrt(xi)
    kappa = -1

    def V(r):
        return -Z * erf(a * r) / r

    def rhs(r, y, E):
        G, F = y
        return [-(kappa / r) * G + (2 * c + (E - V(r)) / c) * F, (kappa / r) * F - ((E - V(r)) / c) * G]

    r0, rm, rinf = 1e-9, 1.0 / Z, 40.0 / Z
    v0 = -2 * Z * a / math.sqrt(math.pi)

    def mismatch(E):
        out = solve_ivp(rhs, (r0, rm), [r0, -(E - v0) * r0**2 / (3 * c)], args=(E,), method="DOP853",
                        rtol=1e-13, atol=1e-30)
        lam = math.sqrt(-E * (2 + E / c**2))
        inw = solve_ivp(rhs, (rinf, rm), [1e-20, -lam * 1e-20 / (2 * c + E / c)], args=(E,), method="DOP853",
                        rtol=1e-13, atol=1e-40)
        Go, Fo = out.y[:, -1]
        Gi, Fi = inw.y[:, -1]
        return (Fo / Go - Fi / Gi)

    e_point = c * c * (1 / math.sqrt(1 + (Z / c / math.sqrt(1 - (Z / c) ** 2)) ** 2) - 1)
    return brentq(mismatch, e_point * 1.0005, e_point * 0.99, xtol=1e-13, rtol=1e-15)


@pytest.mark.parametrize("Z", [80, 92])
def test_finite_nucleus_1s_matches_ode_integration(Z):
    A = MASS_NUMBERS[ks1d.elements.symbol(Z)]
    exact = dirac_1s_by_shooting(Z, gaussian_exponent(A))
    e_point = C * C * (1 / math.sqrt(1 + (Z / C / math.sqrt(1 - (Z / C) ** 2)) ** 2) - 1)
    mesh = MeshSpec(n_elements=30, order=12, r_first=1e-5, r_max=40.0)
    for relativity, config in (("dirac", "1s1/2(1)"), ("scalar", "1s1"), ("x2c", "1s1")):
        res = ks1d.solve_atom(Z, charge=Z - 1, config=config, spin="restricted", relativity=relativity,
                              nucleus="gaussian", electron_interaction=False, estimate_error=False, mesh=mesh)
        e = res.orbitals[0].energy
        # the s1/2 level of all three Hamiltonians is the Dirac one, for any spherical potential
        assert e == pytest.approx(exact, rel=1e-9), relativity
        # the finite-nucleus shift itself (a few Ha for U) to 1e-5 of its size
        assert (e - e_point) == pytest.approx(exact - e_point, rel=1e-5)
    assert exact > e_point
