"""Wall time of ``ks1d check --quick``, and of ks1d against pyscf on the suite's shared jobs.

Measured in one run:

1. ``ks1d check --quick --json`` in a fresh process (imports included), N times;
   target: < 60 s on a 2-core machine (issue 5, item 3).
2. Per check: the seconds each check spent (ks1d plus, where present, the
   pyscf reference), as recorded by the suite.
3. The same job in both codes, timed back to back in this process with one
   BLAS/OpenMP thread (the suite's setting) and the ratio ks1d/pyscf:
   * He PBE: radial solver vs pyscf RKS in the even-tempered basis used as
     the radial reference (not the same discretisation: the pyscf job is the
     reference calculation the check pays for);
   * water PBE/6-31G: ks1d Gaussian vs pyscf RKS on ks1d's grid.

Usage:  python benchmarks/bench_check_quick.py [--repeat N]
"""
from __future__ import annotations

import json
import subprocess
import sys
import time


def time_cli(repeat: int) -> list[float]:
    code = ("import sys; from ks1d import cli; "
            "cli.COMMANDS = tuple(dict.fromkeys(cli.COMMANDS + ('check',))); "
            "sys.exit(cli.main(['check', '--quick', '--json']))")
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
        times.append(time.perf_counter() - t0)
        data = json.loads(p.stdout)
        print(f"  run: {times[-1]:6.1f} s wall, suite {data['seconds']:.1f} s, exit {p.returncode}, "
              f"{data['n_checks'] - data['n_failed']}/{data['n_checks']} passed")
    return times, data


def time_pairs() -> None:
    import ks1d
    from ks1d.threads import single_threaded
    from ks1d.validate.checks import WATER
    from ks1d.validate.pyscf_reference import even_tempered_atom_energy, molecule_energy

    with single_threaded():
        ks1d.solve_atom("He", xc="pbe", spin="restricted", estimate_error=False)  # warm-up (imports, libxc)
        t0 = time.perf_counter()
        ks1d.solve_atom("He", xc="pbe", spin="restricted", estimate_error=False)
        t_ks = time.perf_counter() - t0
        t0 = time.perf_counter()
        even_tempered_atom_energy("He", "gga_x_pbe,gga_c_pbe", lmax=0, restricted=True)
        t_py = time.perf_counter() - t0
        print(f"  He PBE         ks1d radial {t_ks:6.2f} s   pyscf even-tempered {t_py:6.2f} s   "
              f"ratio {t_ks / t_py:5.2f}")
        ks1d.solve_molecule(WATER, basis="6-31g", xc="pbe")
        t0 = time.perf_counter()
        ks1d.solve_molecule(WATER, basis="6-31g", xc="pbe")
        t_ks = time.perf_counter() - t0
        t0 = time.perf_counter()
        molecule_energy(WATER, "6-31g", "gga_x_pbe,gga_c_pbe")
        t_py = time.perf_counter() - t0
        print(f"  water PBE/6-31G ks1d       {t_ks:6.2f} s   pyscf same grid     {t_py:6.2f} s   "
              f"ratio {t_ks / t_py:5.2f}  (pyscf time includes building ks1d's grid)")


def main() -> None:
    repeat = int(sys.argv[sys.argv.index("--repeat") + 1]) if "--repeat" in sys.argv else 3
    print(f"ks1d check --quick, {repeat} fresh processes:")
    times, data = time_cli(repeat)
    print(f"  wall time: min {min(times):.1f} s, max {max(times):.1f} s (target < 60 s)")
    print("slowest checks (seconds recorded by the suite):")
    for c in sorted(data["checks"], key=lambda c: -c["seconds"])[:6]:
        print(f"  {c['seconds']:6.2f} s  {c['name']}")
    print("same job, ks1d vs pyscf (one thread):")
    time_pairs()


if __name__ == "__main__":
    main()
