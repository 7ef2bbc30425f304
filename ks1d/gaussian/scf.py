"""Kohn–Sham SCF for molecules in a Gaussian basis (restricted and unrestricted).

For spin channel σ the generalised Kohn–Sham (Roothaan–Hall / Pople–Nesbet)
equations read F^σ C^σ = S C^σ ε^σ with

    F^σ = T + V^nuc + J[D] + V^σ_xc − K_x[D^σ],
    K_x = c_sr K[1/r] + (c_lr − c_sr) K[erf(ωr)/r]

(c_sr, c_lr, ω from the functional; K_x = 0 for semilocal functionals) and

    E = Tr D(T + V^nuc) + ½ Tr D J[D] + E_xc[ρ] − ½ Σ_σ Tr D^σ K_x[D^σ] + E_nn.

(For restricted orbitals D^α = D^β = D/2.)  The loop extrapolates Fock
matrices with DIIS on the orbital-gradient commutator e = Xᵀ(F D S − S D F)X
(P. Pulay, Chem. Phys. Lett. 73, 393 (1980); J. Comput. Chem. 3, 556
(1982)), with X the canonical orthogonaliser of S.  If the residual stalls
or the energy rises, it falls back for a few iterations to damped Fock
matrices with a virtual-space level shift (V. R. Saunders and I. H. Hillier,
Int. J. Quantum Chem. 7, 699 (1973)), then resumes DIIS.  Convergence
requires both |ΔE| < energy_tolerance and max|e| < residual_tolerance
(:class:`ks1d.results.SCFOptions`).

The SCF policy — when density fitting hands over to exact builds, when the
fallback starts and how strong it is — is a set of named constants below;
:func:`solve_molecule` reads as its steps: set up, build one-electron
matrices and the grid, guess, iterate, analyse.
"""
from __future__ import annotations

import time
from dataclasses import dataclass, replace

import numpy as np

from .._version import __version__
from ..errors import ConvergenceError, IterationRecord, SettingsError, SpinError, UnsupportedFunctional
from ..mixing import diis_coefficients
from ..results import SPIN_TREATMENTS, EnergyComponents, SCFOptions, multiplicity_of
from ..xc import resolve_functional
from .basis import build_basis, check_electron_count
from .coulomb import FittedCoulomb, FittedExchange, TwoElectronBuilder
from .density import BasisOnGrid, xc_matrices
from .geometry import nuclear_repulsion, read_geometry
from .grid import build_grid, grid_level
from .guess import guess_fock
from .occupations import aufbau, fermi_dirac
from .result import ConvergedState, MolecularOrbital, MoleculeResult


def canonical_orthogonaliser(S: np.ndarray, threshold: float = 1e-8) -> np.ndarray:
    """X = U s^(−½) over eigenvectors of S with eigenvalue > threshold (XᵀSX = 1)."""
    s, U = np.linalg.eigh(S)
    keep = s > threshold
    return U[:, keep] / np.sqrt(s[keep])


def spin_square(C: tuple, occ: tuple, S: np.ndarray) -> float:
    """⟨S²⟩ = S_z(S_z+1) + N_β − Σ_ij f_iα f_jβ |⟨φ_iα|φ_jβ⟩|² for one determinant.

    (A. Szabo and N. S. Ostlund, Modern Quantum Chemistry, eq. 2.271.)
    """
    na, nb = occ[0].sum(), occ[1].sum()
    sz = 0.5 * (na - nb)
    O = C[0].T @ S @ C[1]
    return float(sz * (sz + 1) + nb - np.einsum("i,j,ij->", occ[0], occ[1], O**2))


# ------------------------------------------------------------------ SCF policy
#: SCF defaults of the Gaussian solver (see :class:`ks1d.results.SCFOptions`); the residual is
#: max |Xᵀ(FDS − SDF)X|, the orbital-gradient commutator in the orthonormal basis.
MOLECULE_SCF_DEFAULTS = SCFOptions(max_iterations=100, energy_tolerance=1e-8, residual_tolerance=1e-5,
                                   damping=0.0, history=8, level_shift=0.0, smearing=0.0)
#: the options a Gaussian-solver ConvergenceError may suggest: (SCFOptions field, CLI flag)
MOLECULE_REMEDIES = (("damping", "--damping"), ("level_shift", "--level-shift"), ("smearing", "--smearing"),
                     ("max_iterations", "--max-iterations"))

