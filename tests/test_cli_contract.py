"""The command line's contract with its users, checked for every sub-command of this module's scope:

* bad input → exit code 2, exactly one line on stderr ("ks1d: error: ..."), no traceback, nothing written;
* every ``--json`` and ``--qcschema`` output is strict JSON (RFC 8259: no NaN/Infinity), parsed here with
  a parser that rejects the non-standard constants, and the QCSchema documents validate against MolSSI's
  ``qcelemental`` models (a general-purpose library from the package index, test extra);
* structure files in the formats ASE reads (CIF, PDB) and non-UTF-8 (Latin-1) XYZ files are read.
"""
from __future__ import annotations

import json
import os

import pytest

from ks1d.cli import main

WATER = "3\nwater (experimental geometry, from memory: r(OH) 0.9572 A, HOH 104.52 deg)\n" \
        "O 0.000000 0.000000 0.117300\nH 0.000000 0.757200 -0.469200\nH 0.000000 -0.757200 -0.469200\n"


def _strict(text: str):
    def reject(name):
        raise AssertionError(f"non-standard JSON constant {name}")

    return json.loads(text, parse_constant=reject)


def _run(argv, capsys):
    """main(argv) → (exit code, stdout, stderr); argparse's SystemExit becomes its code."""
    try:
        code = main(argv)
    except SystemExit as exc:
        code = exc.code
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def files(tmp_path, monkeypatch):
    """A scratch directory as the working directory, with the structure files the cases need."""
    monkeypatch.chdir(tmp_path)
    (tmp_path / "water.xyz").write_text(WATER)
    latin = "3\nEau, g\xe9om\xe9trie exp\xe9rimentale (\xc5)\n" + "\n".join(WATER.splitlines()[2:]) + "\n"
    (tmp_path / "latin1.xyz").write_bytes(latin.encode("latin-1"))
    (tmp_path / "badline.xyz").write_text("2\n\nH 0 0 0\nH 0 0 0.7x\n")
    (tmp_path / "unknown.xyz").write_text("1\n\nQq 0 0 0\n")
    (tmp_path / "blob.xyz").write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR")
    (tmp_path / "nacl.cif").write_text(NACL_CIF)
    return tmp_path


# rock salt, a = 5.64 A (handbook lattice constant, from memory); a periodic structure
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

BAD_INPUT = [
    # (argv, fragment of the one error line)
    (["atom", "H", "--charge=-200"], "charge -200 is below -3"),
    (["atom", "H", "--charge", "nan"], "finite"),
    (["atom", "H", "--charge", "1"], "without electrons"),
    (["atom", "Qq"], "Qq"),
    (["atom", "H", "--xc", "pbe00"], "did you mean"),
    (["atom", "C", "--config", "[He] 2s2 2p9"], "2p"),
    (["atom", "C", "--restricted", "--spin", "2"], "contradict"),
    (["atom", "Ne", "--damping", "1.5"], "damping must lie in [0, 1)"),
    (["atom", "Ne", "--max-iterations", "0"], "max_iterations"),
    (["atom", "Ne", "--precision", "ultra"], "invalid choice"),
    (["atom"], "required"),
    (["molecule", "missing.xyz"], "does not exist"),
    (["molecule", "badline.xyz"], "line 4"),
    (["molecule", "unknown.xyz"], "unknown element symbol 'Qq'"),
    (["molecule", "blob.xyz"], "binary file"),
    (["molecule", "nacl.cif", "--basis", "sto-3g"], "periodic"),
    (["molecule", "water.xyz", "--basis", "def2-svpp"], "unknown basis 'def2-svpp'"),
    (["molecule", "water.xyz", "--basis", "O="], "ELEMENT=BASIS"),
    (["molecule", "water.xyz", "--basis", "Qq=sto-3g"], "not an element symbol"),
    (["molecule", "water.xyz", "--basis", "O=sto-3g"], "no basis for element H"),
    (["molecule", "water.xyz", "--multiplicity", "2"], "multiplicity"),
    (["molecule", "water.xyz", "--damping", "2"], "damping"),
    (["molecule", "water.xyz", "--grid", "superfine"], "superfine"),
    (["molecule", "water.xyz", "--xc", "pbe00"], "did you mean"),
    (["molecule", "water.xyz", "--qcschema", "no/such/dir/out.json", "--basis", "sto-3g", "--grid", "coarse"],
     "does not exist"),
    (["basis-error", "C", "--basis", "def2-svpp"], "unknown basis"),
    (["basis-error", "--basis", "def2-svp"], "at least one element"),
    (["basis-error", "C", "--xyz", "water.xyz", "--basis", "def2-svp"], "not both"),
    (["basis-error", "C", "--basis", "def2-svp", "--xc", "pbe00"], "did you mean"),
    (["check", "--group", "bogus"], "unknown check group"),
]


