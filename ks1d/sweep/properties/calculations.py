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


def diatomic_minimum(sym_a: str, sym_b: str, r_start_angstrom: float, xc: str, basis: str, multiplicity: int,
                     options: dict[str, Any] | None = None) -> tuple[dict[str, Any], float]:
    """r_e, k and E(r_e) of a diatomic from analytic energies and gradients (:mod:`.bondmin`).

    Each sample is one :func:`~ks1d.gaussian.scf.solve_molecule` with ``gradient=True`` on the
    molecule along z, its SCF restarted from the previous sample's density (``start=``).  The whole
    search is one memoised call: it is deterministic in its arguments, so a memo hit returns exactly
    what the search returned.  Returns (summary, seconds spent; 0 when memoised).
    """
    opts = dict(options or {})
    args = {"atoms": [sym_a, sym_b], "r_start": r_start_angstrom, "xc": xc, "basis": basis,
            "multiplicity": multiplicity, "options": opts}

    def compute():
        from ... import elements, units
        from ...errors import CalculationError
        from ...gaussian.geometry import Geometry
        from ...gaussian.scf import solve_molecule
        from ...results import split_scf_options
        from .bondmin import bond_minimum

        scf, rest = split_scf_options(opts)
        numbers = (elements.atomic_number(sym_a), elements.atomic_number(sym_b))
        points: list[dict[str, Any]] = []
        last: list[Any] = [None]

        def evaluate(r: float) -> tuple[float, float]:
            t0 = time.perf_counter()
            geom = Geometry((sym_a, sym_b), numbers, np.array([[0.0, 0.0, -0.5 * r], [0.0, 0.0, 0.5 * r]]))
            res = solve_molecule(geom, basis=basis, xc=xc, multiplicity=multiplicity, scf=scf, gradient=True,
                                 start=last[0], **rest)
            if not res.converged:
                raise CalculationError(f"the SCF at R = {r * units.BOHR_TO_ANGSTROM:.5f} A did not converge")
            last[0] = res
            g = np.asarray(res.gradient)
            slope = 0.5 * float(g[1, 2] - g[0, 2])  # dE/dR = ½ (∇_B E − ∇_A E)·u, u = +z
            points.append(_gradient_point(res, r, slope, time.perf_counter() - t0))
            return float(res.total_energy), slope

        found = bond_minimum(evaluate, r_start_angstrom * units.ANGSTROM_TO_BOHR)
        return {"minimum": found.to_dict(), "points": points}

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
