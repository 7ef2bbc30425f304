"""Thread control shared by the solvers, validation and sweeps.

ks1d's kernels are many small dense products (radial matrices of ~160 rows, grid
blocks) and libxc calls on modest point sets; extra BLAS/OpenMP threads only add
synchronisation and, on a busy machine, oversubscription (measured 10-40× slower).
"""
from __future__ import annotations

import functools
from contextlib import contextmanager

_controller = None
_modules_seen = -1


def _blas_controller():
    """threadpoolctl's view of the loaded BLAS libraries, rescanned only after new imports.

    Building it reads the process's memory map (~3 ms); the Gaussian SCF enters
    :func:`single_threaded` a few dozen times per solve, so the scan is cached
    and redone whenever ``sys.modules`` has grown (a new extension module may
    have brought a new BLAS).
    """
    global _controller, _modules_seen
    import sys

    from threadpoolctl import ThreadpoolController

    if _controller is None or len(sys.modules) != _modules_seen:
        _controller = ThreadpoolController()
        _modules_seen = len(sys.modules)
    return _controller


@contextmanager
def single_threaded(openmp: bool = True):
    """Run the body with one BLAS thread (and one pyscf/OpenMP thread); restores the settings."""
    lib = None
    if openmp:
        from pyscf import lib
        before = lib.num_threads()
        lib.num_threads(1)
    try:
        with _blas_controller().limit(limits=1, user_api="blas"):
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
