"""``ks1d sweep``: run a benchmark sweep into a store and turn a store into tables and plots.

    ks1d sweep plan SPEC                         check a spec and list the jobs it expands into
    ks1d sweep run SPEC --store PATH [--workers N | --dask | --scheduler ADDRESS] [--retry-failed | --rerun]
    ks1d sweep status --store PATH [--failed]    job counts, runs, failed jobs with their errors
    ks1d sweep report --store PATH --out DIR [--spec SPEC] [--formats csv,json,md] [--plots png,svg]

``plan`` and ``run`` check the whole spec first (keys, systems, functionals, bases, and that each
job's solver can do its functional), with the same checks as ``ks1d report``.
"""
from __future__ import annotations

import sys

from ..errors import InputError
from ..serialize import dumps


def register(subparsers) -> None:
    p = subparsers.add_parser("sweep", help="scripted functional benchmarks: run sweeps, report results",
                              description="Run functional × system × property sweeps into an SQLite store "
                                          "and turn stores into tables and plots.")
    sub = p.add_subparsers(dest="sweep_command", metavar="ACTION", parser_class=type(p))

    plan = sub.add_parser("plan", help="check a spec and list its jobs without running them")
    plan.add_argument("spec", help="sweep spec (TOML)")
    plan.add_argument("--store", help="also say which jobs this store has finished")
    plan.add_argument("--json", action="store_true", help="print the jobs as JSON")
    plan.set_defaults(func=_plan)

    run = sub.add_parser("run", help="run a spec's jobs into a store (finished jobs are skipped)")
    run.add_argument("spec", help="sweep spec (TOML)")
    run.add_argument("--store", required=True, metavar="PATH", help="SQLite results store (created if absent)")
    run.add_argument("--workers", type=int, default=None, metavar="N",
                     help="worker processes (default: one per core; 0 = run in this process)")
    run.add_argument("--scheduler", metavar="ADDRESS", help="run on the Dask cluster at ADDRESS (tcp://host:port)")
    run.add_argument("--dask", action="store_true", help="run on a Dask LocalCluster on this machine")
    run.add_argument("--retry-failed", action="store_true", help="run failed jobs again")
    run.add_argument("--rerun", action="store_true",
                     help="run every job again, finished ones included (e.g. after changing ks1d's code)")
    run.add_argument("--limit", type=int, metavar="N", help="run at most N jobs now (the rest stay pending)")
    run.add_argument("--quiet", "--no-progress", dest="quiet", action="store_true",
                     help="no progress line on stderr")
    run.add_argument("--json", action="store_true", help="print the run summary as JSON")
    run.set_defaults(func=_run)

    st = sub.add_parser("status", help="job counts, runs and failures in a store")
    st.add_argument("--store", required=True, metavar="PATH")
    st.add_argument("--failed", action="store_true", help="list failed jobs with their errors")
    st.add_argument("--json", action="store_true")
    st.set_defaults(func=_status)

    rep = sub.add_parser("report", help="write tables (CSV/JSON/Markdown) and plots (PNG/SVG) from a store")
    rep.add_argument("--store", required=True, metavar="PATH")
    rep.add_argument("--out", required=True, metavar="DIR", help="folder for the tables and plots")
    rep.add_argument("--spec", help="only the jobs of this spec (default: everything in the store)")
    rep.add_argument("--formats", default="csv,json,md", help="table formats (default: csv,json,md)")
    rep.add_argument("--plots", default="png,svg", help="plot formats, or 'none' (default: png,svg)")
    rep.set_defaults(func=_report)

    p.set_defaults(func=lambda args: (p.print_help(), 2)[1])


def _store_must_exist(path: str) -> None:
    import os

    if not os.path.isfile(path):
        raise InputError(f"store '{path}' does not exist; create it with 'ks1d sweep run SPEC --store {path}'")


def _plan(args) -> int:
    from ..sweep.engine.store import Store
    from ..sweep.spec import load_spec

    spec = load_spec(args.spec)
    jobs = spec.jobs()
    status = {}
    if args.store:
        _store_must_exist(args.store)
        with Store(args.store) as store:
            status = {r.key: r.status for r in store.rows()}
    if args.json:
        print(dumps([{"key": j.key, "property": j.property, "system": j.system.name,
                           "functional": j.functional, "settings": j.settings_dict,
                           "status": status.get(j.key, "new")} for j in jobs], indent=1))
        return 0
    print(f"sweep '{spec.name}': {len(jobs)} jobs")
    w = max((len(j.system.name) for j in jobs), default=6)
    for j in jobs:
        extra = f"  [{status.get(j.key, 'new')}]" if args.store else ""
        print(f"  {j.key[:10]}  {j.property:<20} {j.system.name:<{w}}  {j.functional}{extra}")
    return 0


