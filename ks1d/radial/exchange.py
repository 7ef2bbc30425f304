"""Exact (Fock) exchange for spherically averaged atoms on the radial mesh.

With f_bσ electrons of spin σ spread evenly over the 2l_b+1 sublevels of
sub-shell b, the exchange energy is (Slater's average-of-configuration form;
J. C. Slater, Quantum Theory of Atomic Structure, Vol. I (1960);
C. Froese Fischer, The Hartree–Fock Method for Atoms (1977))

    E_x = −½ Σ_σ Σ_ab f_aσ f_bσ Σ_k (l_a k l_b; 0 0 0)² R^k(ab; ba),
    R^k(ab; ba) = ∫∫ u_a(r) u_b(r) r<^k / r>^(k+1) u_b(r′) u_a(r′) dr dr′,

with k = |l_a − l_b|, …, l_a + l_b in steps of 2 (Wigner 3j symbol with zero
projections).  The exchange operator on a function of angular momentum l
and spin σ has the matrix

    K_ij = −Σ_b f_bσ Σ_k (l k l_b; 0 0 0)² ∫ φ_i u_b Y^k[u_b φ_j] dr,

where Y^k[g](r) = ∫ g(r′) r<^k/r>^(k+1) dr′.  U = r Y^k solves

    U″ − k(k+1) U / r² = −(2k+1) g / r,  U(0) = 0,  U(r_max) = ∫ g r^k dr / r_max^k,

which is solved in the finite-element basis itself, so with
G_im = ∫ φ_i u_b φ_m / r dr and A_k = ∫ (φ′φ′ + k(k+1) φφ/r²) dr:

    K^(b,k) = −f_b c_k [ (2k+1) G A_k⁻¹ G + boundary terms ].

Only the same-spin sub-shells contribute; a spin-restricted atom uses
f_bσ = f_b / 2.
"""
from __future__ import annotations

from functools import lru_cache
from math import factorial, sqrt

import numpy as np
import scipy.linalg as sl

from .mesh import RadialMesh


@lru_cache(maxsize=None)
def wigner3j_zero(l1: int, l2: int, l3: int) -> float:
    """Wigner 3j symbol (l1 l2 l3; 0 0 0).

    Zero unless the triangle condition holds and L = l1 + l2 + l3 is even; then
    (−1)^(L/2) √[(L−2l1)!(L−2l2)!(L−2l3)!/(L+1)!] (L/2)! / [(L/2−l1)!(L/2−l2)!(L/2−l3)!]
    (A. R. Edmonds, Angular Momentum in Quantum Mechanics (1957), eq. 3.7.17).
    """
    L = l1 + l2 + l3
    if L % 2 or l3 < abs(l1 - l2) or l3 > l1 + l2:
        return 0.0
    g = L // 2
    val = sqrt(factorial(L - 2 * l1) * factorial(L - 2 * l2) * factorial(L - 2 * l3) / factorial(L + 1))
    val *= factorial(g) / (factorial(g - l1) * factorial(g - l2) * factorial(g - l3))
    return (-1) ** g * val


def exchange_multipoles(l: int, lb: int) -> list[tuple[int, float]]:
    """(k, (l k l_b; 0 0 0)²) for the non-vanishing multipoles."""
    return [(k, wigner3j_zero(l, k, lb) ** 2) for k in range(abs(l - lb), l + lb + 1, 2)]


class ExchangeBuilder:
    """Builds exchange matrices K^(l) from occupied radial orbitals on one mesh."""

    def __init__(self, mesh: RadialMesh):
        self.mesh = m = mesh
        one = np.ones_like(m.r)
        self._stiff = m.assemble(m.derivative_blocks(one))
        self._cent = m.assemble(m.weighted_blocks(1.0 / m.r**2))
        self._factors: dict[int, tuple] = {}
        # the Lagrange function of the node at r_max (dropped from the basis) lifts the boundary value
        p = m.order
        self._phi_last = np.zeros_like(m.r)
        self._phi_last[-1] = m.phi[:, p]
        self._dphi_last = np.zeros_like(m.r)
        self._dphi_last[-1] = m.dphi[-1, :, p]

    def _inverse(self, k: int):
        """A_k⁻¹ (dense, once per k) and its action on the boundary column."""
        if k not in self._factors:
            m = self.mesh
            A = self._stiff + k * (k + 1) * self._cent
            # column of A coupling each basis function to the boundary node
            a_last = m.assemble_vector(
                np.einsum("eqi,eq->ei", m.dphi, m.w * self._dphi_last)
                + k * (k + 1) * np.einsum("qi,eq->ei", m.phi, m.w * self._phi_last / m.r**2)
            )
            Ainv = sl.cho_solve(sl.cho_factor(A, lower=True), np.eye(m.size))
            self._factors[k] = (Ainv, Ainv @ a_last)
        return self._factors[k]

    def matrices(self, occupied: list[tuple[int, np.ndarray, float]], ls: list[int]) -> dict[int, np.ndarray]:
        """K^(l) for each l in ``ls`` from occupied (l_b, u_b at the quadrature points, f_bσ).

        With U_j = A⁻¹[(2k+1) G_j − a β_j] + φ_last β_j (β: boundary values),
        K^(b,k) = (2k+1) G A⁻¹ G + (g_last − G A⁻¹ a) βᵀ; G is banded, so
        both products with the dense A⁻¹ cost O(N² p).
        """
        m = self.mesh
        out = {l: np.zeros((m.size, m.size)) for l in ls}
        for lb, ub, fb in occupied:
            if fb == 0.0:
                continue
            G = m.assemble_sparse(m.weighted_blocks(ub / m.r))
            g_last = m.assemble_vector(np.einsum("qi,eq->ei", m.phi, m.w * ub * self._phi_last / m.r))
            ks = sorted({k for l in ls for k, _ in exchange_multipoles(l, lb)})
            for k in ks:
                Ainv, Ainv_a = self._inverse(k)
                # boundary value of U_j = r Y^k[u_b φ_j] at r_max: multipole moment / r_max^k
                beta = m.assemble_vector(np.einsum("qi,eq->ei", m.phi, m.w * ub * m.r**k)) / m.r_max**k
                X = G @ Ainv  # (sparse @ dense) = G A⁻¹
                Kk = (2 * k + 1) * (G @ X.T).T + np.outer(g_last - G @ Ainv_a, beta)
                Kk = 0.5 * (Kk + Kk.T)
                for l in ls:
                    for kk, c in exchange_multipoles(l, lb):
                        if kk == k:
                            out[l] -= fb * c * Kk
        return out
