"""Harmonic vibrational analysis from central differences of analytic gradients.

The Cartesian Hessian is built column by column,

    H_(Ax),(Bj) ≈ [∂E/∂R_Bj(R + h e_Ax) − ∂E/∂R_Bj(R − h e_Ax)] / (2h),   symmetrised,

from 6N analytic gradients (:mod:`ks1d.gaussian.gradient`; error O(h²) from the fourth
derivatives of E, plus the gradient noise divided by 2h).  Each displaced SCF restarts from the
converged density at R.  In mass-weighted coordinates H̃ = M^(−½) H M^(−½), the three
translations and the three rotations about the centre of mass (two for linear molecules) are
projected out by restricting H̃ to the orthogonal complement of the vectors √m_A e_x and
√m_A e_k × (R_A − R_cm) (C. Eckart, Phys. Rev. 47, 552 (1935); E. B. Wilson, J. C. Decius and
P. C. Cross, Molecular Vibrations, McGraw-Hill (1955)).  Its eigenvalues λ give the harmonic
wavenumbers ν̃ = √λ / (2πc); an imaginary frequency (λ < 0) is reported as a negative
wavenumber, −√|λ| / (2πc).  The zero-point energy is ½ Σ ħω over the real modes.

Masses are those of the most abundant isotope of each element, from
``pyscf.data.elements.COMMON_ISOTOPE_MASSES`` (the table the sweep's diatomic ω_e uses).
"""
from __future__ import annotations

import time
import warnings as _warnings
from dataclasses import dataclass

import numpy as np

from ._version import __version__
from .errors import GeometryError, SettingsError
from .serialize import plain
from .units import AMU_TO_ELECTRON_MASS, HARTREE_TO_INV_CM

#: default finite-difference step, bohr (common practice: 0.005 bohr keeps the O(h²) error of
#: the wavenumbers below ~0.1 cm⁻¹ while the gradient noise / 2h stays negligible)
DEFAULT_STEP = 0.005
#: forces above this (Ha/bohr) mean the structure is not a stationary point: the analysis warns
STATIONARY_FORCE = 1.0e-3
#: SCF settings of the displaced gradients (the Hessian divides gradient noise by 2h)
FREQUENCY_SCF = {"residual_tolerance": 1e-8, "energy_tolerance": 1e-11}


def isotope_masses(symbols) -> np.ndarray:
    """Masses (u) of the most abundant isotopes (pyscf.data.elements.COMMON_ISOTOPE_MASSES)."""
    from pyscf.data.elements import COMMON_ISOTOPE_MASSES

    from .elements import element

    return np.array([float(COMMON_ISOTOPE_MASSES[element(s).Z]) for s in symbols])


def rigid_motions(masses: np.ndarray, coordinates: np.ndarray, tol: float = 1e-6) -> np.ndarray:
    """Orthonormal mass-weighted translation and rotation vectors, (3N, 5 or 6).

    t_x = √m_A e_x, r_k = √m_A e_k × (R_A − R_cm); the rank (5 for linear molecules) is found from
    the singular values.
    """
    m = np.asarray(masses, dtype=float)
    X = np.asarray(coordinates, dtype=float)
    X = X - (m @ X) / m.sum()
    sq = np.sqrt(m)
    vecs = []
    for k in range(3):
        t = np.zeros_like(X)
        t[:, k] = sq
        vecs.append(t.ravel())
    for k in range(3):
        e = np.zeros(3)
        e[k] = 1.0
        vecs.append((sq[:, None] * np.cross(e, X)).ravel())
    U, s, _ = np.linalg.svd(np.array(vecs).T, full_matrices=False)
    return U[:, s > tol * s.max()]


