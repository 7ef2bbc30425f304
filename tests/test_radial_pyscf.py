"""Radial basis-set limit against pyscf in a large even-tempered Gaussian basis (run at test time).

A Gaussian basis approaches the basis-set limit from above (variational principle), so
the radial energy must lie below pyscf's — by no more than the remaining basis and grid
error of the even-tempered set, measured at < 0.1 µHa for these sets (benchmark
benchmarks/bench_radial_vs_pyscf.py).  Spherical closed-shell atoms only need s and p
functions.
"""
import numpy as np
import pytest

import ks1d

pyscf = pytest.importorskip("pyscf")
from pyscf import dft, gto  # noqa: E402


def even_tempered(lo, hi, ratio):
    n = int(np.ceil(np.log(hi / lo) / np.log(ratio))) + 1
    return lo * ratio ** np.arange(n)


def pyscf_energy(symbol, xc, lmax):
    shells = [[0, [a, 1.0]] for a in even_tempered(0.05, 1e7, 1.6)]
    if lmax >= 1:
        shells += [[1, [a, 1.0]] for a in even_tempered(0.05, 1e4, 1.6)]
    mol = gto.M(atom=f"{symbol} 0 0 0", basis={symbol: shells}, verbose=0)
    mf = dft.RKS(mol)
    mf.xc = xc
    mf.grids.atom_grid = (500, 50)
    mf.grids.prune = None
    mf.conv_tol = 1e-12
    return mf.kernel()


@pytest.mark.parametrize("symbol, alias, libxc_id, lmax", [
    ("He", "pbe", "gga_x_pbe,gga_c_pbe", 0),
    ("Ne", "lda", "lda_x,lda_c_vwn", 1),
])
def test_radial_limit_lies_just_below_large_gaussian_basis(symbol, alias, libxc_id, lmax):
    e_ref = pyscf_energy(symbol, libxc_id, lmax)
    e = ks1d.solve_atom(symbol, xc=alias, spin="restricted", estimate_error=False).total_energy
    assert e <= e_ref + 2e-8  # below, up to pyscf's own grid error
    assert e_ref - e < 3e-6  # within a few µHa
