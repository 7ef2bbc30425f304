"""Analytic nuclear gradients: speed against pyscf, cost relative to the SCF, accuracy numbers.

    OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 python benchmarks/bench_gradient.py [speed] [grid] [fdstep] [deviations]

(no argument: all sections).  Sections:

speed       one gradient of ks1d and of pyscf (``pyscf.grad``, reference only) on the same molecule,
            basis and functional, single-threaded, in the same run; the ratio is printed.  Grids:
            ks1d "default" and pyscf level 3 (its default); each code's gradient error is measured
            against pyscf at grid level 7 (grid response there is negligible), so the ratio is
            read at stated accuracy.  ks1d's gradient includes the grid response, pyscf's does not
            (its default); the grid-response share of ks1d's time is printed too.  Also: one
            gradient relative to one SCF, for each code.
grid        size of the grid-response term (max |·|, Ha/bohr) and the translational-invariance
            defect |Σ_A ∂E/∂R_A| of the fixed-grid gradient, per grid level and functional.
fdstep      harmonic wavenumbers of water (PBE/6-31G, default grid) for finite-difference steps
            0.0025, 0.005 and 0.01 bohr: the step error of the default 0.005.
deviations  max |ks1d − pyscf| on a shared grid (fixed-grid part) and max |analytic − finite
            difference| (ks1d energies, step 1e-3 bohr) per functional, RKS and UKS.
"""
from __future__ import annotations

import os
import sys
import time

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
WATER = os.path.join(HERE, "data", "water.xyz")
BENZENE = os.path.join(HERE, "data", "benzene.xyz")
WATER_DISTORTED = "O 0.02 0 0.12\nH 0 0.80 -0.45\nH 0.03 -0.72 -0.50\n"
NH2 = "N 0 0 0.1\nH 0 0.80 -0.45\nH 0.05 -0.78 -0.50\n"


def _pyscf_mf(geom, basis, xc, multiplicity=1, level=3, grid=None):
    from pyscf import dft, gto, scf

    from ks1d.xc import resolve_functional

    mol = gto.M(atom=[(s, tuple(x)) for s, x in zip(geom.symbols, geom.coordinates)], unit="Bohr", basis=basis,
                spin=multiplicity - 1, verbose=0)
    func = resolve_functional(xc)
    if func.family == "hf":
        return (scf.RHF if multiplicity == 1 else scf.UHF)(mol)
    mf = (dft.RKS if multiplicity == 1 else dft.UKS)(mol)
    mf.xc = func.libxc
    if grid is not None:
        mf.small_rho_cutoff = 0.0
        mf.grids.coords, mf.grids.weights = grid.coords, grid.weights
    else:
        mf.grids.level = level
    mf.conv_tol = 1e-10
    return mf


def speed() -> None:
    from pyscf import lib

    from ks1d.gaussian.geometry import read_geometry
    from ks1d.gaussian.gradient import becke_weight_gradient
    from ks1d.gaussian.grid import build_grid
    from ks1d.gaussian.scf import solve_molecule

    lib.num_threads(1)
    print("== one gradient: ks1d (default grid, with grid response) vs pyscf (level 3, fixed grid); 1 thread")
    print(f"{'job':<28}{'ks1d grad/s':>12}{'pyscf grad/s':>13}{'ratio':>7}{'ks1d err':>10}{'pyscf err':>10}"
          f"{'resp. share':>12}{'grad/SCF ks1d':>14}{'grad/SCF pyscf':>15}")
    for name, path, basis, xc in (("water PBE/def2-SVP", WATER, "def2-svp", "pbe"),
                                  ("water PBE0/def2-SVP", WATER, "def2-svp", "pbe0"),
                                  ("water PBE0/def2-TZVP", WATER, "def2-tzvp", "pbe0"),
                                  ("benzene PBE/def2-SVP", BENZENE, "def2-svp", "pbe"),
                                  ("benzene PBE0/def2-SVP", BENZENE, "def2-svp", "pbe0")):
        geom = read_geometry(path)
        res = solve_molecule(geom, basis=basis, xc=xc, grid="default", gradient=True)
        t_grad = res.timings["gradient"]
        t_scf = res.timings["total"] - t_grad
        # the grid-response share: the Becke-weight derivative (the point-motion part is a by-product
        # of the fixed-grid contraction and costs nothing extra)
        mgrid = build_grid(geom, "default")
        t0 = time.perf_counter()
        becke_weight_gradient(mgrid, geom, np.ones(mgrid.size))
        t_resp = time.perf_counter() - t0
        mf = _pyscf_mf(geom, basis, xc)
        t0 = time.perf_counter()
        mf.kernel()
        t_pscf = time.perf_counter() - t0
        grad = mf.nuc_grad_method()
        t0 = time.perf_counter()
        g_p = grad.kernel()
        t_pgrad = time.perf_counter() - t0
        ref_mf = _pyscf_mf(geom, basis, xc, level=7)
        ref_mf.kernel()
        g_ref = ref_mf.nuc_grad_method().kernel()
        err_k = np.abs(np.asarray(res.gradient) - g_ref).max()
        err_p = np.abs(g_p - g_ref).max()
        share = t_resp / t_grad
        print(f"{name:<28}{t_grad:>12.2f}{t_pgrad:>13.2f}{t_grad / t_pgrad:>7.2f}{err_k:>10.1e}{err_p:>10.1e}"
              f"{share:>12.0%}{t_grad / t_scf:>14.2f}{t_pgrad / t_pscf:>15.2f}", flush=True)


