"""The property registry: each job kind's computation, and :data:`REGISTRY`, the object the engine runs.

The kinds are declared in :mod:`.kinds` (quantities, settings, systems,
solvers, cost); this module attaches their computations, each a function of a
:class:`~.context.Context` returning its quantities:

=====================  ==========================================
total_energy … homo    :mod:`.basic`
diatomic_curve         :func:`.diatomic.diatomic_curve`
diatomic_curve_scan    :func:`.diatomic.diatomic_curve_scan`
diatomic_survey        :func:`.diatomic.diatomic_survey`
atom_survey(_basis)    :mod:`.atom_survey`
basis_set_error        :func:`.atom_survey.basis_set_error`
optimized_geometry     :func:`.geometry.optimized_geometry`
vibrations             :func:`.geometry.vibrations`
=====================  ==========================================

:data:`REGISTRY` implements the engine's registry interface
(:mod:`ks1d.sweep.engine.registry`): worker processes find it by its ``ref``.
"""
from __future__ import annotations

from collections.abc import Callable
from typing import Any

from . import atom_survey, basic, diatomic, geometry
from .context import Context
from .kinds import KINDS
from .systems import System

#: Kind name → computation.
COMPUTE: dict[str, Callable[[Context], dict[str, float]]] = {
    "total_energy": basic.total_energy,
    "ionisation_potential": basic.ionisation_potential,
    "electron_affinity": basic.electron_affinity,
    "atomization_energy": basic.atomization_energy,
    "diatomic_curve": diatomic.diatomic_curve,
    "diatomic_curve_scan": diatomic.diatomic_curve_scan,
    "spin_splitting": basic.spin_splitting,
    "sd_promotion": basic.sd_promotion,
    "homo_vs_ip": basic.homo_vs_ip,
    "atom_survey": atom_survey.atom_survey,
    "atom_survey_basis": atom_survey.atom_survey_basis,
    "basis_set_error": atom_survey.basis_set_error,
    "diatomic_survey": diatomic.diatomic_survey,
    "optimized_geometry": geometry.optimized_geometry,
    "vibrations": geometry.vibrations,
}
if set(COMPUTE) != set(KINDS):  # pragma: no cover - a programming error, caught by any import
    raise RuntimeError(f"kinds without a computation or the reverse: {sorted(set(COMPUTE) ^ set(KINDS))}")


def run_property(kind: str, system: System, functional: str, settings: dict[str, Any]) -> dict[str, Any]:
    """Compute one job's property: values, solver-call summaries, details, seconds per call."""
    ctx = Context(system, functional, settings)
    values = COMPUTE[kind](ctx)
    return {"values": values, "calculations": ctx.calculations, "details": ctx.details,
            "solver_seconds": ctx.seconds}


class PropertyRegistry:
    """ks1d's job kinds as the engine sees them (see :mod:`ks1d.sweep.engine.registry`)."""

    ref = f"{__name__}:REGISTRY"

    def system_from_dict(self, d: dict[str, Any]) -> System:
        return System.from_dict(d)

    def run(self, job) -> dict[str, Any]:
        return run_property(job.property, job.system, job.functional, job.settings_dict)

    def cost(self, job) -> float:
        kind = KINDS.get(job.property)
        return kind.cost_for(job.system) if kind is not None else 1.0

    def __repr__(self) -> str:
        return f"<ks1d property registry {self.ref}>"


#: The registry of :data:`.kinds.KINDS`, found by worker processes as ``ks1d.sweep.properties.registry:REGISTRY``.
REGISTRY = PropertyRegistry()
