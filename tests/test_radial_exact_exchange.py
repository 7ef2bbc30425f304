"""Exact exchange, hybrids and meta-GGAs in the radial solver against outside references."""
import pytest

import ks1d
from ks1d.errors import UnsupportedFunctional
from ks1d.reference.data import reference_table

HF = {v.key: v for v in reference_table("hf_limit_total_energy")}
FAST_HF = ["He", "Be", "Ne", "Mg", "Ar", "Ca", "Zn", "Kr"]


@pytest.mark.parametrize("symbol", FAST_HF)
def test_hartree_fock_matches_numerical_hf_limit(symbol):
    # numerical HF-limit energies of closed-shell atoms (from memory; sources in
    # ks1d/reference/hf_limit.csv: Saito, ADNDT 95, 836 (2009); Bunge et al., ADNDT 53, 113 (1993)),
    # tabulated to 1 µHa
    res = ks1d.solve_atom(symbol, xc="hf", spin="restricted", estimate_error=False)
    assert res.total_energy == pytest.approx(HF[symbol].value, abs=1e-6)
    # Hartree-Fock obeys the virial theorem exactly: -V/T = 2 (Fock, 1930; textbook)
    assert res.virial_ratio == pytest.approx(2.0, abs=1e-8)


def test_hydrogen_hartree_fock_is_exact():
    # one electron: exchange cancels the self-Hartree energy and E = -1/2 exactly (textbook)
    res = ks1d.solve_atom("H", xc="hf", estimate_error=False)
    assert res.total_energy == pytest.approx(-0.5, abs=1e-9)
    assert res.components["exact_exchange"] == pytest.approx(-res.components["hartree"], abs=1e-8)
    assert res.components["hartree"] == pytest.approx(5 / 16, abs=1e-8)  # 5/16 for the 1s density (textbook)


pytest.importorskip("pyscf")
from pyscf_atoms import pyscf_atom_energy  # noqa: E402


@pytest.mark.parametrize("symbol, alias, libxc_id, lmax, tol", [
    ("He", "pbe0", "hyb_gga_xc_pbeh", 0, 3e-6),
    ("He", "r2scan", "mgga_x_r2scan,mgga_c_r2scan", 0, 3e-6),
    ("Ne", "b3lyp", "hyb_gga_xc_b3lyp", 1, 3e-6),
    ("Ne", "tpss", "mgga_x_tpss,mgga_c_tpss", 1, 5e-6),
])
def test_hybrid_and_meta_gga_limits_lie_just_below_large_gaussian_basis(symbol, alias, libxc_id, lmax, tol):
    # pyscf (run now) with an even-tempered s,p basis approaches the basis-set limit from above
    e_ref = pyscf_atom_energy(symbol, libxc_id, lmax)
    e = ks1d.solve_atom(symbol, xc=alias, spin="restricted", estimate_error=False).total_energy
    assert e <= e_ref + 2e-8
    assert e_ref - e < tol


def test_range_separated_hybrids_are_refused_with_a_clear_message():
    with pytest.raises(UnsupportedFunctional, match="range-separated.*radial solver"):
        ks1d.solve_atom("Ne", xc="hse06")
