"""The discretised spherical atom and its SCF loop (the driver, :func:`ks1d.radial.scf.solve_atom`, builds it).

For every angular momentum l and spin σ the radial Kohn–Sham equation for
u = rR,

    −½ u″ + [ l(l+1)/(2r²) − Z/r + v_H(r) + v_xc,σ(r) ] u = ε u,
    u(0) = u(r_max) = 0,

is discretised in the finite-element basis of :mod:`ks1d.radial.mesh` as the
generalised symmetric eigenproblem H c = ε S c, of which only the needed
lowest eigenpairs are computed.  GGA potentials enter in weak form,

    ⟨φ_i|v_xc|φ_j⟩ = ∫ [∂e/∂ρ_σ φ_iφ_j + g_σ ((φ_iφ_j)′ − 2φ_iφ_j/r)] dr,
    g_σ = 2 ∂e/∂σ_σσ ρ′_σ + ∂e/∂σ_σσ′ ρ′_σ′,

so the density is never differentiated twice; meta-GGAs add the generalised
Kohn–Sham term ½∫ v_τ ∇φ_i·∇φ_j d³r.  The input density (with its gradient
and τ) is mixed with the shared Anderson/Pulay mixer.  The energy

    E = T_s + E_ne + E_H + E_xc

is evaluated from the output orbitals, whose error is second order in the
density residual.

Exact exchange of open sub-shells is the average over the determinants of
the configuration (:mod:`ks1d.radial.exchange`).  Each open sub-shell a then
has its own Fock operator F + Δ_a; the Δ matrices join the K matrices in the
mixed state.  A channel whose only occupied sub-shell is open uses F + Δ_a for
the whole channel.  A channel holding closed sub-shells beside the open one
(2p under 3p in Al–Ar, 1s/2s under a restricted 3s¹) is solved exactly
variationally by :meth:`AtomicProblem._coupled_channel`, which also satisfies
the off-diagonal conditions f_a⟨c|F + Δ_a|a⟩ = f_c⟨c|F|a⟩.
"""
from __future__ import annotations

import numpy as np
import scipy.linalg as sl

from ..errors import IterationRecord, UnsupportedFunctional
from ..mixing import PulayMixer
from ..nuclei import nuclear_charge_inside, nuclear_potential
from ..occupations import Configuration
from ..results import SCFOptions
from ..xc import Functional, evaluate_xc, resolve_functional
from .density import FOUR_PI, shell_density, shell_density_derivative, shell_tau
from .exchange import ExchangeBuilder, average_configuration_weights, wigner3j_zero
from .mesh import MeshSpec, RadialMesh
from .poisson import PoissonSolver, hartree_energy
from .relativity import SPEED_OF_LIGHT, spin_free_gram, x2c_one_electron
from .result import RadialData

#: relative rounding floor of relativistic SCF energies (see run_scf)
RELATIVISTIC_ENERGY_NOISE = 1e-13
#: rounding floor of the relativistic density residual ∫|Δρ| per electron: on the finest meshes
#: (r₁ ~ 1e-8 bohr) the deep core orbitals of heavy atoms carry rounding noise of ~1e-8 electrons
#: in all (the energy error, second order in the residual, stays below 1e-13 |E|)
RELATIVISTIC_DENSITY_NOISE = 1e-9

#: orbital spin-channel names by the number of spin channels (ks1d.results.SPIN_CHANNELS)
SPIN_NAMES = {1: ("both",), 2: ("alpha", "beta")}


def thomas_fermi_potential(Z: float, r: np.ndarray, charge: float = 0.0) -> np.ndarray:
    """Starting potential −Z_eff(r)/r from the Thomas–Fermi screening function.

    Z_eff = Z φ(r/b), b = 0.8853 Z^(−1/3), with the rational fit
    φ(x) = 1/(1 + 0.02747√x + 1.243x − 0.1486x^1.5 + 0.2302x² + 0.007298x^2.5
    + 0.006944x³) (coefficients from memory; they only shape the start of
    the SCF).  Z_eff is kept ≥ 1 + charge for cations.
    """
    x = r / (0.8853 * Z ** (-1.0 / 3.0))
    phi = 1.0 / (1 + 0.02747 * x**0.5 + 1.243 * x - 0.1486 * x**1.5 + 0.2302 * x**2
                 + 0.007298 * x**2.5 + 0.006944 * x**3)
    z_eff = np.maximum(Z * phi, max(1.0 + charge, 0.0) if charge > 0 else 0.0)
    return -z_eff / r


