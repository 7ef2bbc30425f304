"""Turn a store into tables and plots (what ``ks1d sweep report`` does)."""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from ..engine.store import Store
from .collect import FailureRow, ResultRow, collect
from .statistics import ErrorStatistics, error_statistics


@dataclass(frozen=True)
class SweepReport:
    """Everything the tables and plots show."""

    sweep: str
    rows: tuple[ResultRow, ...]
    statistics: tuple[ErrorStatistics, ...]
    failures: tuple[FailureRow, ...]
    pending: int

    def to_dict(self) -> dict[str, Any]:
        return {"sweep": self.sweep, "values": [r.to_dict() for r in self.rows],
                "statistics": [s.to_dict() for s in self.statistics],
                "failures": [f.to_dict() for f in self.failures], "pending": self.pending}


def build_report(store_path: str, spec=None) -> SweepReport:
    """Collect results from a store: all jobs in it, or only those of ``spec``.

    ``spec`` is a :class:`ks1d.sweep.spec.SweepSpec` (anything with ``name`` and ``jobs()``);
    the output layer needs only its job keys, so it does not import the spec module.
    """
    with Store(store_path) as store:
        keys = {j.key for j in spec.jobs()} if spec is not None else None
        all_rows = list(store.rows())
    rows, failures = collect(all_rows, keys)
    pending = sum(1 for r in all_rows if r.status == "pending" and (keys is None or r.key in keys))
    if spec is not None:
        name = spec.name
    else:
        names = sorted({r.sweep for r in all_rows})
        name = " + ".join(names) if names else "empty store"
    return SweepReport(name, tuple(rows), tuple(error_statistics(rows)), tuple(failures), pending)


def write_report(report: SweepReport, directory: str, formats: Sequence[str] = ("csv", "json", "md"),
                 plot_formats: Sequence[str] = ("png", "svg"), description: str = "") -> list[str]:
    from .tables import write_tables

    written = write_tables(directory, report.sweep, report.rows, report.statistics, report.failures, formats,
                           description)
    if plot_formats and report.rows:
        from .plots import write_plots

        written += write_plots(directory, report.rows, plot_formats)
    return written
