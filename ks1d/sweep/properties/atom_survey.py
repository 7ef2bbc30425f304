"""Survey job kinds: several related quantities from one job, sharing its solver calls.

These kinds exist for the functional sanity report (:mod:`ks1d.report`), which
asks many questions of each (element, functional) and must answer them fast;
a sweep spec may use them too.  Each returns display-unit quantities like the
other kinds and records every solver call, so each number can be traced to
the calculations behind it.

* ``atom_survey`` — one neutral atom, radial solver, polarized ground state
  (Hund's rule, spherical):

  - IP = E(X⁺) − E(X)                                            (eV)
  - EA = E(X) − E(X⁻)                                            (eV)
  - −ε_HOMO of X, to compare with the experimental IP: for the exact
    functional −ε_HOMO = IP (the ionisation-potential theorem: Perdew, Parr,
    Levy, Balduz, Phys. Rev. Lett. 49, 1691 (1982)); the gap measures the
    self-interaction (delocalisation) error of an approximate functional (eV)
  - spin-polarization energy E_restricted(X) − E_polarized(X), zero for
    closed shells                                                (eV)
  - s→d promotion E(dⁿ⁺¹s¹) − E(dⁿs²) for transition metals      (eV)
  - s→p promotion E(ns¹npᵏ⁺¹) − E(ns²npᵏ) for p-block atoms with
    k = 1–4, both high spin (for B, C, N, Si single terms: ⁴P, ⁵S, ⁴P, ⁵S)  (eV)

  With ``settings["symmetry_broken_basis"]`` the IP and EA refer to integer-occupation
  (symmetry-broken) atoms instead, estimated as the spherical basis-set limit plus the
  symmetry-breaking energy in that basis (:func:`_symmetry_broken`).

  An anion whose highest occupied eigenvalue is positive has its extra
  electron unbound by the functional's Kohn–Sham potential (the classic
  self-interaction failure of semilocal functionals for anions): the ΔSCF
  EA then rests on the finite radial box and is flagged.  A step that fails
  (for instance an anion SCF that does not converge even with the
  conservative retry) is recorded in ``details["failed_steps"]`` and its
  quantity is left out; the neutral atom failing fails the job.

* ``atom_survey_basis`` — IP, EA and −ε_HOMO from Gaussian-basis atoms with
  integer occupations, for functionals the radial solver cannot do.

* ``basis_set_error`` — ΔE = E(basis) − E(radial limit) of the neutral atom
  in mHa (:func:`ks1d.validate.basis_error.atom_basis_error`).

The diatomic part of the report's battery is :func:`.diatomic.diatomic_survey`.
"""
from __future__ import annotations

import time
from typing import Any

from ... import elements, units
from ...errors import CalculationError, ConvergenceError, InputError
from ...occupations import ground_state_multiplicity
from ...xc import resolve_functional
from . import calculations
from .configurations import sd_configurations, sp_configurations
from .context import Context, name_step

EV = units.HARTREE_TO_EV

#: SCF settings of the one retry an atom gets when its SCF does not converge: slower, longer mixing and
#: a density tolerance of 1e-5 electrons (∫|Δρ|), at which the energy from the output orbitals is still
#: exact to second order (≲1e-9 Ha).  It catches SCFs whose energy has converged while the density
#: residual stalls (r2SCAN for alkali atoms, see DEVELOPERS.md).
RETRY_SCF = {"damping": 0.8, "history": 8, "max_iterations": 300, "residual_tolerance": 1e-5}


def _atom_energy(c: Context, label: str, **kw) -> dict[str, Any]:
    """A radial energy; on non-convergence one retry with :data:`RETRY_SCF` (recorded in details)."""
    try:
        return c.energy(label, **kw)
    except ConvergenceError:
        opts = dict(c.settings.get("atom_options") or {})
        opts["scf"] = dict(RETRY_SCF)
        summary = c.energy(label, atom_options=opts, **kw)
        c.details.setdefault("retried_steps", []).append(label)  # only a retry that converged
        return summary


def _or_none(c: Context, label: str, compute) -> dict[str, Any] | None:
    """``compute()``, or ``None`` with the failure recorded in ``details["failed_steps"]``."""
    try:
        return compute()
    except (CalculationError, InputError) as exc:
        c.failed_step(label, exc)
        return None


def _optional(c: Context, label: str, **kw) -> dict[str, Any] | None:
    """Like :func:`_atom_energy`, but a failure is recorded and gives ``None``."""
    return _or_none(c, label, lambda: _atom_energy(c, label, **kw))


#: Gradient tolerance of the Gaussian atoms behind the symmetry-breaking correction: their energies stall
#: at gradients of 1-3e-5 on the default grid (meta-GGAs, 3d atoms), and the energy error is second order.
SB_GRADIENT_TOLERANCE = 1e-4