def grid() -> None:
    from ks1d.gaussian.scf import solve_molecule

    print("== grid response (water 6-31G): max |grid-response term| and the defect without it, Ha/bohr")
    print(f"{'functional':<10}{'level':<10}{'points':>8}{'response':>11}{'defect w/o':>12}{'defect with':>13}")
    for xc in ("lda", "pbe", "r2scan", "pbe0", "wb97x"):
        for level in ("coarse", "default", "fine", "reference"):
            res = solve_molecule(WATER_DISTORTED, basis="6-31g", xc=xc, grid=level, gradient=True)
            resp = res.gradient_terms.grid_response
            fixed = np.asarray(res.gradient) - resp
            print(f"{xc:<10}{level:<10}{res.grid_points:>8}{np.abs(resp).max():>11.1e}"
                  f"{np.abs(fixed.sum(axis=0)).max():>12.1e}{np.abs(np.asarray(res.gradient).sum(axis=0)).max():>13.1e}",
                  flush=True)


def fdstep() -> None:
    from ks1d.frequencies import harmonic_frequencies
    from ks1d.optimize import optimize_molecule

    print("== wavenumbers (cm^-1) of water PBE/6-31G (default grid) against the finite-difference step")
    opt = optimize_molecule(WATER, basis="6-31g", xc="pbe", grid="default",
                            criteria={"max_force": 1e-6, "rms_force": 1e-6, "max_step": 1e-5, "rms_step": 1e-5,
                                      "energy_change": 1e-10})
    rows = {}
    for step in (0.0025, 0.005, 0.01):
        fr = harmonic_frequencies(opt.geometry, basis="6-31g", xc="pbe", grid="default", step=step,
                                  start=opt.result)
        rows[step] = np.array(fr.wavenumbers)
        print(f"step {step:<7g} " + "  ".join(f"{w:10.3f}" for w in fr.wavenumbers), flush=True)
    print(f"|0.005 − 0.0025| max {np.abs(rows[0.005] - rows[0.0025]).max():.3f} cm^-1; "
          f"|0.01 − 0.0025| max {np.abs(rows[0.01] - rows[0.0025]).max():.3f} cm^-1")


def deviations() -> None:
    from ks1d.gaussian.geometry import Geometry, read_geometry
    from ks1d.gaussian.grid import build_grid
    from ks1d.gaussian.scf import solve_molecule

    tight = {"residual_tolerance": 1e-9, "energy_tolerance": 1e-12}
    print("== max deviations, Ha/bohr: ks1d − pyscf on ks1d's coarse grid (fixed-grid part); analytic − central "
          "difference (all 3N coordinates, step 1e-3 bohr, coarse grid); 6-31G")
    for xc in ("lda", "pbe", "r2scan", "pbe0", "wb97x", "hf"):
        for label, xyz, mult in (("RKS water", WATER_DISTORTED, 1), ("UKS NH2", NH2, 2)):
            geom = read_geometry(xyz)
            res = solve_molecule(geom, basis="6-31g", xc=xc, multiplicity=mult, grid="coarse", gradient=True,
                                 scf=tight)
            mf = _pyscf_mf(geom, "6-31g", xc, mult, grid=build_grid(geom, "coarse"))
            mf.conv_tol, mf.conv_tol_grad = 1e-12, 1e-8
            mf.kernel()
            g_p = mf.nuc_grad_method().kernel()
            dev_p = np.abs(np.asarray(res.gradient) - res.gradient_terms.grid_response - g_p).max()
            fd = np.zeros_like(g_p)
            h = 1e-3
            for A in range(geom.natom):
                for x in range(3):
                    e = []
                    for s in (1, -1):
                        X = geom.coordinates.copy()
                        X[A, x] += s * h
                        e.append(solve_molecule(Geometry(geom.symbols, geom.numbers, X), basis="6-31g", xc=xc,
                                                multiplicity=mult, grid="coarse", scf=tight, start=res).total_energy)
                    fd[A, x] = (e[0] - e[1]) / (2 * h)
            dev_fd = np.abs(np.asarray(res.gradient) - fd).max()
            print(f"{xc:<8}{label:<11} vs pyscf {dev_p:.1e}   vs finite differences {dev_fd:.1e}   "
                  f"(max |g| {np.abs(g_p).max():.1e})", flush=True)


if __name__ == "__main__":
    sections = sys.argv[1:] or ["speed", "grid", "fdstep", "deviations"]
    for name in sections:
        {"speed": speed, "grid": grid, "fdstep": fdstep, "deviations": deviations}[name]()
        print()
