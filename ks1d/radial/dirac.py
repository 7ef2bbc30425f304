"""Four-component Dirac–Kohn–Sham atoms with j-resolved sub-shells (spherical, spin-restricted).

Per relativistic quantum number κ the radial Dirac–Kohn–Sham equation is the
restricted-kinetic-balance matrix problem of :mod:`ks1d.radial.relativity`,

    [ V      T_κ       ] [A]       [ S   0          ] [A]
    [ T_κ    W_κ − T_κ ] [B]  =  E [ 0   T_κ/(2c²)  ] [B],

with the full Kohn–Sham potential V = V_N + v_H + v_xc in both the large block
V_ij = ⟨φ_i|V|φ_j⟩ and the small block W_ij = (1/4c²)⟨s_i|V|s_j⟩ (s_i = φ′_i + κφ_i/r).
The electronic states are the eigenpairs above the N negative-energy ones.
The density holds both components,

    ρ(r) = Σ f [u_L² + u_S²] / (4π r²),   u_L = Σ A_iφ_i,   u_S = (1/2c) Σ B_i s_i,

(E. Engel, in Relativistic Electronic Structure Theory I, ed. P. Schwerdtfeger
(Elsevier, 2002), for relativistic density-functional theory of atoms; the
semilocal functional is evaluated on the total density, without relativistic
corrections other than those a functional such as lda_x_rel carries itself).
GGA potentials enter in weak form in both blocks,

    ⟨f_i|v_xc|f_j⟩ = ∫ [∂e/∂ρ f_if_j + g ((f_if_j)′ − 2 f_if_j/r)] dr,  g = 2 ∂e/∂σ ρ′,

for f = φ (large) and f = s/(2c) (small), which needs s′ — second derivatives of
the polynomial shape functions, exact.  The energy is

    E = Σ f [2AᵀT_κB − BᵀT_κB] + E_ne[ρ] + E_H[ρ] + E_xc[ρ]

(the first term is ⟨cα·p + (β − 1)c²⟩).  The atom is spin-restricted: σ_z does
not commute with the Dirac Hamiltonian, so spin densities ρ_↑, ρ_↓ are not
defined by j-resolved shells; a spin-polarised four-component treatment needs the
magnetisation density and breaks spherical symmetry.
"""
from __future__ import annotations

import numpy as np
import scipy.linalg as sl

from ..occupations import DiracConfiguration
from ..xc import Functional, evaluate_xc, resolve_functional
from .density import FOUR_PI
from .eigen import BlockPencil, rayleigh_refine, sign_changes
from .mesh import MeshSpec
from .poisson import hartree_energy
from .problem import AtomicProblem, thomas_fermi_potential
from .relativity import (
    SPEED_OF_LIGHT,
    j2_of_kappa,
    l_of_kappa,
    positive_energy_states,
    relativistic_kinetic,
    rkb_matrices,
    small_basis_dirac,
    small_gram_dirac,
)


class KappaChannel:
    """One κ block: its sub-shells (n, electrons) and the number of states to compute."""

    def __init__(self, kappa: int, shells: list[tuple[int, float]]):
        self.kappa = kappa
        self.l = l_of_kappa(kappa)
        self.j2 = j2_of_kappa(kappa)
        self.spin = 0
        self.shells = shells
        self.count = max(n for n, _ in shells) - self.l

    @property
    def key(self):
        return (0, self.kappa)


