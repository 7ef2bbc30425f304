"""Run the example sweep of examples/sweep_catalysis.toml and write its tables and plots.

    python examples/sweep_catalysis.py [--workers N] [--store PATH] [--out DIR]

Killing it (Ctrl-C, or even SIGKILL) loses no finished job: run it again and
it carries on where it stopped.  The committed results in
examples/sweep_catalysis_results/ were made with exactly this script.
"""
from __future__ import annotations

import argparse
import os
import sys

from ks1d.sweep import build_report, load_spec, make_executor, run_sweep, write_report
from ks1d.sweep.output.tables import statistics_markdown

HERE = os.path.dirname(os.path.abspath(__file__))


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--workers", type=int, default=None, help="worker processes (default: one per core)")
    ap.add_argument("--store", default=os.path.join(HERE, "sweep_catalysis.sqlite"))
    ap.add_argument("--out", default=os.path.join(HERE, "sweep_catalysis_results"))
    args = ap.parse_args()

    spec = load_spec(os.path.join(HERE, "sweep_catalysis.toml"))
    summary = run_sweep(spec, args.store, make_executor(workers=args.workers))
    print(f"{summary.total} jobs: {summary.skipped} already in the store, ran {summary.ran} "
          f"({summary.done} done, {summary.failed} failed) in {summary.seconds:.0f} s", file=sys.stderr)

    report = build_report(args.store, spec)
    written = write_report(report, args.out, description=spec.description)
    print(f"wrote {len(written)} files to {args.out}", file=sys.stderr)
    print(statistics_markdown(report.statistics))
    return 0


if __name__ == "__main__":
    sys.exit(main())