def _run(args) -> int:
    from ..sweep.engine.executors import make_executor
    from ..sweep.run import run_sweep
    from ..sweep.spec import load_spec

    if args.workers is not None and args.workers < 0:
        raise InputError(f"--workers must be 0 or more, got {args.workers}")
    if args.scheduler and args.dask:
        raise InputError("give either --scheduler ADDRESS (an existing Dask cluster) or --dask (a local one)")
    if (args.scheduler or args.dask) and args.workers == 0:
        raise InputError("--workers 0 (in-process) cannot be combined with Dask")
    spec = load_spec(args.spec)
    executor = make_executor(workers=args.workers, scheduler=args.scheduler, dask=args.dask)
    summary = run_sweep(spec, args.store, executor, retry_failed=args.retry_failed,
                        progress=not args.quiet, limit=args.limit, rerun=args.rerun)
    if args.json:
        print(dumps(summary.to_dict(), indent=1))
    else:
        where = executor.name + (f" ({summary.workers} workers)" if summary.workers else "")
        print(f"sweep '{summary.sweep}': {summary.total} jobs, {summary.skipped} already finished, "
              f"ran {summary.ran} on {where} in {summary.seconds:.1f} s: {summary.done} done, "
              f"{summary.failed} failed")
        if summary.failed:
            print(f"  see the errors with: ks1d sweep status --store {args.store} --failed; "
                  "rerun them with --retry-failed")
    return 0 if summary.failed == 0 else 1


def _status(args) -> int:
    from ..sweep.engine.store import Store

    _store_must_exist(args.store)
    with Store(args.store) as store:
        counts = store.counts()
        runs = store.runs()
        failed = list(store.rows(status="failed"))
    if args.json:
        print(dumps({"counts": counts, "runs": runs,
                          "failed": [{"key": r.key, "system": r.system, "property": r.property,
                                      "functional": r.functional, "error_type": r.error_type, "error": r.error,
                                      "attempts": r.attempts} for r in failed]}, indent=1))
        return 0
    total = sum(counts.values())
    print(f"store {args.store}: {total} jobs — {counts['done']} done, {counts['failed']} failed, "
          f"{counts['pending']} pending; {len(runs)} runs")
    for r in runs[-5:]:
        state = "finished" if r["finished"] else "interrupted"
        workers = "" if r["workers"] is None else f" ({r['workers']} workers)"
        tail = f", {r['done']} done, {r['failed']} failed" if r["finished"] else ""
        print(f"  run {r['id']}: {r['sweep']} on {r['executor']}{workers}, {state}{tail}")
    if failed and args.failed:
        print("failed jobs:")
        for r in failed:
            first = (r.error or "").splitlines()[0] if r.error else ""
            print(f"  {r.property}/{r.system}/{r.functional}: {r.error_type}: {first}")
    elif failed:
        print("  (list the failed jobs with --failed)")
    return 0


def _report(args) -> int:
    from ..sweep.output.tables import statistics_markdown
    from ..sweep.output.writers import build_report, write_report
    from ..sweep.spec import load_spec

    _store_must_exist(args.store)
    formats = [f.strip().lower() for f in args.formats.split(",") if f.strip()]
    for f in formats:
        if f not in ("csv", "json", "md"):
            raise InputError(f"unknown table format '{f}'; choose from csv, json, md")
    plots = [] if args.plots.strip().lower() in ("", "none") else [f.strip().lower() for f in args.plots.split(",")]
    for f in plots:
        if f not in ("png", "svg", "pdf"):
            raise InputError(f"unknown plot format '{f}'; choose from png, svg, pdf (or 'none')")
    spec = load_spec(args.spec) if args.spec else None
    report = build_report(args.store, spec)
    written = write_report(report, args.out, formats, plots, description=spec.description if spec else "")
    print(f"{report.sweep}: {len(report.rows)} values, {len(report.failures)} failed jobs, "
          f"{report.pending} pending; wrote {len(written)} files to {args.out}")
    if report.statistics:
        print(statistics_markdown(report.statistics))
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit("run through the ks1d command: ks1d sweep ...")