class DiracProblem(AtomicProblem):
    """The discretised four-component atom; reuses the non-relativistic Poisson, xc and mixing machinery."""

    relativity = "dirac"

    def __init__(self, Z: int, dcfg: DiracConfiguration, func: Functional, spec: MeshSpec,
                 interacting: bool = True, *, nucleus: str = "point", speed_of_light: float = SPEED_OF_LIGHT):
        super().__init__(Z, dcfg.scalar(), func, spec, interacting, nucleus=nucleus, speed_of_light=speed_of_light)
        self.dirac_config = dcfg
        by_kappa: dict[int, list] = {}
        for sh in dcfg.shells:
            by_kappa.setdefault(sh.kappa, []).append((sh.n, sh.occupation))
        order = sorted(by_kappa, key=lambda k: (l_of_kappa(k), j2_of_kappa(k)))
        self.channels = [KappaChannel(k, sorted(by_kappa[k])) for k in order
                         if any(f > 0 for _, f in by_kappa[k])]
        m = self.mesh
        one = np.ones_like(m.r)
        self._last: dict = {}
        self.dense_solves = 0
        self._ab_m: dict = {}  # banded metric per κ (interleaved (A_i, B_i) order, bandwidth 2p + 1)
        self._small = {}
        for ch in self.channels:
            s, ds = small_basis_dirac(m, ch.kappa)
            T = 0.5 * small_gram_dirac(m, s, one)
            _, M = rkb_matrices(self.S, T, self.S, T, self.c)
            self._small[ch.kappa] = (s, ds, T, M)

    # ---------------------------------------------------------------- Hamiltonians
    def _blocks(self, v: np.ndarray, g: np.ndarray | None) -> dict:
        """Large block and the RKB matrix of every κ channel for the local potential v (and GGA g)."""
        m = self.mesh
        vv = v if g is None else v - 2.0 * g / m.r
        blocks = m.weighted_blocks(vv)
        if g is not None:
            blocks = blocks + m.mixed_blocks(g)
        V = m.assemble(blocks)
        out = {}
        inv4c2 = 1.0 / (4.0 * self.c**2)
        for ch in self.channels:
            s, ds, T, _ = self._small[ch.kappa]
            wb = m.pair_blocks(s, vv, s)
            if g is not None:
                a = m.pair_blocks(ds, g, s)
                wb = wb + a + a.transpose(0, 2, 1)
            W = inv4c2 * m.assemble(wb)
            out[ch.key] = (V, T, W - T)
        return out

    def hamiltonians(self, pot: dict, K: dict | None = None) -> dict:
        v = self.v_nuc + pot["v_h"] + pot["vrho"][0]
        return self._blocks(v, None if pot["g"] is None else pot["g"][0])

    def diagonalise(self, H: dict, D: dict | None = None) -> dict:
        """Electronic eigenpairs of each κ channel; signs fixed so that u_L > 0 near the nucleus.

        After the first SCF iteration every state is refined from the previous one by
        Rayleigh-quotient iteration on the interleaved banded pencil (:mod:`ks1d.radial.eigen`),
        followed by a Rayleigh–Ritz step among the channel's states; the dense selected-eigenpair
        solve is the start and the fallback whenever a node count or convergence check fails.
        """
        out = {}
        for ch in self.channels:
            M = self._small[ch.kappa][3]
            res = self._warm(ch, H[ch.key])
            if res is None:
                V, T, WmT = H[ch.key]
                Hd, _ = rkb_matrices(self.S, T, V, WmT + T, self.c)
                E, X = positive_energy_states(Hd, M, ch.count)
                self.dense_solves += 1
            else:
                E, X = res
            X = X * np.where(X[0] < 0, -1.0, 1.0)
            self._last[ch.key] = (X, E)
            out[ch.key] = (X, E)
        return out

    def _warm(self, ch: KappaChannel, blocks):
        prev = self._last.get(ch.key)
        if prev is None:
            return None
        N = self.mesh.size
        Xp, Ep = prev
        Y = np.empty_like(Xp)
        V, T, WmT = blocks
        T2c = T / (2.0 * self.c**2)
        pencil = BlockPencil(V, T, WmT, self.S, T2c, 2 * self.mesh.order + 1, self._ab_m.get(ch.kappa))
        self._ab_m[ch.kappa] = pencil.ab_m
        for k in range(ch.count):
            lam, y, ok = rayleigh_refine(pencil, Xp[:, k], float(Ep[k]))
            if not ok:
                return None
            Y[:, k] = y
        HY = np.stack([pencil.H_dot(Y[:, k]) for k in range(ch.count)], axis=1)
        MY = np.stack([pencil.M_dot(Y[:, k]) for k in range(ch.count)], axis=1)
        Hs, Ms = Y.T @ HY, Y.T @ MY
        try:  # two refinements that reached the same state make Ms singular: dense fallback
            E, U = sl.eigh(0.5 * (Hs + Hs.T), 0.5 * (Ms + Ms.T))
        except sl.LinAlgError:
            return None
        X = Y @ U
        if any(sign_changes(X[:N, k]) != k for k in range(ch.count)):
            return None
        return E, X

    def initial_state(self, charge: float) -> np.ndarray:
        v = thomas_fermi_potential(self.Z, self.mesh.r, charge)
        if self.nucleus != "point":
            v = v - (-self.Z / self.mesh.r) + self.v_nuc
        return self.state(self.diagonalise(self._blocks(v, None)))

    # ---------------------------------------------------------------- densities and energy
    def components(self, ch: KappaChannel, X: np.ndarray):
        """u_L, u_L′, u_S, u_S′ at the quadrature points, each (count, nel, nq)."""
        m = self.mesh
        N = m.size
        s, ds, _, _ = self._small[ch.kappa]
        uL, duL = m.values(X[:N])
        loc = m.local_coefficients(X[N:])
        uS = np.einsum("eqj,ejk->keq", s, loc) / (2.0 * self.c)
        duS = np.einsum("eqj,ejk->keq", ds, loc) / (2.0 * self.c)
        return uL, duL, uS, duS

    def density_state(self, orbitals: dict) -> np.ndarray:
        """(ρ, ρ′) from both components: ρ = Σ f (u_L² + u_S²)/(4πr²)."""
        m = self.mesh
        r = m.r
        x = np.zeros((self.ncomp, 1) + r.shape)
        for ch in self.channels:
            X, _ = orbitals[ch.key]
            uL, duL, uS, duS = self.components(ch, X)
            for n, f in ch.shells:
                k = n - ch.l - 1
                uu = uL[k] ** 2 + uS[k] ** 2
                x[0, 0] += f * uu / (FOUR_PI * r * r)
                if self.func.needs_gradient:
                    x[1, 0] += f * (2.0 * (uL[k] * duL[k] + uS[k] * duS[k]) * r - 2.0 * uu) / (FOUR_PI * r**3)
        return x

    def energy(self, orbitals: dict, x: np.ndarray, K: dict | None = None, R: dict | None = None) -> dict:
        m = self.mesh
        N = m.size
        kin = alpha_p = 0.0
        for ch in self.channels:
            X, _ = orbitals[ch.key]
            T = self._small[ch.kappa][2]
            for n, f in ch.shells:
                a, b = X[:N, n - ch.l - 1], X[N:, n - ch.l - 1]
                kin += f * relativistic_kinetic(a, b, T)
                alpha_p += f * 2.0 * float(a @ T @ b)
        rho = x[0].sum(axis=0)
        e_ne = self.nuclear_attraction(rho)
        if self.interacting:
            v_h = self.poisson.hartree_potential(rho)
            xcv = self._xc(x)
            e_xc = float(np.sum(xcv.e * (FOUR_PI * m.r**2 * m.w).ravel()))
            e_h = hartree_energy(m, rho, v_h)
        else:
            v_h, e_xc, e_h = np.zeros_like(rho), 0.0, 0.0
            xcv = evaluate_xc(resolve_functional("hf"), x[0].reshape(1, -1))  # zeros in the xc layout
        return {"kinetic": float(kin), "nuclear_attraction": float(e_ne), "coulomb": float(e_h),
                "exchange_correlation": e_xc, "exact_exchange": 0.0,
                "total": float(kin + e_ne + e_h + e_xc), "_v_h": v_h, "_xc": xcv, "_alpha_p": float(alpha_p)}
