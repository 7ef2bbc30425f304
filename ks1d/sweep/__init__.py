"""Scripted functional benchmarks: sweeps of functionals × systems × properties.

A sweep is described in TOML (:mod:`ks1d.sweep.spec`), expands into jobs,
runs on an executor — in-process, a local process pool or Dask — into an
SQLite store that survives being killed, and turns into tables, statistics
and plots.  Three sub-packages, with dependencies pointing down:

* :mod:`ks1d.sweep.output`      collect, statistics, tables, plots, writers
* :mod:`ks1d.sweep.properties`  systems, datasets, solver calls, the job kinds and their registry
* :mod:`ks1d.sweep.engine`      jobs, store, executors, worker, runner, progress (no physics)

with :mod:`ks1d.sweep.spec` (TOML → jobs) and :mod:`ks1d.sweep.run` (spec → engine) on top.

    from ks1d.sweep import load_spec, run_sweep, make_executor, build_report, write_report
    spec = load_spec("bench.toml")
    run_sweep(spec, "bench.sqlite", make_executor(workers=2))
    write_report(build_report("bench.sqlite", spec), "bench-results")
"""
from __future__ import annotations

from .engine.executors import DaskExecutor, InlineExecutor, PoolExecutor, default_workers, make_executor
from .engine.jobs import Job
from .engine.runner import RunSummary, run_jobs
from .engine.store import Store, StoreError
from .output.writers import SweepReport, build_report, write_report
from .properties.registry import REGISTRY
from .run import run_sweep
from .spec import SpecError, SweepSpec, load_spec, parse_spec

__all__ = [
    "DaskExecutor", "InlineExecutor", "PoolExecutor", "default_workers", "make_executor", "Job",
    "SweepReport", "build_report", "write_report", "RunSummary", "run_sweep", "run_jobs", "REGISTRY",
    "SpecError", "SweepSpec", "load_spec", "parse_spec", "Store", "StoreError",
]
