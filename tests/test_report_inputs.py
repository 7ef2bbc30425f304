"""ks1d report: input checking (before any calculation), structure files and bond perception."""
from __future__ import annotations

import os
import subprocess
import sys

import numpy as np
import pytest

from ks1d.errors import BasisError, InputError, UnknownFunctional
from ks1d.report import StructureError, plan_report, read_structure
from ks1d.structure import bonded_pairs, covalent_radius, parse_xyz_text

WATER = "3\nwater, experimental geometry\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\nH 0.0 -0.7572 -0.4692\n"


def test_covalent_radii_are_cordero_2008():
    # B. Cordero et al., Dalton Trans. 2008, 2832, Table 2 (from memory): C(sp2) 0.73, O 0.66, H 0.31,
    # Cu 1.32, Fe (mean of low and high spin) 1.42 A
    assert covalent_radius("C") == pytest.approx(0.73, abs=0.005)
    assert covalent_radius("Cu") == pytest.approx(1.32, abs=0.005)
    assert covalent_radius("Fe") == pytest.approx(1.42, abs=0.005)
    assert covalent_radius("O") == pytest.approx(0.66, abs=0.005)
    assert covalent_radius("H") == pytest.approx(0.31, abs=0.005)


def test_water_has_o_h_bonds_and_no_h_h_bond():
    # water r(OH) = 0.9572 A, r(HH) = 1.514 A (experimental geometry, NIST CCCBDB; from memory):
    # 0.96 < 1.2 (0.66 + 0.31) = 1.16 bonded; 1.51 > 1.2 (0.31 + 0.31) = 0.74 not bonded
    st = parse_xyz_text(WATER)
    assert st.elements == ("O", "H")
    assert st.bonded_pairs() == (("H", "O"),)


def test_extended_xyz_columns_and_a_bond_across_the_cell_face():
    # Na-Cl at 2.82 A in rock salt (handbook lattice constant 5.64 A); here the pair is 3.3 A apart inside
    # the cell (> 1.2 (1.66 + 1.02) = 3.22 A, Cordero radii) but 2.7 A apart through the periodic x face
    text = ('2\nLattice="6.0 0 0 0 20.0 0 0 0 20.0" Properties=charge:R:1:species:S:1:pos:R:3 pbc="T T T"\n'
            "0.9 Na 0.3 0.0 0.0\n-0.9 Cl 3.6 0.0 0.0\n")
    st = parse_xyz_text(text, "nacl.extxyz")
    assert st.symbols == ("Na", "Cl")
    assert np.allclose(st.positions[1], [3.6, 0, 0])
    assert st.bonded_pairs() == (("Na", "Cl"),)
    # the same atoms without periodic boundaries are not bonded
    assert bonded_pairs(st.symbols, st.positions, st.cell, (False, False, False)) == ()


@pytest.mark.parametrize("text, fragment", [
    ("", "empty structure"),
    ("two\n\nH 0 0 0\n", "line 1: expected the number of atoms"),
    ("3\n\nH 0 0 0\nH 0 0 1\n", "announces 3 atoms"),
    ("2\n\nH 0 0 0\nH 0 zero 1\n", "line 4: y coordinate 'zero'"),
    ("1\n\nQq 0 0 0\n", "line 3: unknown element"),
    ("1\nProperties=species:S:1:forces:R:3\nH 0 0 0\n", "lacks a 'species' or a 'pos' column"),
    ('1\nLattice="1 0 0 0 1 0"\nH 0 0 0\n', "Lattice needs 9 numbers"),
])
def test_unreadable_structures_say_where_and_what(text, fragment):
    with pytest.raises(StructureError, match=fragment):
        parse_xyz_text(text, "bad.xyz", require_header=True)


def test_structure_file_errors_name_the_file(tmp_path):
    with pytest.raises(StructureError, match="does not exist"):
        read_structure(str(tmp_path / "missing.xyz"))
    with pytest.raises(StructureError, match="is a directory"):
        read_structure(str(tmp_path))
    binary = tmp_path / "image.xyz"
    binary.write_bytes(b"\x89PNG\r\n\x1a\n\xff\xfe\x00")
    with pytest.raises(StructureError, match="is a binary file"):
        read_structure(str(binary))


def test_plan_of_an_element_list():
    # every pair of the listed elements with experimental diatomic data (Huber & Herzberg in ks1d's data)
    plan = plan_report(["C", "O"], functionals=["pbe", "hse06"], basis="def2-svp")
    assert plan.diatomics == ("C2", "CO", "O2")
    kinds = sorted((j.property, j.system.name, j.functional) for j in plan.jobs)
    assert ("atom_survey", "C", "pbe") in kinds and ("basis_set_error", "O", "pbe") in kinds
    # HSE06: no radial atoms (range separation), but its diatomics run in the basis
    assert not any(k[0] in ("atom_survey", "basis_set_error") and k[2] == "hse06" for k in kinds)
    assert ("diatomic_survey", "CO", "hse06") in kinds
    assert {s.functional for s in plan.skipped} == {"hse06"}
    # O2 is a triplet (X 3Sigma_g-, Huber & Herzberg): the multiplicity comes from the term symbol
    o2 = next(j.system for j in plan.jobs if j.system.name == "O2")
    assert o2.multiplicity == 3


def test_plan_of_a_structure_uses_only_its_bonded_pairs(tmp_path):
    path = tmp_path / "water.xyz"
    path.write_text(WATER)
    plan = plan_report(structure=str(path), functionals=["lda"])
    assert plan.elements == ("O", "H")
    assert plan.diatomics == ("OH",)  # H2 has data but H-H is not bonded in water
    assert plan.diatomic_basis == "def2-tzvp"


