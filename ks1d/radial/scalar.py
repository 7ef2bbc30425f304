"""Scalar-relativistic (Koelling–Harmon) Kohn–Sham atoms.

Eliminating the small component from the radial Dirac equation with a local
potential V, M(r) = 1 + (ε − V(r))/(2c²), gives for the large component P = rg

    −½ (P′/M)′ + [κ(κ+1)/(2Mr²) − κ (1/M)′/(2r) + V] P = ε P,

and with κ(κ+1) = l(l+1) and the spin–orbit term's κ replaced by its
(2j+1)-weighted average −1 over j = l ± ½, the scalar-relativistic equation

    −½ (P′/M)′ + [l(l+1)/(2Mr²) + (1/M)′/(2r) + V] P = ε P,
    Q = (P′ − P/r) / (2Mc),   ∫ (P² + Q²) dr = 1

(D. D. Koelling and B. N. Harmon, J. Phys. C 10, 3107 (1977); the form of the
scalar-relativistic LDA tables of S. Kotochigova, Z. H. Levine, E. L. Shirley,
M. D. Stiles and C. W. Clark, Phys. Rev. A 55, 191 (1997) — that they use this
form and the density P² + Q² is recalled from memory).  For l = 0 it is the
Dirac equation of s1/2 exactly (κ = −1).  (1/M)′ = V′/(2c²M²) is the Darwin term;
the weak form integrates it by parts so that V is never differentiated:

    H_ij(ε) = ½∫ φ′_iφ′_j/M + ∫ [l(l+1)/(2Mr²) + V] φ_iφ_j − ½∫ (1/M) (φ_iφ_j/r)′ dr
            = H^nr_ij + ∫ a [½φ′_iφ′_j + (l(l+1) + 1) φ_iφ_j/(2r²) − ½(φ′_iφ_j + φ_iφ′_j)/r] dr,

with a = 1/M − 1 = −(ε − V)/(2c² + ε − V) (the last form adds a zero,
½∫[φ_iφ_j/r² − (φ_iφ_j)′/r] = 0, so that c → ∞ gives today's matrices exactly).

Energy dependence: every orbital has its own M(ε).  In each SCF iteration the
orbital's ε is solved to self-consistency at fixed potential, ε = λ_k(H(ε)), by
Newton steps with dλ/dε = ⟨P|∂H/∂ε|P⟩/⟨P|P⟩, ∂(1/M)/∂ε = −1/(2c²M²), warm-started
from the previous SCF iteration, until |λ − ε| < tol |ε|, tol = 1e-5 × (previous density
residual) clamped to [1e-12, 1e-6] (one or two eigen-solves each; while that residual is
above 1e-3, a single Newton step per SCF iteration).  Once the SCF residual
is below 1e-7 the ε is self-consistent with its own M to 1e-12.

Density ρ = Σ f (P² + Q²)/(4πr²).  Its gradient uses Q′ from the same equations,
Q′ = −Q/r + l(l+1) P/(2cMr²) − (ε − V) P/c, so P is the only discretised function.
The kinetic energy is Σ f [ε − ⟨P|V|P⟩ − ∫ V Q² dr] (the form used for
Koelling–Harmon atoms; it reduces to the Dirac one for s states).

V in M is the local Kohn–Sham potential.  For GGAs this is
v_xc = ∂e/∂ρ − (1/r²)(r² g)′, g = 2∂e/∂σ ρ′ (spin-polarized: per spin), with g′ by
element-wise spectral differentiation at the quadrature points; the P equation
itself keeps the weak form of the non-relativistic solver.  Exact exchange and
meta-GGA potentials are non-local and have no place in M; those functionals are
refused (``relativity="x2c"`` supports them).
"""
from __future__ import annotations

import numpy as np
import scipy.linalg as sl

from ..occupations import Configuration
from ..xc import Functional
from .density import FOUR_PI
from .eigen import banded, sign_changes
from .mesh import MeshSpec
from .poisson import hartree_energy
from .problem import AtomicProblem, thomas_fermi_potential
from .relativity import SPEED_OF_LIGHT, sommerfeld_energy

