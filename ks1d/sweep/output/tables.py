"""Tables of a sweep: values and errors against reference, statistics, failures.

Three forms with the same content:

* CSV  — ``values.csv`` (one row per system × quantity × functional),
  ``statistics.csv`` (one row per quantity × functional), ``failures.csv``;
* JSON — ``results.json`` holding all three lists plus the sources used;
* Markdown — ``results.md``: per quantity a system × functional table of
  values with errors, the statistics table, then the failed jobs.
"""
from __future__ import annotations

import csv
import io
import json
import os
from collections.abc import Sequence
from typing import Any

from ..._version import __version__
from ...quantities import fmt, quantity, unit_text
from ..properties.kinds import quantities_of
from .collect import FailureRow, ResultRow, functionals_of, ordered, systems_of
from .statistics import ErrorStatistics


# ----------------------------------------------------------------------- CSV
def _csv(rows: Sequence[dict[str, Any]], columns: Sequence[str]) -> str:
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=list(columns), lineterminator="\n", extrasaction="ignore")
    w.writeheader()
    for r in rows:
        w.writerow({k: ("" if r.get(k) is None else r.get(k)) for k in columns})
    return buf.getvalue()


VALUE_COLUMNS = ("system", "quantity", "functional", "value", "reference", "error", "unit", "reference_source",
                 "reference_from_memory", "job")
STAT_COLUMNS = ("quantity", "functional", "unit", "n", "mse", "mae", "rms", "max_abs", "max_signed", "worst_system",
                "worst_systems", "n_without_reference")
FAIL_COLUMNS = ("system", "property", "functional", "error_type", "error", "attempts", "job")


def values_csv(rows: Sequence[ResultRow]) -> str:
    return _csv([r.to_dict() for r in rows], VALUE_COLUMNS)


def statistics_csv(stats: Sequence[ErrorStatistics]) -> str:
    out = []
    for s in stats:
        d = s.to_dict()
        d["worst_systems"] = ";".join(s.worst_systems)
        out.append(d)
    return _csv(out, STAT_COLUMNS)


def failures_csv(failures: Sequence[FailureRow]) -> str:
    return _csv([f.to_dict() for f in failures], FAIL_COLUMNS)


# ---------------------------------------------------------------------- JSON
def results_json(sweep: str, rows: Sequence[ResultRow], stats: Sequence[ErrorStatistics],
                 failures: Sequence[FailureRow]) -> str:
    sources = ordered(r.reference_source for r in rows if r.reference_source)
    doc = {
        "sweep": sweep,
        "ks1d": __version__,
        "values": [r.to_dict() for r in rows],
        "statistics": [s.to_dict() for s in stats],
        "failures": [f.to_dict() for f in failures],
        "reference_sources": sources,
    }
    return json.dumps(doc, indent=1, allow_nan=False) + "\n"


# ------------------------------------------------------------------ Markdown
def _md_table(header: Sequence[str], body: Sequence[Sequence[str]], align: str | None = None) -> str:
    align = align or ("l" + "r" * (len(header) - 1))
    sep = ["---:" if a == "r" else ":---" for a in align]
    lines = ["| " + " | ".join(header) + " |", "| " + " | ".join(sep) + " |"]
    lines += ["| " + " | ".join(row) + " |" for row in body]
    return "\n".join(lines)


def statistics_markdown(stats: Sequence[ErrorStatistics], quantity: str | None = None) -> str:
    """The statistics table (one quantity, or all with a quantity column)."""
    chosen = [s for s in stats if quantity is None or s.quantity == quantity]
    head = (["quantity"] if quantity is None else []) + ["functional", "N", "MSE", "MAE", "RMS", "max abs error",
                                                          "worst systems"]
    body = []
    for s in chosen:
        row = ([s.quantity] if quantity is None else []) + [s.functional, str(s.n)]
        if s.n:
            row += [fmt(s.mse, s.quantity, True), fmt(s.mae, s.quantity), fmt(s.rms, s.quantity),
                    fmt(s.max_abs, s.quantity), ", ".join(s.worst_systems)]
        else:
            row += ["", "", "", "", "(no reference)"]
        body.append(row)
    align = ("l" if quantity is None else "") + "lrrrrrl"
    return _md_table(head, body, align)