#: weight of the guess Fock matrix in the first SCF step (damps the initial overshoot)
FIRST_STEP_MIX = 0.5
#: basis size from which density-fitted J accelerates the early iterations by default
FITTING_MIN_FUNCTIONS = 100
#: orbital gradient at which fitted J/K hand over to the first exact build
FIT_SWITCH_GRADIENT = 1e-4
#: the "corrected" (fitted + frozen exact-minus-fitted) stage returns to an exact build after this
#: many steps, or once gradient and |ΔE| are below this fraction of their tolerances
CORRECTED_MAX_STEPS = 8
CORRECTED_EXIT_FRACTION = 0.3
#: user damping and level shift act only while the orbital gradient exceeds this
DAMPING_GRADIENT = 1e-3
#: the fallback stage (damped, level-shifted Fock matrices) starts after FALLBACK_EARLIEST iterations
#: when the gradient has not dropped below STALL_IMPROVEMENT × its best for STALL_ITERATIONS iterations,
#: or the energy rose by more than RISE_TRIGGER hartree, and lasts FALLBACK_STEPS iterations
FALLBACK_EARLIEST = 3
STALL_IMPROVEMENT = 0.8
STALL_ITERATIONS = 6
RISE_TRIGGER = 1e-2
FALLBACK_STEPS = 8
FALLBACK_DAMPING = 0.5
FALLBACK_LEVEL_SHIFT = 0.3


class _FockDIIS:
    """DIIS over Fock matrices (Pulay 1982) that keeps the densities of its history.

    The densities let the history be corrected when the Fock builder changes
    (fitted → exact Coulomb): F_i ← F_i + ΔF, e_i recomputed from (F_i, D_i).
    """

    def __init__(self, size: int):
        self.size = size
        self.reset()

    def reset(self) -> None:
        self._F, self._e, self._D = [], [], []

    def step(self, F, err, D):
        self._F.append(F.copy())
        self._e.append(err.copy())
        self._D.append(D.copy())
        if len(self._F) > self.size:
            del self._F[0], self._e[0], self._D[0]
        if len(self._F) < 2:
            return F
        c = diis_coefficients(self._e)
        return sum(ci * Fi for ci, Fi in zip(c, self._F))

    def shift_history(self, dF, commutators) -> None:
        self._F = [Fi + dF for Fi in self._F]
        self._e = [commutators(Fi, Di) for Fi, Di in zip(self._F, self._D)]