@pytest.mark.parametrize("argv, fragment", BAD_INPUT, ids=[" ".join(a) for a, _ in BAD_INPUT])
def test_bad_input_is_one_line_exit_2_and_writes_nothing(argv, fragment, files, capsys):
    before = set(os.listdir(files))
    code, out, err = _run(argv + ["--quiet"] if argv and argv[0] in ("atom", "molecule", "basis-error", "check")
                          and len(argv) > 1 else argv, capsys)
    assert code == 2, (code, err)
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1, err
    assert lines[0].startswith("ks1d: error:"), err
    assert fragment in lines[0], lines[0]
    assert "Traceback" not in err and out == ""
    assert set(os.listdir(files)) == before


def test_latin1_xyz_file_is_read(files, capsys):
    # the comment line holds é and Å in Latin-1; atom lines are ASCII either way
    code, out, err = _run(["molecule", "latin1.xyz", "--basis", "sto-3g", "--xc", "lda", "--grid", "coarse",
                           "--json", "--quiet"], capsys)
    assert code == 0, err
    data = _strict(out)
    code2, out2, _ = _run(["molecule", "water.xyz", "--basis", "sto-3g", "--xc", "lda", "--grid", "coarse",
                           "--json", "--quiet"], capsys)
    assert data["total_energy"] == pytest.approx(_strict(out2)["total_energy"], abs=1e-10)
    code3, out3, err3 = _run(["basis-error", "--xyz", "latin1.xyz", "--basis", "sto-3g", "--json", "--quiet"],
                             capsys)
    assert code3 == 0, err3
    assert {a["element"] for a in _strict(out3)["atoms"]} == {"O", "H"}


def test_cif_and_pdb_structures_through_molecule(files, capsys):
    ase_io = pytest.importorskip("ase.io")
    from ase import Atoms

    atoms = Atoms("OH2", positions=[[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]])
    ase_io.write(str(files / "water.pdb"), atoms)
    ase_io.write(str(files / "water.cif"), atoms)  # a CIF without a cell: molecular
    energies = []
    for name in ("water.xyz", "water.pdb", "water.cif"):
        code, out, err = _run(["molecule", name, "--basis", "sto-3g", "--xc", "lda", "--grid", "coarse", "--json",
                               "--quiet"], capsys)
        assert code == 0, (name, err)
        energies.append(_strict(out)["total_energy"])
    # PDB keeps 3 decimals of the coordinates: the same molecule to ~1e-4 Ha
    assert energies[1] == pytest.approx(energies[0], abs=5e-4)
    assert energies[2] == pytest.approx(energies[0], abs=1e-8)


def test_periodic_cif_as_cluster_warns_and_runs(files, capsys):
    code, out, err = _run(["molecule", "nacl.cif", "--basis", "sto-3g", "--xc", "lda", "--grid", "coarse",
                           "--as-cluster", "--json", "--quiet"], capsys)
    assert code == 0, err
    assert "cluster" in err
    assert _strict(out)["geometry"]["symbols"] == ["Na", "Cl"]


def test_every_json_output_is_strict(files, capsys):
    outputs = {}
    for argv in (["atom", "Ne", "--json"], ["atom", "O", "--xc", "pbe", "--json", "--radial"],
                 ["molecule", "water.xyz", "--basis", "sto-3g", "--xc", "lda", "--grid", "coarse", "--json"],
                 ["basis-error", "He", "--basis", "cc-pvdz", "--json"],
                 ["check", "--group", "nist", "--json"]):
        code, out, err = _run(argv + ["--quiet"], capsys)
        assert code in (0, 1), err
        outputs[argv[0] + argv[1]] = _strict(out)
    # the first SCF iteration has no energy change: null in strict JSON, not NaN
    assert outputs["atomNe"]["history"][0]["delta_energy"] is None
    assert outputs["atomNe"]["components"]["coulomb"] > 0


def test_qcschema_outputs_validate_with_qcelemental(files, capsys):
    models = pytest.importorskip("qcelemental.models")
    docs = []
    for argv in (["atom", "N", "--xc", "pbe", "--no-error-estimate"],
                 ["atom", "N", "--xc", "pbe", "--restricted", "--no-error-estimate"],
                 ["molecule", "water.xyz", "--basis", "6-31g", "--xc", "pbe", "--grid", "coarse"]):
        code, out, err = _run(argv + ["--qcschema", "-", "--quiet"], capsys)
        assert code == 0, err
        doc = _strict(out)
        res = models.AtomicResult(**doc)
        assert res.success and res.provenance.creator == "ks1d"
        assert res.return_result == pytest.approx(doc["extras"]["ks1d"]["total_energy"], abs=0)
        docs.append((argv, doc, res))
    # a file target writes the same document
    code, _, err = _run(["atom", "N", "--xc", "pbe", "--no-error-estimate", "--qcschema", "n.json", "--quiet"],
                        capsys)
    assert code == 0, err
    assert _strict((files / "n.json").read_text())["return_result"] == docs[0][1]["return_result"]
    # the spin-restricted N atom is a spin-averaged ensemble; its molecule block keeps the ground quartet
    assert docs[1][2].molecule.molecular_multiplicity == 4
    # energy parts add up (QCSchema: one- plus two-electron plus nuclear repulsion = total)
    for _, _doc, res in docs:
        p = res.properties
        assert p.scf_one_electron_energy + p.scf_two_electron_energy + p.nuclear_repulsion_energy \
            == pytest.approx(res.return_result, abs=1e-9)
