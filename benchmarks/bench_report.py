"""Wall time of ``ks1d report`` on the README example (issue 14: ≤ 60 s cold on a 2-core machine).

Runs, in one process on this machine:

1. the cold report: examples/report_cu_site.xyz (Cu, C, O, N; bonded pairs with data: CO, N2), the
   default ladder (LDA, PBE, PBEsol, r2SCAN, PBE0, B3LYP — six functionals with the full battery — plus
   HSE06 with Gaussian aug-cc-pVTZ atoms and the diatomics), planned basis def2-TZVP, a fresh store, a process
   pool of ``--workers`` (default 2); printed: wall time, jobs, the ratio to the 60 s target, the job-seconds
   per kind (summed over the workers), the longest jobs, and the load average before and after (other
   processes on the machine slow the report down: the ratio holds only for an otherwise idle machine);
2. the warm report: the same command on the same store (every job reused);
3. the Gaussian part against pyscf on the same jobs: the diatomics' energy-and-gradient points and their
   atoms of two of the functionals (PBE, PBE0), each run by ks1d's ``solve_molecule`` (with the gradient
   for the molecule points) and by pyscf's UKS/RKS (grids.level 3, its default; ``nuc_grad_method`` for the
   molecule points) one after the other in this process, single-threaded; printed: the summed wall times and
   their ratio ks1d/pyscf.

Usage:  python benchmarks/bench_report.py [--workers N] [--skip-pyscf]
"""
from __future__ import annotations

import os
import sys

for _v in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ[_v] = "1"

import tempfile  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

ROOT = Path(__file__).resolve().parent.parent
EXAMPLE = ROOT / "examples" / "report_cu_site.xyz"
TARGET_S = 60.0


def _arg(name: str, default: str) -> str:
    return sys.argv[sys.argv.index(name) + 1] if name in sys.argv else default


def gaussian_part_vs_pyscf(outcome, functionals=("pbe", "pbe0")) -> None:
    import numpy as np
    from pyscf import dft, gto

    from ks1d import solve_molecule
    from ks1d.sweep.properties.datasets import diatomic

    points = []
    for j in outcome.data.jobs:
        if j.property != "diatomic_survey" or j.functional not in functionals or j.status != "done":
            continue
        mol = diatomic(j.system)
        a, b = mol.symbols
        for c in j.calculations:
            if "(energy and gradient" in c["label"]:
                points.append((j.functional, f"{a} 0 0 0; {b} 0 0 {c['r_angstrom']}", mol.multiplicity - 1, True))
            elif c["label"].endswith(f"atom in {outcome.plan.diatomic_basis}"):
                points.append((j.functional, f"{c['species']} 0 0 0", c["multiplicity"] - 1, False))
    points = list(dict.fromkeys(points))
    basis = outcome.plan.diatomic_basis
    t_ks = t_py = 0.0
    worst = worst_g = 0.0
    for xc, atoms, spin, grad in points:
        lines = [ln.split() for ln in atoms.split(";")]
        xyz = f"{len(lines)}\n\n" + "\n".join(" ".join(ln) for ln in lines) + "\n"
        t0 = time.perf_counter()
        r_ks = solve_molecule(xyz, basis=basis, xc=xc, multiplicity=spin + 1, gradient=grad)
        t_ks += time.perf_counter() - t0
        t0 = time.perf_counter()
        m = gto.M(atom=atoms, basis=basis, spin=spin, verbose=0)
        mf = (dft.UKS if spin else dft.RKS)(m)
        mf.xc = {"pbe": "pbe,pbe", "pbe0": "pbe0"}[xc]
        e_py = mf.kernel()
        if grad:
            g_py = mf.nuc_grad_method().kernel()
            worst_g = max(worst_g, float(np.abs(np.asarray(r_ks.gradient) - g_py).max()))
        t_py += time.perf_counter() - t0
        worst = max(worst, abs(r_ks.total_energy - e_py))
    print(f"Gaussian part ({len(points)} calculations: {', '.join(functionals)} energy-and-gradient points and "
          f"atoms, {basis}):")
    print(f"  ks1d {t_ks:7.1f} s   pyscf {t_py:7.1f} s   ratio ks1d/pyscf {t_ks / t_py:5.2f}   "
          f"max |dE| {worst:.1e} Ha, max |dg| {worst_g:.1e} Ha/bohr (grids differ: ks1d 'default', pyscf level 3)")


def main() -> None:
    from ks1d.report import functional_report
    from ks1d.sweep.engine.executors import PoolExecutor

    workers = int(_arg("--workers", "2"))
    load0 = os.getloadavg()
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "bench")
        t0 = time.perf_counter()
        cold = functional_report(structure=str(EXAMPLE), basis="def2-tzvp", output=out,
                                 executor=PoolExecutor(workers))
        t_cold = time.perf_counter() - t0
        load1 = os.getloadavg()
        n_full = sum(1 for f in cold.plan.functionals if not any(s.functional == f for s in cold.plan.skipped))
        print(f"ks1d report {EXAMPLE.name} --basis def2-tzvp: {len(cold.plan.elements)} elements "
              f"({' '.join(cold.plan.elements)}) x {len(cold.plan.functionals)} functionals "
              f"({n_full} with the full battery), diatomics {', '.join(cold.plan.diatomics)}")
        print(f"  load average (1 min) before {load0[0]:.2f}, after the cold run {load1[0]:.2f} "
              f"(this benchmark itself adds up to {workers}); {os.cpu_count()} cores")
        print(f"  cold: {t_cold:6.1f} s wall, {cold.jobs_run} jobs computed ({cold.jobs_failed} failed) on "
              f"{workers} workers; target {TARGET_S:.0f} s -> ratio {t_cold / TARGET_S:.2f}")
        t0 = time.perf_counter()
        warm = functional_report(structure=str(EXAMPLE), basis="def2-tzvp", output=out,
                                 executor=PoolExecutor(workers))
        print(f"  warm: {time.perf_counter() - t0:6.1f} s wall, {warm.jobs_reused} jobs reused, "
              f"{warm.jobs_run} computed")
        by_kind: dict[str, float] = {}
        for j in cold.data.jobs:
            by_kind[j.property] = by_kind.get(j.property, 0.0) + (j.seconds or 0.0)
        total = sum(by_kind.values())
        print(f"  job-seconds by kind (summed over workers, total {total:.1f}; total / workers = "
              f"{total / workers:.1f} s): "
              + ", ".join(f"{k} {v:.1f}" for k, v in sorted(by_kind.items(), key=lambda kv: -kv[1])))
        longest = sorted(cold.data.jobs, key=lambda j: -(j.seconds or 0.0))[:5]
        print("  longest jobs: " + ", ".join(f"{j.property} {j.system} {j.functional} {j.seconds:.1f} s"
                                            for j in longest))
        if "--skip-pyscf" not in sys.argv:
            gaussian_part_vs_pyscf(cold)


if __name__ == "__main__":
    main()