#: relative self-consistency of each orbital energy with its own M(ε)
EPS_TOLERANCE = 1e-12
#: Newton steps per orbital and SCF iteration
MAX_NEWTON = 12
#: Rayleigh-quotient steps per Newton step
MAX_RQI = 6
#: above this SCF residual, one Newton step on ε per SCF iteration
ONE_STEP_RESIDUAL = 1e-3


def _dense_states(h: np.ndarray, S: np.ndarray, count: int, sigma: float) -> np.ndarray:
    """The lowest ``count`` eigenvectors of h c = λ S c by shift-and-invert below the spectrum.

    With σ below every eigenvalue, A = h − σS = LLᵀ is positive definite and the wanted
    states are the largest eigenvalues μ = 1/(λ − σ) of L⁻¹ S L⁻ᵀ, whose norm is
    1/(λ₀ − σ).  The selected-eigenpair driver applied to h itself fails on the fine
    graded meshes of heavy atoms (norms of 1e10-1e11 Ha: bisection's tolerance ~ε‖h‖ no
    longer separates bound levels); the inverted problem keeps them well separated.
    Falls back to that driver if A is not positive definite.
    """
    try:
        L = sl.cholesky(h - sigma * S, lower=True, check_finite=False)
    except sl.LinAlgError:
        return sl.eigh(h, S, subset_by_index=[0, count - 1], driver="gvx", check_finite=False)[1]
    Y = sl.solve_triangular(L, S, lower=True, check_finite=False)
    B = sl.solve_triangular(L, Y.T, lower=True, check_finite=False)
    n = h.shape[0]
    _, Z = sl.eigh(0.5 * (B + B.T), subset_by_index=[n - count, n - 1], driver="evr", check_finite=False)
    return sl.solve_triangular(L.T, Z[:, ::-1], lower=False, check_finite=False)


