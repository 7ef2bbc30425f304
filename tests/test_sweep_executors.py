"""Process pool, Dask (LocalCluster and an existing scheduler) and in-process runs store identical results.

Mechanics on real, cheap solver runs: H and He radial LDA atoms (low-precision
mesh) and the LiH atomization energy in def2-SVP (three Gaussian calculations).
"""
from __future__ import annotations

import io
import sqlite3
import textwrap

import pytest

from ks1d.sweep import DaskExecutor, InlineExecutor, PoolExecutor, parse_spec, run_sweep
from ks1d.sweep.engine.progress import Progress, format_line

TINY = textwrap.dedent("""
    name = "tiny"
    functionals = ["lda"]
    [solver]
    precision = "low"
    atom_options = { estimate_error = false }
    [[study]]
    property = "total_energy"
    systems = ["H", "He"]
    [[study]]
    property = "atomization_energy"
    systems = ["g2-1:LiH"]
""")


def _outputs(path):
    db = sqlite3.connect(path)
    try:
        return dict(db.execute("SELECT key, outputs FROM jobs WHERE status = 'done'"))
    finally:
        db.close()


def test_pool_dask_and_inline_store_identical_outputs(tmp_path):
    pytest.importorskip("distributed")
    pytest.importorskip("ase")
    from distributed import LocalCluster

    spec = parse_spec(TINY)
    stores = {name: str(tmp_path / f"{name}.sqlite") for name in ("pool", "dask", "scheduler", "inline")}
    run_sweep(spec, stores["pool"], PoolExecutor(2), progress=False)
    run_sweep(spec, stores["dask"], DaskExecutor(workers=2), progress=False)
    with LocalCluster(n_workers=1, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        s = run_sweep(spec, stores["scheduler"], DaskExecutor(address=cluster.scheduler_address), progress=False)
        assert s.executor == "dask" and s.done == 3
    run_sweep(spec, stores["inline"], InlineExecutor(), progress=False)
    ref = _outputs(stores["pool"])
    assert len(ref) == 3
    for name in ("dask", "scheduler", "inline"):
        assert _outputs(stores[name]) == ref, name  # the same JSON text, bit for bit


def test_progress_line_counts_and_eta():
    # 3 of 12 jobs in 30 s: 10 s per job, 9 left -> ETA 1:30
    line = format_line(3, 1, 12, 30.0)
    assert " 3/12" in line and "25%" in line and "1 failed" in line and "ETA 1:30" in line
    buf = io.StringIO()
    bar = Progress(2, stream=buf, label="demo")
    bar.advance()
    bar.advance(failed=True)
    text = buf.getvalue()
    assert "demo" in text and "2/2" in text and "100%" in text and "1 failed" in text


def test_workers_find_the_registry_by_name_and_a_registry_that_cannot_be_found_is_refused():
    from ks1d.errors import InputError
    from ks1d.sweep.engine.registry import load_registry, registry_ref
    from ks1d.sweep.properties.registry import REGISTRY, PropertyRegistry

    assert load_registry(REGISTRY.ref) is REGISTRY  # what every worker process does with the name
    assert registry_ref(REGISTRY) == "ks1d.sweep.properties.registry:REGISTRY"
    with pytest.raises(InputError, match="cannot find the job registry"):
        load_registry("ks1d.sweep.properties.registry:NO_SUCH_REGISTRY")
    with pytest.raises(InputError, match="package.module:attribute"):
        load_registry("no-colon")
    # a second registry object under the first one's name would run other code in the workers than here
    with pytest.raises(InputError, match="does not lead back to this registry"):
        registry_ref(PropertyRegistry())
