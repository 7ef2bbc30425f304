"""Exact (Fock) exchange for spherically averaged atoms on the radial mesh.

Sub-shells are spherically averaged: the f_aσ electrons of spin σ in sub-shell
a are spread over its g = 2l_a+1 sublevels, per-orbital occupation ν = f_aσ/g.
The exact-exchange energy is the average over all determinants of the
configuration (J. C. Slater, Quantum Theory of Atomic Structure, Vol. I
(1960); C. Froese Fischer, The Hartree–Fock Method for Atoms (1977)):

    E_x = −½ Σ_σ Σ_ab Σ_k w^k_ab R^k(ab; ba),
    R^k(ab; ba) = ∫∫ u_a(r) u_b(r) r<^k / r>^(k+1) u_b(r′) u_a(r′) dr dr′,
    a ≠ b:  w^k_ab = f_aσ f_bσ (l_a k l_b; 0 0 0)²,
    a = b:  w^k_aa = P g² (l k l; 0 0 0)² + (ν − P) s_k,
            s_k = Σ_m [c^k(lm, lm)]²,  c^k(lm, lm) = (−1)^m (2l+1) (l k l; 0 0 0)(l k l; −m 0 m),

with k = |l_a − l_b|, …, l_a + l_b in steps of 2.  P is the probability that
two distinct spin-orbitals of the sub-shell are both occupied
(:func:`pair_probability`).  Closed sub-shells and half- or fully-filled
polarized ones have P = ν = 1, where w^k_aa = f² (l k l; 0 0 0)² is the plain
spherical form.

The same average changes the sub-shell's Coulomb self-repulsion: pair
occupations ⟨n_i n_j⟩ = P instead of ν² add ½ Σ_k j^k F^k(aa) (F^k(aa) =
R^k(aa; aa)) to the Hartree energy of the spherical density
(:func:`average_configuration_weights`).  Only both together give Slater's
average energy; the exchange part alone leaves the k > 0 self-exchange
unbalanced, and HF energies of open p shells would fall below the energy of
their ³P term (N⁺ below the unrestricted single determinant).  A hybrid with
exact-exchange fraction a is taken as a·[E_H + E_x]_average + (1−a)·E_H[ρ] +
E_xc[ρ] with the semilocal part at the spherical density, so both corrections
carry the factor a; HF (a = 1) is the full average of configuration.

The exchange operator on a function of angular momentum l and spin σ, shared
by the sub-shells of that (σ, l) channel, has the matrix

    K_ij = −Σ_b f_bσ Σ_k (l k l_b; 0 0 0)² ∫ φ_i u_b Y^k[u_b φ_j] dr,

where Y^k[g](r) = ∫ g(r′) r<^k/r>^(k+1) dr′.  An open sub-shell a adds its own
correction Δ_a = −Σ_k d_k ∫ φ_i u_a Y^k[u_a φ_j] dr (d_k from
:func:`average_configuration_weights`), so it has the Fock operator F + Δ_a.
U = r Y^k solves

    U″ − k(k+1) U / r² = −(2k+1) g / r,  U(0) = 0,  U(r_max) = ∫ g r^k dr / r_max^k,

which is solved in the finite-element basis itself, so with
G_im = ∫ φ_i u_b φ_m / r dr and A_k = ∫ (φ′φ′ + k(k+1) φφ/r²) dr:

    K^(b,k) = −f_b c_k [ (2k+1) G A_k⁻¹ G + boundary terms ].

Only the same-spin sub-shells contribute; a spin-restricted atom uses
f_bσ = f_b / 2.
"""
from __future__ import annotations

from fractions import Fraction
from functools import cache
from math import factorial, sqrt

import numpy as np
import scipy.linalg as sl

from .mesh import RadialMesh


@cache
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


