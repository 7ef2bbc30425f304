"""Solver calls as the sweep's properties use them.

Each function calls a solver (:func:`ks1d.radial.scf.solve_atom` or
:func:`ks1d.gaussian.scf.solve_molecule`), or a fixed sequence of its calls (the
bond-length search of a diatomic), and returns a small JSON-ready summary.  A
per-process memo keeps the summaries of recent calls so that, e.g., the H
atom shared by every hydride's atomization energy is solved once per worker;
a memoised call returns exactly what the first call returned, so stored
results do not depend on which worker ran which job.
"""
from __future__ import annotations

import time
from collections import OrderedDict
from typing import Any

import numpy as np

from ..engine.jobs import canonical_json

_MEMO: OrderedDict[str, dict[str, Any]] = OrderedDict()
_MEMO_SIZE = 256


def clear_memo() -> None:
    _MEMO.clear()


def _memoised(kind: str, args: dict[str, Any], compute) -> tuple[dict[str, Any], float]:
    key = kind + canonical_json(args)
    hit = _MEMO.get(key)
    if hit is not None:
        _MEMO.move_to_end(key)
        return hit, 0.0
    t0 = time.perf_counter()
    summary = compute()
    dt = time.perf_counter() - t0
    _MEMO[key] = summary
    if len(_MEMO) > _MEMO_SIZE:
        _MEMO.popitem(last=False)
    return summary, dt


def _summary(result: Any, configuration: str | None) -> dict[str, Any]:
    """The JSON-ready facts a sweep keeps of one solver result (the vocabulary of :mod:`ks1d.results`)."""
    return {
        "total_energy": float(result.total_energy),
        "converged": bool(result.converged),
        "iterations": int(result.iterations),
        "homo_energy": None if result.homo_energy is None else float(result.homo_energy),
        "configuration": configuration,
        "multiplicity": _whole(result.multiplicity),
        "error_estimate": None if result.error_estimate is None else float(result.error_estimate),
        "scf_last_change": abs(float(result.history[-1].delta_energy)) if result.history else None,
    }


def _whole(value: float) -> int | float:
    """An integral multiplicity as an int (as JSON writes it), a fractional one as it is."""
    m = float(value)
    return int(round(m)) if abs(m - round(m)) < 1e-9 else m


def atom(symbol: str, xc: str, charge: int = 0, spin: str = "polarized", config: str | None = None,
         precision: str = "normal", options: dict[str, Any] | None = None) -> tuple[dict[str, Any], float]:
    """One radial atom: (summary, seconds spent; 0 when memoised)."""
    opts = dict(options or {})
    args = {"symbol": symbol, "xc": xc, "charge": charge, "spin": spin, "config": config,
            "precision": precision, "options": opts}

    def compute():
        from ...radial.scf import solve_atom
        from ...results import split_scf_options

        scf, rest = split_scf_options(opts)  # SCF settings as a JSON table, e.g. {"damping": 0.8}
        kwargs: dict[str, Any] = dict(xc=xc, charge=charge, spin=spin, precision=precision, scf=scf, **rest)
        if config is not None:
            kwargs["config"] = config
        result = solve_atom(symbol, **kwargs)
        return _summary(result, result.configuration)

    return _memoised("atom", args, compute)


def molecule(xyz: str, xc: str, basis: str, charge: int = 0, multiplicity: int = 1,
             options: dict[str, Any] | None = None) -> tuple[dict[str, Any], float]:
    """One Gaussian-basis calculation on XYZ text: (summary, seconds spent)."""
    opts = dict(options or {})
    args = {"xyz": xyz, "xc": xc, "basis": basis, "charge": charge, "multiplicity": multiplicity,
            "options": opts}

    def compute():
        from ...gaussian.scf import solve_molecule
        from ...results import split_scf_options

        scf, rest = split_scf_options(opts)
        result = solve_molecule(xyz, basis=basis, xc=xc, charge=charge, multiplicity=multiplicity, scf=scf, **rest)
        return _summary(result, None)

    return _memoised("molecule", args, compute)


def _gradient_point(result, r_bohr: float, slope: float, seconds: float) -> dict[str, Any]:
    from ... import units

    g = np.asarray(result.gradient)
    return {**_summary(result, None), "r_angstrom": r_bohr * units.BOHR_TO_ANGSTROM, "dE_dR": slope,
            "translation_defect": float(np.abs(g.sum(axis=0)).max()), "seconds": seconds}


#: SCF settings of the bond-length search unless the job's molecule_options set them: the solver's gradient
#: tolerances (residual 1e-7, |ΔE| < 1e-10), at most 40 iterations before a stalled residual is considered
#: (a slow SCF that has not stalled is solved again with LONG_SCF_ITERATIONS)
BOND_SCF = {"max_iterations": 40}
#: an SCF that is slow but not stalled gets the solver's usual iteration limit in a second attempt
LONG_SCF_ITERATIONS = 100
#: a residual that stalls below this with the energy converged (UKS OH, ²Π, stalls at 8e-7: the SCF drifts
#: along the rotation of its π hole) relaxes the residual tolerance to it for the rest of the search
BOND_STALLED_SCF = {"residual_tolerance": 1e-5, "max_iterations": 100}
#: central-difference step (bohr) of the force constant when the energies are not trusted (stalled SCF);
#: its error E⁽⁴⁾h²/(6k) is below 1e-4 of k for first-row diatomics (Morse estimate)
BOND_FD_STEP = 0.005


