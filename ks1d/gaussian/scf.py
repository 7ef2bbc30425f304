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
requires both |ΔE| < energy_tolerance and max|e| < gradient_tolerance.
"""
from __future__ import annotations

import time

import numpy as np

from .. import __version__
from ..errors import ConvergenceError, IterationRecord, SettingsError, SpinError, UnsupportedFunctional
from ..mixing import diis_coefficients
from ..xc import resolve_functional
from .basis import build_basis, check_electron_count
from .coulomb import FittedCoulomb, FittedExchange, TwoElectronBuilder
from .density import BasisOnGrid, xc_matrices
from .geometry import nuclear_repulsion, read_geometry
from .grid import build_grid, grid_level
from .guess import guess_fock
from .occupations import aufbau, fermi_dirac
from .result import EnergyComponents, MolecularOrbital, MoleculeResult


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


#: weight of the guess Fock matrix in the first SCF step (damps the initial overshoot)
FIRST_STEP_MIX = 0.5

#: basis size from which density-fitted J accelerates the early iterations by default
FITTING_MIN_FUNCTIONS = 100


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
        for (omega, c), K in zip(kernels, Ks):
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


def _validate(max_iterations, energy_tolerance, gradient_tolerance, smearing, level_shift,
              damping, diis_size):
    if int(max_iterations) != max_iterations or max_iterations < 1:
        raise SettingsError(f"max_iterations must be a positive integer, got {max_iterations}")
    for name, v in (("energy_tolerance", energy_tolerance), ("gradient_tolerance", gradient_tolerance)):
        if not (v > 0 and np.isfinite(v)):
            raise SettingsError(f"{name} must be a positive number, got {v}")
    if not smearing >= 0:
        raise SettingsError(f"smearing width must be ≥ 0 hartree, got {smearing}")
    if not level_shift >= 0:
        raise SettingsError(f"level_shift must be ≥ 0 hartree, got {level_shift}")
    if not 0 <= damping < 1:
        raise SettingsError(f"damping must lie in [0, 1), got {damping}")
    if int(diis_size) != diis_size or diis_size < 2:
        raise SettingsError(f"diis_size must be an integer ≥ 2, got {diis_size}")


def solve_molecule(geometry, basis="def2-svp", xc="pbe", charge: int = 0, multiplicity: int = 1, *,
                   restricted: bool | None = None, grid="default", guess: str = "atoms",
                   max_iterations: int = 100, energy_tolerance: float = 1e-8,
                   gradient_tolerance: float = 1e-5, smearing: float = 0.0,
                   level_shift: float = 0.0, damping: float = 0.0, diis_size: int = 8,
                   ao_cache_mb: float = 1024.0, coulomb_fitting: bool | None = None,
                   fit_switch: float = 1e-4) -> MoleculeResult:
    """Self-consistent Kohn–Sham (or Hartree–Fock) ground state of a molecule.

    geometry: XYZ file path, XYZ text (Å) or a :class:`~ks1d.gaussian.geometry.Geometry`.
    basis: basis name, element → name mapping (optional ``"default"`` key) or basis file.
    xc: ks1d alias or libxc identifier (``"pbe"``, ``"gga_x_pbe,gga_c_pbe"``, ``"hf"``…).
    multiplicity: 2S+1; ``restricted`` defaults to True for singlets (RKS), else UKS.
    grid: grid level name ("coarse", "default", "fine", "reference").
    smearing: Fermi–Dirac width in hartree (0 = aufbau occupations).
    coulomb_fitting (default: on from 100 basis functions): start with density-fitted J (cheap) until the orbital
    gradient drops below ``fit_switch``; then alternate exact J builds with
    cheap iterations on J_fit[D] + (J − J_fit)[D_exact] frozen at the last
    exact build.  Convergence is only ever declared on an exact build, so
    the result carries no fitting error.
    Raises :class:`~ks1d.errors.ConvergenceError` (with the history) if the SCF fails.
    """
    t_start = time.perf_counter()
    _validate(max_iterations, energy_tolerance, gradient_tolerance, smearing, level_shift,
              damping, diis_size)
    try:
        func = resolve_functional(xc)
    except UnsupportedFunctional as exc:
        raise UnsupportedFunctional(f"{exc} (Gaussian solver)") from None
    geom = read_geometry(geometry)
    n_alpha, n_beta = check_electron_count(geom, charge, multiplicity)
    if restricted is None:
        restricted = n_alpha == n_beta
    if restricted and n_alpha != n_beta:
        raise SpinError(
            f"restricted (closed-shell) orbitals need multiplicity 1, got {multiplicity}; "
            "use restricted=False for open shells")
    lvl = grid_level(grid)
    bset = build_basis(geom, basis, charge, multiplicity)
    mol = bset.mol
    nao = bset.nao
    if max(n_alpha, n_beta) > nao:
        raise SettingsError(f"basis has {nao} functions, too few for {n_alpha} electrons of one spin")
    t_setup = time.perf_counter()

    S = mol.intor_symmetric("int1e_ovlp")
    T = mol.intor_symmetric("int1e_kin")
    Vn = mol.intor_symmetric("int1e_nuc")
    hcore = T + Vn
    X = canonical_orthogonaliser(S)
    e_nn = nuclear_repulsion(geom)

    mgrid = build_grid(geom, lvl)
    deriv = 1 if func.needs_gradient else 0
    bog = BasisOnGrid(bset, mgrid, deriv, cache_mb=ao_cache_mb)
    t_grid = time.perf_counter()

    ns = 1 if restricted else 2
    capacity = 2.0 if restricted else 1.0
    counts = (n_alpha + n_beta,) if restricted else (n_alpha, n_beta)

    def diagonalise(F):
        Cs, es, fs = [], [], []
        for s in range(ns):
            e, c = np.linalg.eigh(X.T @ F[s] @ X)
            C = X @ c
            f = (fermi_dirac(e, counts[s], capacity, smearing) if smearing > 0
                 else aufbau(e, counts[s], capacity))
            Cs.append(C)
            es.append(e)
            fs.append(f)
        return Cs, es, fs

    def density(Cs, fs):
        return np.array([(C * f) @ C.T for C, f in zip(Cs, fs)])

    def commutators(F, D):
        return np.array([X.T @ (F[s] @ D[s] @ S - S @ D[s] @ F[s]) @ X for s in range(ns)])

    F0, guess_used = guess_fock(guess, hcore, geom, bog)
    F_guess = np.array([F0] * ns)
    Cs, es, fs = diagonalise(F_guess)
    D = density(Cs, fs)
    t_guess = time.perf_counter()

    if coulomb_fitting is None:  # exact J is cheap for small bases; fitting pays from ~100 functions
        coulomb_fitting = nao >= FITTING_MIN_FUNCTIONS
    fock = _FockBuilder(bset, func, bog, hcore, T, Vn, restricted, fitting=coulomb_fitting)
    mixer = _FockDIIS(diis_size)
    history: list[IterationRecord] = []
    e_old = None
    converged = False
    best, since_best = np.inf, 0
    corrected_steps = 0
    first_step_mix = FIRST_STEP_MIX
    fallback_left = 0
    F_in_prev = None
    t_diag = 0.0
    parts = None
    for it in range(1, max_iterations + 1):
        F, parts = fock(D)
        energy = sum(parts.values()) + e_nn
        err = commutators(F, D)
        gnorm = float(np.abs(err).max())
        dE = energy - e_old if e_old is not None else np.inf
        history.append(IterationRecord(it, energy, float(dE) if np.isfinite(dE) else float("nan"), gnorm))
        exact_now = fock.mode == "exact"
        if fock.mode == "fit" and (gnorm < fit_switch or it >= max_iterations // 2):
            exact_now = True
        if fock.mode == "corrected":
            corrected_steps += 1
            if (gnorm < 0.3 * gradient_tolerance and abs(dE) < 0.3 * energy_tolerance) or corrected_steps >= 8:
                exact_now = True
        if exact_now and fock.mode != "exact":
            # exact Coulomb at this density; shift the DIIS history by the change ΔF of the
            # Fock matrix (fitted → exact) and judge convergence on the exact quantities
            F_approx = F
            fock.mode = "exact"
            F, parts = fock(D)
            energy = sum(parts.values()) + e_nn
            err = commutators(F, D)
            gnorm = float(np.abs(err).max())
            mixer.shift_history(F - F_approx, commutators)
            # dE keeps the change between this and the previous iteration measured with one
            # and the same (approximate) operator; the exact-minus-approximate offset cancels
            history[-1] = IterationRecord(it, energy, float(dE) if np.isfinite(dE) else float("nan"), gnorm)
            best, since_best = np.inf, 0
        if exact_now:
            if abs(dE) < energy_tolerance and gnorm < gradient_tolerance:
                converged = True
                break
            if fock.can_fit:
                # continue with fitted J plus the exact correction ΔJ frozen at this density
                fock.mode = "corrected"
                corrected_steps = 0
        e_old = energy
        # --- choose the stage: DIIS, or the damped and level-shifted fallback
        if gnorm < 0.8 * best:
            best, since_best = gnorm, 0
        else:
            since_best += 1
        if fallback_left == 0 and it > 3 and (since_best >= 6 or dE > 1e-2):
            fallback_left = 8
            mixer.reset()
            best, since_best = np.inf, 0
        t0 = time.perf_counter()
        if fallback_left > 0:
            fallback_left -= 1
            beta, shift = max(damping, 0.5), max(level_shift, 0.3)
            F_in = F if F_in_prev is None else (1 - beta) * F + beta * F_in_prev
            if fallback_left == 0:
                mixer.reset()
        else:
            F_in = mixer.step(F, err, D)
            if it == 1 and first_step_mix > 0:
                # the first Fock matrix overshoots (charge sloshing away from the atomic
                # potentials); average it with the guess Fock matrix
                F_in = (1 - first_step_mix) * F_in + first_step_mix * F_guess
            far = gnorm > 1e-3
            beta = damping if far else 0.0
            shift = level_shift if far else 0.0
            if beta > 0 and F_in_prev is not None:
                F_in = (1 - beta) * F_in + beta * F_in_prev
        F_in_prev = F_in
        if shift > 0:
            F_in = np.array([F_in[s] + shift * (S - S @ D[s] @ S / capacity) for s in range(ns)])
        Cs, es, fs = diagonalise(F_in)
        D = density(Cs, fs)
        t_diag += time.perf_counter() - t0
    if not converged:
        raise ConvergenceError(
            f"SCF did not converge in {max_iterations} iterations "
            f"(energy tolerance {energy_tolerance:g} Ha, gradient tolerance {gradient_tolerance:g})",
            history)

    # --- analysis of the converged density D (input of the last iteration)
    Cs, es, fs = diagonalise(F)
    Dtot = D.sum(axis=0)
    labels = ("restricted",) if restricted else ("alpha", "beta")
    orbitals = tuple(MolecularOrbital(labels[s], i, float(es[s][i]), float(fs[s][i]))
                     for s in range(ns) for i in range(len(es[s])))
    occ_e = [e for s in range(ns) for e, f in zip(es[s], fs[s]) if f > 0.5 * capacity]
    vir_e = [e for s in range(ns) for e, f in zip(es[s], fs[s]) if f <= 0.5 * capacity]
    homo = float(max(occ_e)) if occ_e else None
    lumo = float(min(vir_e)) if vir_e else None
    gap = lumo - homo if homo is not None and lumo is not None else None
    pop = np.einsum("ij,ji->i", Dtot, S)
    natm = geom.natom
    charges = np.array(geom.numbers, dtype=float) - np.bincount(bset.ao_atom, weights=pop, minlength=natm)
    r_ints = mol.intor_symmetric("int1e_r", comp=3)
    dip = np.array(geom.numbers, dtype=float) @ geom.coordinates - np.einsum("kij,ji->k", r_ints, Dtot)
    if restricted:
        s2 = 0.0
    else:
        s2 = spin_square(tuple(Cs), tuple(fs), S)
    comps = EnergyComponents(nuclear_repulsion=e_nn, **parts)
    t_end = time.perf_counter()
    timings = {
        "setup": t_setup - t_start,
        "grid": t_grid - t_setup,
        "guess": t_guess - t_grid,
        "coulomb_exchange": fock.time_jk + fock.time_fit_setup,
        "exchange_correlation": fock.time_xc,
        "diagonalisation": t_diag,
        "total": t_end - t_start,
    }
    settings = {
        "ks1d_version": __version__,
        "basis": basis if isinstance(basis, (str, dict)) else str(basis),
        "basis_per_element": bset.description,
        "xc": func.to_dict(),
        "grid_level": lvl.name,
        "guess": guess_used,
        "max_iterations": int(max_iterations),
        "energy_tolerance": float(energy_tolerance),
        "gradient_tolerance": float(gradient_tolerance),
        "smearing": float(smearing),
        "level_shift": float(level_shift),
        "damping": float(damping),
        "diis_size": int(diis_size),
        "coulomb_fitting": bool(coulomb_fitting),
        "fit_switch": float(fit_switch),
        "integrated_electrons": [float(x) for x in fock.last_electrons],
    }
    return MoleculeResult(
        total_energy=float(energy), converged=True, iterations=len(history), orbitals=orbitals,
        components=comps, homo_energy=homo, lumo_energy=lumo, homo_lumo_gap=gap,
        mulliken_charges=tuple(float(q) for q in charges), dipole=tuple(float(x) for x in dip),
        spin_square=s2, charge=int(charge), multiplicity=int(multiplicity), restricted=bool(restricted),
        n_alpha=int(n_alpha), n_beta=int(n_beta), geometry=geom.to_dict(), basis_functions=nao,
        grid_points=mgrid.size, history=tuple(history), timings=timings, settings=settings)
