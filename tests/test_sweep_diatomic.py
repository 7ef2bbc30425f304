"""Diatomic r_e and ω_e from analytic gradients: the interpolation against analytic curves, the sweep kind
against pyscf's analytic gradients computed now, references against Huber & Herzberg."""
from __future__ import annotations

import math

import numpy as np
import pytest

from ks1d import units
from ks1d.errors import CalculationError
from ks1d.sweep.properties.bondmin import MAX_SAMPLES, bond_minimum, hermite_polynomial
from ks1d.sweep.properties.curvefit import isotope_masses
from ks1d.sweep.properties.datasets import diatomic, reference_for
from ks1d.sweep.properties.registry import run_property


def _morse(D, a, re):
    """Morse curve V = D (1 − e^{−a(R−re)})²: minimum at re, V″(re) = 2 D a² (analytic)."""
    def evaluate(r):
        x = math.exp(-a * (r - re))
        return D * (1 - x) ** 2, 2 * D * a * x * (1 - x)
    return evaluate


def test_hermite_interpolant_reproduces_a_quintic_from_three_values_and_slopes():
    # a polynomial of degree 2n-1 is its own Hermite interpolant through n points (uniqueness)
    p = np.polynomial.Polynomial([0.3, -1.2, 0.7, 2.0, -0.4, 0.9])
    r = np.array([1.9, 2.05, 2.2])
    q, c, s = hermite_polynomial(r, p(r), p.deriv()(r))
    x = np.linspace(1.8, 2.3, 11)
    assert np.allclose(q((x - c) / s), p(x), atol=1e-12, rtol=0)


@pytest.mark.parametrize("D, a, re", [(0.36, 1.42, 2.07), (0.17, 1.03, 1.40), (0.039, 0.46, 5.05)],
                         ids=["N2-like", "H2-like", "Li2-like"])
@pytest.mark.parametrize("offset", [-0.3, -0.04, 0.0, 0.02, 0.3])
def test_bond_minimum_finds_the_morse_minimum_and_curvature(D, a, re, offset):
    m = bond_minimum(_morse(D, a, re), re + offset)
    assert m.r_e == pytest.approx(re, abs=1e-8)
    assert m.force_constant == pytest.approx(2 * D * a * a, rel=3e-5)
    assert m.energy == pytest.approx(0.0, abs=1e-10)
    assert len(m.samples) <= 6
    assert min(abs(x.r - y.r) for i, x in enumerate(m.samples) for y in m.samples[i + 1:]) >= 0.01 - 1e-12


def test_bond_minimum_of_a_repulsive_curve_fails_with_its_samples():
    # V = 1/R has no minimum: the search gives up with a CalculationError that lists what it evaluated
    with pytest.raises(CalculationError, match="samples") as err:
        bond_minimum(lambda r: (1.0 / r, -1.0 / r**2), 2.0)
    assert err.value.args[0].count("\n") >= 3 and len(err.value.args[0].splitlines()) <= MAX_SAMPLES + 1


def _pyscf_bond(symbols, r_angstrom, spin, xc, basis, h=0.005):
    """pyscf (run now, grid level 5): E and dE/dR at r, and d²E/dR² from central differences of its analytic
    gradients (±h bohr)."""
    from pyscf import dft, gto

    def run(r):
        mol = gto.M(atom=f"{symbols[0]} 0 0 0; {symbols[1]} 0 0 {r}", basis=basis, spin=spin, verbose=0)
        mf = (dft.UKS if spin else dft.RKS)(mol)
        mf.xc = xc
        mf.grids.level = 5
        mf.conv_tol = 1e-11
        e = mf.kernel()
        return e, float(mf.nuc_grad_method().kernel()[1, 2])

    e, g = run(r_angstrom)
    g_plus = run(r_angstrom + h * units.BOHR_TO_ANGSTROM)[1]
    g_minus = run(r_angstrom - h * units.BOHR_TO_ANGSTROM)[1]
    return e, g, (g_plus - g_minus) / (2 * h)


@pytest.mark.parametrize("formula, xc, pyscf_xc", [("CO", "pbe", "pbe,pbe"), ("O2", "pbe", "pbe,pbe")],
                         ids=["CO-RKS", "O2-UKS-triplet"])
