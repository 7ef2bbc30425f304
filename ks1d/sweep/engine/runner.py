"""Drive a run: register its jobs, run what is left, store each result at once."""
from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any, TextIO

from .jobs import Job
from .progress import Progress
from .registry import Registry, load_registry, registry_ref
from .store import Store


@dataclass(frozen=True)
class RunSummary:
    """What one run did: jobs in the spec, already finished, run now, failed now."""

    sweep: str
    total: int
    skipped: int
    ran: int
    done: int
    failed: int
    seconds: float
    executor: str
    workers: int | None

    def to_dict(self) -> dict[str, Any]:
        return dict(self.__dict__)


def run_jobs(name: str, source_text: str, jobs: list[Job], store_path: str, executor, registry: Registry | str,
             retry_failed: bool = False, progress: bool = True, stream: TextIO | None = None,
             limit: int | None = None, rerun: bool = False) -> RunSummary:
    """Register ``jobs`` under the sweep ``name`` and run those not finished; each result is stored at once.

    ``registry`` says what the jobs' kinds compute (see :mod:`ks1d.sweep.engine.registry`).
    ``retry_failed`` runs failed jobs again; ``rerun`` runs every job again (each stored row is
    replaced when its new result arrives); ``limit`` caps the number of jobs run now (the rest
    stay as they are).  The most expensive jobs (by ``registry.cost``) start first.
    """
    t0 = time.perf_counter()
    ref = registry_ref(registry)
    kinds = load_registry(ref)
    jobs = list(jobs)
    with Store(store_path) as store:
        store.register(name, jobs)
        todo_keys = store.to_run([j.key for j in jobs], retry_failed=retry_failed or rerun, rerun_done=rerun)
        todo = sorted((j for j in jobs if j.key in todo_keys), key=kinds.cost, reverse=True)
        if limit is not None:
            todo = todo[:limit]
        run_id = store.start_run(name, source_text, executor.name, getattr(executor, "workers", None))
        bar = Progress(len(todo), stream=stream, enabled=progress, label=name,
                       total_work=sum(kinds.cost(j) for j in todo))
        counts = {"done": 0, "failed": 0}

        def on_result(job: Job, outcome: dict[str, Any]) -> None:
            store.record(job.key, outcome, executor.name)
            counts[outcome["status"]] += 1
            bar.advance(failed=outcome["status"] == "failed", work=kinds.cost(job))

        try:
            if todo:
                executor.run(todo, on_result, ref)
        finally:
            bar.close()
            store.finish_run(run_id, counts["done"], counts["failed"])
    return RunSummary(sweep=name, total=len(jobs), skipped=len(jobs) - len(todo_keys), ran=len(todo),
                      done=counts["done"], failed=counts["failed"], seconds=time.perf_counter() - t0,
                      executor=executor.name, workers=getattr(executor, "workers", None))
