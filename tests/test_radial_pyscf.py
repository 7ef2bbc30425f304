"""Radial basis-set limit against pyscf in a large even-tempered Gaussian basis (run at test time).

A Gaussian basis approaches the basis-set limit from above (variational principle), so
the radial energy must lie below pyscf's — by no more than the remaining basis and grid
error of the even-tempered set, measured at < 0.1 µHa for these sets (benchmark
benchmarks/bench_radial_vs_pyscf.py).  Spherical closed-shell atoms only need s and p
functions.
"""
import pytest

import ks1d

pytest.importorskip("pyscf")
from pyscf_atoms import pyscf_atom_energy  # noqa: E402


@pytest.mark.parametrize("symbol, alias, libxc_id, lmax", [
    ("He", "pbe", "gga_x_pbe,gga_c_pbe", 0),
    ("Ne", "lda", "lda_x,lda_c_vwn", 1),
])
def test_radial_limit_lies_just_below_large_gaussian_basis(symbol, alias, libxc_id, lmax):
    e_ref = pyscf_atom_energy(symbol, libxc_id, lmax)
    e = ks1d.solve_atom(symbol, xc=alias, spin="restricted", estimate_error=False).total_energy
    assert e <= e_ref + 2e-8  # below, up to pyscf's own grid error
    assert e_ref - e < 3e-6  # within a few µHa
