"""Run a functional sanity report: plan → jobs in the sweep store → analysis → HTML + Markdown."""
from __future__ import annotations

import datetime
import hashlib
import json
import os
import time
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, TextIO

from .._version import __version__
from ..errors import InputError
from .analysis import ReportData, analyse
from .build import build_document
from .document import write
from .plan import ReportPlan, plan_report


@dataclass(frozen=True)
class ReportOutcome:
    """What a report run produced: file paths, the run summary, the analysed data."""

    plan: ReportPlan
    data: ReportData
    paths: dict[str, str]
    store: str
    sweep: str
    jobs_total: int
    jobs_reused: int
    jobs_run: int
    jobs_failed: int
    seconds: float

    def to_dict(self) -> dict[str, Any]:
        return {
            "paths": dict(self.paths), "store": self.store, "sweep": self.sweep, "elements": list(self.plan.elements),
            "functionals": list(self.plan.functionals), "basis": self.plan.basis,
            "diatomics": list(self.plan.diatomics), "jobs_total": self.jobs_total, "jobs_reused": self.jobs_reused,
            "jobs_run": self.jobs_run, "jobs_failed": self.jobs_failed, "seconds": self.seconds,
            "ranking": [{"rank": e.rank, "functional": e.functional, "score_ev": e.score, "n": e.n, "note": e.note}
                        for e in self.data.ranking],
            "flags": [f.__dict__ for f in self.data.flags],
            "values": [r.to_dict() for r in self.data.rows],
            "version": __version__,
        }


def sweep_name(plan: ReportPlan) -> str:
    """The store's sweep name of a report: readable, plus a hash of the job set."""
    h = hashlib.sha256("".join(sorted(j.key for j in plan.jobs)).encode()).hexdigest()[:10]
    return f"report {' '.join(plan.elements)} [{h}]"


def _check_output(output: str) -> tuple[str, str]:
    base = output[:-5] if output.lower().endswith(".html") else output
    if base.lower().endswith(".md"):
        base = base[:-3]
    d = os.path.dirname(os.path.abspath(base))
    if not os.path.isdir(d):
        raise InputError(f"output directory {d!r} does not exist")
    if not os.access(d, os.W_OK):
        raise InputError(f"output directory {d!r} is not writable")
    return base + ".html", base + ".md"


def functional_report(elements: Sequence[str] = (), structure: str | None = None,
                      functionals: Sequence[str] | None = None, basis: str | None = None,
                      output: str = "ks1d-report", store: str | None = None, executor=None,
                      diatomics: bool = True, progress: bool = False, stream: TextIO | None = None,
                      retry_failed: bool = False, symmetry_broken: str | None = None) -> ReportOutcome:
    """Compute (or reuse from ``store``) the battery; write ``<output>.html``, ``<output>.md``, ``<output>.json``.

    The input is checked completely before any calculation starts.  Jobs
    already finished in the store are reused; each new result is stored as
    soon as it arrives, so an interrupted report loses nothing.
    """
    from ..sweep.engine.executors import PoolExecutor
    from ..sweep.engine.runner import run_jobs
    from ..sweep.engine.store import Store
    from ..sweep.properties.registry import REGISTRY

    t0 = time.perf_counter()
    plan = plan_report(elements=elements, structure=structure, functionals=functionals, basis=basis,
                       diatomics=diatomics, symmetry_broken=symmetry_broken)
    html_path, md_path = _check_output(output)
    store_path = store or os.path.splitext(html_path)[0] + ".sqlite"
    name = sweep_name(plan)
    source = (f"ks1d report {plan.source}: elements {' '.join(plan.elements)}; functionals "
              f"{', '.join(plan.functionals)}; basis {plan.basis}; diatomics {', '.join(plan.diatomics) or 'none'}")
    summary = run_jobs(name, source, list(plan.jobs), store_path, executor or PoolExecutor(), REGISTRY,
                       retry_failed=retry_failed, progress=progress, stream=stream)
    keys = {j.key for j in plan.jobs}
    with Store(store_path) as st:
        by_key = {r.key: r for r in st.rows() if r.key in keys}
    rows = [by_key[j.key] for j in plan.jobs if j.key in by_key]
    data = analyse(rows, plan.functionals, plan.elements)
    now = datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    meta = [
        ("elements", f"{' '.join(plan.elements)} (from the {plan.source})"),
        ("functionals", ", ".join(plan.functionals)),
        ("planned basis", plan.basis or "none given (no basis-set errors)"),
        ("diatomics", (f"{', '.join(plan.diatomics)} in {plan.diatomic_basis}" if plan.diatomics
                       else "none (no element pair with experimental diatomic data)")),
        ("atoms", "radial solver, basis-set limit, spin-polarized spherical atoms, non-relativistic"
                  + ("" if plan.symmetry_broken is None else
                     f"; IPs and EAs of integer-occupation (symmetry-broken) atoms: the spherical limit plus "
                     f"the symmetry-breaking energy in {plan.symmetry_broken}")),
        ("units", "eV for energies unless stated, Å for lengths, cm⁻¹ for frequencies, mHa for basis-set errors"),
        ("jobs", f"{summary.total} ({summary.skipped} reused from the store, {summary.ran} computed now, "
                 f"{sum(1 for r in rows if r.status == 'failed')} failed)"),
        ("generated", f"{now} by ks1d {__version__}"),
    ]
    doc = build_document(plan, data, meta, store_path, name)
    paths = write(doc, html_path, md_path)
    paths["store"] = store_path
    paths["json"] = os.path.splitext(html_path)[0] + ".json"
    outcome = ReportOutcome(plan=plan, data=data, paths=paths, store=store_path, sweep=name,
                            jobs_total=summary.total, jobs_reused=summary.skipped, jobs_run=summary.ran,
                            jobs_failed=sum(1 for r in rows if r.status == "failed"),
                            seconds=time.perf_counter() - t0)
    with open(paths["json"], "w", encoding="utf-8") as fh:  # the machine-readable twin, for scripts
        json.dump(outcome.to_dict(), fh, indent=1)
    return outcome
