"""Self-consistent Kohn–Sham solution of a spherical atom on the radial mesh: the driver.

:func:`solve_atom` checks the request, builds the discretised atom
(:class:`ks1d.radial.problem.AtomicProblem`, or its Koelling–Harmon and
Dirac variants in :mod:`ks1d.radial.scalar` and :mod:`ks1d.radial.dirac`),
runs the SCF loop (:func:`ks1d.radial.problem.run_scf`) and packs the result.
The equations:

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

import time
from dataclasses import replace

import numpy as np

from .._version import __version__
from ..elements import element as _element
from ..errors import ConfigurationError, ConvergenceError, SettingsError, SpinError, UnsupportedFunctional
from ..nuclei import check_nucleus
from ..occupations import L_LETTERS, build_configuration, build_dirac_configuration, check_anion_charge
from ..results import EnergyComponents, SCFOptions, multiplicity_of
from ..threads import one_blas_thread
from ..xc import resolve_functional
from .mesh import MeshSpec
from .poisson import total_charge
from .problem import (  # noqa: F401 (re-exported)
    _INNER_MAX,
    RELATIVISTIC_DENSITY_NOISE,
    RELATIVISTIC_ENERGY_NOISE,
    SPIN_NAMES,
    AtomicProblem,
    run_scf,
    thomas_fermi_potential,
)
from .relativity import SPEED_OF_LIGHT, check_relativity, check_speed_of_light
from .result import AtomResult, Orbital, RadialData

#: Named precision levels → mesh settings.  "normal" reproduces the
#: basis-set limit to well below 1 µHa for Z = 1–92 (see
#: benchmarks/bench_radial_convergence.py); "high" is for convergence studies.
PRECISION: dict[str, MeshSpec] = {
    "low": MeshSpec(n_elements=12, order=8, r_first=0.1, r_max=35.0),
    "normal": MeshSpec(n_elements=16, order=10, r_first=0.06, r_max=40.0),
    "high": MeshSpec(n_elements=30, order=12, r_first=0.03, r_max=50.0),
}


#: SCF defaults of the radial solver (see :class:`ks1d.results.SCFOptions`): the residual is
#: ∫|ρ_out − ρ_in| d³r in electrons; damping 0.5 is a Pulay/Anderson step x + ½ r.
ATOM_SCF_DEFAULTS = SCFOptions(max_iterations=150, energy_tolerance=1e-10, residual_tolerance=1e-8,
                               damping=0.5, history=8)
#: the options a radial-solver ConvergenceError may suggest: (SCFOptions field, CLI flag)
ATOM_REMEDIES = (("damping", "--damping"), ("max_iterations", "--max-iterations"))

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


#: Precision levels of the relativistic Hamiltonians with a point nucleus, whose solutions
#: behave as r^γ, γ = √(κ² − (Z/c)²) < 1, at the nucleus: the elements are graded further
#: in (smaller r_first, more elements) so that Rn and U reach 1 µHa at "normal"
#: (benchmarks/bench_radial_convergence.py).  A Gaussian nucleus makes the solutions
#: analytic at r = 0; its levels resolve the nuclear radius instead.
PRECISION_RELATIVISTIC: dict[str, MeshSpec] = {
    "low": MeshSpec(n_elements=20, order=8, r_first=1e-4, r_max=35.0),
    "normal": MeshSpec(n_elements=26, order=10, r_first=3e-6, r_max=40.0),
    "high": MeshSpec(n_elements=40, order=12, r_first=1e-6, r_max=50.0),
}

#: Precision levels of the relativistic Hamiltonians with the Gaussian nucleus.  Its solutions are
#: analytic at r = 0 and the nuclear radius (~1e-4 bohr for U) is resolved from r_first/Z on;
#: grading further in would only add elements inside a flat potential (and, for the
#: Koelling-Harmon operator, whose M(r) stays finite there, a matrix norm ~1/r₁² beyond what the
#: dense eigen-solver resolves).
PRECISION_RELATIVISTIC_GAUSSIAN: dict[str, MeshSpec] = {
    "low": MeshSpec(n_elements=16, order=8, r_first=1e-2, r_max=35.0),
    "normal": MeshSpec(n_elements=20, order=10, r_first=1e-3, r_max=40.0),
    "high": MeshSpec(n_elements=32, order=12, r_first=1e-4, r_max=50.0),
}

#: functional families each relativistic Hamiltonian supports (x2c: all the solver supports)
_SEMILOCAL_ONLY = {"scalar": "the Koelling-Harmon equation needs a local potential in M(r)",
                   "dirac": "the four-component solver implements semilocal potentials on both components"}


def default_mesh(precision: str, relativity: str = "none", nucleus: str = "point") -> MeshSpec:
    """The MeshSpec of a named precision level for a Hamiltonian and nuclear model."""
    if precision not in PRECISION:
        raise SettingsError(f"precision must be one of {', '.join(PRECISION)}, got {precision!r}")
    if relativity == "none":
        return PRECISION[precision]
    if nucleus == "gaussian":
        return PRECISION_RELATIVISTIC_GAUSSIAN[precision]
    return PRECISION_RELATIVISTIC[precision]


def check_relativistic_functional(relativity: str, func) -> None:
    """UnsupportedFunctional if the radial Hamiltonian ``relativity`` cannot do the resolved functional."""
    check_relativity(relativity)
    if relativity in _SEMILOCAL_ONLY and (func.family not in ("lda", "gga") or func.is_hybrid):
        raise UnsupportedFunctional(
            f"relativity='{relativity}' supports LDA and GGA functionals, not '{func.name}' ({func.kind}): "
            f"{_SEMILOCAL_ONLY[relativity]}; use relativity='x2c' for meta-GGA, hybrid and HF atoms")


@one_blas_thread
def solve_atom(element, xc: str = "lda", charge: float = 0, spin=None, config: str | None = None, *,
               relativity: str = "none", nucleus: str = "point",
               precision: str = "normal", mesh: MeshSpec | None = None, scf: SCFOptions | dict | None = None,
               estimate_error: bool = True, raise_on_failure: bool = True,
               electron_interaction: bool = True, open_shell_exchange: str = "average",
               speed_of_light: float | None = None, progress=None) -> AtomResult:
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
    ``relativity`` chooses the Hamiltonian: "none" (Schrödinger), "scalar"
    (Koelling–Harmon scalar-relativistic, :mod:`ks1d.radial.scalar`; LDA and
    GGA), "x2c" (spin-free exact two-component one-electron decoupling in the
    finite-element basis; every functional), "dirac" (four-component
    Dirac–Kohn–Sham with j-resolved sub-shells, :mod:`ks1d.radial.dirac`;
    LDA and GGA, spin-restricted).  ``nucleus`` is "point" or "gaussian"
    (:mod:`ks1d.nuclei`).  ``spin`` defaults to "polarized", and to
    "restricted" for "dirac".  ``speed_of_light`` overrides c = 1/α (CODATA)
    for limit checks only (c → ∞ gives the non-relativistic atom).
    ``open_shell_exchange`` chooses the exact exchange of open sub-shells:
    "average" (default; the average over the configuration's determinants,
    see :mod:`ks1d.radial.exchange`) or "ensemble" (the fractional-occupation
    density-matrix form, which is what a Gaussian calculation with smeared,
    equal sub-shell occupations computes; used to compare with one).

    ``progress`` (optional) is called with every SCF :class:`~ks1d.errors.IterationRecord`.

    Raises InputError subclasses for bad input and ConvergenceError (with the
    iteration history) if the SCF does not converge.
    """
    t0 = time.perf_counter()
    el = _element(element)
    func = resolve_functional(xc)
    check_relativity(relativity)
    check_nucleus(nucleus)
    c = SPEED_OF_LIGHT if speed_of_light is None else check_speed_of_light(speed_of_light)
    if spin is None:
        spin = "restricted" if relativity == "dirac" else "polarized"
    if spin not in ("polarized", "restricted") and not isinstance(spin, (int, np.integer)):
        raise SpinError(f"spin must be 'polarized', 'restricted' or an integer 2S, got {spin!r}")
    if relativity == "dirac" and spin != "restricted":
        raise SpinError(f"relativity='dirac' atoms are spin-restricted (σ_z is not conserved by the Dirac "
                        f"Hamiltonian), got spin={spin!r}; use spin='restricted', or relativity='scalar' or "
                        "'x2c' for a spin-polarized relativistic atom")
    check_relativistic_functional(relativity, func)
    try:
        charge = float(charge)
    except (TypeError, ValueError):
        raise ConfigurationError(f"charge must be a number, got {charge!r}") from None
    if electron_interaction:
        check_anion_charge(el.symbol, charge)
    if relativity == "dirac":
        cfg = build_dirac_configuration(el.Z, charge, config)
    else:
        cfg = build_configuration(el.Z, charge, spin, config)
    if mesh is None:
        mesh = _anion_spec(default_mesh(precision, relativity, nucleus), charge)
    if open_shell_exchange not in ("average", "ensemble"):
        raise SettingsError(f"open_shell_exchange must be 'average' or 'ensemble', got {open_shell_exchange!r}")
    settings = SCFOptions.coerce(scf).resolved(ATOM_SCF_DEFAULTS, "radial solver", ("level_shift", "smearing"))

    def make_problem(spec):
        if relativity == "dirac":
            from .dirac import DiracProblem
            return DiracProblem(el.Z, cfg, func, spec, electron_interaction, nucleus=nucleus, speed_of_light=c)
        if relativity == "scalar":
            from .scalar import ScalarProblem
            return ScalarProblem(el.Z, cfg, func, spec, electron_interaction, nucleus=nucleus, speed_of_light=c)
        return AtomicProblem(el.Z, cfg, func, spec, electron_interaction, open_shell_exchange,
                             nucleus=nucleus, x2c=relativity == "x2c", speed_of_light=c)

    problem = make_problem(mesh)
    orbitals, en, x, history, converged = run_scf(problem, settings, charge, progress=progress)
    if not converged and raise_on_failure:
        raise ConvergenceError(
            f"SCF for {el.symbol} ({func.name}, charge {charge:+g}, {cfg.label()}) did not converge in "
            f"{len(history)} iterations", history, ATOM_REMEDIES)
    t_scf = time.perf_counter() - t0

    error = mesh_error = None
    if estimate_error and converged:
        fine = make_problem(_refined(mesh))
        # relativistic atoms restart from the Thomas-Fermi guess (their orbitals have small components)
        start = fine.state_from(_radial_data(problem, orbitals, en, x)) if fine.relativity in ("none", "x2c") else None
        _, en_f, _, _, conv_f = run_scf(fine, settings, charge, start)
        if conv_f:
            mesh_error = abs(en_f["total"] - en["total"])
            error = mesh_error + abs(history[-1].delta_energy)
    return _make_result(el, charge, func, spin, cfg, problem, orbitals, en, x, history, converged,
                        error, mesh_error, settings, mesh, {"scf": t_scf, "total": time.perf_counter() - t0})


