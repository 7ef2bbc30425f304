"""Self-consistent Kohn–Sham solution of a spherical atom on the radial mesh.

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
"""
from __future__ import annotations

import time
from dataclasses import dataclass, replace

import numpy as np
import scipy.linalg as sl

from .. import __version__
from ..elements import element as _element
from ..errors import (ConfigurationError, ConvergenceError, IterationRecord, SettingsError, SpinError,
                      UnsupportedFunctional)
from ..mixing import PulayMixer
from ..threads import one_blas_thread
from ..occupations import Configuration, build_configuration
from ..xc import Functional, evaluate_xc, resolve_functional
from .exchange import ExchangeBuilder
from .density import FOUR_PI, shell_density, shell_density_derivative, shell_tau
from .mesh import MeshSpec, RadialMesh
from .poisson import PoissonSolver, hartree_energy, total_charge
from .result import AtomResult, Orbital, RadialData

#: Named precision levels → mesh settings.  "normal" reproduces the
#: basis-set limit to well below 1 µHa for Z = 1–92 (see
#: benchmarks/bench_radial_convergence.py); "high" is for convergence studies.
PRECISION: dict[str, MeshSpec] = {
    "low": MeshSpec(n_elements=12, order=8, r_first=0.1, r_max=35.0),
    "normal": MeshSpec(n_elements=16, order=10, r_first=0.06, r_max=40.0),
    "high": MeshSpec(n_elements=30, order=12, r_first=0.03, r_max=50.0),
}


@dataclass(frozen=True)
class SCFSettings:
    """Convergence thresholds and mixing of the atomic SCF."""

    max_iterations: int = 150
    energy_tol: float = 1e-10
    density_tol: float = 1e-8
    mixing: float = 0.5
    history: int = 8

    def __post_init__(self):
        if self.max_iterations < 1:
            raise SettingsError(f"max_iterations must be positive, got {self.max_iterations}")
        if not 0 < self.mixing <= 1:
            raise SettingsError(f"mixing must lie in (0, 1], got {self.mixing}")
        if self.energy_tol <= 0 or self.density_tol <= 0:
            raise SettingsError("convergence thresholds must be positive")


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


class _Channel:
    """One (spin, l) block: the sub-shells it holds and their occupations."""

    def __init__(self, spin: int, l: int, shells: list[tuple[int, float]]):
        self.spin, self.l = spin, l
        self.shells = shells  # (n, occupation of this spin)
        self.count = max(n for n, _ in shells) - l