class _FockBuilder:
    """F^σ[D] and the energy terms, with incremental J/K builds."""

    def __init__(self, basis, func, bog, hcore, T, Vn, restricted, rebuild_every=10,
                 fitting=True):
        self.func = func
        self.bog = bog
        self.hcore, self.T, self.Vn = hcore, T, Vn
        self.restricted = restricted
        self.eri = TwoElectronBuilder(basis)
        t0 = time.perf_counter()
        self.fit = FittedCoulomb(basis) if fitting else None
        self.can_fit = bool(self.fit is not None and self.fit.available)
        self.kfit = None
        if self.can_fit and func.is_hybrid and any(om == 0.0 for om, _ in self._kernels()):
            kfit = FittedExchange(basis)
            self.kfit = kfit if kfit.available else None
        self.dK = None
        # "fit": fitted J; "exact": exact J; "corrected": fitted J + ΔJ of the last exact build
        self.mode = "fit" if self.can_fit else "exact"
        self.dJ = None
        self.time_fit_setup = time.perf_counter() - t0
        self.rebuild_every = rebuild_every
        self._last = None
        self._calls = 0
        self.time_jk = 0.0
        self.time_xc = 0.0
        self.last_electrons = None

    def _kernels(self):
        """(omega, coefficient) pairs of the exchange kernel K_x; omega 0 = 1/r."""
        f = self.func
        if not f.is_hybrid:
            return []
        if f.omega == 0.0 or not f.is_range_separated:
            return [(0.0, f.exx_sr)]
        terms = []
        if f.exx_sr != 0.0:
            terms.append((0.0, f.exx_sr))
        if f.exx_lr - f.exx_sr != 0.0:
            terms.append((f.omega, f.exx_lr - f.exx_sr))
        return terms

    def _two_electron(self, D):
        """J (summed over spins) and K_x per channel.

        Exact builds are incremental (ΔD from the previous exact build).  In the
        "fit"/"corrected" modes J and the full-range K come from density fitting
        (plus the frozen exact-minus-fitted correction); attenuated K is always exact.
        """
        kernels = self._kernels()
        if self.mode != "exact":
            J = self.fit.build(D)
            if self.mode == "corrected":
                J = J + self.dJ
            Kx = np.zeros_like(D)
            for omega, c in kernels:
                if omega == 0.0 and self.kfit is not None:
                    K = self.kfit.build(D)
                    if self.mode == "corrected":
                        K = K + self.dK
                    Kx += c * K
                else:
                    Kx += c * self.eri.build(D, with_j=False, with_k=True, omega=omega)[1]
            return J, Kx
        full = self._last is None or self._calls % self.rebuild_every == 0
        dD = D if full else D - self._last[0]
        with_k0 = bool(kernels) and kernels[0][0] == 0.0
        J, K0 = self.eri.build(dD, with_j=True, with_k=with_k0)
        J = J.sum(axis=0)
        Ks = [K0 if omega == 0.0 else self.eri.build(dD, with_j=False, with_k=True, omega=omega)[1]
              for omega, _ in kernels]
        if not full:
            J = J + self._last[1]
            Ks = [K + Kold for K, Kold in zip(Ks, self._last[2])]
        self._last = (D.copy(), J, Ks)
        Kx = np.zeros_like(D)
        for (_omega, c), K in zip(kernels, Ks):
            Kx += c * K
        if self.can_fit:
            self.dJ = J - self.fit.build(D)
            if self.kfit is not None and with_k0:
                self.dK = Ks[0] - self.kfit.build(D)
        self._calls += 1
        return J, Kx

    def __call__(self, D):
        t0 = time.perf_counter()
        J, Kx = self._two_electron(D)
        t1 = time.perf_counter()
        xc = xc_matrices(self.func, self.bog, D)
        t2 = time.perf_counter()
        self.time_jk += t1 - t0
        self.time_xc += t2 - t1
        self.last_electrons = xc.electrons
        Dtot = D.sum(axis=0)
        if self.restricted:
            F = (self.hcore + J + xc.matrices[0] - 0.5 * Kx[0])[None]
            exx = -0.25 * float(np.vdot(Dtot, Kx[0]))
        else:
            F = self.hcore[None] + J[None] + xc.matrices - Kx
            exx = -0.5 * float(np.vdot(D[0], Kx[0]) + np.vdot(D[1], Kx[1]))
        parts = dict(kinetic=float(np.vdot(Dtot, self.T)),
                     nuclear_attraction=float(np.vdot(Dtot, self.Vn)),
                     coulomb=0.5 * float(np.vdot(Dtot, J)),
                     exchange_correlation=xc.energy,
                     exact_exchange=exx)
        return F, parts


@dataclass(frozen=True, eq=False)
class _Problem:
    """What the loop needs: geometry, functional, basis, grid values, electron counts, options."""

    geom: object
    func: object
    bset: object
    lvl: object
    restricted: bool
    n_alpha: int
    n_beta: int
    options: SCFOptions

    @property
    def ns(self) -> int:
        return 1 if self.restricted else 2

    @property
    def capacity(self) -> float:
        return 2.0 if self.restricted else 1.0

    @property
    def counts(self) -> tuple:
        return (self.n_alpha + self.n_beta,) if self.restricted else (self.n_alpha, self.n_beta)


@dataclass(frozen=True, eq=False)
class _OneElectron:
    """Overlap, kinetic and nuclear-attraction matrices, the orthogonaliser and E_nn."""

    S: np.ndarray
    T: np.ndarray
    Vn: np.ndarray
    X: np.ndarray
    e_nn: float

    @property
    def hcore(self) -> np.ndarray:
        return self.T + self.Vn


class _Orbitals:
    """Diagonalisation, occupations, densities and orbital gradients of one problem."""

    def __init__(self, problem: _Problem, one: _OneElectron):
        self.p, self.one = problem, one

    def diagonalise(self, F):
        p, X = self.p, self.one.X
        smearing = p.options.smearing
        Cs, es, fs = [], [], []
        for s in range(p.ns):
            e, c = np.linalg.eigh(X.T @ F[s] @ X)
            C = X @ c
            f = (fermi_dirac(e, p.counts[s], p.capacity, smearing) if smearing > 0
                 else aufbau(e, p.counts[s], p.capacity))
            Cs.append(C)
            es.append(e)
            fs.append(f)
        return Cs, es, fs

    @staticmethod
    def density(Cs, fs):
        return np.array([(C * f) @ C.T for C, f in zip(Cs, fs)])

    def commutators(self, F, D):
        S, X = self.one.S, self.one.X
        return np.array([X.T @ (F[s] @ D[s] @ S - S @ D[s] @ F[s]) @ X for s in range(self.p.ns)])


