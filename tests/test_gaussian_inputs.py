"""Bad input to the Gaussian solver: clear ks1d errors (ValueError subclasses), CLI exit 2.

Issue 3, item 9; issue 4, item 6.  Every case checks the exception class and
that the message names the offending thing.
"""
from __future__ import annotations

import json

import numpy as np
import pytest

import ks1d
from ks1d.cli import main
from ks1d.errors import BasisError, ConvergenceError, GeometryError, SettingsError, SpinError, UnsupportedFunctional
from ks1d.gaussian.geometry import parse_xyz, read_geometry
from ks1d.gaussian.scf import solve_molecule
from ks1d.units import ANGSTROM_TO_BOHR

H2 = "2\nhydrogen\nH 0 0 0\nH 0 0 0.7414\n"


def test_xyz_parsing_converts_angstrom_to_bohr():
    g = parse_xyz(H2)
    assert g.symbols == ("H", "H")
    # 1 Å = 1/0.529177210903 bohr (CODATA 2018 via scipy.constants)
    assert g.coordinates[1, 2] == pytest.approx(0.7414 / 0.529177210903, rel=1e-9)
    assert g.coordinates[1, 2] == pytest.approx(0.7414 * ANGSTROM_TO_BOHR, rel=1e-15)


def test_xyz_file_and_text_give_the_same_geometry(tmp_path):
    path = tmp_path / "h2.xyz"
    path.write_text(H2)
    assert np.array_equal(read_geometry(str(path)).coordinates, read_geometry(H2).coordinates)


def test_wrong_atom_count():
    with pytest.raises(GeometryError, match="announces 3 atoms but 2"):
        parse_xyz("3\nx\nH 0 0 0\nH 0 0 0.74\n")


def test_unknown_symbol():
    with pytest.raises(GeometryError, match="unknown element symbol 'Qx'"):
        parse_xyz("2\nx\nH 0 0 0\nQx 0 0 0.74\n")


def test_non_numeric_coordinate():
    with pytest.raises(GeometryError, match="z coordinate '0.7a4' of atom 'H'"):
        parse_xyz("2\nx\nH 0 0 0\nH 0 0 0.7a4\n")


def test_missing_coordinate():
    with pytest.raises(GeometryError, match="expected 'SYMBOL x y z'"):
        parse_xyz("H 0 0 0\nH 0 0.74\n")


def test_atoms_too_close():
    with pytest.raises(GeometryError, match="0.0500 Å apart, closer than 0.1 Å"):
        parse_xyz("O 0 0 0\nH 0 0 0.05\n")


def test_missing_geometry_file():
    with pytest.raises(GeometryError, match="does not exist"):
        read_geometry("/nonexistent/dir/water.xyz")


@pytest.mark.parametrize("charge, mult", [(0, 2), (1, 1), (0, 0)])
def test_charge_and_multiplicity_parity(charge, mult):
    with pytest.raises(SpinError, match="multiplicity"):
        solve_molecule(H2, basis="sto-3g", xc="lda", charge=charge, multiplicity=mult)


def test_charge_removing_all_electrons():
    with pytest.raises(SpinError, match="leaves 0 electrons"):
        solve_molecule(H2, basis="sto-3g", xc="lda", charge=2, multiplicity=1)


def test_unknown_basis_name():
    with pytest.raises(BasisError, match="unknown basis 'def2-svpp'"):
        solve_molecule(H2, basis="def2-svpp", xc="lda")


def test_basis_without_functions_for_an_element():
    # pyscf's copy of Pople's 6-31G has no xenon entry
    with pytest.raises(BasisError, match="no functions for element Xe"):
        solve_molecule("Xe 0 0 0\nH 0 0 1.7\n", basis="6-31g", xc="lda", multiplicity=2)


def test_basis_mapping_missing_an_element():
    with pytest.raises(BasisError, match="no basis for element O"):
        solve_molecule("O 0 0 0\nH 0 0 0.97\n", basis={"H": "sto-3g"}, xc="lda", multiplicity=2)


def test_bad_settings():
    with pytest.raises(SettingsError, match="unknown grid level 'superfine'"):
        solve_molecule(H2, basis="sto-3g", xc="lda", grid="superfine")
    with pytest.raises(SettingsError, match="damping"):
        solve_molecule(H2, basis="sto-3g", xc="lda", scf={"damping": 1.5})


def test_unsupported_functional_kind_names_kind_and_solver():
    # BR89 exchange depends on the density Laplacian (libxc flags it so)
    with pytest.raises(UnsupportedFunctional, match="Laplacian.*Gaussian solver"):
        solve_molecule(H2, basis="sto-3g", xc="mgga_x_br89")
    # wB97M-V carries VV10 non-local correlation
    with pytest.raises(UnsupportedFunctional, match="non-local.*Gaussian solver"):
        solve_molecule(H2, basis="sto-3g", xc="hyb_mgga_xc_wb97m_v")


def test_non_convergence_raises_with_history():
    with pytest.raises(ConvergenceError) as info:
        solve_molecule("O 0 0 0\nO 0 0 1.21\n", basis="6-31g", xc="pbe", multiplicity=3,
                       scf={"max_iterations": 3}, grid="coarse")
    assert len(info.value.history) == 3
    assert all(np.isfinite(r.energy) for r in info.value.history)
    assert "did not converge in 3 iterations" in str(info.value)


def test_all_input_errors_are_value_errors():
    for exc in (GeometryError, BasisError, SpinError, SettingsError, UnsupportedFunctional):
        assert issubclass(exc, ValueError)


@pytest.mark.parametrize("args, text", [
    (["--multiplicity", "2"], "cannot have multiplicity 2"),
    (["--basis", "nonsense-basis"], "unknown basis"),
    (["--xc", "pbee"], "pbee"),
])
def test_cli_input_errors_exit_2(tmp_path, capsys, args, text):
    path = tmp_path / "h2.xyz"
    path.write_text(H2)
    assert main(["molecule", str(path), "--basis", "sto-3g"] + args) == 2
    assert text in capsys.readouterr().err


def test_cli_malformed_xyz_exits_2(tmp_path, capsys):
    path = tmp_path / "bad.xyz"
    path.write_text("3\nbad\nH 0 0 0\nH 0 0 0.74\n")
    assert main(["molecule", str(path)]) == 2
    assert "announces 3 atoms" in capsys.readouterr().err


def test_cli_json_keys_are_result_fields(tmp_path, capsys):
    path = tmp_path / "h2.xyz"
    path.write_text(H2)
    assert main(["molecule", str(path), "--basis", "sto-3g", "--xc", "lda", "--grid", "coarse", "--json"]) == 0
    def no_constants(name):
        raise AssertionError(f"non-standard JSON constant {name}")

    data = json.loads(capsys.readouterr().out, parse_constant=no_constants)  # strict JSON (RFC 8259)
    res = solve_molecule(str(path), basis="sto-3g", xc="lda", grid="coarse")
    assert set(data) == set(res.to_dict())
    assert data["total_energy"] == pytest.approx(res.total_energy, abs=1e-9)
    assert data["version"] == ks1d.__version__
    # H2/STO-3G is symmetric: no dipole, zero Mulliken charges (symmetry, exact)
    assert np.allclose(data["dipole"], 0, atol=1e-8)
    assert np.allclose(data["mulliken_charges"], 0, atol=1e-8)
