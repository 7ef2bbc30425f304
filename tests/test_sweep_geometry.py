"""Optimised geometries, harmonic frequencies and zero-point energies as sweep properties, against pyscf
(+ geomeTRIC, the optimiser pyscf drives) and its analytic Hessian, computed now."""
from __future__ import annotations

import textwrap

import numpy as np
import pytest

from ks1d import units
from ks1d.sweep import parse_spec
from ks1d.sweep.properties.datasets import g2_1_molecule
from ks1d.sweep.properties.internal import angles, bond_angles, bond_lengths, bonds, compare_geometries
from ks1d.sweep.properties.registry import run_property
from ks1d.sweep.spec import SpecError

pytest.importorskip("ase")


def test_internal_coordinates_of_a_textbook_water():
    # r = 1 A, angle 104.5 deg placed by hand (trigonometry): bonds O-H only, one H-O-H angle
    t = np.radians(104.5 / 2)
    pos = np.array([[0, 0, 0], [np.sin(t), 0, np.cos(t)], [-np.sin(t), 0, np.cos(t)]])
    bl = bonds(("O", "H", "H"), pos)
    assert bl == ((0, 1), (0, 2))
    assert angles(bl) == ((1, 0, 2),)
    assert np.allclose(bond_lengths(pos, bl), 1.0) and np.allclose(bond_angles(pos, angles(bl)), 104.5)
    # a rigid rotation and translation changes no internal coordinate
    c, s = np.cos(0.7), np.sin(0.7)
    moved = pos @ np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]]).T + [1.0, -2.0, 0.5]
    cmp = compare_geometries(("O", "H", "H"), pos, moved)
    assert abs(cmp["bond_deviation"]) < 1e-12 and abs(cmp["angle_deviation"]) < 1e-10


@pytest.fixture(scope="module")
def water_pbe():
    """ks1d's optimised water (G2-1 start, PBE/def2-SVP) and its harmonic analysis, as sweep jobs."""
    w = g2_1_molecule("H2O")
    geo = run_property("optimized_geometry", w, "pbe", {"basis": "def2-svp"})
    vib = run_property("vibrations", w, "pbe", {"basis": "def2-svp"})  # reuses the optimisation (worker memo)
    return w, geo, vib


def test_optimised_water_matches_pyscf_and_geometric(water_pbe):
    # pyscf RKS PBE/def2-SVP (grid level 5) optimised by geomeTRIC through pyscf's own driver, from the same G2-1
    # (MP2(full)/6-31G(d), ASE) geometry.  Both stop at max force 4.5e-4 Ha/bohr (k ~ 0.5 Ha/bohr^2 for O-H), so
    # each bond length is within ~5e-4 A of the exact minimum; measured difference 1.4e-6 A and 0.002 degrees.
    from pyscf import dft, gto
    from pyscf.geomopt.geometric_solver import optimize

    w, geo, _ = water_pbe
    rows = [ln.split() for ln in w.xyz.strip().splitlines()[2:]]
    symbols = [r[0] for r in rows]
    start = np.array([[float(x) for x in r[1:]] for r in rows])
    mf = dft.RKS(gto.M(atom=[[s, tuple(p)] for s, p in zip(symbols, start)], basis="def2-svp", verbose=0))
    mf.xc = "pbe,pbe"
    mf.grids.level = 5
    mf.conv_tol = 1e-11
    theirs = compare_geometries(symbols, start, optimize(mf, maxsteps=50).atom_coords(unit="Angstrom"))
    for ours, ref in zip(geo["details"]["bonds"], theirs["bonds"]):
        assert ours["optimised"] == pytest.approx(ref["optimised"], abs=5e-4)
    (ours,), (ref,) = geo["details"]["angles"], theirs["angles"]
    assert ours["optimised"] == pytest.approx(ref["optimised"], abs=0.1)
    assert geo["values"]["geometry_bond_deviation"] == pytest.approx(theirs["bond_deviation"], abs=5e-4)
    assert geo["values"]["geometry_angle_deviation"] == pytest.approx(theirs["angle_deviation"], abs=0.1)
    assert "MP2(full)/6-31G(d)" in geo["details"]["reference_geometry"]  # what ASE's G2-1 geometries are


def test_water_frequencies_and_zero_point_energy_match_pyscf_hessian(water_pbe):
    # pyscf's analytic RKS Hessian (pyscf.hessian, grid level 5) at ks1d's optimised geometry, harmonic analysis
    # with the same isotope masses (pyscf.hessian.thermo): measured within 0.07 cm^-1 and 1e-4 kcal/mol; the
    # tolerance is the 5 cm^-1 per mode for different grids
    from pyscf import dft, gto
    from pyscf.hessian import thermo

    from ks1d.frequencies import isotope_masses
    from ks1d.structure import parse_xyz_text

    _, geo, vib = water_pbe
    st = parse_xyz_text(vib["details"]["optimised_geometry"])
    assert vib["details"]["optimised_geometry"] == geo["details"]["optimised_geometry"]
    mol = gto.M(atom=[[s, tuple(p)] for s, p in zip(st.symbols, st.positions)], basis="def2-svp", verbose=0)
    mf = dft.RKS(mol)
    mf.xc = "pbe,pbe"
    mf.grids.level = 5
    mf.conv_tol = 1e-11
    mf.kernel()
    freq = thermo.harmonic_analysis(mol, mf.Hessian().kernel(), mass=isotope_masses(st.symbols))["freq_wavenumber"]
    assert np.allclose(vib["details"]["wavenumbers"], np.sort(freq), atol=5.0, rtol=0)
    zpe = 0.5 * np.sum(freq) / units.HARTREE_TO_INV_CM * units.HARTREE_TO_KCAL_MOL
    assert vib["values"]["zero_point_energy"] == pytest.approx(zpe, abs=0.02)
    assert vib["values"]["lowest_harmonic_frequency"] == pytest.approx(min(freq), abs=5.0)
    assert vib["details"]["imaginary_modes"] == 0


def _spec(body: str) -> str:
    return textwrap.dedent('functionals = ["pbe"]\n[solver]\nbasis = "def2-svp"\n[[study]]\n' + body)


def test_spec_names_map_to_the_geometry_kinds():
    spec = parse_spec(_spec('properties = ["geometry", "zero_point_energy", "harmonic_frequencies"]\n'
                            'systems = ["g2-1:H2O", "g2-1:NH3"]\n'))
    kinds = sorted({j.property for j in spec.jobs()})
    assert kinds == ["optimized_geometry", "vibrations"] and len(spec.jobs()) == 4


@pytest.mark.parametrize("body, message", [
    ('property = "optimized_geometry"\nsystems = ["O"]\n', "needs a molecule"),
    ('property = "zero_point_energy"\nsystems = ["g2-1:H2O"]\nmolecule_options = { gradient = true }\n',
     "cannot be passed to a geometry optimisation"),
])
def test_spec_refuses_what_a_geometry_job_cannot_do(body, message):
    with pytest.raises(SpecError, match=message):
        parse_spec(_spec(body))
