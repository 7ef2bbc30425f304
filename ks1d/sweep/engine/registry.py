"""What the engine needs from a registry of job kinds, and how a worker process finds one.

The engine runs jobs without knowing what they compute.  Everything
kind-specific comes from a *registry*, an object with

``ref``                 ``"package.module:attribute"``: where the registry lives, so that a
                        freshly spawned worker process (process pool, Dask) can import it;
``system_from_dict(d)`` rebuild a job's system from :meth:`Job.to_dict`'s ``"system"`` entry;
``run(job)``            compute one job: a JSON-ready dict of outputs with a
                        ``"solver_seconds"`` list (popped by the worker and stored apart);
``cost(job)``           a rough relative cost, to start expensive jobs first and weigh the ETA.

:func:`load_registry` resolves a ``ref`` with :mod:`importlib`; the engine
never imports a registry module by name, so it stays free of physics (an
import-linter contract checks this).  ks1d's own registry is
:data:`ks1d.sweep.properties.registry.REGISTRY`.
"""
from __future__ import annotations

import importlib
from functools import cache
from typing import Any, Protocol, runtime_checkable

from ...errors import InputError


@runtime_checkable
class Registry(Protocol):
    """The registry interface (see the module docstring)."""

    ref: str

    def system_from_dict(self, d: dict[str, Any]) -> Any: ...

    def run(self, job) -> dict[str, Any]: ...

    def cost(self, job) -> float: ...


@cache
def load_registry(ref: str) -> Registry:
    """The registry named ``"package.module:attribute"`` (imported once per process)."""
    module, sep, attribute = str(ref).partition(":")
    if not sep or not module or not attribute:
        raise InputError(f"a registry reference reads 'package.module:attribute', got {ref!r}")
    try:
        obj = getattr(importlib.import_module(module), attribute)
    except (ImportError, AttributeError) as exc:
        raise InputError(f"cannot find the job registry {ref!r}: {exc}") from None
    if not isinstance(obj, Registry):
        raise InputError(f"{ref!r} is not a job registry (it needs ref, system_from_dict, run and cost)")
    return obj


def registry_ref(registry: Registry | str) -> str:
    """The ``ref`` of ``registry`` (a registry object, or already its ref), checked to lead back to it.

    A registry whose ``ref`` names another object would run different code in
    worker processes than in this one; that is refused here, before any job runs.
    """
    if isinstance(registry, str):
        load_registry(registry)
        return registry
    if not isinstance(registry, Registry):
        raise InputError(f"{registry!r} is not a job registry (it needs ref, system_from_dict, run and cost)")
    if load_registry(registry.ref) is not registry:
        raise InputError(f"registry.ref {registry.ref!r} does not lead back to this registry; worker processes "
                         "would not find it")
    return registry.ref
