"""Warm-started eigenpairs of banded symmetric pencils (inverse iteration with Rayleigh shifts).

Within an SCF the channel operators change little from one iteration to the
next, so each wanted eigenpair of H x = λ M x is refined from the previous one
by Rayleigh-quotient iteration (RQI):

    (H − σ M) y = M x,   x ← y / √(yᵀMy),   σ ← xᵀHx,

solved with a banded LU factorisation (O(N b²) per step for bandwidth b,
against O(N³) for a dense eigen-solve).  RQI converges cubically to the
eigenvalue nearest its start; that it is the wanted one is checked by the
number of sign changes of the (large-component) nodal values, which is the
state's node count n − l − 1 (Sturm oscillation; the finite-element
coefficients are nodal values).  Callers fall back to the dense solver when
a check fails.  (B. N. Parlett, The Symmetric Eigenvalue Problem (1980), ch. 4.)
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np
import scipy.linalg as sl


@lru_cache(maxsize=64)
def _band_index(n: int, bw: int, interleaved: bool):
    """Row/column indices (in the unpermuted matrix) of the (2bw+1, n) banded storage.

    ``interleaved``: the matrix has two blocks of n/2 unknowns (A, B) that are
    stored in the order A₀, B₀, A₁, B₁, … (bandwidth 2p+1 for the RKB pencil).
    """
    perm = np.arange(n)
    if interleaved:
        perm = np.empty(n, dtype=np.intp)
        perm[0::2], perm[1::2] = np.arange(n // 2), n // 2 + np.arange(n // 2)
    rows = np.zeros((2 * bw + 1, n), dtype=np.intp)
    cols = np.zeros((2 * bw + 1, n), dtype=np.intp)
    valid = np.zeros((2 * bw + 1, n), dtype=bool)
    j = np.arange(n)
    for d in range(-bw, bw + 1):  # storage row bw − d holds a_p[j − d, j]
        i = j - d
        ok = (i >= 0) & (i < n)
        rows[bw - d, ok] = perm[i[ok]]
        cols[bw - d, ok] = perm[j[ok]]
        valid[bw - d] = ok
    return rows, cols, valid, perm, np.argsort(perm)


def banded(a: np.ndarray, bw: int, interleaved: bool = False) -> np.ndarray:
    """LAPACK band storage ab[bw + i − j, j] = a_p[i, j] of a (permuted if ``interleaved``)."""
    rows, cols, valid, _, _ = _band_index(a.shape[0], bw, interleaved)
    return np.where(valid, a[rows, cols], 0.0)


def sign_changes(v: np.ndarray, rel: float = 1e-7) -> int:
    """Sign changes of v over the entries larger than rel·max|v| (the exponential tail is ignored)."""
    big = v[np.abs(v) > rel * np.max(np.abs(v))]
    return int(np.count_nonzero(np.signbit(big[1:]) != np.signbit(big[:-1])))


@lru_cache(maxsize=64)
def _interleaved_index(n: int, bw: int):
    """For the band storage of a 2×2 block matrix (blocks n × n) in interleaved order:
    per block (a, b) the storage mask and the local row/column indices."""
    N = 2 * n
    j = np.arange(N)
    out = {}
    rows = np.zeros((2 * bw + 1, N), dtype=np.intp)
    valid = np.zeros((2 * bw + 1, N), dtype=bool)
    for d in range(-bw, bw + 1):
        i = j - d
        ok = (i >= 0) & (i < N)
        rows[bw - d] = np.where(ok, i, 0)
        valid[bw - d] = ok
    cols = np.broadcast_to(j, rows.shape)
    for a in (0, 1):
        for b in (0, 1):
            mask = valid & (rows % 2 == a) & (cols % 2 == b)
            out[(a, b)] = (mask, rows[mask] // 2, cols[mask] // 2)
    return out


def interleaved_band(blocks, bw: int) -> np.ndarray:
    """Band storage of [[B00, B01], [B10, B11]] in the interleaved order (A₀, B₀, A₁, B₁, …)."""
    n = blocks[0][0].shape[0]
    ab = np.zeros((2 * bw + 1, 2 * n))
    for (a, b), (mask, ri, ci) in _interleaved_index(n, bw).items():
        ab[mask] = blocks[a][b][ri, ci]
    return ab


class BlockPencil:
    """The RKB pencil [[V, T], [T, W − T]] x = λ diag(S, T/2c²) x kept as blocks (no 2N dense matrix)."""

    def __init__(self, V, T, WmT, S, T2c, bw: int, ab_m: np.ndarray | None = None):
        self.V, self.T, self.WmT, self.S, self.T2c = V, T, WmT, S, T2c
        self.n, self.bw = V.shape[0], bw
        self.ab_h = interleaved_band(((V, T), (T, WmT)), bw)
        zero = np.zeros_like(S)
        self.ab_m = interleaved_band(((S, zero), (zero, T2c)), bw) if ab_m is None else ab_m
        _, _, _, self.perm, self.inv = _band_index(2 * self.n, bw, True)

    def H_dot(self, x: np.ndarray) -> np.ndarray:
        a, b = x[:self.n], x[self.n:]
        return np.concatenate([self.V @ a + self.T @ b, self.T @ a + self.WmT @ b])

    def M_dot(self, x: np.ndarray) -> np.ndarray:
        return np.concatenate([self.S @ x[:self.n], self.T2c @ x[self.n:]])

    def solve_shifted(self, sigma: float, rhs: np.ndarray) -> np.ndarray:
        y = sl.solve_banded((self.bw, self.bw), self.ab_h - sigma * self.ab_m, rhs[self.perm], check_finite=False)
        return y[self.inv]


def rayleigh_refine(pencil: BlockPencil, x: np.ndarray, sigma: float, tol: float = 1e-13, max_steps: int = 5):
    """RQI from (x, σ): returns (λ, x with xᵀMx = 1, converged).

    Converged when the shift stops moving, |λ − σ| ≤ tol·max(1, |λ|): the last
    solve then had a shift at the eigenvalue, so x is accurate to rounding.
    """
    lam = sigma
    for _ in range(max_steps):
        try:
            y = pencil.solve_shifted(sigma, pencil.M_dot(x))
        except (sl.LinAlgError, ValueError):
            return lam, x, False
        nrm = float(y @ pencil.M_dot(y))
        if not np.isfinite(nrm) or nrm <= 0.0:
            return lam, x, False
        x = y / np.sqrt(nrm)
        lam = float(x @ pencil.H_dot(x))
        if abs(lam - sigma) <= tol * max(1.0, abs(lam)):
            return lam, x, True
        sigma = lam
    return lam, x, False
