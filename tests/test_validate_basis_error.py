"""Basis-set error reports (ks1d.validate.basis_error, ``ks1d basis-error``).

Reference for the "positive error" claims: the variational principle — a
Gaussian basis is a subspace of the radial basis-set limit, so for the same
(spherical) state E(basis) ≥ E(limit), up to the molecular grid's integration
error (~1e-6 Ha on the default grid).  The numbers themselves are checked
against direct calls of the two solvers.
"""
from __future__ import annotations

import json

import pytest

import ks1d
from ks1d import cli, units
from ks1d.validate.basis_error import atom_basis_error, basis_error_report

WATER = """3
water (NIST CCCBDB experimental geometry, from memory)
O 0.000000  0.000000  0.117300
H 0.000000  0.757200 -0.469200
H 0.000000 -0.757200 -0.469200
"""


@pytest.fixture(autouse=True)
def _cli_knows_basis_error(monkeypatch):
    if "basis_error" not in cli.COMMANDS:
        monkeypatch.setattr(cli, "COMMANDS", cli.COMMANDS + ("basis_error",))


def test_closed_shell_error_is_positive_and_equals_direct_difference():
    row = atom_basis_error("Ne", "cc-pvdz", "pbe")
    e_basis = ks1d.solve_molecule("1\nNe\nNe 0 0 0\n", basis="cc-pvdz", xc="pbe").total_energy
    e_limit = ks1d.solve_atom("Ne", xc="pbe", estimate_error=False).total_energy
    assert row.error == pytest.approx(e_basis - e_limit, abs=1e-9)
    assert row.error > 1e-3  # cc-pVDZ misses tens of mHa for Ne
    assert row.error_kcal_mol == pytest.approx(row.error * units.HARTREE_TO_KCAL_MOL)
    assert row.error_ev == pytest.approx(row.error * units.HARTREE_TO_EV)
    assert row.occupations.startswith("integer")


def test_open_shell_uses_spherical_occupations_and_stays_above_the_limit():
    # O (2p4, triplet): an integer-occupied UKS determinant breaks spherical symmetry and
    # lies below the spherical radial limit; the report's smeared (spherical) state does not
    row = atom_basis_error("O", "cc-pvtz", "pbe")
    assert row.occupations.startswith("spherical smearing")
    assert row.error > 0
    aufbau = ks1d.solve_molecule("1\nO\nO 0 0 0\n", basis="cc-pvtz", xc="pbe", multiplicity=3).total_energy
    assert aufbau < row.radial_energy  # the symmetry-breaking energy exceeds the basis error here
    assert row.multiplicity == 3


def test_molecule_estimate_is_sum_of_atomic_errors_with_warning():
    rep = basis_error_report(basis="def2-svp", xc="pbe", xyz=WATER)
    by = {a.element: a for a in rep.atoms}
    assert set(by) == {"O", "H"}
    assert rep.total_error == pytest.approx(by["O"].error + 2 * by["H"].error, abs=1e-12)
    d = json.loads(json.dumps(rep.to_dict()))
    assert d["molecule"]["n_atoms"] == 3
    # def2-SVP misses ~60 kcal/mol of the water atoms' energy: far above 1 kcal/mol per atom
    assert d["molecule"]["estimated_error_kcal_mol"] > 3.0
    assert any("kcal/mol per atom" in w for w in rep.warnings)


@pytest.mark.parametrize("argv", [
    ["basis-error", "Xx", "--basis", "def2-svp"],
    ["basis-error", "--basis", "def2-svp"],
    ["basis-error", "He", "--basis", "no-such-basis"],
    ["basis-error", "He", "--basis", "def2-svp", "--xc", "pbe00"],
])
def test_bad_input_exits_with_code_two(argv, capsys):
    assert cli.main(argv) == 2
    err = capsys.readouterr().err
    assert err.startswith("ks1d: error:") and "Traceback" not in err


def test_cli_json(capsys):
    assert cli.main(["basis-error", "He", "--basis", "cc-pvdz", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["atoms"][0]["element"] == "He" and d["atoms"][0]["error_mhartree"] > 0


def test_hybrid_basis_error_compares_like_with_like():
    # A smeared Gaussian O atom carries the fractional-occupation (ensemble) exact exchange; pyscf with
    # fractional 2p-down occupations (scf.addons.frac_occ, aug-cc-pVQZ, run now) computes the same state.
    # The radial ensemble atom lies below it by the QZ basis error (0.6-1.7 mHa for O, measured against
    # aug-cc-pV5Z) and never above it (variational); the default configuration-average atom is a different,
    # lower state (tens of mHa for PBE0), so the basis-set error must use the ensemble form.
    from pyscf import dft, gto, scf

    mf = dft.UKS(gto.M(atom="O 0 0 0", basis="aug-cc-pvqz", spin=2, verbose=0))
    mf.xc = "pbe0"
    mf = scf.addons.frac_occ(mf)
    mf.grids.level = 5
    e_frac = mf.kernel()
    ensemble = ks1d.solve_atom("O", xc="pbe0", open_shell_exchange="ensemble", estimate_error=False)
    average = ks1d.solve_atom("O", xc="pbe0", estimate_error=False)
    assert e_frac - 3e-3 < ensemble.total_energy < e_frac + 1e-5
    assert average.total_energy < ensemble.total_energy - 0.03
    row = atom_basis_error("O", "def2-tzvp", xc="pbe0")
    assert 0 < row.error < 0.02  # def2-TZVP misses a few mHa for O, never tens
    assert row.radial_energy == pytest.approx(ensemble.total_energy, abs=1e-9)