class Orbitals(dict):
    """Channel eigenvectors {(spin, l): (C, ε)} plus the small components {(spin, l): (Q, Q′, ⟨V⟩)}."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self.small: dict = {}


class ScalarProblem(AtomicProblem):
    """Koelling–Harmon atom: the non-relativistic channels with an energy-dependent kinetic operator."""

    relativity = "scalar"

    def __init__(self, Z: int, config: Configuration, func: Functional, spec: MeshSpec,
                 interacting: bool = True, *, nucleus: str = "point", speed_of_light: float = SPEED_OF_LIGHT):
        super().__init__(Z, config, func, spec, interacting, nucleus=nucleus, speed_of_light=speed_of_light)
        m = self.mesh
        self._eps: dict = {}
        self._vec: dict = {}
        self.newton_solves = self.dense_solves = 0
        self.fallbacks: list = []
        # a level below every eigenvalue: 1.5 × the bare point-nucleus 1s level (screening, a finite
        # nucleus and l > 0 only raise the levels), for the shift-and-invert start
        self._sigma = 1.5 * sommerfeld_energy(Z, 1, -1, self.c) - 10.0
        self._ab_s = banded(self.S, m.order)
        # per l, the element-block shapes that multiply a = 1/M − 1 at each quadrature point,
        # ½[φ′φ′ + (l(l+1)+1) φφ/r² − (φ′φ + φφ′)/r] times the weight, flattened to (nel, nq, (p+1)²)
        dd = np.einsum("eqi,eqj->eqij", m.dphi, m.dphi)
        pp = np.einsum("qi,qj->qij", m.phi, m.phi)[None] / (m.r**2)[:, :, None, None]
        dp = np.einsum("eqi,qj->eqij", m.dphi, m.phi)
        mix = (dp + dp.transpose(0, 1, 3, 2)) / m.r[:, :, None, None]
        w = m.w[:, :, None, None]
        self._shape = {l: (0.5 * w * (dd + (l * (l + 1) + 1) * pp - mix)).reshape(m.nel, m.r.shape[1], -1)
                       for l in {ch.l for ch in self.channels}}

    # ---------------------------------------------------------------- potentials
    def local_potential(self, pot: dict) -> np.ndarray:
        """V(r) per spin for M: V_N + v_H + ∂e/∂ρ_σ − g_σ′ − 2g_σ/r (GGA), shape (ns, nel, nq)."""
        m = self.mesh
        v = self.v_nuc + pot["v_h"] + pot["vrho"]
        if pot["g"] is not None:
            g = pot["g"]
            v = v - m.differentiate_quadrature(g) - 2.0 * g / m.r
        return v

    def hamiltonians(self, pot: dict, K: dict | None = None) -> dict:
        H = super().hamiltonians(pot, K)
        v = self.local_potential(pot)
        return {key: (h, v[key[0]], h - self._centrifugal(key[1])) for key, h in H.items()}

    def _centrifugal(self, l: int) -> np.ndarray:
        """T + l(l+1)/2 C (subtracted from H to get the potential matrix)."""
        return self.T + 0.5 * l * (l + 1) * self.C

    def _correction(self, a: np.ndarray, l: int) -> np.ndarray:
        """∫ a [½φ′φ′ + (l(l+1)+1)φφ/(2r²) − ½(φ′φ + φφ′)/r] dr assembled."""
        m = self.mesh
        blocks = np.einsum("eq,eqk->ek", a, self._shape[l]).reshape(m.nel, m.order + 1, m.order + 1)
        return m.assemble(blocks)

    def _expectation(self, a: np.ndarray, l: int, u: np.ndarray, du: np.ndarray) -> float:
        """Pᵀ [correction with weight a] P from P, P′ at the quadrature points (no assembly)."""
        r = self.mesh.r
        dens = 0.5 * du * du + 0.5 * (l * (l + 1) + 1) * u * u / (r * r) - u * du / r
        return float(np.sum(self.mesh.w * a * dens))

    # ---------------------------------------------------------------- orbitals
    def diagonalise(self, H: dict, D: dict | None = None) -> Orbitals:
        """Every orbital from its own H(ε) with ε = λ_k(H(ε)) (module docstring).

        The orbitals of a channel are iterated together.  Each Newton step takes one
        shifted banded solve per orbital, (H(ε) − εS) y = S x_previous (inverse iteration
        with the shift at the current ε, :mod:`ks1d.radial.eigen`), checked by its node
        count; the dense selected-eigenpair solve is the start and the fallback.
        """
        m = self.mesh
        c2 = self.c**2
        out = Orbitals()
        self.eps_unconverged = set()
        # far from SCF convergence the orbital energies need not be exact: |λ − ε| ≤ 1e-5 × residual,
        # tightening to EPS_TOLERANCE (1e-12) once the previous density residual is below 1e-7
        tol = min(1e-6, max(EPS_TOLERANCE, 1e-5 * self.scf_residual))
        p = m.order
        for ch in self.channels:
            key = (ch.spin, ch.l)
            h_nr, v, vmat = H[key]
            count = ch.count
            ab_nr = banded(h_nr, p)
            shape = self._shape[ch.l]
            e = np.array([self._eps.get((ch.spin, ch.l, k), np.nan) for k in range(count)])
            X = np.zeros((m.size, count))
            have = [self._vec.get((ch.spin, ch.l, k)) for k in range(count)]
            if np.any(np.isnan(e)) or any(x is None for x in have):
                # start from the eigenpairs of H(ε = 0).  Not from the non-relativistic operator: on the
                # finely graded relativistic mesh its norm, ~1/r₁², is beyond what LAPACK's selected-
                # eigenpair driver resolves, while M(r) ∝ r near a point nucleus keeps H(ε)'s norm ~c²/(Z r₁)
                h0 = h_nr + self._correction(v / (2.0 * c2 - v), ch.l)
                X = _dense_states(h0, self.S, count, self._sigma)
                e = np.sum(X * (h0 @ X), axis=0) / np.sum(X * (self.S @ X), axis=0)
                self.dense_solves += 1
            else:
                X = np.stack(have, axis=1)
            active = np.ones(count, dtype=bool)
            lam = e.copy()
            a = np.zeros((count,) + m.r.shape)
            # far from convergence (residual > 1e-3) one Newton step per SCF iteration: the potential
            # moves more than that step's error; later, Newton to tol
            for step in range(1 if self.scf_residual > ONE_STEP_RESIDUAL else 2 * MAX_NEWTON):
                idx = np.flatnonzero(active)
                if not idx.size:
                    break
                dv = e[idx, None, None] - v[None]
                a[idx] = -dv / (2.0 * c2 + dv)
                blocks = np.einsum("keq,eqm->kem", a[idx], shape).reshape(len(idx), m.nel, p + 1, p + 1)
                abs_ = [ab_nr + m.assemble_banded(blocks[j]) for j in range(len(idx))]
                # Rayleigh-quotient iteration on H(ε) (fixed ε): the vector must be an eigenvector of
                # the current operator even while ε is still being updated
                sig = lam[idx].copy()
                rq = np.ones(len(idx), dtype=bool)
                r = m.r
                for _ in range(MAX_RQI):
                    SX = self.S @ X[:, idx]
                    for j, k in enumerate(idx):
                        if not rq[j]:
                            continue
                        y = None
                        try:
                            y = sl.solve_banded((p, p), abs_[j] - sig[j] * self._ab_s, SX[:, j], check_finite=False)
                            if not (np.all(np.isfinite(y)) and sign_changes(y) == k):
                                y = None
                        except (sl.LinAlgError, ValueError):
                            y = None
                        if y is None:  # the shifted solve left the state: one dense solve
                            self.fallbacks.append((ch.spin, ch.l, int(k), step))
                            h = h_nr + m.assemble(blocks[j])
                            y = _dense_states(h, self.S, k + 1, self._sigma)[:, k]
                            self.dense_solves += 1
                            rq[j] = False  # exact for this H(ε)
                        X[:, k] = y / np.sqrt(float(y @ self.S @ y))
                    self.newton_solves += int(np.count_nonzero(rq))
                    Xa = X[:, idx]
                    u, du = m.values(Xa)  # (k, nel, nq)
                    dens = 0.5 * du * du + 0.5 * (ch.l * (ch.l + 1) + 1) * u * u / (r * r) - u * du / r
                    wd = m.w * dens
                    lam_new = np.sum(Xa * (h_nr @ Xa), axis=0) + np.sum(a[idx] * wd, axis=(1, 2))
                    conv = np.abs(lam_new - sig) <= 1e-11 * np.maximum(1.0, np.abs(lam_new))
                    sig = lam_new
                    rq &= ~conv
                    if not rq.any():
                        break
                lam[idx] = sig
                inv_m = 1.0 + a[idx]
                dlam = np.sum(-inv_m * inv_m / (2.0 * c2) * wd, axis=(1, 2))
                done = np.abs(lam[idx] - e[idx]) <= tol * np.maximum(1.0, np.abs(e[idx]))
                e_new = e[idx] + (lam[idx] - e[idx]) / (1.0 - dlam)
                e[idx[~done]] = e_new[~done]
                active[idx[done]] = False
            if self.scf_residual <= ONE_STEP_RESIDUAL:
                for k in np.flatnonzero(active):
                    self.eps_unconverged.add(f"{ch.l + k + 1}{'spdf'[ch.l]}")
            # λ and ε agree to tol; M was built with e
            for k in range(count):
                self._eps[(ch.spin, ch.l, k)] = float(e[k])
                self._vec[(ch.spin, ch.l, k)] = X[:, k].copy()
            u, du = m.values(X)
            inv_m = 1.0 + a
            Q = (du - u / m.r) * inv_m / (2.0 * self.c)
            scale = 1.0 / np.sqrt(1.0 + np.sum(m.w * Q * Q, axis=(1, 2)))
            C = X * scale
            u, du, Q = u * scale[:, None, None], du * scale[:, None, None], Q * scale[:, None, None]
            dQ = (-Q / m.r + ch.l * (ch.l + 1) * u * inv_m / (2.0 * self.c * m.r**2)
                  - (e[:, None, None] - v) * u / self.c)
            sign = np.where(C[0] < 0, -1.0, 1.0)
            C, Q, dQ = C * sign, Q * sign[:, None, None], dQ * sign[:, None, None]
            vexp = np.sum(C * (vmat @ C), axis=0) + np.sum(m.w * v * Q * Q, axis=(1, 2))
            out[key] = (C, e.copy())
            out.small[key] = (Q, dQ, vexp)
        return out

    def initial_state(self, charge: float) -> np.ndarray:
        """Koelling–Harmon orbitals in the Thomas–Fermi potential."""
        m = self.mesh
        v = thomas_fermi_potential(self.Z, m.r, charge)
        if self.nucleus != "point":
            v = v + self.Z / m.r + self.v_nuc
        V = m.assemble(m.weighted_blocks(v))
        H = {(ch.spin, ch.l): (self.T + V + 0.5 * ch.l * (ch.l + 1) * self.C, v, V) for ch in self.channels}
        # full Newton on every ε here: the starting orbitals must have M at their own ε, or the first
        # density of a heavy atom is far from relativistic (30 electrons of residual for Lu)
        self.scf_residual = 1e-7
        try:
            return self.state(self.diagonalise(H))
        finally:
            self.scf_residual = float("inf")

    # ---------------------------------------------------------------- densities and energy
    def density_state(self, orbitals: Orbitals) -> np.ndarray:
        """(ρ, ρ′) per spin from P and Q: ρ = Σ f (P² + Q²)/(4πr²)."""
        m = self.mesh
        r = m.r
        x = np.zeros((self.ncomp, self.ns) + r.shape)
        for ch in self.channels:
            key = (ch.spin, ch.l)
            C, _ = orbitals[key]
            u, du = m.values(C)
            small = orbitals.small.get(key)
            for n, f in ch.shells:
                k = n - ch.l - 1
                uu, udu = u[k] ** 2, u[k] * du[k]
                if small is not None:
                    Q, dQ, _ = small
                    uu, udu = uu + Q[k] ** 2, udu + Q[k] * dQ[k]
                x[0, ch.spin] += f * uu / (FOUR_PI * r * r)
                if self.func.needs_gradient:
                    x[1, ch.spin] += f * (2.0 * udu * r - 2.0 * uu) / (FOUR_PI * r**3)
        return x

    def energy(self, orbitals: Orbitals, x: np.ndarray, K: dict | None = None, R: dict | None = None) -> dict:
        m = self.mesh
        kin = 0.0
        for ch in self.channels:
            key = (ch.spin, ch.l)
            _, eps = orbitals[key]
            _, _, vexp = orbitals.small[key]
            for n, f in ch.shells:
                k = n - ch.l - 1
                kin += f * (eps[k] - vexp[k])
        rho = x[0].sum(axis=0)
        e_ne = self.nuclear_attraction(rho)
        if self.interacting:
            v_h = self.poisson.hartree_potential(rho)
            xcv = self._xc(x)
            e_xc = float(np.sum(xcv.e * (FOUR_PI * m.r**2 * m.w).ravel()))
            e_h = hartree_energy(m, rho, v_h)
        else:
            from ..xc import evaluate_xc, resolve_functional

            v_h, e_xc, e_h = np.zeros_like(rho), 0.0, 0.0
            xcv = evaluate_xc(resolve_functional("hf"), x[0].reshape(self.ns, -1))
        return {"kinetic": float(kin), "nuclear_attraction": float(e_ne), "coulomb": float(e_h),
                "exchange_correlation": e_xc, "exact_exchange": 0.0,
                "total": float(kin + e_ne + e_h + e_xc), "_v_h": v_h, "_xc": xcv}