#: Shift (Ha) that moves excluded directions above every bound level in AtomicProblem._lowest.
_DEFLATION_SHIFT = 1.0e4
#: Iteration limit of the coupled open-shell channel solver.
_INNER_MAX = 200


class _Channel:
    """One (spin, l) block: the sub-shells it holds and their occupations."""

    def __init__(self, spin: int, l: int, shells: list[tuple[int, float]]):
        self.spin, self.l = spin, l
        self.shells = shells  # (n, occupation of this spin)
        self.count = max(n for n, _ in shells) - l


class AtomicProblem:
    """The discretised atom: mesh, fixed matrices, channels and functional."""

    #: the relativistic Hamiltonian this class solves (subclasses: "scalar", "dirac")
    relativity = "none"
    #: density residual of the last SCF iteration (set by run_scf)
    scf_residual = float("inf")

    def __init__(self, Z: int, config: Configuration, func: Functional, spec: MeshSpec,
                 interacting: bool = True, open_shell_exchange: str = "average", *,
                 nucleus: str = "point", x2c: bool = False, speed_of_light: float = SPEED_OF_LIGHT):
        if func.is_range_separated:
            raise UnsupportedFunctional(
                f"'{func.name}' is a {func.kind}; the radial solver does not support range-separated "
                "exact exchange yet (global hybrids and HF are supported; use the Gaussian solver for this one)"
            )
        self.Z, self.config, self.func, self.spec = Z, config, func, spec
        self.interacting = interacting
        self.mesh = m = RadialMesh.for_atom(Z, spec)
        one = np.ones_like(m.r)
        self.S = m.assemble(m.weighted_blocks(one))
        self.T = 0.5 * m.assemble(m.derivative_blocks(one))
        self.C = m.assemble(m.weighted_blocks(1.0 / m.r**2))
        self.nucleus, self.c = nucleus, float(speed_of_light)
        # the nuclear potential at the quadrature points (−Z/r for a point nucleus)
        self.v_nuc = nuclear_potential(Z, m.r, nucleus)
        if x2c:
            self.relativity = "x2c"
        # X2C-1e: per l the decoupled one-electron operator replaces T + l(l+1)/(2r²) + V_N;
        # the local potential of the SCF then carries no nuclear part
        self.h_x2c = self._x2c_operators(config.max_l) if x2c else None
        self._v_nuc_local = np.zeros_like(m.r) if x2c else self.v_nuc
        self.poisson = PoissonSolver(m)
        self.ns = 2 if config.polarized else 1
        self.channels: list[_Channel] = []
        for s in range(self.ns):
            for l in range(config.max_l + 1):
                sh = [(x.n, (x.up, x.down)[s] if self.ns == 2 else x.occupation)
                      for x in config.shells if x.l == l]
                if any(f > 0 for _, f in sh):
                    self.channels.append(_Channel(s, l, sh))
        self.n_electrons = config.n_electrons
        self.ncomp = 1 + func.needs_gradient + func.needs_tau
        self.exx = func.exx_sr if (func.is_hybrid and interacting) else 0.0
        self.exchange = ExchangeBuilder(m) if self.exx else None
        self._dens_shape = (self.ncomp, self.ns) + m.r.shape
        self._dens_size = int(np.prod(self._dens_shape))
        # open sub-shells: the average over determinants changes their self-interaction
        # weights, which gives each its own Fock operator F + Δ (see ks1d.radial.exchange)
        self.open_shells: dict[tuple[int, int, int], dict] = {}
        self.open_shell_exchange = open_shell_exchange
        if self.exchange is not None and open_shell_exchange == "average":
            for ch in self.channels:
                for n, f in ch.shells:
                    f_sigma = f if self.ns == 2 else 0.5 * f
                    if f_sigma <= 1e-14:
                        continue
                    g = 2 * ch.l + 1
                    if self.ns == 2:
                        weights = average_configuration_weights(ch.l, f_sigma, f_sigma, g, 1)
                    else:
                        weights = average_configuration_weights(ch.l, f_sigma, f, 2 * g, 2)
                    if max(abs(d) for _, _, d in weights.values()) > 1e-13:
                        self.open_shells[(ch.spin, ch.l, n)] = {"f": f_sigma, "weights": weights}
        self._previous: dict = {}  # last orbitals per channel: warm start of the coupled open-shell solver
        self.inner_unconverged: set = set()  # channels whose coupled solve hit _INNER_MAX in the last step

    # ---------------------------------------------------------------- SCF state
    # The mixed SCF state is one flat vector: the density components (ρ, ρ′, τ)
    # per spin at the quadrature points, followed by the exchange matrices of
    # the (spin, l) channels for hybrids (Fock-matrix mixing of the non-local part).
    def pack(self, dens: np.ndarray, K: dict | None, D: dict | None = None) -> np.ndarray:
        parts = [dens.ravel()]
        if self.exchange is not None:
            parts += [K[(ch.spin, ch.l)].ravel() for ch in self.channels]
            parts += [D[key].ravel() for key in self.open_shells]
        return np.concatenate(parts)

    def unpack(self, x: np.ndarray) -> tuple[np.ndarray, dict | None, dict | None]:
        """(density components, K per (spin, l) channel, Δ per open sub-shell (spin, l, n))."""
        dens = x[:self._dens_size].reshape(self._dens_shape)
        if self.exchange is None:
            return dens, None, None
        n2 = self.mesh.size ** 2
        K, D = {}, {}
        a = self._dens_size
        for ch in self.channels:
            K[(ch.spin, ch.l)] = x[a:a + n2].reshape(self.mesh.size, self.mesh.size)
            a += n2
        for key in self.open_shells:
            D[key] = x[a:a + n2].reshape(self.mesh.size, self.mesh.size)
            a += n2
        return dens, K, D

    def state(self, orbitals: dict, with_integrals: bool = False):
        """Packed SCF state of a set of orbitals (and the open shells' R^k(aa; aa) if asked)."""
        K, D, R = self.exchange_matrices(orbitals)
        x = self.pack(self.density_state(orbitals), K, D)
        return (x, R) if with_integrals else x

    def exchange_matrices(self, orbitals: dict):
        """K^(l)_σ per channel from the occupied orbitals of the same spin, the open-shell
        corrections Δ and the integrals R^k(aa; aa) of the open shells ((None,)*3 without exact exchange)."""
        if self.exchange is None:
            return None, None, None
        m = self.mesh
        per_spin = {s: [] for s in range(self.ns)}
        own = {s: {} for s in range(self.ns)}
        for ch in self.channels:
            C, _ = orbitals[(ch.spin, ch.l)]
            u, _ = m.values(C)
            for n, f in ch.shells:
                f_sigma = f if self.ns == 2 else 0.5 * f
                key = (ch.spin, ch.l, n)
                if key in self.open_shells:
                    d = {k: w[2] for k, w in self.open_shells[key]["weights"].items()}
                    own[ch.spin][len(per_spin[ch.spin])] = (C[:, n - ch.l - 1], d, key)
                per_spin[ch.spin].append((ch.l, u[n - ch.l - 1], f_sigma))
        K, D, R = {}, {}, {}
        for s in range(self.ns):
            ls = [ch.l for ch in self.channels if ch.spin == s]
            Ks, Ds, Rs = self.exchange.matrices(per_spin[s], ls, {i: v[:2] for i, v in own[s].items()})
            for l in ls:
                K[(s, l)] = Ks[l]
            for i, v in own[s].items():
                D[v[2]], R[v[2]] = Ds[i], Rs[i]
        return K, D, R

    # ---------------------------------------------------------------- densities
    def density_state(self, orbitals: dict) -> np.ndarray:
        """Stack (ρ, ρ′, τ) per spin from channel eigenvectors: shape (ncomp, ns, nel, nq)."""
        m = self.mesh
        x = np.zeros((self.ncomp, self.ns) + m.r.shape)
        for ch in self.channels:
            C, _ = orbitals[(ch.spin, ch.l)]
            u, du = m.values(C)
            for n, f in ch.shells:
                k = n - ch.l - 1
                x[0, ch.spin] += shell_density(m.r, u[k], f)
                if self.func.needs_gradient:
                    x[1, ch.spin] += shell_density_derivative(m.r, u[k], du[k], f)
                if self.func.needs_tau:
                    x[-1, ch.spin] += shell_tau(m.r, u[k], du[k], ch.l, f)
        return x

    def _xc(self, x: np.ndarray):
        """libxc on the mesh for state x; returns XCValues on flattened points."""
        rho = np.maximum(x[0], 0.0).reshape(self.ns, -1)
        grad = tau = None
        if self.func.needs_gradient:
            grad = np.zeros((self.ns, 3, rho.shape[1]))
            grad[:, 0] = x[1].reshape(self.ns, -1)
        if self.func.needs_tau:
            # a mixed input state need not satisfy the von Weizsäcker bound τ ≥ |∇ρ|²/(8ρ)
            # that every set of orbitals obeys; clamp to it so that iso-orbital indicators stay physical
            tau = x[-1].reshape(self.ns, -1)
            tau_w = grad[:, 0] ** 2 / (8.0 * np.maximum(rho, 1e-300))
            tau = np.maximum(tau, tau_w)
        return evaluate_xc(self.func, rho, grad, tau)

    # ---------------------------------------------------------------- potentials
    def potentials(self, x: np.ndarray) -> dict:
        """Local potential pieces of input state x for building Hamiltonians."""
        m = self.mesh
        shape = m.r.shape
        if not self.interacting:
            return {"v_h": np.zeros(shape), "vrho": np.zeros((self.ns,) + shape), "g": None, "vtau": None}
        rho_tot = x[0].sum(axis=0)
        v_h = self.poisson.hartree_potential(rho_tot)
        xcv = self._xc(x)
        out = {"v_h": v_h, "vrho": xcv.vrho.reshape((self.ns,) + shape), "g": None, "vtau": None}
        if self.func.needs_gradient:
            vs = xcv.vsigma.reshape((-1,) + shape)
            d = x[1]
            if self.ns == 1:
                out["g"] = (2.0 * vs[0] * d[0])[None]
            else:
                out["g"] = np.stack([2.0 * vs[0] * d[0] + vs[1] * d[1], 2.0 * vs[2] * d[1] + vs[1] * d[0]])
        if self.func.needs_tau:
            out["vtau"] = xcv.vtau.reshape((self.ns,) + shape)
        return out

    def hamiltonians(self, pot: dict, K: dict | None = None) -> dict:
        """H[(spin, l)] = T + l(l+1)/2 C + V_loc,σ (+ GGA and τ terms) + a K_σ^(l)."""
        m = self.mesh
        base = {}
        for s in range(self.ns):
            v = self._v_nuc_local + pot["v_h"] + pot["vrho"][s]
            blocks = None
            if pot["g"] is not None:
                g = pot["g"][s]
                v = v - 2.0 * g / m.r
                blocks = m.mixed_blocks(g)
            blocks = m.weighted_blocks(v) if blocks is None else blocks + m.weighted_blocks(v)
            tau_parts = None
            if pot["vtau"] is not None:
                vt = pot["vtau"][s]
                # ½∫ vτ [φ′φ′ − (φ′φ + φφ′)/r + (1 + l(l+1)) φφ/r²] dr
                blocks = blocks + 0.5 * m.derivative_blocks(vt) - 0.5 * m.mixed_blocks(vt / m.r) \
                    + 0.5 * m.weighted_blocks(vt / m.r**2)
                tau_parts = 0.5 * m.assemble(m.weighted_blocks(vt / m.r**2))
            base[s] = (m.assemble(blocks), tau_parts)
        H = {}
        for ch in self.channels:
            Vs, tau_c = base[ch.spin]
            cent = 0.5 * ch.l * (ch.l + 1)
            h = self.T + Vs + cent * self.C if self.h_x2c is None else self.h_x2c[ch.l] + Vs
            if tau_c is not None and ch.l > 0:
                h = h + ch.l * (ch.l + 1) * tau_c
            if K is not None:
                h = h + self.exx * K[(ch.spin, ch.l)]
            H[(ch.spin, ch.l)] = h
        return H

    def _lowest(self, h: np.ndarray, count: int, exclude: np.ndarray | None = None) -> np.ndarray:
        """The lowest ``count`` eigenvectors of h c = ε S c in the S-orthogonal complement of the
        (S-orthonormal) columns of ``exclude``.

        With the projector P = 1 − X XᵀS the problem is (Pᵀ h P + σ S X XᵀS) c = ε S c: the excluded
        directions get the eigenvalue σ = 10⁴ Ha, far above every bound level.
        """
        if exclude is not None and exclude.shape[1]:
            X = exclude
            SX, hX = self.S @ X, h @ X
            h = (h - SX @ hX.T - hX @ SX.T + SX @ (X.T @ hX + _DEFLATION_SHIFT * np.eye(X.shape[1])) @ SX.T)
            h = 0.5 * (h + h.T)
        _, C = sl.eigh(h, self.S, subset_by_index=[0, count - 1], driver="gvx", check_finite=False)
        return C

    def diagonalise(self, H: dict, D: dict | None = None) -> dict:
        """Orbitals per channel; energies as Rayleigh quotients of each orbital's own operator.

        Without open sub-shells (or when an open sub-shell is the only occupied one of its
        channel) these are the lowest eigenvectors of the channel's operator; a channel that
        holds closed sub-shells under an open one is solved by :meth:`_coupled_channel`.
        """
        out = {}
        self.inner_unconverged = set()
        for ch in self.channels:
            key = (ch.spin, ch.l)
            h = H[key]
            opens = [] if D is None else [(n - ch.l - 1, self.open_shells[(ch.spin, ch.l, n)]["f"],
                                           h + self.exx * D[(ch.spin, ch.l, n)])
                                          for n, _ in ch.shells if (ch.spin, ch.l, n) in self.open_shells]
            others = [n for n, f in ch.shells if f > 1e-14 and (ch.spin, ch.l, n) not in self.open_shells]
            if not opens:
                C = self._lowest(h, ch.count)
                ops = [h] * ch.count
            elif len(opens) == 1 and not others:
                C = self._lowest(opens[0][2], ch.count)
                ops = [opens[0][2]] * ch.count
            else:
                C, ops = self._coupled_channel(ch, h, opens)
            eps = np.array([C[:, i] @ ops[i] @ C[:, i] / (C[:, i] @ self.S @ C[:, i]) for i in range(ch.count)])
            u_first = C[0]  # first interior node: fix the sign so u > 0 near the nucleus
            C = C * np.where(u_first < 0, -1.0, 1.0)
            out[key] = (C, eps)
        return out

    def _coupled_channel(self, ch: _Channel, h: np.ndarray, opens: list) -> tuple[np.ndarray, list]:
        """Orbitals of a channel whose sub-shells have different Fock operators (F_c = F, F_a = F + Δ_a).

        They make Q = Σ_i f_i ⟨i|F_i|i⟩ stationary over orthonormal sets (for operators fixed by
        the input state this is the energy's stationarity: F_i u_i ∈ span(occupied) and the
        rotation conditions f_a⟨a|F_a|c⟩ = f_c⟨a|F_c|c⟩).  Block-coordinate iteration: the
        sub-shells with F from F in the S-orthogonal complement of the open ones, each open one
        from its F_a in the complement of the other occupied ones, then an exact 2×2 (Jacobi)
        rotation of every pair a, c of occupied orbitals with different operators,

            Q(θ) = Q₀ + α cos 2θ + β sin 2θ,  α = ½[f_a(A_aa − A_cc) + f_c(B_cc − B_aa)],
            β = f_a A_ac − f_c B_ac  (A = F_a, B = F_c),  stationary at tan 2θ = β/α,

        taking the stationary point nearest θ = 0 (for the ground configuration, f_c > f_a with c
        below a, α < 0 and that is the minimum; for a hole below a closed shell it is the
        saddle that keeps the hole), repeated until the orbitals stop changing
        (max |ΔC| < 1e-11 max |C|).  Unoccupied columns below an open orbital (excited
        configurations) are not excluded from its space.
        """
        key = (ch.spin, ch.l)
        count = ch.count
        occ = np.zeros(count)
        for n, f in ch.shells:
            occ[n - ch.l - 1] = f if self.ns == 2 else 0.5 * f
        ops = [h] * count
        open_cols = []
        for col, _, fa in opens:
            ops[col] = fa
            open_cols.append(col)
        closed_cols = [i for i in range(count) if i not in open_cols]
        prev = self._previous.get(key)
        C = prev.copy() if prev is not None and prev.shape == (h.shape[0], count) else self._lowest(h, count)
        converged = False
        for it in range(1, _INNER_MAX + 1):  # noqa: B007 (the count is kept after the loop)
            C_old = C.copy()
            if closed_cols:
                C[:, closed_cols] = self._lowest(h, len(closed_cols), C[:, open_cols])
            for a in open_cols:
                # empty columns below a (excited configurations) stay in its space: a is the
                # (k+1)-th level of F_a orthogonal to the other occupied orbitals
                rest = [i for i in range(count) if i != a and occ[i] > 0.0]
                k = sum(1 for i in range(a) if occ[i] <= 0.0)
                C[:, a] = self._lowest(ops[a], k + 1, C[:, rest])[:, k]
            for a in open_cols:
                for c in range(count):
                    if c == a or occ[c] <= 0.0 or (c in open_cols and c < a):
                        continue
                    x, y = C[:, a].copy(), C[:, c].copy()
                    A, B = ops[a], ops[c]
                    Ax, Ay, Bx, By = A @ x, A @ y, B @ x, B @ y
                    alpha = 0.5 * (occ[a] * (x @ Ax - y @ Ay) + occ[c] * (y @ By - x @ Bx))
                    beta = occ[a] * (x @ Ay) - occ[c] * (x @ By)
                    # the stationary point nearest θ = 0 keeps the orbitals' identity: the minimum
                    # along the rotation for the usual α < 0, a maximum for a hole below a closed shell
                    theta = 0.5 * np.arctan(beta / alpha) if alpha != 0.0 else 0.0
                    cs, sn = np.cos(theta), np.sin(theta)
                    C[:, a], C[:, c] = cs * x + sn * y, cs * y - sn * x
            # align signs with the previous sweep before measuring the change
            sgn = np.sign(np.einsum("ik,ik->k", C, self.S @ C_old))
            C = C * np.where(sgn == 0, 1.0, sgn)
            if np.max(np.abs(C - C_old)) < 1e-11 * np.max(np.abs(C)):
                converged = True
                break
        self.inner_iterations = it
        if not converged:
            self.inner_unconverged.add(key)
        self._previous[key] = C.copy()
        return C, ops

    # ---------------------------------------------------------------- energies
    def energy(self, orbitals: dict, x: np.ndarray, K: dict | None = None, R: dict | None = None) -> dict:
        """Energy components of the output orbitals, their density state x, exchange matrices K
        and the open shells' integrals R^k(aa; aa).

        exact_exchange = a Σ_σ [−½ Σ_ab Σ_k w^k_ab R^k(ab; ba)] (a: exact-exchange fraction);
        the open shells' Coulomb energy beyond J[ρ_spherical], a Σ_σ ½ Σ_k j^k F^k(aa), is part of
        "coulomb" (see ks1d.radial.exchange.average_configuration_weights).
        """
        m = self.mesh
        kin = exx = e_h_open = 0.0
        for ch in self.channels:
            C, _ = orbitals[(ch.spin, ch.l)]
            # X2C-1e: "kinetic" is the decoupled one-electron energy minus ∫ V_N ρ
            Tl = self.T + 0.5 * ch.l * (ch.l + 1) * self.C if self.h_x2c is None else self.h_x2c[ch.l]
            for n, f in ch.shells:
                c = C[:, n - ch.l - 1]
                kin += f * c @ Tl @ c
                if K is not None:
                    exx += 0.5 * self.exx * f * c @ K[(ch.spin, ch.l)] @ c
        if K is not None:
            spins = 1 if self.ns == 2 else 2  # a restricted channel stands for both spins
            for key, info in self.open_shells.items():
                l, f = key[1], info["f"]
                for k, (w, j, _) in info["weights"].items():
                    t = wigner3j_zero(l, k, l) ** 2
                    exx -= 0.5 * self.exx * spins * (w - f * f * t) * R[key][k]
                    e_h_open += 0.5 * self.exx * spins * j * R[key][k]
        rho = x[0].sum(axis=0)
        e_ne = self.nuclear_attraction(rho)
        if self.h_x2c is not None:
            kin -= e_ne
        if self.interacting:
            v_h = self.poisson.hartree_potential(rho)
            xcv = self._xc(x)
            e_xc = float(np.sum(xcv.e * (FOUR_PI * m.r**2 * m.w).ravel()))
            e_h = hartree_energy(m, rho, v_h) + e_h_open
        else:
            v_h, e_xc, e_h = np.zeros_like(rho), 0.0, 0.0
            xcv = evaluate_xc(resolve_functional("hf"), x[0].reshape(self.ns, -1))
        return {"kinetic": float(kin), "nuclear_attraction": float(e_ne), "coulomb": float(e_h),
                "exchange_correlation": e_xc, "exact_exchange": float(exx),
                "total": float(kin + e_ne + e_h + e_xc + exx), "_v_h": v_h, "_xc": xcv}

    def residual_norm(self, dx: np.ndarray) -> float:
        """∫ |Δρ| d³r summed over spins, plus max |ΔK_ij| for exact exchange."""
        m = self.mesh
        dens, K, D = self.unpack(dx)
        res = float(np.sum(np.abs(dens[0]) * (FOUR_PI * m.r**2 * m.w)[None]))
        if K is not None:
            res += self.exx * max(float(np.max(np.abs(k))) for k in list(K.values()) + list(D.values()))
        return res

    def initial_state(self, charge: float) -> np.ndarray:
        """State of the orbitals in the Thomas–Fermi starting potential."""
        m = self.mesh
        if self.h_x2c is None:
            V = m.assemble(m.weighted_blocks(thomas_fermi_potential(self.Z, m.r, charge)))
            H = {(ch.spin, ch.l): self.T + V + 0.5 * ch.l * (ch.l + 1) * self.C for ch in self.channels}
        else:
            V = m.assemble(m.weighted_blocks(thomas_fermi_potential(self.Z, m.r, charge) - self.v_nuc))
            H = {(ch.spin, ch.l): self.h_x2c[ch.l] + V for ch in self.channels}
        return self.state(self.diagonalise(H))

    # ---------------------------------------------------------------- nucleus and X2C
    def nuclear_attraction(self, rho: np.ndarray) -> float:
        """E_ne = ∫ V_N ρ d³r (−Z ∫ 4π r ρ dr for the point nucleus)."""
        m = self.mesh
        if self.nucleus == "point":
            return -self.Z * m.integrate(FOUR_PI * m.r * rho)
        return m.integrate(FOUR_PI * m.r**2 * rho * self.v_nuc)

    def nuclear_virial(self, rho: np.ndarray) -> float:
        """dE_ne[ρ_λ]/dλ at λ = 1 for ρ_λ(r) = λ³ρ(λr): −∫ ρ r V_N′ d³r = −∫ ρ Z(r)/r d³r,
        Z(r) the nuclear charge inside r (= E_ne for the point nucleus)."""
        m = self.mesh
        q = nuclear_charge_inside(self.Z, m.r, self.nucleus)
        return -m.integrate(FOUR_PI * m.r * rho * q)

    def _x2c_operators(self, max_l: int) -> dict:
        """h_X2C per l from the spin-free RKB Dirac matrices with the nuclear potential
        (X2C-1e: one-electron decoupling only, see :func:`ks1d.radial.relativity.x2c_one_electron`)."""
        m = self.mesh
        V = m.assemble(m.weighted_blocks(self.v_nuc))
        out = {}
        for l in range(max_l + 1):
            T = 0.5 * spin_free_gram(m, l, np.ones_like(m.r))
            W = spin_free_gram(m, l, self.v_nuc) / (4.0 * self.c**2)
            out[l] = x2c_one_electron(self.S, T, V, W, self.c)
        return out

    def state_from(self, radial: RadialData) -> np.ndarray:
        """State of a previous solution's orbitals, L²-projected onto this mesh (for restarts)."""
        m = self.mesh
        names = SPIN_NAMES[self.ns]
        orbitals = {}
        for ch in self.channels:
            C = np.zeros((m.size, ch.count))
            for n, _ in ch.shells:
                c_old, _ = radial.coefficients[(n, ch.l, names[ch.spin])]
                u, _ = radial.mesh.values_at(c_old, m.r.ravel())
                b = m.assemble_vector(np.einsum("qi,eq->ei", m.phi, m.w * u.reshape(m.r.shape)))
                C[:, n - ch.l - 1] = sl.solve(self.S, b, assume_a="pos")
            orbitals[(ch.spin, ch.l)] = (C, None)
        return self.state(orbitals)

    # ---------------------------------------------------------------- checks
    def scaled_xc_derivative_of_state(self, x: np.ndarray, h: float = 1e-4) -> float:
        """dE_xc[ρ_λ]/dλ at λ = 1 for ρ_λ(r) = λ³ρ(λr), from the density state on this mesh:
        E_xc[ρ_λ] = λ⁻³ ∫ e(λ³ρ(s), λ⁴ρ′(s), λ⁵τ(s)) d³s (substitution s = λr; central difference)."""
        if not self.interacting:
            return 0.0
        m = self.mesh
        vals = []
        for lam in (1.0 + h, 1.0 - h):
            xs = x.copy()
            xs[0] *= lam**3
            if self.func.needs_gradient:
                xs[1] *= lam**4
            if self.func.needs_tau:
                xs[-1] *= lam**5
            vals.append(float(np.sum(self._xc(xs).e * (FOUR_PI * m.r**2 * m.w).ravel())) / lam**3)
        return (vals[0] - vals[1]) / (2 * h)

    def scaled_xc_derivative(self, orbitals: dict, h: float = 1e-4) -> float:
        """dE_xc[ρ_λ]/dλ at λ = 1 for ρ_λ(r) = λ³ρ(λr) (central difference)."""
        m = self.mesh
        vals = []
        for lam in (1.0 + h, 1.0 - h):
            x = np.zeros((self.ncomp, self.ns) + m.r.shape)
            rs = lam * m.r
            for ch in self.channels:
                C, _ = orbitals[(ch.spin, ch.l)]
                for n, f in ch.shells:
                    u, du = m.values_at(C[:, n - ch.l - 1], rs.ravel())
                    u, du = u.reshape(rs.shape), du.reshape(rs.shape)
                    x[0, ch.spin] += lam**3 * shell_density(rs, u, f)
                    if self.func.needs_gradient:
                        x[1, ch.spin] += lam**4 * shell_density_derivative(rs, u, du, f)
                    if self.func.needs_tau:
                        x[-1, ch.spin] += lam**5 * shell_tau(rs, u, du, ch.l, f)
            vals.append(float(np.sum(self._xc(x).e * (FOUR_PI * m.r**2 * m.w).ravel())) if self.interacting else 0.0)
        return (vals[0] - vals[1]) / (2 * h)


