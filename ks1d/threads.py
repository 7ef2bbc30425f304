"""Thread control shared by the solvers, validation and sweeps.

ks1d's kernels are many small dense products (radial matrices of ~160 rows, grid
blocks) and libxc calls on modest point sets; extra BLAS/OpenMP threads only add
synchronisation and, on a busy machine, oversubscription (measured 10-40× slower).
"""
from __future__ import annotations

import functools
from contextlib import contextmanager


@contextmanager
def single_threaded(openmp: bool = True):
    """Run the body with one BLAS thread (and one pyscf/OpenMP thread); restores the settings."""
    from threadpoolctl import threadpool_limits

    lib = None
    if openmp:
        from pyscf import lib
        before = lib.num_threads()
        lib.num_threads(1)
    try:
        with threadpool_limits(1, user_api="blas"):
            yield
    finally:
        if lib is not None:
            lib.num_threads(before)


def one_blas_thread(fn):
    """Decorator form of :func:`single_threaded` (BLAS only)."""

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        with single_threaded(openmp=False):
            return fn(*args, **kwargs)

    return wrapper
