"""What runs inside a worker: one job and the name of its registry in, one outcome dict out.

Kept free of heavy imports at module level so that a freshly spawned worker
can set its thread limits (:func:`limit_threads`) before numpy and pyscf
load.  The registry (see :mod:`ks1d.sweep.engine.registry`) is found by its
name in every worker process, so all three executors run the same code.  The
outcome separates what the physics produced (``outputs``, which must be
identical whichever executor ran the job) from how it ran (``seconds``,
``solver_seconds``, ``worker``).
"""
from __future__ import annotations

import os
import socket
import time
import traceback
from typing import Any

THREAD_VARS = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "NUMEXPR_NUM_THREADS")


def limit_threads(n: int = 1) -> None:
    """One BLAS/OpenMP thread per worker process: the pool supplies the parallelism."""
    for var in THREAD_VARS:
        os.environ[var] = str(n)
    try:
        import sys

        if "pyscf" in sys.modules:
            from pyscf import lib

            lib.num_threads(n)
    except Exception:  # noqa: BLE001 - thread limiting is best effort
        pass


def run_job(job: dict[str, Any], registry: str) -> dict[str, Any]:
    """Run one job given as :meth:`Job.to_dict` with the registry named ``registry``.

    Never raises for a job's own failure: the error is returned in the outcome.
    """
    from .jobs import Job
    from .registry import load_registry

    t0 = time.perf_counter()
    worker = f"{socket.gethostname()}:{os.getpid()}"
    try:
        kinds = load_registry(registry)
        j = Job.from_dict(job, kinds.system_from_dict)
        result = kinds.run(j)
    except Exception as exc:  # noqa: BLE001 - every failure is stored with its error
        return {
            "status": "failed",
            "error_type": type(exc).__name__,
            "error": _describe(exc),
            "seconds": time.perf_counter() - t0,
            "solver_seconds": None,
            "worker": worker,
        }
    solver_seconds = float(sum(result.pop("solver_seconds")))
    return {
        "status": "done",
        "outputs": result,
        "seconds": time.perf_counter() - t0,
        "solver_seconds": solver_seconds,
        "worker": worker,
    }


def _describe(exc: BaseException) -> str:
    from ...errors import Ks1dError

    step = getattr(exc, "sweep_step", None)
    prefix = f"{step}: " if step else ""
    if isinstance(exc, Ks1dError):
        return prefix + str(exc)
    # an unexpected error: keep the traceback so the failure can be diagnosed from the store
    return prefix + "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))[-4000:]