class AtomicProblem:
    """The discretised atom: mesh, fixed matrices, channels and functional."""

    def __init__(self, Z: int, config: Configuration, func: Functional, spec: MeshSpec,
                 interacting: bool = True):
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

    # ---------------------------------------------------------------- SCF state
    # The mixed SCF state is one flat vector: the density components (ρ, ρ′, τ)
    # per spin at the quadrature points, followed by the exchange matrices of
    # the (spin, l) channels for hybrids (Fock-matrix mixing of the non-local part).
    def pack(self, dens: np.ndarray, K: dict | None) -> np.ndarray:
        parts = [dens.ravel()]
        if self.exchange is not None:
            parts += [K[(ch.spin, ch.l)].ravel() for ch in self.channels]
        return np.concatenate(parts)

    def unpack(self, x: np.ndarray) -> tuple[np.ndarray, dict | None]:
        dens = x[:self._dens_size].reshape(self._dens_shape)
        if self.exchange is None:
            return dens, None
        n2 = self.mesh.size ** 2
        K = {}
        for i, ch in enumerate(self.channels):
            a = self._dens_size + i * n2
            K[(ch.spin, ch.l)] = x[a:a + n2].reshape(self.mesh.size, self.mesh.size)
        return dens, K

    def state(self, orbitals: dict) -> np.ndarray:
        """Packed SCF state of a set of orbitals."""
        return self.pack(self.density_state(orbitals), self.exchange_matrices(orbitals))

    def exchange_matrices(self, orbitals: dict) -> dict | None:
        """K^(l)_σ per channel from the occupied orbitals of the same spin (None without exact exchange)."""
        if self.exchange is None:
            return None
        m = self.mesh
        per_spin = {s: [] for s in range(self.ns)}
        for ch in self.channels:
            C, _ = orbitals[(ch.spin, ch.l)]
            u, _ = m.values(C)
            for n, f in ch.shells:
                f_sigma = f if self.ns == 2 else 0.5 * f
                per_spin[ch.spin].append((ch.l, u[n - ch.l - 1], f_sigma))
        K = {}
        for s in range(self.ns):
            ls = [ch.l for ch in self.channels if ch.spin == s]
            Ks = self.exchange.matrices(per_spin[s], ls)
            for l in ls:
                K[(s, l)] = Ks[l]
        return K

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
            v = -self.Z / m.r + pot["v_h"] + pot["vrho"][s]
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
            h = self.T + Vs + cent * self.C
            if tau_c is not None and ch.l > 0:
                h = h + ch.l * (ch.l + 1) * tau_c
            if K is not None:
                h = h + self.exx * K[(ch.spin, ch.l)]
            H[(ch.spin, ch.l)] = h
        return H

    def diagonalise(self, H: dict) -> dict:
        """Lowest eigenpairs per channel; energies as Rayleigh quotients (exact for the vectors)."""
        out = {}
        for ch in self.channels:
            h = H[(ch.spin, ch.l)]
            _, C = sl.eigh(h, self.S, subset_by_index=[0, ch.count - 1], driver="gvx", check_finite=False)
            HC = h @ C
            eps = np.einsum("ik,ik->k", C, HC) / np.einsum("ik,ik->k", C, self.S @ C)
            u_first = C[0]  # first interior node: fix the sign so u > 0 near the nucleus
            C = C * np.where(u_first < 0, -1.0, 1.0)
            out[(ch.spin, ch.l)] = (C, eps)
        return out

    # ---------------------------------------------------------------- energies
    def energy(self, orbitals: dict, x: np.ndarray, K: dict | None = None) -> dict:
        """Energy components of the output orbitals, their density state x and exchange matrices K."""
        m = self.mesh
        kin = exx = 0.0
        for ch in self.channels:
            C, _ = orbitals[(ch.spin, ch.l)]
            Tl = self.T + 0.5 * ch.l * (ch.l + 1) * self.C
            for n, f in ch.shells:
                c = C[:, n - ch.l - 1]
                kin += f * c @ Tl @ c
                if K is not None:
                    exx += 0.5 * self.exx * f * c @ K[(ch.spin, ch.l)] @ c
        rho = x[0].sum(axis=0)
        e_ne = -self.Z * m.integrate(FOUR_PI * m.r * rho)
        if self.interacting:
            v_h = self.poisson.hartree_potential(rho)
            xcv = self._xc(x)
            e_xc = float(np.sum(xcv.e * (FOUR_PI * m.r**2 * m.w).ravel()))
            e_h = hartree_energy(m, rho, v_h)
        else:
            v_h, e_xc, e_h = np.zeros_like(rho), 0.0, 0.0
            xcv = evaluate_xc(resolve_functional("hf"), x[0].reshape(self.ns, -1))
        return {"kinetic": float(kin), "nuclear_attraction": float(e_ne), "hartree": float(e_h),
                "exchange_correlation": e_xc, "exact_exchange": float(exx),
                "total": float(kin + e_ne + e_h + e_xc + exx), "_v_h": v_h, "_xc": xcv}

    def residual_norm(self, dx: np.ndarray) -> float:
        """∫ |Δρ| d³r summed over spins, plus max |ΔK_ij| for exact exchange."""
        m = self.mesh
        dens, K = self.unpack(dx)
        res = float(np.sum(np.abs(dens[0]) * (FOUR_PI * m.r**2 * m.w)[None]))
        if K is not None:
            res += self.exx * max(float(np.max(np.abs(k))) for k in K.values())
        return res

    def initial_state(self, charge: float) -> np.ndarray:
        """State of the orbitals in the Thomas–Fermi starting potential."""
        m = self.mesh
        V = m.assemble(m.weighted_blocks(thomas_fermi_potential(self.Z, m.r, charge)))
        H = {(ch.spin, ch.l): self.T + V + 0.5 * ch.l * (ch.l + 1) * self.C for ch in self.channels}
        return self.state(self.diagonalise(H))

    def state_from(self, radial: RadialData) -> np.ndarray:
        """State of a previous solution's orbitals, L²-projected onto this mesh (for restarts)."""
        m = self.mesh
        names = ("up", "down") if self.ns == 2 else ("both",)
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