@cache
def wigner3j(j1: int, j2: int, j3: int, m1: int, m2: int, m3: int) -> float:
    """Wigner 3j symbol (j1 j2 j3; m1 m2 m3) for integer arguments, by Racah's formula

        (j1 j2 j3; m1 m2 m3) = δ(m1+m2+m3, 0) (−1)^(j1−j2−m3) Δ(j1 j2 j3)
            × √[(j1+m1)!(j1−m1)!(j2+m2)!(j2−m2)!(j3+m3)!(j3−m3)!]
            × Σ_t (−1)^t / [t! (j3−j2+t+m1)! (j3−j1+t−m2)! (j1+j2−j3−t)! (j1−t−m1)! (j2−t+m2)!],
        Δ(j1 j2 j3) = √[(j1+j2−j3)! (j1−j2+j3)! (−j1+j2+j3)! / (j1+j2+j3+1)!],

    t running over the integers for which all factorial arguments are ≥ 0
    (A. R. Edmonds, Angular Momentum in Quantum Mechanics (1957), eq. 3.7.3).
    The sum is done in exact rational arithmetic.
    """
    if m1 + m2 + m3 != 0 or min(j1, j2, j3) < 0:
        return 0.0
    if j3 < abs(j1 - j2) or j3 > j1 + j2 or abs(m1) > j1 or abs(m2) > j2 or abs(m3) > j3:
        return 0.0
    t_min = max(0, j2 - j3 - m1, j1 - j3 + m2)
    t_max = min(j1 + j2 - j3, j1 - m1, j2 + m2)
    s = Fraction(0)
    for t in range(t_min, t_max + 1):
        s += Fraction((-1) ** t, factorial(t) * factorial(j3 - j2 + t + m1) * factorial(j3 - j1 + t - m2)
                      * factorial(j1 + j2 - j3 - t) * factorial(j1 - t - m1) * factorial(j2 - t + m2))
    radicand = Fraction(factorial(j1 + j2 - j3) * factorial(j1 - j2 + j3) * factorial(-j1 + j2 + j3),
                        factorial(j1 + j2 + j3 + 1))
    radicand *= (factorial(j1 + m1) * factorial(j1 - m1) * factorial(j2 + m2) * factorial(j2 - m2)
                 * factorial(j3 + m3) * factorial(j3 - m3))
    # s² · radicand is rational: take one square root at the end
    mag = sqrt(float(s * s * radicand))
    sign = (-1) ** ((j1 - j2 - m3) % 2) * (1 if s >= 0 else -1)
    return float(sign * mag)


def gaunt_coefficient(k: int, l1: int, m1: int, l2: int, m2: int) -> float:
    """c^k(l1 m1, l2 m2) = √(4π/(2k+1)) ∫ Y*_{l1m1} Y_{k,m1−m2} Y_{l2m2} dΩ
    = (−1)^m1 √[(2l1+1)(2l2+1)] (l1 k l2; 0 0 0)(l1 k l2; −m1 m1−m2 m2)

    (Condon–Shortley coefficients; E. U. Condon and G. H. Shortley, The Theory
    of Atomic Spectra (1935); Edmonds (1957), eq. 4.6.3 for the integral).
    """
    return ((-1) ** (m1 % 2) * sqrt((2 * l1 + 1) * (2 * l2 + 1)) * wigner3j_zero(l1, k, l2)
            * wigner3j(l1, k, l2, -m1, m1 - m2, m2))


@cache
def self_exchange_sum(l: int, k: int) -> float:
    """s_k = Σ_m [c^k(lm, lm)]², the diagonal (m = m′) part of Σ_mm′ [c^k(lm, lm′)]² = (2l+1)² (l k l; 0 0 0)²."""
    return float(sum(gaunt_coefficient(k, l, m, l, m) ** 2 for m in range(-l, l + 1)))


def pair_probability(n: float, M: int) -> float:
    """Probability P that two given distinct spin-orbitals of a pool are both occupied.

    n electrons in M equivalent spin-orbitals, averaged over all C(M, n)
    determinants: P = n(n−1)/(M(M−1)).  For fractional n = k + x (0 < x < 1)
    the ensemble of the k- and (k+1)-electron averages with weights 1−x, x
    gives P = k(2n−k−1)/(M(M−1)), linear in n.  P is irrelevant (returned as 0)
    for M = 1, which has no pairs.
    """
    if M <= 1:
        return 0.0
    k = min(int(np.floor(n + 1e-12)), M)
    return k * (2 * n - k - 1) / (M * (M - 1))


