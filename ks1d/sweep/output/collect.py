"""From stored jobs to result rows: one value per (system, quantity, functional), with its reference."""
from __future__ import annotations

import json
from collections.abc import Iterable
from dataclasses import dataclass, field, replace
from typing import Any

from ...quantities import quantity
from ..engine.jobs import Job
from ..engine.store import JobRow
from ..properties.datasets import reference_for
from ..properties.kinds import KINDS
from ..properties.systems import System


@dataclass(frozen=True)
class ResultRow:
    """A computed value beside its reference; ``error`` = value − reference (display unit)."""

    system: str
    quantity: str
    functional: str
    value: float
    unit: str
    reference: float | None
    error: float | None
    reference_source: str | None
    reference_from_memory: bool | None
    job: str
    #: (system, functional) positions in the sweep's job order, for tables and plots
    rank: tuple[int, int] = field(default=(0, 0), compare=False, repr=False)

    def to_dict(self) -> dict[str, Any]:
        d = dict(self.__dict__)
        d.pop("rank")
        return d


@dataclass(frozen=True)
class FailureRow:
    """A job that failed: what it was and the error it stopped with."""

    system: str
    property: str
    functional: str
    error_type: str | None
    error: str | None
    attempts: int
    job: str

    def to_dict(self) -> dict[str, Any]:
        return dict(self.__dict__)


def collect(rows: Iterable[JobRow], keys: set[str] | None = None) -> tuple[list[ResultRow], list[FailureRow]]:
    """Result rows of every finished job and failure rows of every failed one (optionally only ``keys``)."""
    results: list[ResultRow] = []
    failures: list[FailureRow] = []
    rows = [r for r in rows if keys is None or r.key in keys]
    label = _functional_labels(rows)
    for r in rows:
        if r.status == "failed":
            failures.append(FailureRow(r.system, r.property, label[r.key], r.error_type, r.error, r.attempts,
                                       r.key))
            continue
        if r.status != "done" or not r.outputs:
            continue
        job = Job.from_dict(r.inputs, System.from_dict)
        values = r.outputs.get("values", {})
        for q in KINDS[job.property].quantities if job.property in KINDS else values:
            if q not in values:
                continue
            ref = reference_for(q, job.system, job.functional, job.settings_dict)
            v = float(values[q])
            results.append(ResultRow(
                system=job.system.name, quantity=q, functional=label[r.key], value=v, unit=quantity(q).unit,
                reference=None if ref is None else ref.value,
                error=None if ref is None else v - ref.value,
                reference_source=None if ref is None else ref.source,
                reference_from_memory=None if ref is None else ref.from_memory,
                job=r.key,
            ))
    # spec order throughout, whatever failed: rank systems and functionals by first appearance among all jobs
    sys_rank = {n: i for i, n in enumerate(ordered(r.system for r in rows))}
    fun_rank = {n: i for i, n in enumerate(ordered(label[r.key] for r in rows))}
    q_rank = {n: i for i, n in enumerate(ordered(r.quantity for r in results))}
    results = [replace(r, rank=(sys_rank[r.system], fun_rank[r.functional])) for r in results]
    results.sort(key=lambda r: (q_rank[r.quantity], r.rank))
    return results, failures


def _by_rank(rows: Iterable[ResultRow], attr: str, i: int) -> list[str]:
    first: dict[str, tuple[int, int]] = {}
    for n, r in enumerate(rows):
        first.setdefault(getattr(r, attr), (r.rank[i], n))
    return sorted(first, key=first.__getitem__)


def systems_of(rows: Iterable[ResultRow]) -> list[str]:
    """The systems among ``rows`` in sweep order (else in order of appearance)."""
    return _by_rank(rows, "system", 0)


def functionals_of(rows: Iterable[ResultRow]) -> list[str]:
    """The functionals among ``rows`` in sweep order (else in order of appearance)."""
    return _by_rank(rows, "functional", 1)


def _functional_labels(rows: list[JobRow]) -> dict[str, str]:
    """The functional's name, tagged with the settings that tell apart jobs that would share a table cell.

    Two jobs of one property, system and functional that differ in settings
    (e.g. basis) would collide in the tables; their labels become
    ``"pbe [basis=def2-svp]"`` and ``"pbe [basis=def2-tzvp]"``.
    """
    groups: dict[tuple[str, str, str], list[JobRow]] = {}
    for r in rows:
        groups.setdefault((r.property, r.system, r.functional), []).append(r)
    labels = {r.key: r.functional for r in rows}
    for members in groups.values():
        if len(members) < 2:
            continue
        keys = sorted({k for m in members for k in m.settings})
        differing = [k for k in keys if len({json.dumps(m.settings.get(k), sort_keys=True) for m in members}) > 1]
        for m in members:
            tag = ", ".join(f"{k}={_short(m.settings.get(k))}" for k in differing) or m.version
            labels[m.key] = f"{m.functional} [{tag}]"
    return labels


def _short(v: Any) -> str:
    return v if isinstance(v, str) else json.dumps(v, sort_keys=True)


def ordered(values: Iterable[str]) -> list[str]:
    """Unique values in first-seen order."""
    return list(dict.fromkeys(values))