def run_scf(problem: AtomicProblem, settings: SCFSettings, charge: float, start: np.ndarray | None = None):
    """Iterate to self-consistency; returns (orbitals, energy dict, state, history, converged)."""
    m = problem.mesh
    x_in = problem.initial_state(charge) if start is None else start
    weights = np.zeros_like(x_in)  # DIIS metric on the density residual only
    weights[:m.r.size * problem.ns] = np.broadcast_to(FOUR_PI * m.r**2 * m.w, (problem.ns,) + m.r.shape).ravel()
    mixer = PulayMixer(alpha=settings.mixing, history=settings.history, linear_steps=1, weights=weights)
    history: list[IterationRecord] = []
    e_prev = np.inf
    for it in range(1, settings.max_iterations + 1):
        dens_in, K_in = problem.unpack(x_in)
        orbitals = problem.diagonalise(problem.hamiltonians(problem.potentials(dens_in), K_in))
        x_out = problem.state(orbitals)
        dens_out, K_out = problem.unpack(x_out)
        en = problem.energy(orbitals, dens_out, K_out)
        dx = x_out - x_in
        res = problem.residual_norm(dx)
        de = en["total"] - e_prev
        history.append(IterationRecord(it, en["total"], float(de) if np.isfinite(de) else float("nan"), res))
        if not np.isfinite(en["total"]) or not np.isfinite(res):
            break
        if abs(de) < settings.energy_tol and res < settings.density_tol:
            return orbitals, en, dens_out, history, True
        e_prev = en["total"]
        x_in = mixer.step(x_in, dx)
    return orbitals, en, dens_out, history, False


def _refined(spec: MeshSpec) -> MeshSpec:
    return replace(spec, n_elements=int(spec.n_elements * 1.5) + 2, order=spec.order + 2,
                   r_first=spec.r_first / 2, r_max=spec.r_max * 1.25)


#: Confinement radius (bohr) of anions.  Semilocal functionals often leave the extra
#: electron of an anion unbound (ε_HOMO > 0, self-interaction error); such an anion has
#: no basis-set limit, its density would leak to any r_max.  A 20 bohr box is a common
#: confinement (comparable to the reach of diffuse Gaussian basis sets, common practice);
#: the result then reports the unbound orbital and the dependence on r_max.
ANION_R_MAX = 20.0


def _anion_spec(spec: MeshSpec, charge: float) -> MeshSpec:
    """Anions are solved in a box of radius ANION_R_MAX (see above)."""
    if charge >= 0:
        return spec
    return replace(spec, r_max=min(spec.r_max, ANION_R_MAX))


@one_blas_thread
def solve_atom(element, xc: str = "lda", charge: float = 0, spin="polarized", config: str | None = None, *,
               precision: str = "normal", mesh: MeshSpec | None = None, scf: SCFSettings | None = None,
               estimate_error: bool = True, raise_on_failure: bool = True,
               electron_interaction: bool = True) -> AtomResult:
    """Solve the Kohn–Sham equations of a spherical atom to the basis-set limit.

    element: symbol, name or Z (1–92); xc: alias or libxc identifiers
    (see :data:`ks1d.xc.ALIASES`); charge: net charge; spin: "polarized"
    (Hund's-rule high spin), "restricted" or an integer 2S; config: explicit
    configuration string (see :mod:`ks1d.occupations`); precision: "low",
    "normal" or "high" (ignored when ``mesh`` is given).  With
    ``estimate_error`` the converged density is re-converged on a refined
    mesh and the energy difference is reported as ``error_estimate``.
    ``electron_interaction=False`` switches off Hartree and exchange-
    correlation terms (independent electrons in −Z/r: a hydrogenic check).

    Raises InputError subclasses for bad input and ConvergenceError (with the
    iteration history) if the SCF does not converge.
    """
    t0 = time.perf_counter()
    el = _element(element)
    func = resolve_functional(xc)
    if spin not in ("polarized", "restricted") and not isinstance(spin, (int, np.integer)):
        raise SpinError(f"spin must be 'polarized', 'restricted' or an integer 2S, got {spin!r}")
    try:
        charge = float(charge)
    except (TypeError, ValueError):
        raise ConfigurationError(f"charge must be a number, got {charge!r}") from None
    cfg = build_configuration(el.Z, charge, spin, config)
    if mesh is None:
        if precision not in PRECISION:
            raise SettingsError(f"precision must be one of {', '.join(PRECISION)}, got {precision!r}")
        mesh = _anion_spec(PRECISION[precision], charge)
    settings = scf or SCFSettings()
    problem = AtomicProblem(el.Z, cfg, func, mesh, electron_interaction)
    orbitals, en, x, history, converged = run_scf(problem, settings, charge)
    if not converged and raise_on_failure:
        raise ConvergenceError(
            f"SCF for {el.symbol} ({func.name}, charge {charge:+g}, {cfg.label()}) did not converge in "
            f"{len(history)} iterations", history)
    t_scf = time.perf_counter() - t0

    error = None
    if estimate_error and converged:
        fine = AtomicProblem(el.Z, cfg, func, _refined(mesh), electron_interaction)
        start = fine.state_from(_radial_data(problem, orbitals, en, x))
        _, en_f, _, _, conv_f = run_scf(fine, settings, charge, start)
        if conv_f:
            error = abs(en_f["total"] - en["total"]) + abs(history[-1].delta_energy)
    return _make_result(el, charge, func, spin, cfg, problem, orbitals, en, x, history, converged,
                        error, settings, mesh, {"scf": t_scf, "total": time.perf_counter() - t0})


