"""Basis-function values on the grid → densities → exchange–correlation matrices.

With basis functions φ_μ and a (spin) density matrix D^σ,

    ρ_σ(r)   = Σ_μν D^σ_μν φ_μ(r) φ_ν(r)
    ∇ρ_σ(r)  = 2 Σ_μν D^σ_μν φ_μ(r) ∇φ_ν(r)
    τ_σ(r)   = ½ Σ_μν D^σ_μν ∇φ_μ(r)·∇φ_ν(r)

and the semilocal potential matrix (generalised Kohn–Sham for τ) is

    V^σ_μν = ∫ [ ∂e/∂ρ_σ φ_μφ_ν + (2 ∂e/∂σ_σσ ∇ρ_σ + ∂e/∂σ_σσ′ ∇ρ_σ′)·∇(φ_μφ_ν)
               + ½ ∂e/∂τ_σ ∇φ_μ·∇φ_ν ] d³r.

The grid is processed block by block; in each block only the basis functions
whose shells reach the block are evaluated and contracted (screening), so no
array grows beyond (block points × significant functions).  Values of the
significant functions are kept between SCF iterations while they fit a
memory budget.
"""
from __future__ import annotations

import threading
from dataclasses import dataclass

import numpy as np

from ..xc import Functional, evaluate_xc
from .parallel import run_chunks

_BLK = 56  # the integral library's internal block of points for its screening table


@dataclass
class _Block:
    start: int
    stop: int
    shells: np.ndarray   # significant shell indices
    aos: np.ndarray      # significant basis-function indices
    values: np.ndarray | None = None  # cached (ncomp, npts, nsig)