def _gaussian_atom(c: Context, label: str, symbol: str, charge: int, basis: str,
                   smearing: float = 0.0) -> dict[str, Any]:
    """One Gaussian-basis atom (Hund's-rule multiplicity), recorded like the other solver calls."""
    mult = ground_state_multiplicity(symbol, charge)
    try:
        summary, dt = calculations.molecule(f"1\n{symbol}\n{symbol} 0 0 0\n", c.functional, basis, charge=charge,
                                            multiplicity=mult,
                                            options={"smearing": smearing,
                                                     "residual_tolerance": SB_GRADIENT_TOLERANCE})
    except Exception as exc:
        name_step(exc, label)
        raise
    c.record({"label": label, "solver": "gaussian", "species": symbol, "charge": charge,
              "multiplicity": mult, "basis": basis, "smearing": smearing, **summary}, dt)
    return summary


def _symmetry_broken(c: Context, label: str, symbol: str, charge: int, e_radial: float) -> float:
    """Estimate of the integer-occupation (symmetry-broken) atom at the basis-set limit.

        E_int(limit) ≈ E_sph(limit) + [E_int(B) − E_sph(B)]

    with B = ``settings["symmetry_broken_basis"]``: the symmetry-breaking energy converges fast with the
    basis (O, PBE: −12.7 mHa in aug-cc-pVDZ, −13.9 in aug-cc-pVTZ), the spherical limit comes from the
    radial solver.  E_sph(B) is the smeared, spherical Gaussian atom (``validate.basis_error``); with exact
    exchange it carries the ensemble form, so E_sph(limit) is then the radial ensemble atom.  Spherical
    determinants (closed, half-filled and s¹ shells) need no correction.
    """
    from ...validate.basis_error import SPHERICAL_SMEARING, spherical_determinant

    if spherical_determinant(symbol, charge):
        return e_radial
    basis = c.settings["symmetry_broken_basis"]
    e_int = _gaussian_atom(c, f"{label} integer occupations in {basis}", symbol, charge, basis)["total_energy"]
    e_sph = _gaussian_atom(c, f"{label} spherical (smeared) in {basis}", symbol, charge, basis,
                           SPHERICAL_SMEARING)["total_energy"]
    e_ref = e_radial
    if resolve_functional(c.functional).exx_sr or resolve_functional(c.functional).exx_lr:
        opts = dict(c.settings.get("atom_options") or {})
        opts["open_shell_exchange"] = "ensemble"
        e_ref = _atom_energy(c, f"{label} (ensemble exchange)", charge=charge, atom_options=opts)["total_energy"]
    c.details.setdefault("symmetry_breaking_energy", {})[label] = e_int - e_sph
    return e_ref + (e_int - e_sph)


def atom_survey(c: Context) -> dict[str, float]:
    s = c.system
    if not s.is_atom or s.charge != 0:
        raise InputError("atom_survey needs a neutral atom")
    sym = s.symbol
    values: dict[str, float] = {}
    neutral = _atom_energy(c, sym)
    e0 = neutral["total_energy"]
    if neutral["homo_energy"] is not None:
        values["homo_vs_ip"] = -neutral["homo_energy"] * EV
    cation = _optional(c, f"{sym} cation", charge=1)
    if cation is not None:
        values["ionisation_potential"] = (cation["total_energy"] - e0) * EV
    anion = _optional(c, f"{sym} anion", charge=-1)
    if anion is not None:
        values["electron_affinity"] = (e0 - anion["total_energy"]) * EV
        eps = anion["homo_energy"]
        c.details["anion_homo_energy"] = eps
        c.details["anion_unbound_orbital"] = eps is not None and eps > 0
    if ground_state_multiplicity(sym, 0) == 1:  # closed shell
        values["spin_polarization_energy"] = 0.0
        c.details["spin_polarization"] = "closed shell: the polarized and restricted atoms coincide"
    else:
        restricted = _optional(c, f"{sym} spin-restricted", spin="restricted")
        if restricted is not None:
            values["spin_polarization_energy"] = (restricted["total_energy"] - e0) * EV
    if c.settings.get("symmetry_broken_basis"):
        # IP and EA of integer-occupation atoms: what a symmetry-broken production calculation gives
        try:
            e0_sb = _symmetry_broken(c, sym, sym, 0, e0)
            if cation is not None:
                values["ionisation_potential"] = (_symmetry_broken(c, f"{sym} cation", sym, 1,
                                                                   cation["total_energy"]) - e0_sb) * EV
            if anion is not None:
                values["electron_affinity"] = (e0_sb - _symmetry_broken(c, f"{sym} anion", sym, -1,
                                                                        anion["total_energy"])) * EV
        except (CalculationError, InputError) as exc:
            c.failed_step(getattr(exc, "sweep_step", "symmetry-breaking correction"), exc)
            values.pop("ionisation_potential", None)
            values.pop("electron_affinity", None)
    ground = elements.element(sym).ground_configuration
    for quantity, configurations, tag in (("sd_promotion", sd_configurations, "s→d"),
                                          ("sp_promotion", sp_configurations, "s→p")):
        try:
            a, b = configurations(sym)
        except InputError:
            continue
        # the lower configuration is usually the ground one, already solved as the neutral atom
        ea = neutral if a.split() == ground.split() else _optional(c, f"{sym} {tag} from {a}", config=a)
        eb = _optional(c, f"{sym} {tag} to {b}", config=b)
        c.details.update({f"{quantity}_from": a, f"{quantity}_to": b})
        if ea is not None and eb is not None:
            values[quantity] = (eb["total_energy"] - ea["total_energy"]) * EV
    return values


