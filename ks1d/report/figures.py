"""The report's plots as PNG bytes (matplotlib, Agg backend; no files, no fonts fetched).

* the ranking: pooled MAE against experiment per functional (eV);
* per compared quantity: grouped bars of the error (computed − experiment)
  per system and functional, in the quantity's unit;
* quantities without an experimental reference (spin-polarization energy,
  basis-set error): grouped bars of the values.
"""
from __future__ import annotations

import io
from collections.abc import Sequence

from ..quantities import unit_text
from ..sweep.output.collect import ResultRow, functionals_of, systems_of
from ..sweep.output.plots import pyplot
from .analysis import RankEntry

#: Bar colours, one per functional (in order).  Tests look for them in a browser screenshot.
PALETTE = ("#1b6ca8", "#d1495b", "#3f8f5a", "#e0a030", "#7d4e9a", "#4a5a6a", "#0f9aa0", "#b55d2a")
DPI = 110


def _png(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=DPI, bbox_inches="tight", metadata={"Software": None})
    pyplot().close(fig)
    return buf.getvalue()


def ranking_figure(ranking: Sequence[RankEntry]) -> bytes | None:
    """Horizontal bars of the ranked functionals' scores (best on top)."""
    ranked = [e for e in ranking if e.score is not None]
    if not ranked:
        return None
    plt = pyplot()
    fig, ax = plt.subplots(figsize=(6.4, 0.45 * len(ranked) + 1.2))
    names = [e.functional for e in ranked][::-1]
    scores = [e.score for e in ranked][::-1]
    ax.barh(names, scores, color=PALETTE[0])
    for y, v in enumerate(scores):
        ax.text(v, y, f" {v:.3f}", va="center", fontsize=9)
    ax.set_xlabel("pooled MAE against experiment (eV)")
    ax.set_title(f"Ranking over {ranked[0].n} energy comparisons (lower is better)")
    ax.set_xlim(0, max(scores) * 1.25 or 1)
    ax.grid(axis="x", alpha=0.3)
    return _png(fig)


def grouped_bars(rows: Sequence[ResultRow], title: str, use_errors: bool) -> bytes | None:
    """Bars per system (groups) and functional (colours): errors or values of one quantity."""
    rows = [r for r in rows if (r.error is not None) or not use_errors]
    if not rows:
        return None
    plt = pyplot()
    systems = systems_of(rows)
    funcs = functionals_of(rows)
    width = 0.8 / max(len(funcs), 1)
    fig, ax = plt.subplots(figsize=(max(5.0, 0.9 * len(systems) * max(1.0, len(funcs) / 4) + 2.0), 3.4))
    for k, f in enumerate(funcs):
        xs, ys = [], []
        for i, s in enumerate(systems):
            r = next((r for r in rows if r.system == s and r.functional == f), None)
            if r is not None:
                xs.append(i - 0.4 + width * (k + 0.5))
                ys.append(r.error if use_errors else r.value)
        ax.bar(xs, ys, width=width, color=PALETTE[k % len(PALETTE)], label=f)
    ax.axhline(0.0, color="black", lw=0.8)
    ax.set_xticks(range(len(systems)))
    ax.set_xticklabels(systems)
    unit = unit_text(rows[0].unit)
    ax.set_ylabel(f"{'computed − experiment' if use_errors else 'value'} ({unit})")
    ax.set_title(title)
    ax.grid(axis="y", alpha=0.3)
    ax.legend(fontsize=8, ncol=min(len(funcs), 4), loc="best", frameon=False)
    return _png(fig)
