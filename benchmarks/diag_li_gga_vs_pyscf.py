"""Diagnose the Li (spin-polarized) GGA gap between ks1d and pyscf (DEVELOPERS.md, "Li with GGAs").

Prints, for one functional (default PBE):

1. ks1d's energy functional on pyscf's converged orbitals (their values placed on the FEM nodes: the
   Lagrange basis coefficients are nodal values) against pyscf's own energy: do the codes evaluate
   the same functional on the same density?
2. ks1d's E_xc of its own density against an independent quadrature (4e5 log-spaced points,
   finite-difference gradients, libxc called directly through pyscf.dft.libxc);
3. pyscf's UKS energy in even-tempered s bases of decreasing ratio against ks1d's SCF energy;
4. whether pyscf's SCF is stationary for its own energy: ks1d's occupied orbitals projected (L², in an
   orthonormalised copy of pyscf's basis) onto pyscf's basis and evaluated with pyscf's own energy
   functional, against pyscf's SCF energy in that same basis, and pyscf's SCF (DIIS, then its
   second-order solver) restarted from that projected state.

Usage:  python benchmarks/diag_li_gga_vs_pyscf.py [ks1d-xc pyscf-xc]     (default: pbe pbe,pbe)
"""
from __future__ import annotations

import sys

import numpy as np
from pyscf import dft, gto
from pyscf.dft import libxc

import ks1d
from ks1d.occupations import build_configuration
from ks1d.radial.problem import AtomicProblem
from ks1d.radial.scf import PRECISION
from ks1d.xc import resolve_functional


def even_tempered(lo: float, hi: float, ratio: float) -> np.ndarray:
    n = int(np.ceil(np.log(hi / lo) / np.log(ratio))) + 1
    return lo * ratio ** np.arange(n)


def pyscf_li(pxc: str, lo: float = 0.01, hi: float = 1e7, ratio: float = 1.6, grid=(500, 50)):
    basis = {"Li": [[0, [a, 1.0]] for a in even_tempered(lo, hi, ratio)]}
    mol = gto.M(atom="Li 0 0 0", basis=basis, spin=1, verbose=0)
    mf = dft.UKS(mol)
    mf.xc = pxc
    mf.grids.atom_grid = grid
    mf.grids.prune = None
    mf.conv_tol = 1e-12
    return mol, mf, mf.kernel()


def ks1d_energy_of_pyscf_orbitals(xc: str, mol, mf) -> float:
    prob = AtomicProblem(3, build_configuration(3, 0, "polarized"), resolve_functional(xc), PRECISION["normal"])
    m, p = prob.mesh, prob.mesh.order
    nodes = np.zeros(m.nel * p + 1)
    for e in range(m.nel):
        nodes[e * p:e * p + p + 1] = m.node_r[e]
    rn = nodes[1:-1]
    pts = np.zeros((rn.size, 3))
    pts[:, 2] = rn
    ao = mol.eval_gto("GTOval", pts)
    orbitals = {}
    for ch in prob.channels:
        u = rn[:, None] * np.sqrt(4 * np.pi) * (ao @ mf.mo_coeff[ch.spin][:, :ch.count])
        orbitals[(ch.spin, ch.l)] = (u * np.sign(u[0]), np.zeros(ch.count))
    x, R = prob.state(orbitals, with_integrals=True)
    dens, K, _ = prob.unpack(x)
    return prob.energy(orbitals, dens, K, R)["total"]


def independent_exc(res, pxc: str) -> float:
    x = np.linspace(np.log(1e-7), np.log(0.998 * res.radial.mesh.r_max), 400001)
    r = np.exp(x)
    rho = res.radial.density_at(r)  # spins in order alpha, beta
    drho = np.gradient(rho, r, axis=1, edge_order=2)
    zero = np.zeros_like(r)
    up = np.array([rho[0], drho[0], zero, zero])
    down = np.array([rho[1], drho[1], zero, zero])
    exc = libxc.eval_xc(pxc, (up, down), spin=1, deriv=0)[0]
    return float(np.sum(exc * (rho[0] + rho[1]) * 4 * np.pi * r**3 * (x[1] - x[0])))