@dataclass(frozen=True, eq=False)
class HarmonicResult:
    """Harmonic vibrational analysis of one structure.

    wavenumbers: cm⁻¹, ascending, one per vibrational mode (3N − 6, or 3N − 5 for linear
    molecules); imaginary modes are negative numbers.
    normal_modes: (nmodes, natoms, 3) Cartesian displacement vectors, each normalised to 1.
    reduced_masses: u, per mode, μ = 1/Σ_i L_i²/m_i for the unit mass-weighted mode L (common
    practice in quantum-chemistry output; for a heteronuclear diatomic this is
    m₁m₂(m₁+m₂)/(m₁²+m₂²), not the two-body reduced mass).
    zero_point_energy: hartree (½ Σ ħω over real modes).
    hessian: (3N, 3N) Cartesian Hessian, Ha/bohr².  masses: u.  step: the finite-difference
    step, bohr.  reference: the :class:`~ks1d.gaussian.result.MoleculeResult` at the structure.
    """

    wavenumbers: tuple
    normal_modes: np.ndarray
    reduced_masses: tuple
    zero_point_energy: float
    hessian: np.ndarray
    masses: tuple
    symbols: tuple
    linear: bool
    step: float
    max_force: float
    reference: object
    warnings: tuple
    settings: dict
    version: str
    timings: dict

    @property
    def imaginary_modes(self) -> int:
        return int(sum(1 for w in self.wavenumbers if w < 0))

    @property
    def zero_point_energy_ev(self) -> float:
        from .units import HARTREE_TO_EV

        return self.zero_point_energy * HARTREE_TO_EV

    def to_dict(self) -> dict:
        return plain({"wavenumbers": self.wavenumbers, "normal_modes": self.normal_modes,
                      "reduced_masses": self.reduced_masses, "zero_point_energy": self.zero_point_energy,
                      "hessian": self.hessian, "masses": self.masses, "symbols": self.symbols,
                      "linear": self.linear, "step": self.step, "max_force": self.max_force,
                      "reference": self.reference.to_dict(), "warnings": self.warnings,
                      "settings": self.settings, "version": self.version, "timings": self.timings})


def harmonic_analysis(hessian: np.ndarray, masses, coordinates: np.ndarray):
    """(wavenumbers cm⁻¹, normal modes (nmodes, N, 3), reduced masses u, linear) of a Cartesian Hessian (Ha/bohr²)."""
    m = np.asarray(masses, dtype=float)
    n = len(m)
    H = 0.5 * (hessian + hessian.T)
    w = np.repeat(m, 3) ** -0.5
    Hm = H * w[:, None] * w[None, :]
    TR = rigid_motions(m, coordinates)
    linear = TR.shape[1] == 5
    # the orthogonal complement of the rigid motions: the vibrational space
    Q, _ = np.linalg.qr(np.hstack([TR, np.eye(3 * n)]))
    internal = Q[:, TR.shape[1]:3 * n]
    lam, U = np.linalg.eigh(internal.T @ Hm @ internal)
    to_au = 1.0 / AMU_TO_ELECTRON_MASS  # λ is in Ha/(bohr² u); ω² in atomic units = λ / (u in m_e)
    omega = np.sign(lam) * np.sqrt(np.abs(lam) * to_au)
    wavenumbers = omega * HARTREE_TO_INV_CM
    cart = (w[:, None] * (internal @ U)).T              # mass-weighted → Cartesian displacements
    norms = np.linalg.norm(cart, axis=1)
    reduced = 1.0 / norms**2                              # μ = 1/|M^(−½) L|² for unit mass-weighted L
    modes = (cart / norms[:, None]).reshape(-1, n, 3)
    return wavenumbers, modes, reduced, linear


def zero_point_energy(wavenumbers) -> float:
    """½ Σ ħω over the real modes, hartree."""
    return float(0.5 * sum(w for w in wavenumbers if w > 0) / HARTREE_TO_INV_CM)