def average_configuration_weights(l: int, f: float, n_pool: float, M_pool: int,
                                  spins: int) -> dict[int, tuple[float, float, float]]:
    """Self-interaction weights of one open sub-shell in one spin channel, per multipole k.

    The sub-shell holds f electrons of this spin in its g = 2l+1 sublevels
    (ν = f/g); they belong to a pool of n_pool electrons in M_pool spin-orbitals
    (polarized: the g orbitals of this spin, spins = 1; spin-restricted: all
    2g spin-orbitals of both spins, spins = 2, ν = n_pool/M_pool again).  With
    the pair probability P (:func:`pair_probability`) and t_k = (l k l; 0 0 0)²
    the average over determinants of the sub-shell's own two-electron energy is,
    per spin channel,

        E_aa = −½ Σ_k w^k R^k(aa; aa) + ½ Σ_k j^k F^k(aa),   F^k(aa) = R^k(aa; aa),
        w^k = P g² t_k + (ν − P) s_k                    (exchange: Σ_m ν K_mm + Σ_m≠m′ P K_mm′)
        j^k = (ν − P) s_k + spins (P − ν²) g² δ_k0      (Coulomb beyond J[ρ_spherical]),

    where j comes from the averages ⟨n_i n_j⟩ = P (i ≠ j) and ⟨n_i²⟩ = ν of the
    spin-orbital occupations, against the product ν² built into the Hartree
    energy of the spherical density (whose k > 0 multipoles vanish).  For
    integer n_pool the k = 0 part of j vanishes, and with the ½ n_pool² F⁰ of
    the spherical Hartree energy the sub-shell's two-electron energy becomes
    Slater's average energy of l^N,

        ½ n(n−1) F⁰ − ½ spins P g² Σ_{k>0} t_k F^k

    (J. C. Slater, Quantum Theory of Atomic Structure, Vol. I (1960)): for a
    polarized p² that is F⁰ − F²/5, the energy of the ³P term.  The exchange
    part alone (w with the spherical Hartree energy) would undercount the k > 0
    Coulomb self-repulsion and fall below the ³P energy by (ν − P) s_2 F²/2 = F²/25.

    Returns {k: (w^k, j^k, d^k)}, d^k = (w^k − j^k − f² t_k)/f being the
    coefficient of the correction Δ = −Σ_k d^k K^k[u_a] to the shared exchange
    operator, which uses f² t_k.
    """
    g = 2 * l + 1
    nu = f / g
    P = pair_probability(n_pool, M_pool)
    out = {}
    for k in range(0, 2 * l + 1, 2):
        t = wigner3j_zero(l, k, l) ** 2
        s = self_exchange_sum(l, k)
        w = P * g * g * t + (nu - P) * s
        j = (nu - P) * s + (spins * (P - nu * nu) * g * g if k == 0 else 0.0)
        d = (w - j - f * f * t) / f if f > 0 else 0.0
        out[k] = (w, j, d)
    return out


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

    def matrices(self, occupied: list[tuple[int, np.ndarray, float]], ls: list[int],
                 self_terms: dict | None = None):
        """K^(l) for each l in ``ls`` from occupied (l_b, u_b at the quadrature points, f_bσ).

        With U_j = A⁻¹[(2k+1) G_j − a β_j] + φ_last β_j (β: boundary values),
        K^(b,k) = (2k+1) G A⁻¹ G + (g_last − G A⁻¹ a) βᵀ; G is banded, so
        both products with the dense A⁻¹ cost O(N² p).

        ``self_terms`` maps an index into ``occupied`` to (coefficients c_b of
        u_b, {k: d^k}); then the return value is (K, Δ, R) with the open-shell
        corrections Δ_b = −Σ_k d^k K^k[u_b] and the integrals R_b = {k: R^k(bb; bb)}.
        """
        m = self.mesh
        out = {l: np.zeros((m.size, m.size)) for l in ls}
        deltas, integrals = {}, {}
        for ib, (lb, ub, fb) in enumerate(occupied):
            if fb == 0.0:
                continue
            own = self_terms.get(ib) if self_terms else None
            G = m.assemble_sparse(m.weighted_blocks(ub / m.r))
            g_last = m.assemble_vector(np.einsum("qi,eq->ei", m.phi, m.w * ub * self._phi_last / m.r))
            ks = sorted({k for l in ls for k, _ in exchange_multipoles(l, lb)})
            if own is not None:
                deltas[ib] = np.zeros((m.size, m.size))
                integrals[ib] = {}
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
                if own is not None and k in own[1]:
                    cb = own[0]
                    deltas[ib] -= own[1][k] * Kk
                    integrals[ib][k] = float(cb @ Kk @ cb)
        if self_terms is None:
            return out
        return out, deltas, integrals