def _stalled(history, residual: float, energy_change: float = 1e-9, last: int = 5) -> bool:
    """The SCF's energy has converged (|ΔE| < energy_change over the last iterations) and its residual sits
    below ``residual`` without reaching the tolerance."""
    tail = list(history)[-last:]
    return len(tail) == last and all(abs(h.delta_energy) < energy_change and h.residual < residual for h in tail)


def diatomic_minimum(sym_a: str, sym_b: str, r_start_angstrom: float, xc: str, basis: str, multiplicity: int,
                     options: dict[str, Any] | None = None) -> tuple[dict[str, Any], float]:
    """r_e, k and E(r_e) of a diatomic from analytic energies and gradients (:mod:`.bondmin`).

    Each sample is one :func:`~ks1d.gaussian.scf.solve_molecule` with ``gradient=True`` on the
    molecule along z, its SCF restarted from the previous sample's density (``start=``), with
    :data:`BOND_SCF` unless the options say otherwise.

    A stalled SCF (the residual stuck below 1e-5 with the energy converged) makes the search relax the
    residual tolerance to :data:`BOND_STALLED_SCF` from that sample on.  Such energies are not smooth to
    better than ~3e-8 Ha (measured for UKS OH), which the quintic interpolant would turn into an error of
    ~0.3 % in k, while the gradients stay smooth (their central differences at ±0.002 and ±0.005 bohr agree
    to 4e-5 of k).  So k then comes from the central difference of two more gradients at r_e ±
    :data:`BOND_FD_STEP`, and r_e and E(r_e) stay those of the interpolant (r_e is set by the gradients).

    The whole search is one memoised call: it is deterministic in its arguments, so a memo hit returns
    exactly what the search returned.  Returns (summary, seconds spent; 0 when memoised).
    """
    opts = dict(options or {})
    args = {"atoms": [sym_a, sym_b], "r_start": r_start_angstrom, "xc": xc, "basis": basis,
            "multiplicity": multiplicity, "options": opts}

    def compute():
        from ... import elements, units
        from ...errors import CalculationError, ConvergenceError
        from ...gaussian.geometry import Geometry
        from ...gaussian.scf import solve_molecule
        from ...results import split_scf_options
        from .bondmin import bond_minimum

        scf, rest = split_scf_options(opts)
        point_options = {"estimate_grid_error": False, **rest}  # gradient points of a search: no grid-error pass
        own_limit = "max_iterations" not in scf
        scf = {**BOND_SCF, **scf}
        numbers = (elements.atomic_number(sym_a), elements.atomic_number(sym_b))
        points: list[dict[str, Any]] = []
        state: dict[str, Any] = {"last": None, "stalled": False}

        def solve(geom):
            settings = {**scf, **BOND_STALLED_SCF} if state["stalled"] else scf
            try:
                return solve_molecule(geom, basis=basis, xc=xc, multiplicity=multiplicity, scf=settings,
                                      gradient=True, start=state["last"], **point_options)
            except ConvergenceError as exc:
                if not state["stalled"] and _stalled(exc.history, BOND_STALLED_SCF["residual_tolerance"]):
                    state["stalled"] = True
                    return solve(geom)
                if state["stalled"] or not own_limit or settings["max_iterations"] >= LONG_SCF_ITERATIONS:
                    raise
                # slow but not stalled: the solver's usual iteration limit before giving up
                return solve_molecule(geom, basis=basis, xc=xc, multiplicity=multiplicity,
                                      scf={**settings, "max_iterations": LONG_SCF_ITERATIONS}, gradient=True,
                                      start=state["last"], **point_options)

        def evaluate(r: float, role: str = "search") -> tuple[float, float]:
            t0 = time.perf_counter()
            res = solve(Geometry((sym_a, sym_b), numbers, np.array([[0.0, 0.0, -0.5 * r], [0.0, 0.0, 0.5 * r]])))
            if not res.converged:
                raise CalculationError(f"the SCF at R = {r * units.BOHR_TO_ANGSTROM:.5f} A did not converge")
            state["last"] = res
            g = np.asarray(res.gradient)
            slope = 0.5 * float(g[1, 2] - g[0, 2])  # dE/dR = ½ (∇_B E − ∇_A E)·u, u = +z
            points.append({**_gradient_point(res, r, slope, time.perf_counter() - t0), "role": role,
                           "residual_tolerance": float(res.settings["scf"]["residual_tolerance"])})
            return float(res.total_energy), slope

        found = bond_minimum(evaluate, r_start_angstrom * units.ANGSTROM_TO_BOHR).to_dict()
        found["force_constant_from"] = "Hermite interpolant of energies and gradients"
        if state["stalled"]:
            g_plus = evaluate(found["r_e_bohr"] + BOND_FD_STEP, "force constant")[1]
            g_minus = evaluate(found["r_e_bohr"] - BOND_FD_STEP, "force constant")[1]
            found["interpolated_force_constant"] = found["force_constant"]
            found["force_constant"] = (g_plus - g_minus) / (2 * BOND_FD_STEP)
            found["force_constant_from"] = (f"central difference of analytic gradients at r_e ± {BOND_FD_STEP} bohr "
                                            "(a stalled SCF: energies not smooth enough for the interpolant)")
        return {"minimum": found, "points": points, "stalled_scf": state["stalled"]}

    return _memoised("diatomic_minimum", args, compute)


