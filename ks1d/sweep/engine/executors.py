"""Where jobs run: in this process, in a local process pool, or on Dask.

Every executor's ``run(jobs, on_result, registry)`` calls
``on_result(job, outcome)`` in the driving process as each job finishes, in
completion order; the driver stores the outcome at once.  All three run the
same function (:func:`ks1d.sweep.engine.worker.run_job`) on the job's dict and
the registry's name, with one BLAS/OpenMP thread per worker, so the stored
outputs do not depend on the executor.
"""
from __future__ import annotations

import os
from collections.abc import Callable, Sequence
from contextlib import contextmanager
from typing import Any

from ...errors import InputError
from .jobs import Job
from .registry import Registry, registry_ref
from .worker import THREAD_VARS, limit_threads, run_job

OnResult = Callable[[Job, dict[str, Any]], None]


def default_workers() -> int:
    """One worker per core available to this process."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on Linux
        return max(1, os.cpu_count() or 1)


@contextmanager
def single_threaded_children():
    """Spawned children inherit one-thread BLAS/OpenMP settings (they load numpy before any initializer runs)."""
    saved = {v: os.environ.get(v) for v in THREAD_VARS}
    os.environ.update({v: "1" for v in THREAD_VARS})
    try:
        yield
    finally:
        for v, old in saved.items():
            if old is None:
                os.environ.pop(v, None)
            else:
                os.environ[v] = old


class InlineExecutor:
    """Runs jobs one after another in this process (``--workers 0``; debugging and tests)."""

    name = "inline"
    workers = None

    def run(self, jobs: Sequence[Job], on_result: OnResult, registry: Registry | str) -> None:
        from ...threads import single_threaded

        ref = registry_ref(registry)
        with single_threaded():  # as in the pool and on Dask: one thread, the same numbers
            for job in jobs:
                on_result(job, run_job(job.to_dict(), ref))


class PoolExecutor:
    """A local pool of ``workers`` processes (spawned, so no state leaks from the driver)."""

    name = "pool"

    def __init__(self, workers: int | None = None):
        if workers is not None and workers < 1:
            raise InputError(f"a process pool needs at least 1 worker, got {workers}")
        self.workers = workers or default_workers()

    def run(self, jobs: Sequence[Job], on_result: OnResult, registry: Registry | str) -> None:
        import multiprocessing
        from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait

        ref = registry_ref(registry)
        ctx = multiprocessing.get_context("spawn")
        with single_threaded_children(), ProcessPoolExecutor(max_workers=self.workers, mp_context=ctx,
                                                             initializer=limit_threads, initargs=(1,)) as pool:
            futures = {pool.submit(run_job, j.to_dict(), ref): j for j in jobs}
            try:
                pending = set(futures)
                while pending:
                    finished, pending = wait(pending, return_when=FIRST_COMPLETED)
                    for fut in finished:
                        on_result(futures[fut], _outcome_of(fut))
            except BaseException:
                for f in futures:
                    f.cancel()
                raise


class DaskExecutor:
    """Dask distributed: an existing scheduler at ``address``, or a LocalCluster of ``workers`` processes."""

    name = "dask"

    def __init__(self, address: str | None = None, workers: int | None = None):
        try:
            import distributed  # noqa: F401
        except ImportError:
            raise InputError(
                "Dask execution needs the 'distributed' package: pip install 'ks1d[sweep]' "
                "(or dask[distributed])"
            ) from None
        self.address = address
        self.workers = None if address else (workers or default_workers())

    def run(self, jobs: Sequence[Job], on_result: OnResult, registry: Registry | str) -> None:
        from distributed import Client, LocalCluster, as_completed

        ref = registry_ref(registry)
        cluster = None
        if self.address:
            try:
                client = Client(self.address, timeout="20s")
            except (OSError, TimeoutError) as exc:
                raise InputError(f"cannot reach a Dask scheduler at '{self.address}': {exc}") from None
        else:
            cluster = LocalCluster(n_workers=self.workers, threads_per_worker=1, processes=True,
                                   dashboard_address=None, silence_logs=40)
            client = Client(cluster)
        try:
            if self.address:
                self.workers = len(client.scheduler_info().get("workers", {})) or None
            client.run(limit_threads, 1)
            futures = {}
            for j in jobs:
                fut = client.submit(run_job, j.to_dict(), ref, key=f"ks1d-job-{j.key}", pure=False, retries=0)
                futures[fut.key] = (fut, j)
            for fut in as_completed([f for f, _ in futures.values()]):
                on_result(futures[fut.key][1], _outcome_of(fut))
        finally:
            client.close()
            if cluster is not None:
                cluster.close()


def _outcome_of(fut) -> dict[str, Any]:
    """The worker's outcome, or a 'failed' outcome when the worker itself died."""
    try:
        return fut.result()
    except Exception as exc:  # noqa: BLE001 - a crashed worker process, pickling trouble, ...
        return {"status": "failed", "error_type": type(exc).__name__,
                "error": f"the worker running this job failed: {exc}", "seconds": None,
                "solver_seconds": None, "worker": None}


def make_executor(workers: int | None = None, scheduler: str | None = None, dask: bool = False):
    """Choose an executor from the CLI's ``--workers`` / ``--scheduler`` / ``--dask``."""
    if scheduler or dask:
        return DaskExecutor(address=scheduler, workers=workers)
    if workers == 0:
        return InlineExecutor()
    return PoolExecutor(workers)
