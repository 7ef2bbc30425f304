"""Scripted functional benchmarks: sweeps of functionals × systems × properties.

A sweep is described in TOML (:mod:`ks1d.sweep.spec`), expands into jobs
(:mod:`ks1d.sweep.jobs`), runs on an executor — in-process, a local process
pool or Dask (:mod:`ks1d.sweep.executors`) — into an SQLite store
(:mod:`ks1d.sweep.store`) that survives being killed, and turns into tables,
statistics and plots (:mod:`ks1d.sweep.outputs`).

    from ks1d.sweep import load_spec, run_sweep, make_executor, build_report, write_report
    spec = load_spec("bench.toml")
    run_sweep(spec, "bench.sqlite", make_executor(workers=2))
    write_report(build_report("bench.sqlite", spec), "bench-results")
"""
from __future__ import annotations

from .executors import DaskExecutor, InlineExecutor, PoolExecutor, default_workers, make_executor
from .jobs import Job
from .outputs import SweepReport, build_report, write_report
from .runner import RunSummary, run_sweep
from .spec import SpecError, SweepSpec, load_spec, parse_spec
from .store import Store, StoreError

__all__ = [
    "DaskExecutor", "InlineExecutor", "PoolExecutor", "default_workers", "make_executor", "Job",
    "SweepReport", "build_report", "write_report", "RunSummary", "run_sweep", "SpecError", "SweepSpec",
    "load_spec", "parse_spec", "Store", "StoreError",
]