def atom_survey_basis(c: Context) -> dict[str, float]:
    """IP, EA and −ε_HOMO of one atom from Gaussian-basis atoms with integer occupations.

    For functionals the radial solver cannot do (range-separated hybrids): each species at its
    Hund's-rule multiplicity in ``settings["basis"]`` (UKS, symmetry allowed to break, as a production
    code does it), at the gradient tolerance :data:`SB_GRADIENT_TOLERANCE`.
    """
    s = c.system
    if not s.is_atom or s.charge != 0:
        raise InputError("atom_survey_basis needs a neutral atom")
    sym, basis = s.symbol, c.settings["basis"]
    values: dict[str, float] = {}

    def optional(label, charge):
        return _or_none(c, label, lambda: _gaussian_atom(c, label, sym, charge, basis))

    neutral = _gaussian_atom(c, f"{sym} in {basis}", sym, 0, basis)
    if neutral["homo_energy"] is not None:
        values["homo_vs_ip"] = -neutral["homo_energy"] * EV
    bare_nucleus = s.symbol == "H"  # H+ has no electrons: E = 0
    cation = {"total_energy": 0.0} if bare_nucleus else optional(f"{sym} cation", 1)
    if cation is not None:
        values["ionisation_potential"] = (cation["total_energy"] - neutral["total_energy"]) * EV
    anion = optional(f"{sym} anion", -1)
    if anion is not None:
        values["electron_affinity"] = (neutral["total_energy"] - anion["total_energy"]) * EV
        eps = anion["homo_energy"]
        c.details["anion_homo_energy"] = eps
        c.details["anion_unbound_orbital"] = eps is not None and eps > 0
    c.details["atoms"] = f"Gaussian basis {basis}, integer occupations (UKS)"
    return values


def basis_set_error(c: Context) -> dict[str, float]:
    from ...validate.basis_error import atom_basis_error

    s = c.system
    if not s.is_atom or s.charge != 0:
        raise InputError("basis_set_error needs a neutral atom")
    if "basis" not in c.settings:
        raise InputError("basis_set_error needs a 'basis' setting")
    t0 = time.perf_counter()
    row = atom_basis_error(s.symbol, c.settings["basis"], xc=c.functional,
                           precision=c.settings.get("precision", "normal"))
    c.seconds.append(time.perf_counter() - t0)  # one timing for both calls below
    c.calculations.append({"label": f"{s.symbol} in {c.settings['basis']}", "solver": "gaussian",
                           "species": s.symbol, "charge": 0, "multiplicity": row.multiplicity,
                           "basis": c.settings["basis"], "total_energy": row.basis_energy,
                           "occupations": row.occupations})
    c.calculations.append({"label": f"{s.symbol} radial limit", "solver": "radial", "species": s.symbol,
                           "charge": 0, "total_energy": row.radial_energy})
    if row.warnings:
        c.details["warnings"] = list(row.warnings)
    return {"basis_set_error": row.error_mhartree}


#: Step-label endings of :func:`atom_survey` → the quantity the step feeds (for flags on failed steps).
_STEP_QUANTITIES = ((" cation", "ionisation_potential"), (" anion", "electron_affinity"),
                    (" spin-restricted", "spin_polarization_energy"))


def quantity_of_step(label: str) -> str | None:
    """Which survey quantity a failed or retried step (labelled by :func:`atom_survey`) feeds, if one."""
    for ending, q in _STEP_QUANTITIES:
        if label.endswith(ending):
            return q
    if " s→d " in label:
        return "sd_promotion"
    if " s→p " in label:
        return "sp_promotion"
    return None
