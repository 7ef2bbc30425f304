"""Sweep throughput: the same sweep with a 1-worker pool, a 2-worker pool and a 2-worker Dask LocalCluster.

    python benchmarks/bench_sweep_throughput.py [--repeat N]

The sweep: total energies of the atoms Li-Ar on the radial mesh (LDA and
PBE, 32 jobs) plus five G2-1 hydrides' atomization energies in def2-SVP (LDA
and PBE, 10 jobs).  Each configuration runs into a fresh store; wall time
includes starting the workers.  Printed: jobs/s, speed-up over one worker,
the parallel efficiency Σ(job seconds)/(wall × workers), and whether all
stored outputs are identical.  On a machine shared with other work the
speed-up is bounded by the cores actually free (see the load average printed).
"""
from __future__ import annotations

import argparse
import os
import sqlite3
import sys
import tempfile
import time

from ks1d.sweep import DaskExecutor, PoolExecutor, parse_spec, run_sweep

SPEC = """
name = "throughput"
functionals = ["lda", "pbe"]
[solver]
basis = "def2-svp"
[[study]]
property = "total_energy"
systems = ["Li", "Be", "B", "C", "N", "O", "F", "Ne", "Na", "Mg", "Al", "Si", "P", "S", "Cl", "Ar"]
[[study]]
property = "atomization_energy"
systems = ["g2-1:LiH", "g2-1:CH4", "g2-1:NH3", "g2-1:H2O", "g2-1:HF"]
"""


def outputs(path):
    db = sqlite3.connect(path)
    try:
        return dict(db.execute("SELECT key, outputs FROM jobs"))
    finally:
        db.close()


def job_seconds(path):
    db = sqlite3.connect(path)
    try:
        return db.execute("SELECT SUM(seconds) FROM jobs").fetchone()[0]
    finally:
        db.close()


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=1)
    args = ap.parse_args()
    spec = parse_spec(SPEC)
    n = len(spec.jobs())
    load = " ".join(f"{x:.1f}" for x in os.getloadavg())
    configs = [("pool, 1 worker", lambda: PoolExecutor(1)), ("pool, 2 workers", lambda: PoolExecutor(2)),
               ("Dask LocalCluster, 2 workers", lambda: DaskExecutor(workers=2))]
    results = {}
    busy = {}
    stored = {}
    with tempfile.TemporaryDirectory() as d:
        for name, make in configs:
            best = float("inf")
            for rep in range(args.repeat):
                store = os.path.join(d, f"{name.replace(' ', '_').replace(',', '')}_{rep}.sqlite")
                t0 = time.perf_counter()
                s = run_sweep(spec, store, make(), progress=False)
                wall = time.perf_counter() - t0
                if wall < best:
                    best, busy[name] = wall, job_seconds(store)
                if s.failed:
                    print(f"{name}: {s.failed} jobs failed", file=sys.stderr)
                stored[name] = outputs(store)
            results[name] = best
    base = results["pool, 1 worker"]
    print(f"sweep of {n} jobs on {os.cpu_count()} cores (best of {args.repeat}); "
          f"load average before: {load}, after: {' '.join(f'{x:.1f}' for x in os.getloadavg())}")
    print(f"{'executor':<30} {'wall/s':>8} {'jobs/s':>8} {'speed-up':>9} {'efficiency':>11}")
    workers = {"pool, 1 worker": 1, "pool, 2 workers": 2, "Dask LocalCluster, 2 workers": 2}
    for name, t in results.items():
        print(f"{name:<30} {t:8.1f} {n / t:8.2f} {base / t:9.2f} {busy[name] / (t * workers[name]):11.2f}")
    same = all(v == stored["pool, 1 worker"] for v in stored.values())
    print(f"stored outputs identical across executors: {same}")
    return 0 if same else 1


if __name__ == "__main__":
    sys.exit(main())
