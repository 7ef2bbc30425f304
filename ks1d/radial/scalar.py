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
from the previous SCF iteration, until |λ − ε| < 1e-12 |ε| (usually one or two
eigen-solves).  The converged ε is therefore self-consistent with its M to 1e-12.

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
from .relativity import SPEED_OF_LIGHT
from .scf import AtomicProblem, thomas_fermi_potential

#: relative self-consistency of each orbital energy with its own M(ε)
EPS_TOLERANCE = 1e-12
#: Newton steps per orbital and SCF iteration
MAX_NEWTON = 12


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
        """Every orbital from its own H(ε) with ε = λ_k(H(ε)) (module docstring)."""
        m = self.mesh
        c2 = self.c**2
        out = Orbitals()
        self.eps_unconverged = set()
        for ch in self.channels:
            key = (ch.spin, ch.l)
            h_nr, v, vmat = H[key]
            C = np.zeros((m.size, ch.count))
            eps = np.zeros(ch.count)
            Q = np.zeros((ch.count,) + m.r.shape)
            dQ = np.zeros_like(Q)
            vexp = np.zeros(ch.count)
            guess = None
            for k in range(ch.count):
                okey = (ch.spin, ch.l, k)
                e = self._eps.get(okey)
                x_prev = self._vec.get(okey)
                if e is None:
                    # start from the eigenpairs of H(ε = 0) (one dense solve per channel).  Not from the
                    # non-relativistic operator: on the finely graded relativistic mesh its norm, ~1/r₁²,
                    # is beyond what LAPACK's selected-eigenpair driver resolves, while M(r) ∝ r near a
                    # point nucleus keeps H(ε)'s norm near c²/(Z r₁).
                    if guess is None:
                        h0 = h_nr + self._correction(-(0.0 - v) / (2.0 * c2 + (0.0 - v)), ch.l)
                        guess = sl.eigh(h0, self.S, subset_by_index=[0, ch.count - 1], driver="gvx",
                                        check_finite=False)
                        guess = (np.einsum("ik,ij,jk->k", guess[1], h0, guess[1]), guess[1])
                    e, x_prev = float(guess[0][k]), guess[1][:, k]
                # Newton on ε; each step's eigenvector from one shifted banded solve (shift ε,
                # Rayleigh-quotient-like) warm-started from the last one, or a dense solve
                dense = x_prev is None
                for step in range(2 * MAX_NEWTON):
                    dv = e - v
                    a = -dv / (2.0 * c2 + dv)
                    h = h_nr + self._correction(a, ch.l)
                    vec = None
                    if not dense:
                        try:
                            y = sl.solve_banded((m.order, m.order), banded(h, m.order) - e * self._ab_s,
                                                self.S @ x_prev, check_finite=False)
                            if np.all(np.isfinite(y)) and sign_changes(y) == k:
                                vec = y / np.sqrt(float(y @ self.S @ y))
                        except (sl.LinAlgError, ValueError):
                            vec = None
                    if vec is None:  # first step, or the shifted solve left the state: one dense solve
                        self.fallbacks.append((ch.spin, ch.l, k, step, None if dense else sign_changes(y)))
                        _, vec = sl.eigh(h, self.S, subset_by_index=[k, k], driver="gvx", check_finite=False)
                        vec = vec[:, 0]
                        self.dense_solves += 1
                    dense = False
                    self.newton_solves += 1
                    x_prev = vec
                    u, du = m.values(vec)
                    norm = float(np.sum(m.w * u * u))
                    lam = float(vec @ h @ vec) / norm
                    inv_m = 1.0 + a
                    dlam = self._expectation(-inv_m * inv_m / (2.0 * c2), ch.l, u, du) / norm
                    done = abs(lam - e) <= EPS_TOLERANCE * max(1.0, abs(e))
                    e_new = e + (lam - e) / (1.0 - dlam)
                    if done:
                        break
                    e = e_new
                else:
                    self.eps_unconverged.add(f"{ch.l + k + 1}{'spdf'[ch.l]}")
                self._vec[okey] = vec / np.sqrt(norm)
                # λ and ε agree to EPS_TOLERANCE; keep the ε that M was built with
                self._eps[(ch.spin, ch.l, k)] = e
                inv_m = 1.0 + a
                q = (du - u / m.r) * inv_m / (2.0 * self.c)
                scale = 1.0 / np.sqrt(norm + float(np.sum(m.w * q * q)))
                vec, u, du, q = vec * scale, u * scale, du * scale, q * scale
                dq = -q / m.r + ch.l * (ch.l + 1) * u * inv_m / (2.0 * self.c * m.r**2) - (e - v) * u / self.c
                sign = -1.0 if vec[0] < 0 else 1.0
                C[:, k] = sign * vec
                Q[k], dQ[k] = sign * q, sign * dq
                eps[k] = e
                vexp[k] = float(vec @ vmat @ vec) + float(np.sum(m.w * v * q * q))
            out[key] = (C, eps)
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
        return self.state(self.diagonalise(H))

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
