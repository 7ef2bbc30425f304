"""``ks1d refs``: reference atomic energies against NIST SRD 141 and pyscf."""
from __future__ import annotations

import argparse
import csv
import io
import json

import pytest

from ks1d.commands import refs as refs_command
from ks1d.errors import InputError
from ks1d.sweep.properties.systems import parse_elements


def _run(argv, capsys):
    parser = argparse.ArgumentParser()
    sub = parser.add_subparsers()
    refs_command.register(sub)
    args = parser.parse_args(["refs", *argv])
    code = args.func(args)
    return code, capsys.readouterr().out


def test_json_rows_match_the_nist_lsd_table(capsys):
    # NIST SRD 141 (Kotochigova et al., PRA 55, 191 (1997)) LSD total energies: H -0.478671, He -2.834836 Ha
    code, out = _run(["H", "He", "--xc", "lda", "--precision", "low", "--json"], capsys)
    assert code == 0
    rows = json.loads(out)
    assert [(r["element"], r["xc"]) for r in rows] == [("H", "lda"), ("He", "lda")]
    energies = {r["element"]: r["total_energy"] for r in rows}
    assert energies["H"] == pytest.approx(-0.478671, abs=2e-6)
    assert energies["He"] == pytest.approx(-2.834836, abs=2e-6)
    h = rows[0]
    assert h["multiplicity"] == 2 and h["spin"] == "polarized" and h["libxc"] == "lda_x,lda_c_vwn"
    assert h["error_estimate"] is not None and h["error_estimate"] < 1e-5
    assert h["ks1d_version"] and h["settings"]["precision"] == "low"


def test_csv_rows_in_a_gaussian_basis_match_pyscf(capsys):
    # pyscf (test-time reference): UKS LDA (Slater + VWN5) N atom quartet in def2-SVP, large grid
    from pyscf import dft, gto

    code, out = _run(["N", "--xc", "lda", "--basis", "def2-svp", "--csv"], capsys)
    assert code == 0
    (row,) = list(csv.DictReader(io.StringIO(out)))
    mol = gto.M(atom="N 0 0 0", basis="def2-svp", spin=3, verbose=0)
    mf = dft.UKS(mol)
    mf.xc = "lda,vwn"
    mf.grids.level = 5
    mf.conv_tol = 1e-10
    assert float(row["total_energy"]) == pytest.approx(mf.kernel(), abs=2e-5)
    assert row["multiplicity"] == "4" and row["solver"] == "gaussian def2-svp"
    assert json.loads(row["settings"]) == {"atoms": "basis", "basis": "def2-svp"}


def test_element_lists_and_ranges():
    assert parse_elements(["Li-Ne", "3", "na"]) == ["Li", "Be", "B", "C", "N", "O", "F", "Ne", "Na"]
    with pytest.raises(InputError, match="runs backwards"):
        parse_elements(["Ne-Li"])


def test_functional_lists_keep_libxc_component_lists_together():
    assert refs_command.split_functionals("lda,pbe") == ["lda", "pbe"]
    assert refs_command.split_functionals("gga_x_pbe,gga_c_pbe,lda") == ["gga_x_pbe,gga_c_pbe", "lda"]
    with pytest.raises(InputError, match="did you mean 'pbe'"):
        refs_command.split_functionals("pbee")
