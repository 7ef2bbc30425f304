"""pyscf reference energies of spherical closed-shell atoms in large even-tempered bases (test helper).

Uncontracted s exponents 0.05-1e7 and p exponents 0.05-1e4 in ratio 1.6, DFT grid
(500 radial, 50 angular) unpruned: within 0.1 µHa of the basis-set limit for Ne LDA
(benchmarks/bench_radial_vs_pyscf.py).  Spherical closed-shell atoms need only s and p functions.
"""
import numpy as np
from pyscf import dft, gto


def even_tempered(lo, hi, ratio):
    n = int(np.ceil(np.log(hi / lo) / np.log(ratio))) + 1
    return lo * ratio ** np.arange(n)


def pyscf_atom_energy(symbol, libxc_id, lmax):
    """pyscf RKS total energy (hartree) of a closed-shell atom in the even-tempered s(,p) basis."""
    shells = [[0, [a, 1.0]] for a in even_tempered(0.05, 1e7, 1.6)]
    if lmax >= 1:
        shells += [[1, [a, 1.0]] for a in even_tempered(0.05, 1e4, 1.6)]
    mol = gto.M(atom=f"{symbol} 0 0 0", basis={symbol: shells}, verbose=0)
    mf = dft.RKS(mol)
    mf.xc = libxc_id
    mf.grids.atom_grid = (500, 50)
    mf.grids.prune = None
    mf.conv_tol = 1e-12
    return mf.kernel()