def run_scf(problem: AtomicProblem, settings: SCFOptions, charge: float, start: np.ndarray | None = None,
            progress=None):
    """Iterate to self-consistency; returns (orbitals, energy dict, state, history, converged).

    ``progress`` (optional) is called with each :class:`~ks1d.errors.IterationRecord`."""
    m = problem.mesh
    x_in = problem.initial_state(charge) if start is None else start
    weights = np.zeros_like(x_in)  # DIIS metric on the density residual only
    weights[:m.r.size * problem.ns] = np.broadcast_to(FOUR_PI * m.r**2 * m.w, (problem.ns,) + m.r.shape).ravel()
    # the Pulay step factor α = 1 − damping, rounded so that damping 0.8 gives α = 0.2 exactly (not
    # 0.19999999999999996): stalled SCFs (r2SCAN alkali atoms) are sensitive to the last bit
    alpha = round(1.0 - settings.damping, 12)
    mixer = PulayMixer(alpha=alpha, history=settings.history, linear_steps=1, weights=weights)
    history: list[IterationRecord] = []
    e_prev = np.inf
    for it in range(1, settings.max_iterations + 1):
        dens_in, K_in, D_in = problem.unpack(x_in)
        orbitals = problem.diagonalise(problem.hamiltonians(problem.potentials(dens_in), K_in), D_in)
        x_out, R_out = problem.state(orbitals, with_integrals=True)
        dens_out, K_out, _ = problem.unpack(x_out)
        en = problem.energy(orbitals, dens_out, K_out, R_out)
        dx = x_out - x_in
        res = problem.residual_norm(dx)
        problem.scf_residual = res  # lets energy-dependent Hamiltonians tighten inner solves as the SCF converges
        de = en["total"] - e_prev
        history.append(IterationRecord(it, en["total"], float(de) if np.isfinite(de) else float("nan"), res))
        if progress is not None:
            progress(history[-1])
        if not np.isfinite(en["total"]) or not np.isfinite(res):
            break
        # relativistic matrices carry rounding noise of ~1e-14 |E| in the energy (deep core levels
        # of heavy atoms, kinetic terms of size c² ε/r near the nucleus): that is the floor there
        e_tol, r_tol = settings.energy_tolerance, settings.residual_tolerance
        if problem.relativity != "none":
            e_tol = max(e_tol, RELATIVISTIC_ENERGY_NOISE * abs(en["total"]))
            r_tol = max(r_tol, RELATIVISTIC_DENSITY_NOISE * problem.n_electrons)
        if abs(de) < e_tol and res < r_tol:
            return orbitals, en, dens_out, history, True
        e_prev = en["total"]
        x_in = mixer.step(x_in, dx)
    return orbitals, en, dens_out, history, False
