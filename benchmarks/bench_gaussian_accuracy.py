"""Deviations of ks1d's Gaussian SCF from pyscf for the systems of tests/test_gaussian_vs_pyscf.py.

Prints E(ks1d) − E(pyscf), the largest dipole-component difference and the
⟨S²⟩ difference per system, with the same settings as the tests (ks1d
"fine" grid, pyscf level 6 for LDA/GGA; ks1d's default grid shared with
pyscf for hybrids and meta-GGAs).  The tests assert |ΔE| < 1e-6 Ha and
|Δμ| < 1e-4 e·bohr; this script reports the actual numbers.
"""
from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
spec = importlib.util.spec_from_file_location("tvp", HERE.parent / "tests" / "test_gaussian_vs_pyscf.py")
tvp = importlib.util.module_from_spec(spec)
spec.loader.exec_module(tvp)


def main() -> None:
    from ks1d.gaussian.geometry import read_geometry
    from ks1d.gaussian.grid import build_grid
    from ks1d.gaussian.scf import solve_molecule

    print(f"{'system':<18}{'basis':<9}{'grid':<8}{'dE / Ha':>11}{'max|d mu| / au':>16}{'d<S2>':>10}{'it':>4}")
    for shared, cases in ((False, tvp.CASES), (True, tvp.HYBRID_CASES)):
        for name, xyz, basis, xc, mult in cases:
            level = tvp.SHARED_GRID if shared else "fine"
            res = solve_molecule(xyz, basis=basis, xc=xc, multiplicity=mult, grid=level)
            grid = build_grid(read_geometry(xyz), level) if shared else None
            e, dip, s2 = tvp.pyscf_reference(xyz, basis, xc, mult, shared_grid=grid)
            print(f"{name:<18}{basis:<9}{'shared' if shared else 'own':<8}{res.total_energy - e:>11.1e}"
                  f"{np.abs(np.array(res.dipole) - dip).max():>16.1e}{res.spin_square - s2:>10.1e}"
                  f"{res.iterations:>4d}", flush=True)


if __name__ == "__main__":
    main()
