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
        properties = ["bond_length", "harmonic_frequency"]   # one gradient job gives both
        systems = ["diatomics:N2"]
        functionals = ["pbe0"]
    """)
    jobs = spec.jobs()
    assert len(jobs) == 2 * 2 * 2 + 1
    curve = [j for j in jobs if j.property == "diatomic_curve"]
    assert len(curve) == 1 and curve[0].functional == "pbe0"
    # the gradient kind reads no scan settings, so they do not enter its job key; the scan kind's do
    assert set(curve[0].settings_dict) == {"basis"}
    scan = _spec('[[study]]\nproperty = "diatomic_curve_scan"\nsystems = ["diatomics:N2"]\nscan_points = 9\n').jobs()
    assert scan[0].settings_dict["scan_points"] == 9 and "scan_step" in scan[0].settings_dict


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
    # checked up front exactly like `ks1d report` (ks1d.sweep.properties.checks)
    ('[[study]]\nproperty = "total_energy"\nsystems = ["g2-1:H2O"]\nbasis = "def2-nonsense"',
     "unknown basis 'def2-nonsense'"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["Rb"]\natoms = "basis"\nbasis = "def2-tzvp"',
     "effective core potential"),
    ('[[study]]\nproperty = "ionisation_potential"\nsystems = ["O"]\nfunctionals = ["hse06"]',
     "the radial solver has no range-separated exact exchange"),
    ('[[study]]\nproperty = "atomization_energy"\nsystems = ["g2-1:H2O"]\natoms = "radial"\nfunctionals = ["hse06"]',
     'set atoms = "basis"'),
    ('[[study]]\nproperty = "sd_promotion"\nsystems = ["Fe"]\natoms = "basis"', "needs radial atoms"),
    # the SCF options' earlier names name their new ones
    ('[[study]]\nproperty = "total_energy"\nsystems = ["Li"]\natom_options = { mixing = 0.3 }',
     "'mixing' in atom_options is the old name of 'damping'"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["Li"]\natom_options = { density_tol = 1e-6 }',
     "old name of 'residual_tolerance'"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["Li"]\natom_options = { energy_tol = 1e-9 }',
     "old name of 'energy_tolerance'"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["g2-1:H2O"]\nmolecule_options = { gradient_tolerance = 1e-6 }',
     "old name of 'residual_tolerance'"),
    ('[[study]]\nproperty = "total_energy"\nsystems = ["g2-1:H2O"]\nmolecule_options = { diis_size = 6 }',
     "old name of 'history'"),
    ('[[study]]\nproperty = "total_energy"\nsystems = [{ atom = "C", multiplicity = 1 }]',
     "an atom takes no 'multiplicity'"),
])
def test_bad_specs_are_refused_with_a_specific_message(body, message):
    with pytest.raises(SpecError, match=message):
        _spec(body)


def test_an_unknown_functional_is_refused_before_anything_runs():
    with pytest.raises(SpecError, match="did you mean 'pbe'"):
        _spec('[[study]]\nproperty = "total_energy"\nsystems = ["H"]', top='functionals = ["pbee"]')


def test_range_separated_hybrids_are_accepted_where_a_gaussian_solver_runs():
    # HSE06 is refused on radial atoms (above) but runs on molecules and on Gaussian-basis atoms
    spec = _spec("""
        [[study]]
        properties = ["total_energy", "ionisation_potential"]
        systems = ["O", "g2-1:H2O"]
        atoms = "basis"
        [[study]]
        property = "bond_length"
        systems = ["diatomics:N2"]
    """, top='functionals = ["hse06"]')
    assert len(spec.jobs()) == 5


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


def _cli(argv, capsys):
    from ks1d.cli import main

    try:
        code = main(argv)
    except SystemExit as exc:
        code = exc.code
    out, err = capsys.readouterr()
    return code, out, err


LATIN1_SPEC = ('name = "Lösung für Ångström"\nfunctionals = ["lda"]\n'
               '[[study]]\nproperty = "total_energy"\nsystems = ["H"]\n')

BAD_SPECS = [
    # (spec file bytes, fragment of the one error line)
    (LATIN1_SPEC.encode("latin-1"), "is not UTF-8 (it looks like Latin-1/Windows-1252 text): byte 0xf6 on line 1"),
    (b'functionals = ["lda"]\n[[study]]\nproperty = "total_energy"\nsystems = ["g2-1:H2O"]\nbasis = "def2-svpp"\n',
     "unknown basis 'def2-svpp'"),
    (b'functionals = ["hse06"]\n[[study]]\nproperty = "atom_survey"\nsystems = ["O"]\n',
     "the radial solver has no range-separated exact exchange"),
    (b'functionals = ["lda"]\n[[study]]\nproperty = "total_energy"\nsystems = ["Li"]\n'
     b'atom_options = { mixing = 0.3 }\n', "old name of 'damping'"),
]


@pytest.mark.parametrize("action", ["plan", "run"])
@pytest.mark.parametrize("spec_bytes, fragment", BAD_SPECS, ids=["latin-1", "basis", "hse06-radial", "old-option"])
def test_bad_specs_exit_2_with_one_line_and_write_nothing(action, spec_bytes, fragment, tmp_path, capsys,
                                                          monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "s.toml").write_bytes(spec_bytes)
    before = set(tmp_path.iterdir())
    argv = ["sweep", action, "s.toml"] + (["--store", "s.sqlite", "--workers", "0"] if action == "run" else [])
    code, out, err = _cli(argv, capsys)
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert code == 2, err
    assert len(lines) == 1 and lines[0].startswith("ks1d: error:"), err
    assert fragment in lines[0], lines[0]
    assert "Traceback" not in err and out == ""
    assert set(tmp_path.iterdir()) == before  # no store, nothing else