class BasisOnGrid:
    """Screened, blocked basis-function values (and gradients) on a grid."""

    def __init__(self, basis, grid, deriv: int, cache_mb: float = 1024.0):
        self.basis = basis
        self.grid = grid
        self.deriv = deriv
        mol = basis.mol
        centres = np.asarray(mol.atom_coords())
        shell_centre = centres[basis.shell_atom]
        ao_loc = mol.ao_loc_nr()
        self._ao_loc = ao_loc
        self.blocks: list[_Block] = []
        budget = cache_mb * 1e6
        ncomp = 1 if deriv == 0 else 4
        for start, stop in grid.blocks:
            pts = grid.coords[start:stop]
            c = pts.mean(axis=0)
            rad = np.sqrt(((pts - c) ** 2).sum(axis=1).max())
            d = np.linalg.norm(shell_centre - c, axis=1) - rad
            shells = np.flatnonzero(d < basis.shell_extent)
            aos = np.concatenate([np.arange(ao_loc[s], ao_loc[s + 1]) for s in shells]) if len(shells) \
                else np.zeros(0, dtype=int)
            blk = _Block(start, stop, shells, aos)
            self.blocks.append(blk)
        self._cache_ok = budget
        self._used = 0.0
        self._lock = threading.Lock()
        self._ncomp = ncomp

    def values(self, blk: _Block) -> np.ndarray:
        """(ncomp, npts, nsig) values [φ, ∂xφ, ∂yφ, ∂zφ] of the significant functions."""
        if blk.values is not None:
            return blk.values
        mol = self.basis.mol
        pts = self.grid.coords[blk.start:blk.stop]
        npts = len(pts)
        mask = np.zeros(((npts + _BLK - 1) // _BLK, mol.nbas), dtype=np.uint8)
        mask[:, blk.shells] = 1
        name = "GTOval_sph" if self.deriv == 0 else "GTOval_sph_deriv1"
        ao = mol.eval_gto(name, pts, non0tab=mask)
        if self.deriv == 0:
            ao = ao[None]
        vals = np.ascontiguousarray(ao[:, :, blk.aos])
        size = vals.nbytes
        with self._lock:
            if self._used + size <= self._cache_ok:
                blk.values = vals
                self._used += size
        return vals


@dataclass(frozen=True)
class XCResult:
    """Semilocal exchange–correlation energy, potential matrices and electron count."""

    energy: float
    matrices: np.ndarray  # (ns, nao, nao)
    electrons: np.ndarray  # (ns,) ∫ρ_σ on the grid


def density_on_block(ao: np.ndarray, D: np.ndarray, want_grad: bool, want_tau: bool):
    """ρ, ∇ρ and τ of one density matrix on one block (see module docstring)."""
    c0 = ao[0] @ D
    rho = np.einsum("pi,pi->p", c0, ao[0])
    grad = tau = None
    if want_grad:
        grad = 2.0 * np.array([np.einsum("pi,pi->p", c0, ao[k]) for k in (1, 2, 3)])
    if want_tau:
        tau = np.zeros_like(rho)
        for k in range(1, 4):
            tau += np.einsum("pi,pi->p", ao[k] @ D, ao[k])
        tau *= 0.5
    return rho, grad, tau


def xc_matrices(func: Functional, bog: BasisOnGrid, dms: np.ndarray, potentials: bool = True) -> XCResult:
    """E_xc and V^σ_xc for spin density matrices ``dms`` (ns, nao, nao).

    ns = 1: ``dms[0]`` is the total density matrix (restricted);
    ns = 2: α and β density matrices.  Two passes over the blocks: densities
    on all points first, then one functional evaluation (libxc calls carry a
    fixed cost), then the potential matrices.  ``potentials=False`` stops after
    the energy (the matrices are left zero).
    """
    ns, nao, _ = dms.shape
    V = np.zeros((ns, nao, nao))
    if not func.has_semilocal:
        return XCResult(0.0, V, np.zeros(ns))
    gga, mgga = func.needs_gradient, func.needs_tau
    grid = bog.grid
    npt = grid.size
    rho = np.zeros((ns, npt))
    grad = np.zeros((ns, 3, npt)) if gga else None
    tau = np.zeros((ns, npt)) if mgga else None
    work = [blk for blk in bog.blocks if len(blk.aos)]

    def densities(chunk):
        for blk in chunk:
            ao = bog.values(blk)
            idx = blk.aos
            sl = slice(blk.start, blk.stop)
            for s in range(ns):
                r, g, t = density_on_block(ao, dms[s][np.ix_(idx, idx)], gga, mgga)
                rho[s, sl] = r
                if gga:
                    grad[s, :, sl] = g
                if mgga:
                    tau[s, sl] = t

    run_chunks(densities, work)
    w = grid.weights
    nelec = rho @ w
    xc = evaluate_xc(func, rho, grad, tau)
    exc = float(np.dot(xc.e, w))
    if not potentials:
        return XCResult(exc, V, nelec)
    # weighted potential ingredients on all points
    fr = 0.5 * w * xc.vrho                      # half: V + Vᵀ is taken at the end
    if gga:
        if ns == 1:
            fg = (2.0 * w * xc.vsigma[0]) * grad[0]
            fg = fg[None]
        else:
            fg = np.array([w * (2.0 * xc.vsigma[0] * grad[0] + xc.vsigma[1] * grad[1]),
                           w * (2.0 * xc.vsigma[2] * grad[1] + xc.vsigma[1] * grad[0])])
    if mgga:
        ft = 0.25 * w * xc.vtau
    def potential_part(chunk):
        Vc = np.zeros((ns, nao, nao))
        for blk in chunk:
            ao = bog.values(blk)
            idx = blk.aos
            sl = slice(blk.start, blk.stop)
            ix = np.ix_(idx, idx)
            for s in range(ns):
                aow = ao[0] * fr[s, sl, None]
                if gga:
                    f = fg[s][:, sl]
                    aow += ao[1] * f[0, :, None] + ao[2] * f[1, :, None] + ao[3] * f[2, :, None]
                vsub = ao[0].T @ aow
                if mgga:
                    wt = ft[s, sl, None]
                    for k in range(1, 4):
                        vsub += ao[k].T @ (ao[k] * wt)
                Vc[s][ix] += vsub
        return Vc

    V = sum(run_chunks(potential_part, work))
    V = V + V.transpose(0, 2, 1)
    return XCResult(exc, V, nelec)


def potential_matrix(bog: BasisOnGrid, values: np.ndarray) -> np.ndarray:
    """V_μν = ∫ v(r) φ_μ(r) φ_ν(r) d³r for a local potential given on the grid points."""
    nao = bog.basis.nao
    w_all = bog.grid.weights

    def part(chunk):
        V = np.zeros((nao, nao))
        for blk in chunk:
            ao = bog.values(blk)[0]
            f = w_all[blk.start:blk.stop] * values[blk.start:blk.stop]
            V[np.ix_(blk.aos, blk.aos)] += ao.T @ (ao * f[:, None])
        return V

    return sum(run_chunks(part, [blk for blk in bog.blocks if len(blk.aos)]))
