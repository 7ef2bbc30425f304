"""Drive a sweep: register its jobs, run what is left, store each result at once."""
from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any, TextIO

from .jobs import Job
from .progress import Progress
from .spec import SweepSpec
from .store import Store

#: Rough relative cost of a job kind (seconds per job in the example sweep, def2-TZVP molecules,
#: two workers), used to start expensive jobs first and to weigh the progress ETA.
_COST = {"diatomic_survey": 24.0, "basis_set_error": 2.0, "atom_survey": 3.0, "atom_survey_basis": 4.0,
         "diatomic_curve": 22.0, "atomization_energy": 4.6, "spin_splitting": 4.2, "sd_promotion": 3.0,
         "homo_vs_ip": 1.0, "ionisation_potential": 1.1, "electron_affinity": 1.0, "total_energy": 0.5}


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


def _cost(job: Job) -> float:
    base = _COST.get(job.property, 1.0)
    single = job.property in ("total_energy", "homo_vs_ip", "ionisation_potential", "electron_affinity")
    return base * (2.0 if single and not job.system.is_atom else 1.0)


def run_sweep(spec: SweepSpec, store_path: str, executor, retry_failed: bool = False,
              progress: bool = True, stream: TextIO | None = None, limit: int | None = None,
              rerun: bool = False) -> RunSummary:
    """Run every job of ``spec`` not yet finished in the store at ``store_path``.

    ``retry_failed`` runs failed jobs again; ``rerun`` runs every job again
    (each stored row is replaced when its new result arrives); ``limit`` caps
    the number of jobs run now (the rest stay as they are).
    """
    return run_jobs(spec.name, spec.source_text, spec.jobs(), store_path, executor, retry_failed=retry_failed,
                    progress=progress, stream=stream, limit=limit, rerun=rerun)


def run_jobs(name: str, source_text: str, jobs: list[Job], store_path: str, executor,
             retry_failed: bool = False, progress: bool = True, stream: TextIO | None = None,
             limit: int | None = None, rerun: bool = False) -> RunSummary:
    """Register ``jobs`` under the sweep ``name`` and run those not finished; each result is stored at once."""
    t0 = time.perf_counter()
    jobs = list(jobs)
    with Store(store_path) as store:
        store.register(name, jobs)
        todo_keys = store.to_run([j.key for j in jobs], retry_failed=retry_failed or rerun, rerun_done=rerun)
        todo = sorted((j for j in jobs if j.key in todo_keys), key=_cost, reverse=True)
        if limit is not None:
            todo = todo[:limit]
        run_id = store.start_run(name, source_text, executor.name, getattr(executor, "workers", None))
        bar = Progress(len(todo), stream=stream, enabled=progress, label=name,
                       total_work=sum(_cost(j) for j in todo))
        counts = {"done": 0, "failed": 0}

        def on_result(job: Job, outcome: dict[str, Any]) -> None:
            store.record(job.key, outcome, executor.name)
            counts[outcome["status"]] += 1
            bar.advance(failed=outcome["status"] == "failed", work=_cost(job))

        try:
            if todo:
                executor.run(todo, on_result)
        finally:
            bar.close()
            store.finish_run(run_id, counts["done"], counts["failed"])
    return RunSummary(sweep=name, total=len(jobs), skipped=len(jobs) - len(todo_keys), ran=len(todo),
                      done=counts["done"], failed=counts["failed"], seconds=time.perf_counter() - t0,
                      executor=executor.name, workers=getattr(executor, "workers", None))
