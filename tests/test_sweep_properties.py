"""Sweep properties against outside references: NIST, G2-1 (ASE), pyscf, analytic curves."""
from __future__ import annotations

import math
import textwrap

import numpy as np
import pytest

from ks1d import units
from ks1d.sweep import InlineExecutor, parse_spec, run_sweep
from ks1d.sweep.output.writers import build_report
from ks1d.sweep.properties.curvefit import fit_curve, harmonic_wavenumber
from ks1d.sweep.properties.datasets import reference_for
from ks1d.sweep.properties.registry import run_property
from ks1d.sweep.properties.systems import System, parse_atom


def test_curve_fit_recovers_a_morse_minimum_and_curvature():
    # Morse potential V = D (1 - exp(-a (R - Re)))^2 has its minimum at Re and V''(Re) = 2 D a^2 (analytic)
    D, a, re = 0.17, 1.03, 1.40
    r = re + 0.03 + 0.0378 * (np.arange(7) - 3)  # scan deliberately off-centre, 0.02 A steps
    e = D * (1 - np.exp(-a * (r - re))) ** 2
    r_fit, k, _ = fit_curve(r, e)
    assert r_fit == pytest.approx(re, abs=2e-5)
    assert k == pytest.approx(2 * D * a * a, rel=2e-3)


def test_harmonic_wavenumber_agrees_with_the_si_formula():
    # omega = sqrt(k/mu) / (2 pi c) in SI units (scipy.constants, CODATA), for 12C16O with k = 1902 N/m
    from scipy import constants as c

    k_si = 1902.0
    ma, mb = 12.0, 15.99491462
    mu_si = ma * mb / (ma + mb) * c.atomic_mass
    expected = math.sqrt(k_si / mu_si) / (2 * math.pi * c.c) / 100.0  # cm^-1
    hartree, bohr = c.physical_constants["Hartree energy"][0], c.physical_constants["Bohr radius"][0]
    k_au = k_si * bohr ** 2 / hartree
    assert harmonic_wavenumber(k_au, ma, mb) == pytest.approx(expected, rel=1e-9)


def test_ionisation_potential_of_hydrogen_is_minus_its_lsd_energy():
    # IP(H) = E(H+) - E(H) = -E(H); NIST SRD 141 (Kotochigova et al., PRA 55, 191 (1997)) LSD E(H) = -0.478671 Ha
    out = run_property("ionisation_potential", parse_atom("H"), "lda",
                       {"atoms": "radial", "precision": "low", "spin": "polarized",
                        "atom_options": {"estimate_error": False}})
    assert out["values"]["ionisation_potential"] == pytest.approx(0.478671 * units.HARTREE_TO_EV, abs=1e-4)
    assert out["calculations"][1]["solver"].startswith("none")  # the bare proton needs no SCF


def _pyscf_energy(atom, spin, xc="lda,vwn"):
    from pyscf import dft, gto

    mol = gto.M(atom=atom, basis="def2-svp", spin=spin, verbose=0)
    mf = (dft.RKS if spin == 0 else dft.UKS)(mol)
    mf.xc = xc
    mf.grids.level = 5
    mf.conv_tol = 1e-10
    return mf.kernel()


def test_h2_atomization_energy_matches_pyscf():
    # pyscf (test-time reference): D_e = 2 E(H) - E(H2), LDA (Slater + VWN5), def2-SVP, large grid
    pytest.importorskip("ase")
    h2 = System(name="H2", kind="molecule", multiplicity=1, xyz="2\n\nH 0 0 0\nH 0 0 0.7414\n")
    out = run_property("atomization_energy", h2, "lda", {"atoms": "basis", "basis": "def2-svp"})
    ref = (2 * _pyscf_energy("H 0 0 0", 1) - _pyscf_energy("H 0 0 0; H 0 0 0.7414", 0)) * units.HARTREE_TO_KCAL_MOL
    assert out["values"]["atomization_energy"] == pytest.approx(ref, abs=0.01)  # kcal/mol


def test_h2_scan_bond_length_and_frequency_match_a_pyscf_scan():
    # the earlier scan kind (diatomic_curve_scan): the same 7-point scan and quartic fit done on pyscf energies
    # (numpy polyfit), LDA/def2-SVP; masses: 1H = 1.00782503 u (CODATA/AME, as in pyscf.data.elements)
    from ks1d.sweep.properties.datasets import diatomic

    h2 = diatomic("H2")
    out = run_property("diatomic_curve_scan", h2, "lda", {"basis": "def2-svp", "scan_points": 7, "scan_step": 0.02})
    scan = out["details"]["scans"][-1]
    grid = np.array(scan["r_angstrom"])
    e = np.array([_pyscf_energy(f"H 0 0 0; H 0 0 {r}", 0) for r in grid])
    x = grid * units.ANGSTROM_TO_BOHR
    c = np.polynomial.Polynomial.fit(x - x.mean(), e, 4).convert()
    roots = [z.real for z in c.deriv().roots() if abs(z.imag) < 1e-12 and c.deriv(2)(z.real) > 0
             and abs(z.real) < 0.2]
    r_e = roots[0] + x.mean()
    k = c.deriv(2)(roots[0])
    mu = 1.00782503 / 2 * 1822.888486
    omega = math.sqrt(k / mu) * units.HARTREE_TO_INV_CM
    assert out["values"]["bond_length"] == pytest.approx(r_e * units.BOHR_TO_ANGSTROM, abs=3e-4)
    assert out["values"]["harmonic_frequency"] == pytest.approx(omega, abs=5.0)


def test_g2_1_references_are_electronic_not_zero_point_values():
    pytest.importorskip("ase")
    from ks1d.sweep.properties.datasets import g2_1_molecule, g2_1_state_pair

    # CH4 total atomization energy without zero-point energy: 420.4 kcal/mol in the W4-11 set
    # (Karton, Daon, Martin, Chem. Phys. Lett. 510, 165 (2011); from memory); D_0 would be ~392.5
    ae = reference_for("atomization_energy", g2_1_molecule("CH4"))
    assert ae.value == pytest.approx(420.4, abs=1.0) and ae.unit == "kcal/mol"
    # CH2 singlet-triplet T_e = 9.37 kcal/mol (Jensen and Bunker, J. Chem. Phys. 89, 1327 (1988); from memory)
    st = reference_for("spin_splitting", g2_1_state_pair("CH2"))
    assert st.value == pytest.approx(9.37 / units.HARTREE_TO_KCAL_MOL * units.HARTREE_TO_EV, abs=0.015)


def test_a_sweep_report_compares_lda_total_energies_with_nist():
    # NIST SRD 141 LSD total energies (ks1d reference data): H -0.478671, He -2.834836 hartree
    spec = parse_spec(textwrap.dedent("""
        name = "nist-check"
        functionals = ["lda"]
        [solver]
        precision = "low"
        atom_options = { estimate_error = false }
        [[study]]
        property = "total_energy"
        systems = ["H", "He"]
    """))
    import os
    import tempfile

    with tempfile.TemporaryDirectory() as d:
        store = os.path.join(d, "s.sqlite")
        run_sweep(spec, store, InlineExecutor(), progress=False)
        report = build_report(store, spec)
    refs = {r.system: r.reference for r in report.rows}
    assert refs == {"H": -0.478671, "He": -2.834836}
    (stat,) = report.statistics
    assert stat.n == 2 and stat.max_abs < 2e-6  # hartree: the radial solver reproduces the NIST table