def harmonic_frequencies(geometry, basis="def2-svp", xc="pbe", charge: int = 0, multiplicity: int = 1, *,
                         spin: str | None = None, grid="default", scf=None, step: float = DEFAULT_STEP,
                         start=None, progress=None, **solver_options) -> HarmonicResult:
    """Harmonic wavenumbers, normal modes and zero-point energy of a molecule at ``geometry``.

    The structure should be a minimum (e.g. from :func:`ks1d.optimize.optimize_molecule` at the same
    basis, functional and grid); if its largest force exceeds :data:`STATIONARY_FORCE` the result
    (and a Python warning) says so.  ``step`` is the central-difference step in bohr; 6N gradients
    are computed.  SCF settings default to :data:`FREQUENCY_SCF`.  ``start`` (a previous result
    for the same atoms and basis) seeds the first SCF; ``progress(done, total)`` is called after
    every gradient.
    """
    from .gaussian.geometry import Geometry, read_geometry
    from .gaussian.scf import solve_molecule
    from .results import SCFOptions

    t0 = time.perf_counter()
    geom = read_geometry(geometry)
    if geom.natom < 2:
        raise GeometryError(f"a single atom ({geom.symbols[0]}) has no vibrations")
    if not (np.isfinite(step) and 1e-4 <= step <= 0.05):
        raise SettingsError(f"finite-difference step must lie in [1e-4, 0.05] bohr, got {step}")
    unknown = set(solver_options) - {"guess", "ao_cache_mb", "coulomb_fitting", "fit_switch"}
    if unknown:
        raise SettingsError(f"unknown option(s) {', '.join(sorted(map(repr, unknown)))} for harmonic_frequencies")
    opts = SCFOptions.coerce(scf)
    scf_opts = {k: v for k, v in opts.to_dict().items() if v is not None}
    for k, v in FREQUENCY_SCF.items():
        scf_opts.setdefault(k, v)

    def solve(g, start_from):
        # per-step energies: no grid-error evaluation (it would cost a fine-grid E_xc per step)
        return solve_molecule(g, basis=basis, xc=xc, charge=charge, multiplicity=multiplicity, spin=spin,
                              grid=grid, scf=scf_opts, gradient=True, start=start_from,
                              estimate_grid_error=False, **solver_options)

    ref = solve(geom, start)
    max_force = float(np.abs(ref.gradient).max())
    notes = []
    if max_force > STATIONARY_FORCE:
        msg = (f"the largest force at this structure is {max_force:.2e} Ha/bohr (> {STATIONARY_FORCE:g}): it is "
               "not a stationary point, so the harmonic wavenumbers (and the projection of rotations) are "
               "approximate; optimise the geometry first at the same basis, functional and grid")
        notes.append(msg)
        _warnings.warn(msg, stacklevel=2)
    n3 = 3 * geom.natom
    H = np.zeros((n3, n3))
    done = 0
    for A in range(geom.natom):
        for x in range(3):
            grads = []
            for sign in (1.0, -1.0):
                X = geom.coordinates.copy()
                X[A, x] += sign * step
                grads.append(np.asarray(solve(Geometry(geom.symbols, geom.numbers, X), ref).gradient).ravel())
                done += 1
                if progress is not None:
                    progress(done, 2 * n3)
            H[3 * A + x] = (grads[0] - grads[1]) / (2 * step)
    H = 0.5 * (H + H.T)
    masses = isotope_masses(geom.symbols)
    wn, modes, reduced, linear = harmonic_analysis(H, masses, geom.coordinates)
    n_imag = int((wn < 0).sum())
    if n_imag:
        notes.append(f"{n_imag} imaginary mode(s), reported as negative wavenumbers "
                     f"({', '.join(f'{w:.1f}' for w in wn[wn < 0])} cm^-1); they are left out of the zero-point energy")
    settings = {"basis": basis if isinstance(basis, (str, dict)) else str(basis), "xc": ref.functional,
                "grid_level": ref.settings["grid_level"], "step_bohr": float(step), "gradients": 2 * n3,
                "masses": "most abundant isotopes (pyscf.data.elements.COMMON_ISOTOPE_MASSES)",
                "scf": scf_opts}
    H.flags.writeable = False
    return HarmonicResult(wavenumbers=tuple(float(w) for w in wn), normal_modes=modes,
                          reduced_masses=tuple(float(r) for r in reduced), zero_point_energy=zero_point_energy(wn),
                          hessian=H, masses=tuple(float(m) for m in masses), symbols=tuple(geom.symbols),
                          linear=bool(linear), step=float(step), max_force=max_force, reference=ref,
                          warnings=tuple(notes), settings=settings, version=__version__,
                          timings={"total": time.perf_counter() - t0})
