"""Sweep specs: parsing, clear errors, built-in systems and their multiplicities."""
from __future__ import annotations

import textwrap

import pytest

from ks1d.errors import InputError
from ks1d.occupations import ground_state_multiplicity
from ks1d.sweep import SpecError, parse_spec
from ks1d.sweep.properties.configurations import sd_configurations
from ks1d.sweep.properties.systems import parse_atom


def _spec(body: str, top: str = 'functionals = ["lda", "pbe"]'):
    return parse_spec(top + "\n" + textwrap.dedent(body))


def test_jobs_are_the_product_of_functionals_systems_and_properties():
    spec = _spec("""
        [[study]]
        properties = ["ionisation_potential", "electron_affinity"]
        systems = ["Li", "F"]
        [[study]]
        properties = ["bond_length", "harmonic_frequency"]   # one scan job gives both
        systems = ["diatomics:N2"]
        functionals = ["pbe0"]
    """)
    jobs = spec.jobs()
    assert len(jobs) == 2 * 2 * 2 + 1
    scan = [j for j in jobs if j.property == "diatomic_curve"]
    assert len(scan) == 1 and scan[0].functional == "pbe0"


@pytest.mark.parametrize("body, message", [
    ('[[study]]\nproperty = "bond_lenght"\nsystems = ["g2-1:CO"]', "did you mean 'bond_length'"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["Li"]\nbasiss = "def2-svp"', "did you mean 'basis'"),
    ('[[study]]\nproperty = "bond_length"\nsystems = ["Li"]', "needs a diatomic molecule"),
    ('[[study]]\nproperty = "spin_splitting"\nsystems = ["Li"]', "needs two spin states"),
    ('[[study]]\nproperty = "sd_promotion"\nsystems = ["Zn"]', "1-9 d electrons"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["Xx"]', "not an element symbol"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["g2-1:H20"]', "did you mean 'H2O'"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["Li"]\nscan_points = 3', "'scan_points' must be 5-25"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["Li"]\nmolecule_options = { max_iter = 5 }',
     "did you mean 'max_iterations'"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["missing.xyz"]', "does not exist"),
    ("[[study]\n", "not valid TOML"),
    ('[[study]]\nproperty = "spin_splitting"\nsystems = [{ atom = "C", multiplicities = [3, 2] }]',
     "multiplicity 2 is impossible for 6 electrons"),
])
def test_bad_specs_are_refused_with_a_specific_message(body, message):
    with pytest.raises(SpecError, match=message):
        _spec(body)


def test_an_unknown_functional_is_refused_before_anything_runs():
    with pytest.raises(SpecError, match="did you mean 'pbe'"):
        _spec('[[study]]\nproperty = "total_energy"\nsystems = ["H"]', top='functionals = ["pbee"]')


def test_user_xyz_files_are_read_relative_to_the_spec(tmp_path):
    from ks1d.sweep import load_spec

    (tmp_path / "hf.xyz").write_text("2\nhydrogen fluoride\nH 0 0 0\nF 0 0 0.917\n")
    (tmp_path / "s.toml").write_text('functionals = ["lda"]\n[[study]]\nproperty = "bond_length"\n'
                                     'systems = ["hf.xyz", { xyz = "hf.xyz", name = "HF-again", charge = 0 }]\n')
    spec = load_spec(str(tmp_path / "s.toml"))
    names = [j.system.name for j in spec.jobs()]
    # the same geometry under two names is one job (the key sees the geometry, not the name)
    assert names == ["hf"]


def test_ion_notation():
    assert [(s.symbol, s.charge) for s in map(parse_atom, ["Na+", "O-", "Fe2+", "O2-", "Cl"])] == [
        ("Na", 1), ("O", -1), ("Fe", 2), ("O", -2), ("Cl", 0)]
    with pytest.raises(InputError, match="needs a sign"):
        parse_atom("Fe2")


def test_atom_multiplicities_match_the_g2_1_magnetic_moments():
    # ASE's ase.data.g2_1 lists each G2-1 atom's magnetic moment (unpaired electrons); 2S+1 = moment + 1
    g2 = pytest.importorskip("ase.data.g2_1")
    for sym in g2.atom_names:
        moment = sum(g2.data[sym]["magmoms"] or [0.0])
        assert ground_state_multiplicity(sym) == round(moment) + 1, sym


def test_g2_1_molecules_carry_geometry_and_multiplicity_from_ase():
    g2 = pytest.importorskip("ase.data.g2_1")
    from ks1d.sweep.properties.datasets import g2_1_molecule
    from ks1d.sweep.properties.systems import bond_length

    o2 = g2_1_molecule("O2")
    assert o2.multiplicity == 3  # ASE: "O2 molecule, D*h symm, Triplet."
    assert "Triplet" in g2.data["O2"]["description"]
    z = [p[2] for p in g2.data["O2"]["positions"]]
    assert bond_length(o2) == pytest.approx(abs(z[0] - z[1]), abs=1e-8)
    assert g2_1_molecule("CH4").symbols == ("C", "H", "H", "H", "H")


def test_sd_configurations_of_3d_atoms():
    # ground configurations from the NIST Atomic Spectra Database: Fe 3d6 4s2, Cr 3d5 4s1, Cu 3d10 4s1
    assert sd_configurations("Fe") == ("[Ar] 3d6 4s2", "[Ar] 3d7 4s1")
    assert sd_configurations("Cr") == ("[Ar] 3d4 4s2", "[Ar] 3d5 4s1")
    assert sd_configurations("Cu") == ("[Ar] 3d9 4s2", "[Ar] 3d10 4s1")
