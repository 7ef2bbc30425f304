"""Wall time of ks1d's Gaussian SCF against pyscf on the same job, measured in one run.

Jobs (issue 3, item 8; issue 4, item 5): water cc-pVTZ PBE, benzene
def2-SVP PBE, benzene def2-TZVP PBE, benzene def2-SVP PBE0.  Both codes run
with their default settings (ks1d grid "default", pyscf grids.level 3 —
each code's own default accuracy), in the same run, each in a fresh
process (spawned one after the other) so that each code's peak memory is its
own.  Printed: wall times of the SCF call (ks1d: including grid, guess and
its radial atoms; pyscf: building the molecule and kernel()), the ratio ks1d/pyscf (target ≤ 1.0),
SCF iteration counts, the energy difference and peak resident memory (RSS
high-water mark of each process, including the ~150 MB of imported libraries).

Usage:  python benchmarks/bench_gaussian_speed.py [job ...] [--threads N]
        (--threads N sets OMP/OpenBLAS threads for both codes before import)
"""
from __future__ import annotations

import os
import sys

if "--threads" in sys.argv:
    _n = sys.argv[sys.argv.index("--threads") + 1]
    os.environ["OMP_NUM_THREADS"] = _n
    os.environ["OPENBLAS_NUM_THREADS"] = _n
    del sys.argv[sys.argv.index("--threads"):sys.argv.index("--threads") + 2]

import resource  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parent))

HERE = Path(__file__).resolve().parent
JOBS = {
    "water-cc-pvtz-pbe": ("water.xyz", "cc-pvtz", "pbe"),
    "benzene-def2-svp-pbe": ("benzene.xyz", "def2-svp", "pbe"),
    "benzene-def2-tzvp-pbe": ("benzene.xyz", "def2-tzvp", "pbe"),
    "benzene-def2-svp-pbe0": ("benzene.xyz", "def2-svp", "pbe0"),
}


def peak_rss_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def _run_one(code: str, job: str, queue) -> None:
    """Run one job with one code in a fresh process; report time, iterations, energy, peak RSS."""
    from ks1d.gaussian.geometry import read_geometry
    from ks1d.xc import resolve_functional

    fname, basis, xc = JOBS[job]
    path = HERE / "data" / fname
    base = peak_rss_mb()
    from pyscf import dft, gto  # both codes start with the integral library imported

    if code == "ks1d":
        from ks1d.gaussian.scf import solve_molecule

        t0 = time.perf_counter()
        res = solve_molecule(str(path), basis=basis, xc=xc)
        wall = time.perf_counter() - t0
        out = dict(wall=wall, iterations=res.iterations, energy=res.total_energy,
                   grid=res.grid_points, timings=res.timings)
    else:
        g = read_geometry(str(path))
        t0 = time.perf_counter()
        mol = gto.M(atom=[(s, tuple(x)) for s, x in zip(g.symbols, g.coordinates)], unit="Bohr",
                    basis=basis, verbose=0)
        mf = dft.RKS(mol)
        mf.xc = resolve_functional(xc).libxc
        e = mf.kernel()
        wall = time.perf_counter() - t0
        out = dict(wall=wall, iterations=mf.cycles, energy=e, grid=int(mf.grids.weights.size), timings={})
    out["peak_mb"] = peak_rss_mb()
    out["baseline_mb"] = base
    queue.put(out)


def run(job: str) -> dict:
    import multiprocessing as mp

    ctx = mp.get_context("spawn")
    results = {}
    for code in ("ks1d", "pyscf"):
        q = ctx.Queue()
        p = ctx.Process(target=_run_one, args=(code, job, q))
        p.start()
        results[code] = q.get()
        p.join()
    k, py = results["ks1d"], results["pyscf"]
    return dict(job=job, ks1d_s=k["wall"], pyscf_s=py["wall"], ratio=k["wall"] / py["wall"],
                ks1d_iterations=k["iterations"], pyscf_iterations=py["iterations"],
                delta_e=k["energy"] - py["energy"], ks1d_grid=k["grid"], pyscf_grid=py["grid"],
                ks1d_peak_mb=k["peak_mb"], pyscf_peak_mb=py["peak_mb"], timings=k["timings"])


def main(argv: list[str]) -> None:
    jobs = argv or list(JOBS)
    print(f"{'job':<24}{'ks1d/s':>8}{'pyscf/s':>9}{'ratio':>7}{'it ks1d':>8}{'it pyscf':>9}"
          f"{'dE/Ha':>10}{'grid ks1d':>10}{'grid pyscf':>11}{'RSS ks1d/MB':>12}{'RSS pyscf/MB':>13}")
    for job in jobs:
        r = run(job)
        print(f"{r['job']:<24}{r['ks1d_s']:>8.1f}{r['pyscf_s']:>9.1f}{r['ratio']:>7.2f}"
              f"{r['ks1d_iterations']:>8d}{r['pyscf_iterations']:>9d}{r['delta_e']:>10.1e}"
              f"{r['ks1d_grid']:>10d}{r['pyscf_grid']:>11d}{r['ks1d_peak_mb']:>12.0f}"
              f"{r['pyscf_peak_mb']:>13.0f}", flush=True)
        print("    ks1d timings: " + ", ".join(f"{k} {v:.2f}s" for k, v in r["timings"].items()), flush=True)


if __name__ == "__main__":
    main(sys.argv[1:])
