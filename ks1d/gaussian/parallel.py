"""Thread-level parallelism over grid blocks.

The per-block work (matrix products, reductions) runs in numpy routines that
release the interpreter lock, so plain threads scale over cores.  Each worker
uses a single-threaded BLAS: small products of many threads fight for cores
otherwise (badly so on a loaded machine).  ``KS1D_NUM_THREADS`` overrides the
worker count (default 1: the grid loops are memory-bound, and threads pay off only on idle cores).
"""
from __future__ import annotations

import os
from concurrent.futures import ThreadPoolExecutor

from ..threads import single_threaded


def worker_count() -> int:
    """Worker threads for grid loops: KS1D_NUM_THREADS, default 1 (see module docstring)."""
    env = os.environ.get("KS1D_NUM_THREADS")
    if env and env.isdigit() and int(env) > 0:
        return int(env)
    return 1


def run_chunks(fn, items: list, workers: int | None = None) -> list:
    """Apply ``fn(chunk)`` to ``workers`` contiguous chunks of ``items`` in threads."""
    n = worker_count() if workers is None else workers
    n = max(1, min(n, len(items)))
    if n == 1:
        with single_threaded(openmp=False):
            return [fn(items)]
    size = (len(items) + n - 1) // n
    chunks = [items[i:i + size] for i in range(0, len(items), size)]
    with single_threaded(openmp=False), ThreadPoolExecutor(max_workers=len(chunks)) as pool:
        return list(pool.map(fn, chunks))
