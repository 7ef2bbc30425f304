"""Radial spin-free X2C-1e against pyscf's sfX2C-1e in growing uncontracted even-tempered bases.

Prints, for Ar and Kr (HF), pyscf's energy above the radial value for a ladder of even-tempered
ratios and steepest s exponents; pyscf's speed of light (CODATA 2006) is passed to ks1d.  Usage:

    python benchmarks/bench_radial_relativity_pyscf.py [Ar] [Kr]
"""
import sys
import time

import numpy as np
from pyscf import gto, scf
from pyscf.data import nist

import ks1d

RANGES = {"Ar": [(0.05, 1e10), (0.05, 1e6)], "Kr": [(0.03, 1e11), (0.03, 1e7), (0.05, 1e4)]}
LADDER = {"Ar": [(2.2, 1e8), (2.2, 1e10), (1.8, 1e8), (1.8, 1e10), (1.8, 1e12), (1.6, 1e10)],
          "Kr": [(2.0, 1e10), (2.0, 1e11), (1.8, 1e10), (1.8, 1e11)]}


def basis(symbol, ranges, ratio, top):
    out = []
    for l, (lo, hi) in enumerate(ranges):
        hi = top if l == 0 else hi
        n = int(np.ceil(np.log(hi / lo) / np.log(ratio))) + 1
        out += [[l, [lo * ratio**k, 1.0]] for k in range(n)]
    return {symbol: out}


def main(argv):
    for symbol in argv or ["Ar", "Kr"]:
        rad = ks1d.solve_atom(symbol, xc="hf", spin="restricted", relativity="x2c", speed_of_light=nist.LIGHT_SPEED)
        print(f"{symbol} HF sfX2C-1e radial {rad.total_energy:.9f} Ha (mesh error estimate "
              f"{rad.error_estimate:.1e} Ha); pyscf c = {nist.LIGHT_SPEED}, ks1d default c = "
              f"{ks1d.radial.relativity.SPEED_OF_LIGHT}")
        for ratio, top in LADDER[symbol]:
            mol = gto.M(atom=f"{symbol} 0 0 0", basis=basis(symbol, RANGES[symbol], ratio, top), verbose=0)
            mf = scf.RHF(mol).sfx2c1e()
            mf.conv_tol = 1e-11
            t = time.perf_counter()
            e = mf.kernel()
            print(f"  ratio {ratio:3.1f}, steepest s {top:8.0e}: {mol.nao:4d} functions, E = {e:.9f}, "
                  f"E - radial = {(e - rad.total_energy) * 1e6:9.3f} µHa ({time.perf_counter() - t:.0f} s)")


if __name__ == "__main__":
    main(sys.argv[1:])