def projected_state(res, mol) -> np.ndarray:
    """Density matrices (alpha, beta) of ks1d's occupied orbitals projected onto mol's s basis (L² fit)."""
    S = mol.intor("int1e_ovlp")
    s, U = np.linalg.eigh(S)
    keep = s > 1e-13
    X = U[:, keep] / np.sqrt(s[keep])
    x = np.linspace(np.log(1e-7), np.log(40.0), 400001)
    r = np.exp(x)
    w = (x[1] - x[0]) * r**3 * 4 * np.pi  # d³r = 4π r² dr, dr = r dx
    pts = np.zeros((r.size, 3))
    pts[:, 2] = r
    ao = mol.eval_gto("GTOval", pts)
    dms = []
    for spin in ("alpha", "beta"):
        cols = []
        for (_n, _l, sp), (c, occ) in res.radial.coefficients.items():
            if sp != spin or occ < 1e-12:
                continue
            u, _ = res.radial.mesh.values_at(c, r)
            psi = u / (r * np.sqrt(4 * np.pi))
            cols.append(X @ (X.T @ (ao.T @ (w * psi))))
        C = np.array(cols).T
        ev, V = np.linalg.eigh(C.T @ S @ C)  # Löwdin-orthonormalise the projected orbitals
        C = C @ V @ np.diag(ev ** -0.5) @ V.T
        dms.append(C @ C.T)
    return np.array(dms)


def main() -> None:
    xc, pxc = (sys.argv[1], sys.argv[2]) if len(sys.argv) > 2 else ("pbe", "pbe,pbe")
    res = ks1d.solve_atom("Li", xc=xc, estimate_error=False)
    mol, mf, e_py = pyscf_li(pxc)
    e_cross = ks1d_energy_of_pyscf_orbitals(xc, mol, mf)
    print(f"Li {xc}: ks1d SCF {res.total_energy:.10f}  pyscf (ratio 1.6) {e_py:.10f}")
    print(f"1. ks1d functional on pyscf's orbitals minus pyscf's energy: {(e_cross - e_py) * 1e6:+.3f} uHa")
    exc_ind = independent_exc(res, pxc)
    print(f"2. ks1d E_xc {res.components['exchange_correlation']:.10f}  independent quadrature {exc_ind:.10f}  "
          f"diff {(res.components['exchange_correlation'] - exc_ind) * 1e9:+.2f} nHa")
    print("3. pyscf above ks1d (uHa):")
    for ratio in (1.6, 1.4, 1.25):
        for grid in ((500, 50), (1500, 50)):
            _, m2, e = pyscf_li(pxc, lo=0.005, hi=1e8, ratio=ratio, grid=grid)
            print(f"   ratio {ratio:<4}  {m2.mol.nao:3d} functions  grid {grid[0]:4d}  "
                  f"{(e - res.total_energy) * 1e6:+8.3f}")
    print("4. is pyscf's SCF stationary for its own energy? (uHa above ks1d)")
    for ratio in (1.6, 1.4):
        mol4, mf4, e4 = pyscf_li(pxc, lo=0.005, hi=1e8, ratio=ratio, grid=(800, 50))
        dm = projected_state(res, mol4)
        e_proj = mf4.energy_tot(dm=dm)
        mf5 = dft.UKS(mol4)
        mf5.xc, mf5.conv_tol = pxc, 1e-12
        mf5.grids.atom_grid, mf5.grids.prune = (800, 50), None
        e5 = mf5.kernel(dm0=dm)
        e6 = mf5.newton().kernel(mf5.mo_coeff, mf5.mo_occ)
        print(f"   ratio {ratio:<4}  pyscf SCF {(e4 - res.total_energy) * 1e6:+8.3f}  pyscf energy of the projected "
              f"ks1d state {(e_proj - res.total_energy) * 1e6:+8.3f}  "
              f"SCF restarted there {(e5 - res.total_energy) * 1e6:+8.3f}"
              f"  then second-order {(e6 - res.total_energy) * 1e6:+8.3f}")


if __name__ == "__main__":
    main()
