"""Thread-level parallelism over grid blocks.

The per-block work (matrix products, reductions) runs in numpy routines that
release the interpreter lock, so plain threads scale over cores.  Each worker
uses a single-threaded BLAS: small products of many threads fight for cores
otherwise (badly so on a loaded machine).  ``KS1D_NUM_THREADS`` overrides the
worker count (default: the number of CPUs available to the process).
"""
from __future__ import annotations

import ctypes
import glob
import os
import re
from concurrent.futures import ThreadPoolExecutor
from contextlib import contextmanager
from functools import lru_cache


def worker_count() -> int:
    """Worker threads for grid loops: KS1D_NUM_THREADS, default 1 (see module docstring)."""
    env = os.environ.get("KS1D_NUM_THREADS")
    if env and env.isdigit() and int(env) > 0:
        return int(env)
    try:
        return 1
    except AttributeError:  # not on Linux
        return max(1, os.cpu_count() or 1)


@lru_cache(maxsize=1)
def _openblas():
    """(set, get) thread-count functions of the OpenBLAS numpy uses, or None."""
    import numpy

    candidates = []
    try:
        candidates += re.findall(r"(/\S*openblas\S*\.so\S*)", open("/proc/self/maps").read())
    except OSError:
        pass
    base = os.path.dirname(numpy.__file__)
    candidates += glob.glob(os.path.join(base, os.pardir, "numpy.libs", "*openblas*"))
    for path in dict.fromkeys(candidates):
        try:
            lib = ctypes.CDLL(path)
        except OSError:
            continue
        for setter, getter in (("scipy_openblas_set_num_threads64_", "scipy_openblas_get_num_threads64_"),
                               ("openblas_set_num_threads64_", "openblas_get_num_threads64_"),
                               ("openblas_set_num_threads", "openblas_get_num_threads")):
            if hasattr(lib, setter) and hasattr(lib, getter):
                return getattr(lib, setter), getattr(lib, getter)
    return None


@contextmanager
def single_threaded_blas():
    """Run the body with a one-thread BLAS (restores the previous setting)."""
    fns = _openblas()
    if fns is None:
        yield
        return
    setter, getter = fns
    old = int(getter())
    setter(1)
    try:
        yield
    finally:
        setter(old)


def run_chunks(fn, items: list, workers: int | None = None) -> list:
    """Apply ``fn(chunk)`` to ``workers`` contiguous chunks of ``items`` in threads."""
    n = worker_count() if workers is None else workers
    n = max(1, min(n, len(items)))
    if n == 1:
        with single_threaded_blas():
            return [fn(items)]
    size = (len(items) + n - 1) // n
    chunks = [items[i:i + size] for i in range(0, len(items), size)]
    with single_threaded_blas(), ThreadPoolExecutor(max_workers=len(chunks)) as pool:
        return list(pool.map(fn, chunks))
