"""Test-session settings.

The suite runs many small dense-matrix and libxc calls; on a 2-core CI machine extra BLAS/OpenMP
threads only add start-up cost and contention, so the tests (and the subprocesses they start)
run single-threaded.  This must happen before numpy is first imported.
"""
import os

for _var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")