def _radial_data(problem: AtomicProblem, orbitals: dict, en: dict, x: np.ndarray) -> RadialData:
    m = problem.mesh
    spin_names = SPIN_NAMES[problem.ns]
    coeffs, us, small = {}, {}, {}
    for ch in problem.channels:
        key_ch = (ch.spin, getattr(ch, "kappa", ch.l))
        C, _ = orbitals[key_ch]
        if problem.relativity == "dirac":
            uL, _, uS, _ = problem.components(ch, C)
            C = C[:m.size]
        else:
            uL, _ = m.values(C)
            uS = None
            if problem.relativity == "scalar" and orbitals.small.get(key_ch) is not None:
                uS = orbitals.small[key_ch][0]
        for n, f in ch.shells:
            k = n - ch.l - 1
            key = (n, ch.l, spin_names[ch.spin]) + ((ch.j2,) if problem.relativity == "dirac" else ())
            coeffs[key] = (C[:, k].copy(), f)
            us[key] = uL[k].ravel()
            if uS is not None:
                small[key] = uS[k].copy()
    xcv = en["_xc"]
    return RadialData(r=m.r.ravel(), weights=m.w.ravel(), density=x[0].reshape(problem.ns, -1),
                      v_hartree=en["_v_h"].ravel(), v_xc=xcv.vrho, orbitals=us, mesh=m, coefficients=coeffs,
                      small=small or None)