def test_gradient_bond_length_and_frequency_match_pyscf(formula, xc, pyscf_xc):
    # pyscf's analytic gradient at ks1d's r_e must vanish, and its force constant there (central differences of
    # its analytic gradients) give ks1d's omega_e; def2-SVP, each code on its own grid (ks1d 'default', pyscf
    # level 5), so the tolerances hold the grid difference: measured 2.3e-5 Ha/bohr (CO) and 0.4 cm^-1
    s = diatomic(formula)
    out = run_property("diatomic_survey", s, xc, {"basis": "def2-svp"})
    r_e = out["values"]["bond_length"]
    e, g, k = _pyscf_bond(s.symbols, r_e, s.ground_multiplicity() - 1, pyscf_xc, "def2-svp")
    assert abs(g) < 1e-4  # hartree/bohr: r_e within g/k ~ 5e-5 angstrom of pyscf's
    ma, mb = isotope_masses(*s.symbols)
    mu = ma * mb / (ma + mb) * units.AMU_TO_ELECTRON_MASS
    assert out["values"]["harmonic_frequency"] == pytest.approx(math.sqrt(k / mu) * units.HARTREE_TO_INV_CM, abs=2.0)
    assert out["details"]["minimum_energy"] == pytest.approx(e, abs=1e-5)
    # each evaluation was restarted from the previous one and is recorded with its gradient
    points = [c for c in out["calculations"] if "(energy and gradient" in c["label"]]
    assert 3 <= len(points) <= 5 and all(abs(p["translation_defect"]) < 1e-10 for p in points)


def test_a_stalled_open_shell_scf_takes_its_force_constant_from_gradients():
    # UKS OH (2Pi) with PBE: the SCF residual stalls near 8e-7 while the energy drifts by ~4e-12 per iteration
    # (the pi hole rotates), so energies are not smooth to ~3e-8 Ha but gradients are.  The search relaxes the
    # residual tolerance, takes k from a central difference of gradients and says so.  Reference: pyscf UKS
    # PBE/def2-SVP (grid level 5, run now), its analytic gradient at ks1d's r_e and its force constant from
    # central differences of its gradients (measured for def2-TZVP: 3583.7 cm^-1 against ks1d's 3583.6, and
    # 3583.6 from a dense 21-point energy scan, benchmarks/bench_sweep_diatomic.py)
    s = diatomic("OH")
    out = run_property("diatomic_curve", s, "pbe", {"basis": "def2-svp"})
    (step,) = out["details"]["relaxed_scf_steps"]
    assert step["residual_tolerance"] == 1e-5 and "central difference" in step["note"]
    assert sum("force constant)" in c["label"] for c in out["calculations"]) == 2
    _, g, k = _pyscf_bond(s.symbols, out["values"]["bond_length"], 1, "pbe,pbe", "def2-svp")
    assert abs(g) < 1e-4
    ma, mb = isotope_masses(*s.symbols)
    mu = ma * mb / (ma + mb) * units.AMU_TO_ELECTRON_MASS
    assert out["values"]["harmonic_frequency"] == pytest.approx(math.sqrt(k / mu) * units.HARTREE_TO_INV_CM, abs=2.0)


def test_zero_point_references_of_diatomics_are_half_the_huber_herzberg_omega():
    # the harmonic zero-point energy of a diatomic is omega_e / 2; CO: omega_e = 2169.81 cm^-1 (Huber & Herzberg
    # 1979, from memory, ks1d's data) -> 3.1019 kcal/mol with CODATA hc (scipy.constants)
    from scipy import constants as c

    zpe = reference_for("zero_point_energy", diatomic("CO"))
    kcal = 0.5 * 2169.81 * 100 * c.h * c.c * c.N_A / 4184.0
    assert zpe.value == pytest.approx(kcal, rel=1e-6) and zpe.unit == "kcal/mol" and zpe.from_memory
    assert reference_for("lowest_harmonic_frequency", diatomic("CO")).value == 2169.81
    from ks1d.sweep.properties.datasets import g2_1_molecule

    assert reference_for("zero_point_energy", g2_1_molecule("H2O")) is None  # no harmonic data for polyatomics