def _radial_data(problem: AtomicProblem, orbitals: dict, en: dict, x: np.ndarray) -> RadialData:
    m = problem.mesh
    spin_names = ("up", "down") if problem.ns == 2 else ("both",)
    coeffs, us = {}, {}
    for ch in problem.channels:
        C, _ = orbitals[(ch.spin, ch.l)]
        u, _ = m.values(C)
        for n, f in ch.shells:
            key = (n, ch.l, spin_names[ch.spin])
            coeffs[key] = (C[:, n - ch.l - 1].copy(), f)
            us[key] = u[n - ch.l - 1].ravel()
    xcv = en["_xc"]
    return RadialData(r=m.r.ravel(), weights=m.w.ravel(), density=x[0].reshape(problem.ns, -1),
                      v_hartree=en["_v_h"].ravel(), v_xc=xcv.vrho, orbitals=us, mesh=m, coefficients=coeffs)


def _make_result(el, charge, func, spin, cfg, problem, orbitals, en, x, history, converged, error,
                 settings, mesh, timings) -> AtomResult:
    m = problem.mesh
    spin_names = ("up", "down") if problem.ns == 2 else ("both",)
    orbs = []
    for ch in problem.channels:
        _, eps = orbitals[(ch.spin, ch.l)]
        for n, f in ch.shells:
            orbs.append(Orbital(n=n, l=ch.l, spin=spin_names[ch.spin], occupation=float(f),
                                energy=float(eps[n - ch.l - 1])))
    # sub-shells with zero electrons in one spin channel still have an orbital energy of the other
    orbs.sort(key=lambda o: (o.spin != "up" and o.spin != "both", o.n, o.l))
    comp = {k: v for k, v in en.items() if not k.startswith("_") and k != "total"}
    potential = comp["nuclear_attraction"] + comp["hartree"] + comp["exchange_correlation"] + comp["exact_exchange"]
    virial_ratio = -potential / comp["kinetic"]
    dxc = problem.scaled_xc_derivative(orbitals)
    virial_res = (2 * comp["kinetic"] + comp["nuclear_attraction"] + comp["hartree"] + comp["exact_exchange"]
                  + dxc) / abs(en["total"])
    gauss = abs(total_charge(m, x[0].sum(axis=0)) - problem.n_electrons)
    warnings = []
    for o in orbs:
        if o.occupation > 0 and o.energy >= 0:
            warnings.append(f"occupied orbital {o.label} ({o.spin}) is unbound: ε = {o.energy:+.6f} Ha ≥ 0; "
                            f"its density is confined by the mesh boundary r_max = {m.r_max:g} bohr and the "
                            "energy depends on that radius")
    if problem.exx:
        partial = [s for s in cfg.shells
                   for f in ((s.up, s.down) if cfg.polarized else (s.occupation / 2,))
                   if 1e-12 < f < s.capacity_per_spin - 1e-12]
        if partial:
            warnings.append(
                "exact exchange of the fractionally occupied sub-shell(s) "
                + ", ".join(sorted({x.label for x in partial}))
                + " uses the equal-fractional-occupation (ensemble) form; for open shells its energy lies "
                "above that of any single determinant (by ~0.1-0.2 Ha in HF for C or O)")
    if gauss > 1e-6:
        warnings.append(f"Gauss's law check: ∫ρ misses {gauss:.1e} electrons inside r_max = {m.r_max} bohr")
    spin_label = spin if isinstance(spin, str) else f"2S={spin}"
    return AtomResult(
        element=el.symbol, Z=el.Z, charge=float(charge), xc=func.name, functional=func.to_dict(),
        spin=spin_label, configuration=cfg.label(), total_energy=float(en["total"]), components=comp,
        orbitals=tuple(orbs), converged=converged, iterations=len(history), history=tuple(history),
        virial_ratio=float(virial_ratio), virial_residual=float(virial_res), gauss_law_error=float(gauss),
        error_estimate=None if error is None else float(error), warnings=tuple(warnings),
        settings={"mesh": mesh.to_dict(), "basis_size": m.size, "scf": vars(settings).copy()},
        version=__version__, timings=timings, radial=_radial_data(problem, orbitals, en, x),
    )
