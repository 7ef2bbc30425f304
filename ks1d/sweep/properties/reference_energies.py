"""Reference atomic energies (``ks1d refs``): each neutral atom in its spin-polarized ground state.

Two different models, labelled as such in every row (``model``) and never mixed under one heading:

* **the basis-set limit** (default): the radial solver (:func:`ks1d.radial.scf.solve_atom`), a
  spherical atom with open sub-shells equally occupied over m (the spin-polarized Hund's-rule
  ensemble).  ``error_estimate`` is the mesh-refinement difference plus the last SCF change.
* **a Gaussian basis** (``basis`` given): :func:`ks1d.gaussian.scf.solve_molecule` on a one-atom
  XYZ at the Hund's-rule multiplicity (:func:`ks1d.occupations.ground_state_multiplicity`), UKS for
  open shells, with integer aufbau occupations, so an open-shell atom may break spherical symmetry.  Such an
  atom can lie *below* the spherical basis-set limit (by 5–14 mHa for open p shells with GGAs; see
  DEVELOPERS.md, "Spherical atoms and meta-GGAs") even though its basis is incomplete.
  ``error_estimate`` is then the last SCF energy change only: basis-set incompleteness is not an
  error of the calculation but of the basis.

The rows are computed as sweep ``total_energy`` jobs, so they run on the same executors
(in-process, process pool, Dask), with a progress line on request.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, TextIO

from ... import elements
from ..._version import __version__
from ...occupations import ground_state_multiplicity
from ...xc import resolve_functional
from ..engine.executors import InlineExecutor
from ..engine.jobs import Job, freeze_settings
from ..engine.progress import Progress
from .checks import check_jobs
from .registry import REGISTRY
from .systems import neutral_atom

#: What each model is, in words (the ``model`` column and the table heading of ``ks1d refs``).
RADIAL_MODEL = ("basis-set limit: radial solver, spherical spin-polarized atom "
                "(open sub-shells equally occupied over m)")
GAUSSIAN_MODEL = ("Gaussian basis {basis}: atom at the Hund's-rule multiplicity with integer occupations, UKS for "
                  "open shells (spherical symmetry may break, so open-shell atoms can lie below the spherical "
                  "basis-set limit)")


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
    model: str
    settings: dict
    ks1d_version: str
    error: str | None = None

    def to_dict(self) -> dict[str, Any]:
        return dict(self.__dict__)


#: radial Hamiltonians that give spin-polarized reference atoms
REFS_RELATIVITY = ("none", "scalar", "x2c")

_RELATIVITY_WORDS = {"scalar": "scalar-relativistic (Koelling-Harmon)", "x2c": "spin-free X2C-1e"}


def model_of(basis: str | None, relativity: str = "none") -> str:
    """The words for the model of :func:`reference_energies` with this ``basis`` (None: the radial limit)."""
    if basis is not None:
        return GAUSSIAN_MODEL.format(basis=basis)
    if relativity == "none":
        return RADIAL_MODEL + ", non-relativistic"
    return RADIAL_MODEL + f", {_RELATIVITY_WORDS[relativity]}"


def reference_jobs(symbols: Sequence[str], xcs: Sequence[str], basis: str | None = None,
                   precision: str = "normal", relativity: str = "none") -> list[Job]:
    """The ``total_energy`` jobs of the rows, checked before anything runs (functional, basis, solver).

    ``relativity`` is the radial Hamiltonian (``"none"``, ``"scalar"`` or ``"x2c"``; the spin-restricted
    ``"dirac"`` atoms are not spin-polarized ground states).  It enters the job settings, and so the job
    keys, only when it is not ``"none"``: stored non-relativistic results keep their keys and are never
    reused for a relativistic job.
    """
    from ...errors import SettingsError
    from ...radial.scf import check_relativistic_functional

    if relativity not in REFS_RELATIVITY:
        raise SettingsError(f"relativity must be one of {', '.join(map(repr, REFS_RELATIVITY))} for reference "
                            f"energies of spin-polarized atoms, got {relativity!r}")
    if basis is None:
        settings: dict[str, Any] = {"atoms": "radial", "precision": precision, "spin": "polarized"}
        if relativity != "none":
            for xc in xcs:
                check_relativistic_functional(relativity, resolve_functional(xc))
            settings["atom_options"] = {"relativity": relativity}
    else:
        if relativity != "none":
            raise SettingsError("relativity applies to the radial basis-set limit; Gaussian-basis atoms are "
                                "non-relativistic (leave out --basis or --relativity)")
        settings = {"atoms": "basis", "basis": basis}
    jobs = [Job(system=neutral_atom(s), property="total_energy", functional=xc, settings=freeze_settings(settings))
            for s in symbols for xc in xcs]
    check_jobs(jobs, radial_hint="; give --basis NAME for its energies in a Gaussian basis")
    return jobs


def rows_from_outcomes(jobs: Sequence[Job], outcomes: dict[str, dict[str, Any]]) -> list[AtomReferenceRow]:
    rows = []
    for job in jobs:
        o = outcomes[job.key]
        st = job.settings_dict
        radial = st.get("atoms") == "radial"
        el = elements.element(job.system.symbol)
        common = dict(element=el.symbol, Z=el.Z, xc=job.functional, libxc=resolve_functional(job.functional).libxc,
                      spin="polarized", solver="radial (basis-set limit)" if radial else f"gaussian {st['basis']}",
                      model=model_of(None if radial else st["basis"],
                                     (st.get("atom_options") or {}).get("relativity", "none")),
                      settings=st, ks1d_version=__version__)
        if o["status"] != "done":
            rows.append(AtomReferenceRow(configuration=el.ground_configuration,
                                         multiplicity=ground_state_multiplicity(el.symbol), total_energy=None,
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
                       precision: str = "normal", executor=None, progress: bool = False,
                       stream: TextIO | None = None, relativity: str = "none") -> list[AtomReferenceRow]:
    """Rows in element-then-functional order; failed atoms are rows with ``error`` set.

    Bad input (an unknown functional or basis, a range-separated hybrid without a basis)
    raises before any atom is solved.  ``progress`` draws a progress line on ``stream``
    (default stderr) as the atoms finish.
    """
    jobs = reference_jobs(symbols, xcs, basis, precision, relativity)
    outcomes: dict[str, dict[str, Any]] = {}
    bar = Progress(len(jobs), stream=stream, enabled=progress, label="refs")

    def on_result(job: Job, outcome: dict[str, Any]) -> None:
        outcomes[job.key] = outcome
        bar.advance(failed=outcome["status"] != "done")

    try:
        (executor or InlineExecutor()).run(jobs, on_result, REGISTRY)
    finally:
        bar.close()
    return rows_from_outcomes(jobs, outcomes)
