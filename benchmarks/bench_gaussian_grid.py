"""Integration error of ks1d's named molecular grid levels (issue 3, item 2).

For each molecule the SCF total energy is computed at every named level
and compared with a much larger grid taken as converged ("converged":
250 radial points per atom for every row, 2030-point Lebedev rules outside
0.5 R_BS, 974 and 590 inside).  Targets: "default" within 1e-5 Ha and
"fine" within 1e-7 Ha of the converged grid.

Usage:  python benchmarks/bench_gaussian_grid.py [--quick]
        (the full run takes ~30 min on 2 cores, mostly benzene on the converged grid)
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

from ks1d.gaussian.grid import GRID_LEVELS, GridLevel
from ks1d.gaussian.scf import solve_molecule

HERE = Path(__file__).resolve().parent
CONVERGED = GridLevel("converged", (250, 250, 250, 250), 2030, 974, 590)

MOLECULES = [
    ("water", (HERE / "data" / "water.xyz").read_text(), "cc-pvdz", "pbe", 1),
    ("N2", "N 0 0 0\nN 0 0 1.0977\n", "cc-pvdz", "pbe", 1),
    ("methane", "C 0 0 0\nH 0.6276 0.6276 0.6276\nH -0.6276 -0.6276 0.6276\n"
                "H -0.6276 0.6276 -0.6276\nH 0.6276 -0.6276 -0.6276\n", "6-31g", "lda", 1),
    ("O2 triplet", "O 0 0 0\nO 0 0 1.2075\n", "6-31g", "pbe", 3),
    ("benzene", (HERE / "data" / "benzene.xyz").read_text(), "def2-svp", "pbe", 1),
]


def main(quick: bool) -> None:
    mols = MOLECULES[:2] if quick else MOLECULES
    levels = list(GRID_LEVELS)
    print(f"{'molecule':<12}{'basis':<10}{'xc':<5}" + "".join(f"{lv:>22}" for lv in levels))
    for name, xyz, basis, xc, mult in mols:
        kw = dict(basis=basis, xc=xc, multiplicity=mult, scf={"energy_tolerance": 1e-11, "residual_tolerance": 1e-8})
        ref = solve_molecule(xyz, grid=CONVERGED, **kw).total_energy
        cells = []
        for lv in levels:
            t0 = time.perf_counter()
            r = solve_molecule(xyz, grid=lv, **kw)
            cells.append(f"{r.total_energy - ref:+.1e} ({r.grid_points // 1000}k, {time.perf_counter() - t0:.0f}s)")
        print(f"{name:<12}{basis:<10}{xc:<5}" + "".join(f"{c:>22}" for c in cells), flush=True)
    print("entries: E(level) - E(converged grid) in hartree (points, wall time)")


if __name__ == "__main__":
    main("--quick" in sys.argv)
