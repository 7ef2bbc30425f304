"""Test-session settings.

The suite runs many small dense-matrix and libxc calls; on a 2-core CI machine extra BLAS/OpenMP
threads only add start-up cost and contention, so the tests (and the subprocesses they start)
run single-threaded.  This must happen before numpy is first imported.
"""
import os

for _var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")


import pytest  # noqa: E402


@pytest.fixture(scope="session")
def small_report(tmp_path_factory):
    """One real functional sanity report (H, Li × LDA, PBE; def2-SVP; diatomics H2 and Li2), run in-process."""
    from ks1d.report import functional_report
    from ks1d.sweep.engine.executors import InlineExecutor

    out_dir = tmp_path_factory.mktemp("report")
    outcome = functional_report(["H", "Li"], functionals=["lda", "pbe"], basis="def2-svp",
                                output=str(out_dir / "hli"), executor=InlineExecutor())
    return outcome