#: optimisation results of this process (the full objects: the frequencies restart from the last SCF)
_OPTIMISED: OrderedDict[str, Any] = OrderedDict()
_OPTIMISED_SIZE = 8


def optimisation(xyz: str, xc: str, basis: str, charge: int = 0, multiplicity: int = 1,
                 options: dict[str, Any] | None = None) -> tuple[Any, float]:
    """:func:`ks1d.optimize.optimize_molecule` from XYZ text (default criteria: max force 4.5e-4 Ha/bohr).

    Memoised in this process as the full :class:`~ks1d.optimize.OptimizationResult` (the optimisation
    is deterministic in its arguments).  Returns (result, seconds spent; 0 when memoised).
    """
    opts = dict(options or {})
    key = "optimisation" + canonical_json({"xyz": xyz, "xc": xc, "basis": basis, "charge": charge,
                                           "multiplicity": multiplicity, "options": opts})
    hit = _OPTIMISED.get(key)
    if hit is not None:
        _OPTIMISED.move_to_end(key)
        return hit, 0.0
    from ...optimize import optimize_molecule
    from ...results import split_scf_options

    scf, rest = split_scf_options(opts)
    t0 = time.perf_counter()
    result = optimize_molecule(xyz, basis=basis, xc=xc, charge=charge, multiplicity=multiplicity, scf=scf, **rest)
    dt = time.perf_counter() - t0
    _OPTIMISED[key] = result
    if len(_OPTIMISED) > _OPTIMISED_SIZE:
        _OPTIMISED.popitem(last=False)
    return result, dt


def optimisation_summary(result) -> dict[str, Any]:
    """The JSON-ready facts a sweep keeps of an optimisation."""
    return {"total_energy": float(result.total_energy), "converged": bool(result.converged),
            "iterations": int(result.timings["scf_iterations"]), "steps": len(result.history),
            "max_force": result.max_force, "geometry": result.geometry,
            "history": [s.to_dict() for s in result.history], "criteria": dict(result.criteria),
            "multiplicity": _whole(result.result.multiplicity), "homo_energy": None, "configuration": None,
            "error_estimate": None, "scf_last_change": None}


def vibrations(xyz: str, xc: str, basis: str, charge: int = 0, multiplicity: int = 1,
               options: dict[str, Any] | None = None) -> tuple[dict[str, Any], dict[str, Any], float, float]:
    """Optimisation (:func:`optimisation`) then :func:`ks1d.frequencies.harmonic_frequencies` at its geometry.

    The frequency run's first SCF restarts from the optimisation's last one.  Returns (optimisation
    summary, harmonic summary, seconds of each; 0 when memoised).
    """
    opts = dict(options or {})
    opt, t_opt = optimisation(xyz, xc, basis, charge, multiplicity, opts)
    args = {"xyz": xyz, "xc": xc, "basis": basis, "charge": charge, "multiplicity": multiplicity, "options": opts}

    def compute():
        from ...frequencies import harmonic_frequencies
        from ...results import split_scf_options

        scf, rest = split_scf_options(opts)
        h = harmonic_frequencies(opt.geometry, basis=basis, xc=xc, charge=charge, multiplicity=multiplicity,
                                 scf=scf, start=opt.result, **rest)
        return {"total_energy": float(h.reference.total_energy), "converged": True,
                "iterations": int(h.reference.iterations), "wavenumbers": list(h.wavenumbers),
                "reduced_masses": list(h.reduced_masses), "zero_point_energy": float(h.zero_point_energy),
                "imaginary_modes": h.imaginary_modes, "linear": bool(h.linear), "max_force": float(h.max_force),
                "step_bohr": float(h.step), "gradients": int(h.settings["gradients"]), "warnings": list(h.warnings),
                "masses": h.settings["masses"], "multiplicity": _whole(h.reference.multiplicity),
                "homo_energy": None, "configuration": None, "error_estimate": None, "scf_last_change": None}

    harmonic, t_h = _memoised("vibrations", args, compute)
    return optimisation_summary(opt), harmonic, t_opt, t_h
