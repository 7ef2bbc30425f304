"""Per-job overhead of the sweep machinery against the bare solver call.

    python benchmarks/bench_sweep_overhead.py [--repeat N]

Two cheap jobs — the LDA total energy of Be on the radial mesh and the LDA
energy of H2O in def2-SVP — timed in this process, single-threaded:

* the bare call: ks1d.solve_atom / ks1d.solve_molecule;
* the same job through ks1d.sweep.engine.worker.run_job (job decoding, property
  code, outcome dict), with the per-process memo cleared each time;
* an inline sweep of both jobs into a new store: what it takes beyond the two
  run_job calls is the runner's and the store's share (registering, one
  committed transaction per job);

and, for scale, pyscf's own RKS on the same H2O job (the ratio ks1d/pyscf).
"""
from __future__ import annotations

import argparse
import os
import statistics
import sys
import tempfile
import time


def _best(fn, repeat):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times), statistics.median(times)


def _paired(a, b, repeat):
    ta, tb = [], []
    for _ in range(repeat):
        for fn, out in ((a, ta), (b, tb)):
            t0 = time.perf_counter()
            fn()
            out.append(time.perf_counter() - t0)
    return (min(ta), statistics.median(ta)), (min(tb), statistics.median(tb))


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=15)
    args = ap.parse_args()

    from pyscf import lib
    from threadpoolctl import threadpool_limits

    import ks1d
    from ks1d.sweep import InlineExecutor, parse_spec, run_sweep
    from ks1d.sweep.engine.worker import run_job
    from ks1d.sweep.properties.calculations import clear_memo
    from ks1d.sweep.properties.registry import REGISTRY

    lib.num_threads(1)
    with threadpool_limits(1):
        spec = parse_spec("""
            functionals = ["lda"]
            [solver]
            precision = "normal"
            basis = "def2-svp"
            [[study]]
            property = "total_energy"
            systems = ["Be", "g2-1:H2O"]
        """)
        atom_job, mol_job = spec.jobs()
        water = mol_job.system.geometry_xyz()
        ks1d.solve_atom("Be", xc="lda")  # warm-up: imports, libxc set-up
        ks1d.solve_molecule(water, basis="def2-svp", xc="lda")

        def job_call(job):
            clear_memo()
            out = run_job(job.to_dict(), REGISTRY.ref)
            assert out["status"] == "done", out
            return out

        rows = []
        # interleaved, so that a change in machine load hits both alike
        bare_a, job_a = _paired(lambda: ks1d.solve_atom("Be", xc="lda"), lambda: job_call(atom_job), args.repeat)
        bare_m, job_m = _paired(lambda: ks1d.solve_molecule(water, basis="def2-svp", xc="lda"),
                                lambda: job_call(mol_job), args.repeat)
        rows.append(("Be, LDA, radial", bare_a, job_a))
        rows.append(("H2O, LDA, def2-SVP", bare_m, job_m))

        # the store: register + one committed transaction per job, measured on a sweep of these 2 jobs
        store_times = []
        for _ in range(args.repeat):
            with tempfile.TemporaryDirectory() as d:
                clear_memo()
                t0 = time.perf_counter()
                run_sweep(spec, os.path.join(d, "s.sqlite"), InlineExecutor(), progress=False)
                store_times.append(time.perf_counter() - t0)
        sweep_best = min(store_times)

        # direct measures, free of the solver's run-to-run noise:
        # (a) time inside run_job outside the solver call (outcome seconds - solver_seconds)
        inside = []
        for job in (atom_job, mol_job):
            for _ in range(3):
                o = job_call(job)
                inside.append(o["seconds"] - o["solver_seconds"])
        # (b) the store: register N jobs, then record each with its own committed transaction
        from ks1d.sweep import Store
        from ks1d.sweep.engine.jobs import Job, freeze_settings

        outcome = job_call(mol_job)
        n_store = 200
        fake_jobs = [Job(system=mol_job.system, property="total_energy", functional="lda",
                         settings=freeze_settings({"basis": "def2-svp", "benchmark_copy": i})) for i in range(n_store)]
        with tempfile.TemporaryDirectory() as d:
            with Store(os.path.join(d, "b.sqlite")) as st:
                t0 = time.perf_counter()
                st.register("bench", fake_jobs)
                t_reg = time.perf_counter() - t0
                t0 = time.perf_counter()
                for j in fake_jobs:
                    st.record(j.key, outcome, "inline")
                t_rec = time.perf_counter() - t0

        from pyscf import dft, gto

        mol = gto.M(atom=water.split("\n", 2)[2], basis="def2-svp", verbose=0)

        def pyscf_call():
            mf = dft.RKS(mol)
            mf.xc = "lda,vwn"
            return mf.kernel()

        pyscf_call()
        py_m = _best(pyscf_call, args.repeat)

    print(f"per-job overhead, single thread, best (median) of {args.repeat}; load average "
          f"{' '.join(f'{x:.1f}' for x in os.getloadavg())}")
    print(f"{'job':<22} {'bare call/s':>16} {'run_job/s':>16} {'overhead/ms':>12}")
    for name, bare, job in rows:
        print(f"{name:<22} {bare[0]:8.3f} ({bare[1]:.3f}) {job[0]:8.3f} ({job[1]:.3f}) "
              f"{1e3 * (job[0] - bare[0]):12.1f}")
    print(f"time inside run_job outside the solver: median {1e3 * statistics.median(inside):.2f} ms, "
          f"max {1e3 * max(inside):.2f} ms")
    print(f"store: register {1e3 * t_reg / n_store:.2f} ms/job (one transaction for all), "
          f"record + commit {1e3 * t_rec / n_store:.2f} ms/job (WAL, synchronous=FULL)")
    inline_sum = job_a[0] + job_m[0]
    print(f"inline sweep of both jobs into a new store: {sweep_best:.3f} s; beyond the two run_job calls "
          f"(opening and creating the store, the run record, two commits): {1e3 * (sweep_best - inline_sum):.0f} ms")
    print(f"H2O LDA/def2-SVP: ks1d {bare_m[0]:.3f} s, pyscf {py_m[0]:.3f} s, ratio ks1d/pyscf "
          f"{bare_m[0] / py_m[0]:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
