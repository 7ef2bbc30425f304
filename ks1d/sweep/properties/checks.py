"""Up-front checks of planned jobs: functionals, bases, and what each solver can do.

Shared by sweep specs (``ks1d sweep plan`` / ``run``), the report planner and
``ks1d refs``, so all three refuse the same requests with the same words,
before any job runs:

* an unknown functional (:func:`ks1d.xc.resolve_functional`, with a suggestion);
* a functional a job's solver cannot do, decided from the functional's
  classification, not by running: the radial solver has no range-separated
  exact exchange (:func:`radial_refusal`);
* an unknown basis, or one that lacks an element or pairs it with an effective
  core potential (:func:`ks1d.gaussian.basis.check_basis`);
* a system or settings the job's kind cannot use (:mod:`.kinds`).

Which solvers a job calls, and in which basis, comes from its kind's
``solvers`` declaration.
"""
from __future__ import annotations

from collections.abc import Iterable, Sequence

from ...errors import BasisError, InputError, UnsupportedFunctional
from ...gaussian.basis import check_basis
from ...xc import Functional, resolve_functional
from ..engine.jobs import Job
from .kinds import KINDS

__all__ = ["check_basis", "check_jobs", "radial_refusal", "resolve_functional"]


def radial_refusal(func: Functional) -> str | None:
    """Why the radial solver cannot do ``func`` (None when it can), from the functional's classification."""
    if func.is_range_separated:
        return f"'{func.name}' is a {func.kind}, and the radial solver has no range-separated exact exchange yet"
    return None


def check_jobs(jobs: Iterable[Job], radial_hint: str = "") -> None:
    """Raise an :class:`~ks1d.errors.InputError` naming the first job that cannot run as planned.

    ``radial_hint`` is appended to a refusal of the radial solver (how the caller's user
    can ask for Gaussian-basis atoms instead).  Each basis is checked once, for every
    element of the jobs that use it.
    """
    bases: dict[str, tuple[str, list[str]]] = {}  # basis -> (first job using it, its elements)
    for job in jobs:
        kind = KINDS.get(job.property)
        if kind is None:
            raise InputError(f"'{job.property}' is not a job kind of this ks1d version")
        label = f"{job.property} of '{job.system.name}'"
        settings = job.settings_dict
        why = kind.check(job.system) or (kind.settings_check(settings) if kind.settings_check else None)
        if why:
            raise InputError(f"{label}: {why}")
        func = resolve_functional(job.functional)
        for use in kind.solvers(job.system, settings):
            if use.solver == "radial":
                why = radial_refusal(func)
                if why:
                    raise UnsupportedFunctional(f"{label} needs radial atoms: {why}{radial_hint}")
            else:
                if not use.basis:
                    raise InputError(f"{label} needs a basis setting")
                first, symbols = bases.setdefault(use.basis, (label, []))
                symbols.extend(s for s in job.system.symbols if s not in symbols)
    for basis, (label, symbols) in bases.items():
        _check_basis_for(basis, symbols, label)


def _check_basis_for(basis: str, symbols: Sequence[str], label: str) -> None:
    try:
        check_basis(basis, symbols)
    except BasisError as exc:
        raise BasisError(f"{label}: {exc}") from None
