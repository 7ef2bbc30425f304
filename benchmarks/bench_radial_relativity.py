"""Speed of the relativistic radial Hamiltonians against the non-relativistic one (same run).

Targets (issue 11): scalar <= 1.5x and dirac <= 4x the non-relativistic time for Rn LDA (median of 3);
all 92 elements scalar-relativistic LDA spin-polarized <= 30 s in total.  Each Hamiltonian runs at its
default ("normal") mesh: the relativistic levels have more elements near the nucleus (point-nucleus
solutions behave as r^gamma, gamma < 1), so part of the ratio is the larger basis.  Usage:

    OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 python benchmarks/bench_radial_relativity.py [--sweep]
"""
import argparse
import os
import statistics
import time

import ks1d


def timed(**kw):
    t = time.perf_counter()
    res = ks1d.solve_atom(estimate_error=False, **kw)
    return time.perf_counter() - t, res


def ratios(symbol="Rn", xc="lda", repeats=3):
    base = None
    print(f"{symbol} {xc}, median of {repeats} (seconds; ratio to relativity='none')")
    for rel in ("none", "scalar", "x2c", "dirac"):
        spin = "restricted" if rel == "dirac" else "polarized"
        runs = [timed(element=symbol, xc=xc, relativity=rel, spin=spin) for _ in range(repeats)]
        med = statistics.median(t for t, _ in runs)
        res = runs[0][1]
        base = med if base is None else base
        print(f"  {rel:<7s} {med:7.3f} s  ratio {med / base:5.2f}  E = {res.total_energy:.8f}  "
              f"iterations {res.iterations}  basis {res.settings['basis_size']}")


def sweep():
    for rel in ("none", "scalar"):
        t0 = time.perf_counter()
        slow = []
        for Z in range(1, 93):
            t, res = timed(element=Z, xc="lda", relativity=rel, spin="polarized")
            slow.append((t, res.element))
        total = time.perf_counter() - t0
        slow.sort(reverse=True)
        print(f"Z = 1-92 LDA polarized, relativity {rel}: total {total:.1f} s; slowest " +
              ", ".join(f"{el} {t:.2f} s" for t, el in slow[:3]))


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--sweep", action="store_true", help="also time Z = 1-92 scalar-relativistic LDA")
    args = ap.parse_args()
    print(f"OMP_NUM_THREADS={os.environ.get('OMP_NUM_THREADS')}, load average {os.getloadavg()[0]:.2f}")
    ks1d.solve_atom("He", estimate_error=False)
    ratios()
    if args.sweep:
        sweep()


if __name__ == "__main__":
    main()