def _set_up(geometry, basis, xc, charge, multiplicity, spin, grid, scf) -> _Problem:
    """Check and resolve every input before any integral is computed."""
    options = SCFOptions.coerce(scf).resolved(MOLECULE_SCF_DEFAULTS, "Gaussian solver")
    try:
        func = resolve_functional(xc)
    except UnsupportedFunctional as exc:
        raise UnsupportedFunctional(f"{exc} (Gaussian solver)") from None
    geom = read_geometry(geometry)
    n_alpha, n_beta = check_electron_count(geom, charge, multiplicity)
    if spin is None:
        spin = "restricted" if n_alpha == n_beta else "polarized"
    if spin not in SPIN_TREATMENTS:
        raise SpinError(f"spin must be 'restricted' or 'polarized' (or None: restricted for singlets), got {spin!r}")
    restricted = spin == "restricted"
    if restricted and n_alpha != n_beta:
        raise SpinError(
            f"restricted (closed-shell) orbitals need multiplicity 1, got {multiplicity}; "
            "use spin='polarized' (unrestricted orbitals) for open shells")
    lvl = grid_level(grid)
    bset = build_basis(geom, basis, charge, multiplicity)
    if max(n_alpha, n_beta) > bset.nao:
        raise SettingsError(f"basis has {bset.nao} functions, too few for {max(n_alpha, n_beta)} electrons of one spin")
    return _Problem(geom, func, bset, lvl, restricted, n_alpha, n_beta, options)


def _one_electron(problem: _Problem) -> _OneElectron:
    mol = problem.bset.mol
    S = mol.intor_symmetric("int1e_ovlp")
    T = mol.intor_symmetric("int1e_kin")
    Vn = mol.intor_symmetric("int1e_nuc")
    return _OneElectron(S=S, T=T, Vn=Vn, X=canonical_orthogonaliser(S), e_nn=nuclear_repulsion(problem.geom))


@dataclass
class _Outcome:
    """The converged loop: last Fock matrix, its input density, energy parts and history."""

    F: np.ndarray
    D: np.ndarray
    parts: dict
    energy: float
    history: list
    fock: _FockBuilder
    t_diag: float