def _make_result(el, charge, func, spin, cfg, problem, orbitals, en, x, history, converged, error,
                 mesh_error, settings, mesh, timings) -> AtomResult:
    m = problem.mesh
    spin_names = SPIN_NAMES[problem.ns]
    orbs = []
    dirac = problem.relativity == "dirac"
    for ch in problem.channels:
        _, eps = orbitals[(ch.spin, ch.kappa) if dirac else (ch.spin, ch.l)]
        for n, f in ch.shells:
            orbs.append(Orbital(n=n, l=ch.l, spin=spin_names[ch.spin], occupation=float(f),
                                energy=float(eps[n - ch.l - 1]), kappa=ch.kappa if dirac else None,
                                j=ch.j2 / 2 if dirac else None))
    # sub-shells with zero electrons in one spin channel still have an orbital energy of the other
    orbs.sort(key=lambda o: (o.spin == "beta", o.n, o.l, o.j or 0.0))
    comp = EnergyComponents(kinetic=en["kinetic"], nuclear_attraction=en["nuclear_attraction"],
                            coulomb=en["coulomb"], exchange_correlation=en["exchange_correlation"],
                            exact_exchange=en["exact_exchange"])
    virial_ratio = -comp.potential / comp.kinetic
    rho_tot = x[0].sum(axis=0)
    if problem.relativity == "none" and problem.nucleus == "point":
        dxc = problem.scaled_xc_derivative(orbitals)
        virial_res = (2 * comp.kinetic + comp.nuclear_attraction + comp.coulomb + comp.exact_exchange
                      + dxc) / abs(en["total"])
    elif problem.relativity == "none":
        dxc = problem.scaled_xc_derivative(orbitals)
        virial_res = (2 * comp.kinetic + problem.nuclear_virial(rho_tot) + comp.coulomb + comp.exact_exchange
                      + dxc) / abs(en["total"])
    elif dirac:
        # Dirac scaling virial: ⟨cα·p⟩ scales as λ, the rest-mass term not at all
        virial_res = (en["_alpha_p"] + problem.nuclear_virial(rho_tot) + comp.coulomb
                      + problem.scaled_xc_derivative_of_state(x)) / abs(en["total"])
    else:
        virial_res = float("nan")
    gauss = abs(total_charge(m, x[0].sum(axis=0)) - problem.n_electrons)
    warnings = []
    for o in orbs:
        if o.occupation > 0 and o.energy >= 0:
            warnings.append(f"occupied orbital {o.label} ({o.spin}) is unbound: ε = {o.energy:+.6f} Ha ≥ 0; "
                            f"its density is confined by the mesh boundary r_max = {m.r_max:g} bohr and the "
                            "energy depends on that radius")
    if problem.open_shells:
        labels = sorted({f"{n}{L_LETTERS[l]}" for _, l, n in problem.open_shells})
        warnings.append(
            "exact exchange of the open sub-shell(s) " + ", ".join(labels)
            + " is the average over all determinants of the configuration (Slater's average of "
            "configuration, with each open sub-shell's own Fock operator); the energy is that of the "
            "configuration average, which for a polarized ground term such as C, N+ or O 3P equals the "
            "term energy, and lies above a symmetry-broken single determinant (unrestricted HF/KS in a "
            "Gaussian basis) by its symmetry-breaking energy, a few mHa for first-row atoms"
            + ("; a spin-restricted open shell averages over all its terms, not only the ground term"
               if problem.ns == 1 else ""))
    if problem.exchange is not None and problem.open_shell_exchange == "ensemble":
        fractional = [f"{n}{L_LETTERS[ch.l]}" for ch in problem.channels for n, f in ch.shells
                      if 1e-12 < (f if problem.ns == 2 else 0.5 * f) < 2 * ch.l + 1 - 1e-12]
        if fractional:
            warnings.append("exact exchange of the open sub-shell(s) " + ", ".join(sorted(set(fractional)))
                            + " is the fractional-occupation ensemble form (open_shell_exchange='ensemble'): "
                            "it lacks part of the self-exchange and lies well above the configuration average")
    if problem.inner_unconverged:
        warnings.append("the coupled open-shell orbital solve of channel(s) "
                        + ", ".join(f"{L_LETTERS[l]} ({spin_names[s]})" for s, l in sorted(problem.inner_unconverged))
                        + f" did not converge in {_INNER_MAX} sweeps in the last SCF iteration")
    if getattr(problem, "eps_unconverged", None):
        warnings.append("the orbital energy of the Koelling-Harmon orbital(s) "
                        + ", ".join(sorted(problem.eps_unconverged))
                        + " did not reach self-consistency with its own M(ε) in the last SCF iteration")
    if gauss > 1e-6:
        warnings.append(f"Gauss's law check: ∫ρ misses {gauss:.1e} electrons inside r_max = {m.r_max} bohr")
    spin_label = "polarized" if cfg.polarized else "restricted"
    return AtomResult(
        element=el.symbol, Z=el.Z, charge=float(charge), xc=func.name, functional=func.to_dict(),
        spin=spin_label, multiplicity=multiplicity_of(cfg.n_up, cfg.n_down), n_alpha=float(cfg.n_up),
        n_beta=float(cfg.n_down), configuration=cfg.label(), total_energy=float(en["total"]), components=comp,
        orbitals=tuple(orbs), converged=converged, iterations=len(history), history=tuple(history),
        virial_ratio=float(virial_ratio), virial_residual=float(virial_res), gauss_law_error=float(gauss),
        error_estimate=None if error is None else float(error),
        mesh_error_estimate=None if mesh_error is None else float(mesh_error), warnings=tuple(warnings),
        settings={"mesh": mesh.to_dict(), "basis_size": m.size, "scf": settings.to_dict(),
                  "spin_request": spin if isinstance(spin, str) else int(spin),
                  "open_shell_exchange": problem.open_shell_exchange,
                  "relativity": problem.relativity, "nucleus": problem.nucleus,
                  "speed_of_light": problem.c},
        version=__version__, timings=timings, radial=_radial_data(problem, orbitals, en, x),
        relativity=problem.relativity, nucleus=problem.nucleus,
    )
