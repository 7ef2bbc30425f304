"""Single solver calls as the sweep's properties use them.

Each function calls the public API (:func:`ks1d.solve_atom` or
:func:`ks1d.solve_molecule`) and returns a small JSON-ready summary.  A
per-process memo keeps the summaries of recent calls so that, e.g., the H
atom shared by every hydride's atomization energy is solved once per worker;
a memoised call returns exactly what the first call returned, so stored
results do not depend on which worker ran which job.
"""
from __future__ import annotations

import time
from collections import OrderedDict
from typing import Any

from .jobs import canonical_json

_MEMO: "OrderedDict[str, dict[str, Any]]" = OrderedDict()
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


def _homo_of(result: Any) -> float | None:
    v = getattr(result, "homo_energy", None)
    if v is not None:
        return float(v)
    # fall back on the orbital list: highest occupied level over both spins
    orbs = getattr(result, "orbitals", None) or ()
    occ = [float(o.energy) for o in orbs if getattr(o, "occupation", 0) and float(o.occupation) > 1e-8]
    if occ:
        return max(occ)
    energies = getattr(result, "orbital_energies", None)
    occupations = getattr(result, "occupations", None)
    if energies is not None and occupations is not None:
        import numpy as np

        e = np.asarray(energies, dtype=float).ravel()
        n = np.asarray(occupations, dtype=float).ravel()
        if e.size == n.size and (n > 1e-8).any():
            return float(e[n > 1e-8].max())
    return None


def _multiplicity(result: Any) -> int | None:
    """2S+1: the molecule's own, or from the radial atom's up/down occupations."""
    m = getattr(result, "multiplicity", None)
    if m is not None:
        return int(m)
    orbs = getattr(result, "orbitals", None) or ()
    up = sum(float(o.occupation) for o in orbs if getattr(o, "spin", "") == "up")
    down = sum(float(o.occupation) for o in orbs if getattr(o, "spin", "") == "down")
    if up or down:
        return int(round(abs(up - down))) + 1
    return 1 if orbs else None


def _last_change(result: Any) -> float | None:
    hist = getattr(result, "history", None) or ()
    if not hist:
        return None
    return abs(float(hist[-1].delta_energy))


def _summary(result: Any) -> dict[str, Any]:
    err = getattr(result, "error_estimate", None)
    return {
        "total_energy": float(result.total_energy),
        "converged": bool(getattr(result, "converged", True)),
        "iterations": int(getattr(result, "iterations", 0) or 0),
        "homo_energy": _homo_of(result),
        "configuration": getattr(result, "configuration", None),
        "multiplicity": _multiplicity(result),
        "error_estimate": None if err is None else float(err),
        "scf_last_change": _last_change(result),
    }


def atom(symbol: str, xc: str, charge: int = 0, spin: str = "polarized", config: str | None = None,
         precision: str = "normal", options: dict[str, Any] | None = None) -> tuple[dict[str, Any], float]:
    """One radial atom: (summary, seconds spent; 0 when memoised)."""
    opts = dict(options or {})
    args = {"symbol": symbol, "xc": xc, "charge": charge, "spin": spin, "config": config,
            "precision": precision, "options": opts}

    def compute():
        from ..radial.scf import solve_atom

        from ..results import split_scf_options

        scf, rest = split_scf_options(opts)  # SCF settings as a JSON table, e.g. {"damping": 0.8}
        kwargs: dict[str, Any] = dict(xc=xc, charge=charge, spin=spin, precision=precision, scf=scf, **rest)
        if config is not None:
            kwargs["config"] = config
        return _summary(solve_atom(symbol, **kwargs))

    return _memoised("atom", args, compute)


def molecule(xyz: str, xc: str, basis: str, charge: int = 0, multiplicity: int = 1,
             options: dict[str, Any] | None = None) -> tuple[dict[str, Any], float]:
    """One Gaussian-basis calculation on XYZ text: (summary, seconds spent)."""
    opts = dict(options or {})
    args = {"xyz": xyz, "xc": xc, "basis": basis, "charge": charge, "multiplicity": multiplicity,
            "options": opts}

    def compute():
        from ..gaussian.scf import solve_molecule
        from ..results import split_scf_options

        scf, rest = split_scf_options(opts)
        return _summary(solve_molecule(xyz, basis=basis, xc=xc, charge=charge, multiplicity=multiplicity,
                                       scf=scf, **rest))

    return _memoised("molecule", args, compute)
