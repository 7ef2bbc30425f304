"""Run a sweep spec: its jobs through the engine (:func:`ks1d.sweep.engine.runner.run_jobs`) with ks1d's
property registry (:data:`ks1d.sweep.properties.registry.REGISTRY`)."""
from __future__ import annotations

from typing import TextIO

from .engine.runner import RunSummary, run_jobs
from .properties.registry import REGISTRY
from .spec import SweepSpec


def run_sweep(spec: SweepSpec, store_path: str, executor, retry_failed: bool = False,
              progress: bool = True, stream: TextIO | None = None, limit: int | None = None,
              rerun: bool = False) -> RunSummary:
    """Run every job of ``spec`` not yet finished in the store at ``store_path``.

    ``retry_failed`` runs failed jobs again; ``rerun`` runs every job again
    (each stored row is replaced when its new result arrives); ``limit`` caps
    the number of jobs run now (the rest stay as they are).
    """
    return run_jobs(spec.name, spec.source_text, spec.jobs(), store_path, executor, REGISTRY,
                    retry_failed=retry_failed, progress=progress, stream=stream, limit=limit, rerun=rerun)