def _iterate(p: _Problem, one: _OneElectron, orb: _Orbitals, fock: _FockBuilder, F_guess: np.ndarray,
             fit_switch: float, progress=None) -> _Outcome:
    """DIIS on the orbital gradient with the fitted → exact Coulomb policy and the fallback stage."""
    opt = p.options
    S = one.S
    Cs, es, fs = orb.diagonalise(F_guess)
    D = orb.density(Cs, fs)
    mixer = _FockDIIS(opt.history)
    history: list[IterationRecord] = []
    e_old = None
    best, since_best = np.inf, 0
    corrected_steps = 0
    fallback_left = 0
    F_in_prev = None
    t_diag = 0.0
    for it in range(1, opt.max_iterations + 1):
        F, parts = fock(D)
        energy = sum(parts.values()) + one.e_nn
        err = orb.commutators(F, D)
        gnorm = float(np.abs(err).max())
        dE = energy - e_old if e_old is not None else np.inf
        history.append(IterationRecord(it, energy, float(dE) if np.isfinite(dE) else float("nan"), gnorm))
        exact_now = fock.mode == "exact"
        if fock.mode == "fit" and (gnorm < fit_switch or it >= opt.max_iterations // 2):
            exact_now = True
        if fock.mode == "corrected":
            corrected_steps += 1
            if ((gnorm < CORRECTED_EXIT_FRACTION * opt.residual_tolerance
                 and abs(dE) < CORRECTED_EXIT_FRACTION * opt.energy_tolerance)
                    or corrected_steps >= CORRECTED_MAX_STEPS):
                exact_now = True
        if exact_now and fock.mode != "exact":
            # exact Coulomb at this density; shift the DIIS history by the change ΔF of the
            # Fock matrix (fitted → exact) and judge convergence on the exact quantities
            F_approx = F
            fock.mode = "exact"
            F, parts = fock(D)
            energy = sum(parts.values()) + one.e_nn
            err = orb.commutators(F, D)
            gnorm = float(np.abs(err).max())
            mixer.shift_history(F - F_approx, orb.commutators)
            # dE keeps the change between this and the previous iteration measured with one
            # and the same (approximate) operator; the exact-minus-approximate offset cancels
            history[-1] = IterationRecord(it, energy, float(dE) if np.isfinite(dE) else float("nan"), gnorm)
            best, since_best = np.inf, 0
        if progress is not None:
            progress(history[-1])
        if exact_now:
            if abs(dE) < opt.energy_tolerance and gnorm < opt.residual_tolerance:
                return _Outcome(F, D, parts, energy, history, fock, t_diag)
            if fock.can_fit:
                # continue with fitted J plus the exact correction ΔJ frozen at this density
                fock.mode = "corrected"
                corrected_steps = 0
        e_old = energy
        # --- choose the stage: DIIS, or the damped and level-shifted fallback
        if gnorm < STALL_IMPROVEMENT * best:
            best, since_best = gnorm, 0
        else:
            since_best += 1
        if fallback_left == 0 and it > FALLBACK_EARLIEST and (since_best >= STALL_ITERATIONS or dE > RISE_TRIGGER):
            fallback_left = FALLBACK_STEPS
            mixer.reset()
            best, since_best = np.inf, 0
        t0 = time.perf_counter()
        if fallback_left > 0:
            fallback_left -= 1
            beta, shift = max(opt.damping, FALLBACK_DAMPING), max(opt.level_shift, FALLBACK_LEVEL_SHIFT)
            F_in = F if F_in_prev is None else (1 - beta) * F + beta * F_in_prev
            if fallback_left == 0:
                mixer.reset()
        else:
            F_in = mixer.step(F, err, D)
            if it == 1 and FIRST_STEP_MIX > 0:
                # the first Fock matrix overshoots (charge sloshing away from the atomic
                # potentials); average it with the guess Fock matrix
                F_in = (1 - FIRST_STEP_MIX) * F_in + FIRST_STEP_MIX * F_guess
            far = gnorm > DAMPING_GRADIENT
            beta = opt.damping if far else 0.0
            shift = opt.level_shift if far else 0.0
            if beta > 0 and F_in_prev is not None:
                F_in = (1 - beta) * F_in + beta * F_in_prev
        F_in_prev = F_in
        if shift > 0:
            F_in = np.array([F_in[s] + shift * (S - S @ D[s] @ S / p.capacity) for s in range(p.ns)])
        Cs, es, fs = orb.diagonalise(F_in)
        D = orb.density(Cs, fs)
        t_diag += time.perf_counter() - t0
    raise ConvergenceError(
        f"SCF did not converge in {opt.max_iterations} iterations "
        f"(energy tolerance {opt.energy_tolerance:g} Ha, residual tolerance {opt.residual_tolerance:g})",
        history, MOLECULE_REMEDIES)


def solve_molecule(geometry, basis="def2-svp", xc="pbe", charge: int = 0, multiplicity: int = 1, *,
                   spin: str | None = None, grid="default", guess: str = "atoms",
                   scf: SCFOptions | dict | None = None, ao_cache_mb: float = 1024.0,
                   coulomb_fitting: bool | None = None, fit_switch: float = FIT_SWITCH_GRADIENT,
                   progress=None, gradient: bool = False, start=None,
                   estimate_grid_error: bool = True) -> MoleculeResult:
    """Self-consistent Kohn–Sham (or Hartree–Fock) ground state of a molecule.

    geometry: XYZ file path, XYZ text (Å) or a :class:`~ks1d.gaussian.geometry.Geometry`.
    basis: basis name, element → name mapping (optional ``"default"`` key) or basis file.
    xc: ks1d alias or libxc identifier (``"pbe"``, ``"gga_x_pbe,gga_c_pbe"``, ``"hf"``…).
    multiplicity: 2S+1; ``spin``: "restricted" (RKS), "polarized" (UKS) or None (restricted
    for singlets, polarized otherwise).
    grid: grid level name ("coarse", "default", "fine", "reference").
    scf: :class:`~ks1d.results.SCFOptions` or a mapping of its fields (tolerances, damping,
    level shift, Fermi–Dirac smearing width in hartree, …); unset fields take
    :data:`MOLECULE_SCF_DEFAULTS`.
    coulomb_fitting (default: on from 100 basis functions): start with density-fitted J (cheap) until the orbital
    gradient drops below ``fit_switch``; then alternate exact J builds with
    cheap iterations on J_fit[D] + (J − J_fit)[D_exact] frozen at the last
    exact build.  Convergence is only ever declared on an exact build, so
    the result carries no fitting error.
    ``progress`` (optional) is called with every SCF :class:`~ks1d.errors.IterationRecord`.
    gradient: also compute the analytic nuclear gradient (``result.gradient``, Ha/bohr;
    ``result.forces``, eV/Å; :mod:`ks1d.gaussian.gradient`); the SCF then defaults to the tighter
    :data:`GRADIENT_RESIDUAL_TOLERANCE`.
    start: a previous :class:`MoleculeResult` (same atoms and basis, e.g. the previous step of a
    geometry optimisation) whose converged orbitals, re-orthonormalised in this geometry's
    overlap, replace the initial guess.
    Raises :class:`~ks1d.errors.ConvergenceError` (with the history) if the SCF fails.
    """
    t_start = time.perf_counter()
    if gradient:
        scf = _gradient_scf_options(scf)
    p = _set_up(geometry, basis, xc, charge, multiplicity, spin, grid, scf)
    if gradient:
        _check_gradient_support(p)
    t_setup = time.perf_counter()
    one = _one_electron(p)
    mgrid = build_grid(p.geom, p.lvl)
    bog = BasisOnGrid(p.bset, mgrid, 1 if p.func.needs_gradient else 0, cache_mb=ao_cache_mb)
    t_grid = time.perf_counter()
    orb = _Orbitals(p, one)
    if start is None:
        F0, guess_used = guess_fock(guess, one.hcore, p.geom, bog)
        F_guess = np.array([F0] * p.ns)
    t_guess = time.perf_counter()
    if coulomb_fitting is None:  # exact J is cheap for small bases; fitting pays from ~100 functions
        coulomb_fitting = p.bset.nao >= FITTING_MIN_FUNCTIONS
    fock = _FockBuilder(p.bset, p.func, bog, one.hcore, one.T, one.Vn, p.restricted, fitting=coulomb_fitting)
    if start is not None:
        F_guess, guess_used = fock(_restart_density(start, p, one))[0], "previous result"
        t_guess = time.perf_counter()
    out = _iterate(p, one, orb, fock, F_guess, fit_switch, progress)
    timings = {
        "setup": t_setup - t_start,
        "grid": t_grid - t_setup,
        "guess": t_guess - t_grid,
        "coulomb_exchange": fock.time_jk + fock.time_fit_setup,
        "exchange_correlation": fock.time_xc,
        "diagonalisation": out.t_diag,
    }
    extra = {"basis": basis if isinstance(basis, (str, dict)) else str(basis), "guess": guess_used,
             "coulomb_fitting": bool(coulomb_fitting), "fit_switch": float(fit_switch)}
    res = _analyse(p, one, orb, out, mgrid, extra, timings, t_start)
    if estimate_grid_error:
        res = _with_grid_error_estimate(res, p, out)
    return _attach_state_and_gradient(res, p, orb, out, bog, gradient)


#: the level whose E_xc difference estimates the grid error of each named level
NEXT_FINER_GRID = {"coarse": "default", "default": "fine", "fine": "reference"}


def _with_grid_error_estimate(res: MoleculeResult, p: _Problem, out: _Outcome):
    """The result with ``grid_error_estimate`` = E_xc[ρ](next finer grid) − E_xc[ρ](used grid).

    One extra evaluation of the semilocal functional on the converged density matrix, no
    extra SCF: the first-order change of the total energy with the grid at fixed density
    (the density response to the grid is second order, because E is stationary in D).
    """
    if not p.func.has_semilocal:  # Hartree-Fock: no grid at all
        return replace(res, grid_error_estimate=0.0, error_estimate=0.0)
    finer = NEXT_FINER_GRID.get(p.lvl.name)
    if finer is None or p.lvl != grid_level(p.lvl.name):  # the reference level, or a custom grid
        return res
    t0 = time.perf_counter()
    e_used = out.parts["exchange_correlation"]  # the last Fock build's E_xc, of this same density out.D
    fine_grid = build_grid(p.geom, grid_level(finer))
    # the values are used once: no AO cache, and the energy alone (no potential matrices)
    fine_bog = BasisOnGrid(p.bset, fine_grid, 1 if p.func.needs_gradient else 0, cache_mb=0.0)
    e_fine = xc_matrices(p.func, fine_bog, out.D, potentials=False).energy
    delta = float(e_fine - e_used)
    timings = dict(res.timings, grid_error_estimate=time.perf_counter() - t0)
    settings = dict(res.settings, grid_error_reference_level=finer)
    return replace(res, grid_error_estimate=delta, error_estimate=abs(delta), timings=timings, settings=settings)


def _analyse(p: _Problem, one: _OneElectron, orb: _Orbitals, out: _Outcome, mgrid, extra: dict,
             timings: dict, t_start: float) -> MoleculeResult:
    """Orbitals, populations, dipole and ⟨S²⟩ of the converged density (input of the last iteration)."""
    Cs, es, fs = orb.diagonalise(out.F)
    D, S, geom, bset = out.D, one.S, p.geom, p.bset
    Dtot = D.sum(axis=0)
    labels = ("both",) if p.restricted else ("alpha", "beta")
    orbitals = tuple(MolecularOrbital(labels[s], i, float(es[s][i]), float(fs[s][i]))
                     for s in range(p.ns) for i in range(len(es[s])))
    occ_e = [e for s in range(p.ns) for e, f in zip(es[s], fs[s]) if f > 0.5 * p.capacity]
    vir_e = [e for s in range(p.ns) for e, f in zip(es[s], fs[s]) if f <= 0.5 * p.capacity]
    homo = float(max(occ_e)) if occ_e else None
    lumo = float(min(vir_e)) if vir_e else None
    gap = lumo - homo if homo is not None and lumo is not None else None
    pop = np.einsum("ij,ji->i", Dtot, S)
    charges = np.array(geom.numbers, dtype=float) - np.bincount(bset.ao_atom, weights=pop, minlength=geom.natom)
    r_ints = bset.mol.intor_symmetric("int1e_r", comp=3)
    dip = np.array(geom.numbers, dtype=float) @ geom.coordinates - np.einsum("kij,ji->k", r_ints, Dtot)
    s2 = 0.0 if p.restricted else spin_square(tuple(Cs), tuple(fs), S)
    comps = EnergyComponents(nuclear_repulsion=one.e_nn, **out.parts)
    warnings = []
    if p.options.smearing > 0:
        warnings.append(f"Fermi-Dirac smearing of {p.options.smearing:g} Ha: fractional occupations, the "
                        "energy is that of the smeared (ensemble) state")
    timings = dict(timings, total=time.perf_counter() - t_start)
    settings = {
        "basis": extra["basis"],
        "basis_per_element": bset.description,
        "xc": p.func.to_dict(),
        "grid_level": p.lvl.name,
        "guess": extra["guess"],
        "scf": p.options.to_dict(),
        "coulomb_fitting": extra["coulomb_fitting"],
        "fit_switch": extra["fit_switch"],
        "integrated_electrons": [float(x) for x in out.fock.last_electrons],
    }
    return MoleculeResult(
        total_energy=float(out.energy), components=comps, converged=True, iterations=len(out.history),
        history=tuple(out.history), spin="restricted" if p.restricted else "polarized",
        multiplicity=multiplicity_of(p.n_alpha, p.n_beta), n_alpha=int(p.n_alpha), n_beta=int(p.n_beta),
        charge=int(round(geom.nuclear_charge - p.n_alpha - p.n_beta)), functional=p.func.to_dict(),
        warnings=tuple(warnings), error_estimate=None, version=__version__, settings=settings, timings=timings,
        orbitals=orbitals, homo_energy=homo, lumo_energy=lumo, homo_lumo_gap=gap,
        mulliken_charges=tuple(float(q) for q in charges), dipole=tuple(float(x) for x in dip),
        spin_square=s2, geometry=geom.to_dict(), basis_functions=bset.nao, grid_points=mgrid.size)


# ------------------------------------------------ restarts and nuclear gradients
#: orbital-gradient tolerance of SCFs whose nuclear gradient is wanted (unless the caller sets one):
#: the gradient error is first order in the SCF residual; 1e-7 keeps it below ~1e-6 Ha/bohr
GRADIENT_RESIDUAL_TOLERANCE = 1e-7
GRADIENT_ENERGY_TOLERANCE = 1e-10


def _gradient_scf_options(scf) -> SCFOptions:
    opts = SCFOptions.coerce(scf)
    return replace(opts,
                   residual_tolerance=opts.residual_tolerance or GRADIENT_RESIDUAL_TOLERANCE,
                   energy_tolerance=opts.energy_tolerance or GRADIENT_ENERGY_TOLERANCE)


def _check_gradient_support(p: _Problem) -> None:
    """Refuse, before the SCF, Hamiltonians whose derivative integrals the gradient lacks."""
    if p.bset.mol.has_ecp():
        raise SettingsError("analytic gradients with effective core potentials are not implemented yet; "
                            "use an all-electron basis for gradients, optimisations and frequencies")
    relativity = getattr(p, "relativity", None)
    if relativity not in (None, "none"):
        raise SettingsError(f"analytic gradients with the {relativity!r} Hamiltonian are not implemented yet; "
                            "use relativity='none' for gradients, optimisations and frequencies")


def _restart_density(start, p: _Problem, one: _OneElectron) -> np.ndarray:
    """Spin density matrices from a previous result's occupied orbitals C (Löwdin-orthonormalised in
    this overlap S: C ← C (CᵀSC)^(−½)), converted between restricted and polarized channels."""
    state = getattr(start, "state", None)
    if state is None:
        raise SettingsError("start must be a MoleculeResult of solve_molecule (with its converged state), "
                            f"got {type(start).__name__}")
    if tuple(state.symbols) != tuple(p.geom.symbols) or dict(state.basis) != dict(p.bset.description) \
            or state.densities.shape[-1] != p.bset.nao:
        raise SettingsError("start: the previous result has other atoms or another basis than this job "
                            f"({' '.join(state.symbols)}, {state.densities.shape[-1]} functions vs "
                            f"{' '.join(p.geom.symbols)}, {p.bset.nao} functions)")
    dms = []
    for C, f in zip(state.occupied_orbitals, state.occupations):
        s, U = np.linalg.eigh(C.T @ one.S @ C)
        C = C @ (U / np.sqrt(s)) @ U.T
        dms.append((C * f) @ C.T)
    dms = np.array(dms)
    if p.restricted and len(dms) == 2:
        dms = dms.sum(axis=0, keepdims=True)
    elif not p.restricted and len(dms) == 1:
        dms = np.array([0.5 * dms[0]] * 2)
    return dms


def _attach_state_and_gradient(res: MoleculeResult, p: _Problem, orb: _Orbitals, out: _Outcome, bog,
                               want_gradient: bool) -> MoleculeResult:
    """The converged state (orbitals of the last Fock matrix) and, if asked, the nuclear gradient."""
    from .gradient import energy_weighted_density, nuclear_gradient

    t0 = time.perf_counter()
    Cs, es, fs = orb.diagonalise(out.F)
    D = orb.density(Cs, fs)
    W = energy_weighted_density(Cs, es, fs)
    occ = [f > 1e-14 for f in fs]
    state = ConvergedState(densities=D, energy_weighted=W, occupied_orbitals=tuple(C[:, o] for C, o in zip(Cs, occ)),
                           occupations=tuple(f[o] for f, o in zip(fs, occ)), symbols=tuple(p.geom.symbols),
                           basis=dict(p.bset.description))
    if not want_gradient:
        return replace(res, state=state)
    terms = nuclear_gradient(p.func, p.bset, bog, p.geom, D, W, p.restricted)
    grad = terms.total
    grad.flags.writeable = False
    warnings = list(res.warnings)
    if p.options.smearing > 0:
        warnings.append("with smearing the gradient is that of the Mermin free energy E - T S "
                        "(the smeared ensemble), not of total_energy alone")
    timings = dict(res.timings, gradient=time.perf_counter() - t0)
    timings["total"] = res.timings["total"] + timings["gradient"]
    settings = dict(res.settings, gradient={"translation_defect": terms.translation_defect,
                                            "grid_response": True,
                                            "grid_response_size": float(np.abs(terms.grid_response).max())})
    return replace(res, gradient=grad, state=state, gradient_terms=terms, warnings=tuple(warnings), timings=timings,
                   settings=settings)
