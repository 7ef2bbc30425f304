"""Single solver calls as the sweep's properties use them.

Each function calls a solver (:func:`ks1d.radial.scf.solve_atom` or
:func:`ks1d.gaussian.scf.solve_molecule`) and returns a small JSON-ready summary.  A
per-process memo keeps the summaries of recent calls so that, e.g., the H
atom shared by every hydride's atomization energy is solved once per worker;
a memoised call returns exactly what the first call returned, so stored
results do not depend on which worker ran which job.
"""
from __future__ import annotations

import time
from collections import OrderedDict
from typing import Any

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