def mae_overview_markdown(stats: Sequence[ErrorStatistics]) -> str:
    """Mean absolute errors at a glance: one row per quantity, one column per functional (N in brackets)."""
    funcs = ordered(s.functional for s in stats if s.n)
    quantities = ordered(s.quantity for s in stats if s.n)
    by = {(s.quantity, s.functional): s for s in stats}
    body = []
    for q in quantities:
        unit = next(s.unit for s in stats if s.quantity == q)
        row = [f"{q} ({unit_text(unit)})"]
        for f in funcs:
            st = by.get((q, f))
            row.append(f"{fmt(st.mae, st.quantity)} ({st.n})" if st is not None and st.n else "")
        body.append(row)
    return _md_table(["MAE (N)"] + funcs, body)


def results_markdown(sweep: str, rows: Sequence[ResultRow], stats: Sequence[ErrorStatistics],
                     failures: Sequence[FailureRow], description: str = "") -> str:
    out = [f"# Sweep results: {sweep}", ""]
    if description:
        out += [description.strip(), ""]
    out += [f"Computed with ks1d {__version__}. Errors are computed − reference; a blank reference means "
            "none is known for that system.", ""]
    if any(s.n for s in stats):
        out += ["## Mean absolute errors", "", mae_overview_markdown(stats), ""]
    if stats:
        out += ["## Statistics", "", statistics_markdown(stats), ""]
        units = ordered((s.quantity, s.unit) for s in stats)
        out += ["Units: " + "; ".join(f"{q} in {unit_text(u)}" for q, u in units) + ".", ""]
    failed_cells = {(f.system, f.functional, q) for f in failures for q in quantities_of(f.property)}
    for q in ordered(r.quantity for r in rows):
        qrows = [r for r in rows if r.quantity == q]
        unit = qrows[0].unit
        funcs = functionals_of(qrows)
        systems = systems_of(qrows)
        by = {(r.system, r.functional): r for r in qrows}
        out += [f"## {quantity(q).title} ({unit_text(unit)})", ""]
        head = ["system", "reference"] + funcs
        body = []
        for s in systems:
            ref = next((by[(s, f)].reference for f in funcs if (s, f) in by and by[(s, f)].reference is not None),
                       None)
            row = [s, fmt(ref, q)]
            for f in funcs:
                r = by.get((s, f))
                if r is None:
                    row.append("failed" if (s, f, q) in failed_cells else "—")
                elif r.error is None:
                    row.append(fmt(r.value, q))
                else:
                    row.append(f"{fmt(r.value, q)} ({fmt(r.error, q, True)})")
            body.append(row)
        out += [_md_table(head, body), ""]
        if any(st.quantity == q and st.n for st in stats):
            out += [statistics_markdown(stats, q), ""]
        srcs = ordered(r.reference_source for r in qrows if r.reference_source)
        mem = any(r.reference_from_memory for r in qrows)
        if srcs:
            out += ["Reference: " + " | ".join(srcs) + (" (some values recalled from memory, as marked in "
                                                         "ks1d's reference data)" if mem else ""), ""]
    if failures:
        out += ["## Failed jobs", ""]
        body = [[f.system, f.property, f.functional, f.error_type or "",
                 (f.error or "").splitlines()[0][:160]] for f in failures]
        out += [_md_table(["system", "property", "functional", "error", "message"], body, "lllll"), ""]
    return "\n".join(out)


def write_tables(directory: str, sweep: str, rows: Sequence[ResultRow], stats: Sequence[ErrorStatistics],
                 failures: Sequence[FailureRow], formats: Sequence[str] = ("csv", "json", "md"),
                 description: str = "") -> list[str]:
    """Write the chosen formats into ``directory``; return the paths written."""
    os.makedirs(directory, exist_ok=True)
    written: list[str] = []

    def put(name: str, text: str) -> None:
        path = os.path.join(directory, name)
        with open(path, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
        written.append(path)

    if "csv" in formats:
        put("values.csv", values_csv(rows))
        put("statistics.csv", statistics_csv(stats))
        put("failures.csv", failures_csv(failures))
    if "json" in formats:
        put("results.json", results_json(sweep, rows, stats, failures))
    if "md" in formats:
        put("results.md", results_markdown(sweep, rows, stats, failures, description))
    return written