@pytest.mark.parametrize("kwargs, error, fragment", [
    ({"elements": ["Fe", "Xx"]}, InputError, "'Xx'"),
    ({"elements": ["O"], "functionals": ["pbe00"]}, UnknownFunctional, "did you mean 'pbe0'"),
    ({"elements": ["O"], "basis": "def2-nonsense"}, BasisError, "unknown basis"),
    ({"elements": ["Rb"], "basis": "def2-tzvp"}, BasisError, "effective core potential"),
    ({"elements": ["O"], "structure": "x.xyz"}, InputError, "not both"),
])
def test_bad_requests_fail_in_planning(kwargs, error, fragment):
    with pytest.raises(error, match=fragment):
        plan_report(**kwargs)


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "ks1d.cli", "report", *args], cwd=cwd, capture_output=True,
                          text=True, timeout=120)


@pytest.mark.parametrize("args, fragment", [
    (["Fe", "Xx"], "'Xx' is not an element"),
    (["O", "--xc", "pbe00"], "did you mean 'pbe0'"),
    (["missing.xyz"], "does not exist"),
    (["O", "--basis", "def2-nonsense"], "unknown basis"),
])
def test_cli_exits_2_before_computing(tmp_path, args, fragment):
    r = _cli(*args, cwd=tmp_path)
    assert r.returncode == 2, r.stderr
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("ks1d: error:"), r.stderr
    assert fragment in lines[0]
    assert "Traceback" not in r.stderr and r.stdout == ""
    assert not os.listdir(tmp_path)  # no store, no page: nothing was started


# rock salt, a = 5.64 A (handbook lattice constant, from memory), in the CIF format ASE reads
NACL_CIF = """data_NaCl
_cell_length_a 5.64
_cell_length_b 5.64
_cell_length_c 5.64
_cell_angle_alpha 90
_cell_angle_beta 90
_cell_angle_gamma 90
_symmetry_space_group_name_H-M 'P 1'
loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
Na1 Na 0.0 0.0 0.0
Cl1 Cl 0.5 0.0 0.0
"""
# water at its experimental geometry (as WATER above) in PDB HETATM records
WATER_PDB = """HETATM    1  O   HOH A   1       0.000   0.000   0.117  1.00  0.00           O
HETATM    2  H1  HOH A   1       0.000   0.757  -0.469  1.00  0.00           H
HETATM    3  H2  HOH A   1       0.000  -0.757  -0.469  1.00  0.00           H
END
"""


def test_cif_and_pdb_structures_are_planned_like_xyz(tmp_path):
    # CIF: Na-Cl at a/2 = 2.82 A is bonded (< 1.2 (1.66 + 1.02) = 3.22 A, Cordero radii); ks1d has no NaCl
    # diatomic data, so the pair is reported and nothing is computed for it
    (tmp_path / "nacl.cif").write_text(NACL_CIF)
    plan = plan_report(structure=str(tmp_path / "nacl.cif"), functionals=["lda"])
    assert set(plan.elements) == {"Na", "Cl"} and plan.diatomics == ()
    assert plan.pairs_without_data == ("Na–Cl",)
    # PDB: the same bonds as the XYZ water (O-H only), so the same diatomic, OH
    (tmp_path / "water.pdb").write_text(WATER_PDB)
    plan = plan_report(structure=str(tmp_path / "water.pdb"), functionals=["lda"])
    assert plan.elements == ("O", "H") and plan.diatomics == ("OH",)


def test_symmetry_broken_basis_is_checked_and_keyed():
    plan = plan_report(["O"], functionals=["pbe"], symmetry_broken="aug-cc-pvtz", diatomics=False)
    (job,) = plan.jobs
    assert job.settings_dict["symmetry_broken_basis"] == "aug-cc-pvtz"
    assert job.key != plan_report(["O"], functionals=["pbe"], diatomics=False).jobs[0].key
    with pytest.raises(BasisError, match="unknown basis"):
        plan_report(["O"], symmetry_broken="def2-nonsense")


def test_range_separated_hybrids_get_gaussian_atoms_and_no_rank_slot():
    plan = plan_report(["O"], functionals=["pbe", "hse06"], diatomics=False)
    kinds = {(j.property, j.functional): j.settings_dict for j in plan.jobs}
    assert ("atom_survey", "pbe") in kinds and ("atom_survey_basis", "hse06") in kinds
    assert kinds[("atom_survey_basis", "hse06")] == {"basis": "aug-cc-pvtz"}
    assert any("Gaussian atoms" in s.reason for s in plan.skipped if s.functional == "hse06")


def test_the_longest_job_of_the_readme_report_starts_first():
    # measured on the README example (benchmarks/bench_report.py): Cu with HSE06 in aug-cc-pVTZ (Gaussian atoms)
    # takes ~20x an O atom and ~6x a diatomic; the engine starts jobs in order of registry cost, so that job
    # must lead (started after the fourteen diatomics, it alone set the wall time)
    from ks1d.sweep.properties.registry import REGISTRY

    here = os.path.dirname(os.path.abspath(__file__))
    plan = plan_report(structure=os.path.join(here, "..", "examples", "report_cu_site.xyz"), basis="def2-tzvp")
    first = max(plan.jobs, key=REGISTRY.cost)
    assert (first.property, first.system.name, first.functional) == ("atom_survey_basis", "Cu", "hse06")
    # and a radial Cu atom costs more than a radial O atom of the same functional
    cost = {(j.property, j.system.name, j.functional): REGISTRY.cost(j) for j in plan.jobs}
    assert cost[("atom_survey", "Cu", "pbe")] > cost[("atom_survey", "O", "pbe")]
