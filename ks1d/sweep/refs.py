"""Reference atomic energies: each neutral atom in its spin-polarized ground state.

By default at the basis-set limit (the radial solver, :func:`ks1d.solve_atom`,
whose ``error_estimate`` is the mesh-refinement difference plus the SCF
tolerance); with a basis name in that Gaussian basis (:func:`ks1d.solve_molecule`
on a one-atom XYZ at the Hund's-rule multiplicity of the NIST ground
configuration), where the estimate is the last SCF energy change only —
basis-set incompleteness is not an error of the calculation but of the basis.

The rows are computed as sweep ``total_energy`` jobs, so they run on the same
executors (in-process, process pool, Dask).
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any, Sequence

from .. import elements
from .._version import __version__
from ..errors import InputError
from .jobs import Job, freeze_settings
from .systems import System, atom_multiplicity


@dataclass(frozen=True)
class AtomReferenceRow:
    """One atom with one functional."""

    element: str
    Z: int
    xc: str
    libxc: str
    configuration: str
    spin: str
    multiplicity: int | None
    total_energy: float | None
    error_estimate: float | None
    error_kind: str
    converged: bool
    iterations: int | None
    solver: str
    settings: dict
    ks1d_version: str
    error: str | None = None

    def to_dict(self) -> dict[str, Any]:
        return dict(self.__dict__)


def parse_elements(tokens: Sequence[str]) -> list[str]:
    """Symbols, atomic numbers and ranges ('Li-Ne', '3-10') → element symbols in order."""
    out: list[str] = []
    for tok in tokens:
        for part in tok.replace(",", " ").split():
            m = re.match(r"^([A-Za-z]{1,2}|\d+)-([A-Za-z]{1,2}|\d+)$", part)
            if m:
                a, b = elements.atomic_number(m.group(1)), elements.atomic_number(m.group(2))
                if b < a:
                    raise InputError(f"element range '{part}' runs backwards")
                out.extend(elements.symbol(z) for z in range(a, b + 1))
            else:
                out.append(elements.symbol(part))
    if not out:
        raise InputError("give at least one element, e.g. 'ks1d refs H He Li-Ne --xc pbe'")
    return list(dict.fromkeys(out))


def reference_jobs(symbols: Sequence[str], xcs: Sequence[str], basis: str | None = None,
                   precision: str = "normal") -> list[Job]:
    from ..xc import resolve_functional

    for xc in xcs:
        resolve_functional(xc)  # fail early, with the functional's own message
    if basis is None:
        settings = {"atoms": "radial", "precision": precision, "spin": "polarized"}
    else:
        settings = {"atoms": "basis", "basis": basis}
    jobs = []
    for s in symbols:
        system = System(name=s, kind="atom", symbol=s, source="element symbol")
        for xc in xcs:
            jobs.append(Job(system=system, property="total_energy", functional=xc,
                            settings=freeze_settings(settings)))
    return jobs


def rows_from_outcomes(jobs: Sequence[Job], outcomes: dict[str, dict[str, Any]]) -> list[AtomReferenceRow]:
    from ..xc import resolve_functional

    rows = []
    for job in jobs:
        o = outcomes[job.key]
        st = job.settings_dict
        radial = st.get("atoms") == "radial"
        el = elements.element(job.system.symbol)
        common = dict(element=el.symbol, Z=el.Z, xc=job.functional, libxc=resolve_functional(job.functional).libxc,
                      spin="polarized", solver="radial (basis-set limit)" if radial else f"gaussian {st['basis']}",
                      settings=st, ks1d_version=__version__)
        if o["status"] != "done":
            rows.append(AtomReferenceRow(configuration=el.ground_configuration,
                                         multiplicity=atom_multiplicity(el.symbol), total_energy=None,
                                         error_estimate=None, error_kind="", converged=False, iterations=None,
                                         error=f"{o.get('error_type')}: {(o.get('error') or '').splitlines()[0]}",
                                         **common))
            continue
        calc = o["outputs"]["calculations"][0]
        if radial:
            err, kind = calc.get("error_estimate"), "mesh refinement + SCF tolerance"
            config = calc.get("configuration") or el.ground_configuration
        else:
            err, kind = calc.get("scf_last_change"), "last SCF energy change (basis-set error not included)"
            config = el.ground_configuration
        rows.append(AtomReferenceRow(configuration=config, multiplicity=calc.get("multiplicity"),
                                     total_energy=calc["total_energy"], error_estimate=err, error_kind=kind,
                                     converged=bool(calc.get("converged", True)), iterations=calc.get("iterations"),
                                     **common))
    return rows


def reference_energies(symbols: Sequence[str], xcs: Sequence[str], basis: str | None = None,
                       precision: str = "normal", executor=None) -> list[AtomReferenceRow]:
    """Rows in element-then-functional order; failed atoms are rows with ``error`` set."""
    from .executors import InlineExecutor

    jobs = reference_jobs(symbols, xcs, basis, precision)
    outcomes: dict[str, dict[str, Any]] = {}
    (executor or InlineExecutor()).run(jobs, lambda j, o: outcomes.__setitem__(j.key, o))
    return rows_from_outcomes(jobs, outcomes)
