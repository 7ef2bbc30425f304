"""Timing of the radial solver over Z = 1-92 (LDA, restricted and spin-polarized).

Targets (issue 2): ≤ 30 s per sweep on a 2-core machine, median atom ≤ 0.2 s.  Times are
wall-clock per call of ks1d.solve_atom with the default ("normal") mesh; the optional
refined-mesh error estimate is timed separately on a few atoms.  Usage:

    python benchmarks/bench_radial_sweep.py [--spin restricted|polarized|both]
"""
import argparse
import statistics
import time

import ks1d


def sweep(spin):
    times, worst = [], []
    for Z in range(1, 93):
        t = time.perf_counter()
        res = ks1d.solve_atom(Z, xc="lda", spin=spin, estimate_error=False)
        dt = time.perf_counter() - t
        times.append(dt)
        worst.append((dt, res.element, res.iterations))
    worst.sort(reverse=True)
    print(f"{spin:>10s}: total {sum(times):6.2f} s, median {statistics.median(times):.3f} s, "
          f"mean {statistics.mean(times):.3f} s; slowest " +
          ", ".join(f"{el} {dt:.2f} s ({it} it)" for dt, el, it in worst[:3]))
    return times


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--spin", default="both", choices=("restricted", "polarized", "both"))
    args = ap.parse_args()
    ks1d.solve_atom("He", estimate_error=False)  # import and first-call overhead out of the timings
    spins = ("restricted", "polarized") if args.spin == "both" else (args.spin,)
    for spin in spins:
        sweep(spin)
    for sym in ("Ne", "Fe", "Xe"):
        t = time.perf_counter()
        ks1d.solve_atom(sym, xc="lda")
        t_est = time.perf_counter() - t
        t = time.perf_counter()
        ks1d.solve_atom(sym, xc="lda", estimate_error=False)
        print(f"{sym}: with error estimate {t_est:.3f} s, without {time.perf_counter() - t:.3f} s")


if __name__ == "__main__":
    main()
