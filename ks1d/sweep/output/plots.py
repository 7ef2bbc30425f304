"""Plots of a sweep (matplotlib, Agg backend; PNG and SVG).

Per quantity with references:

* ``<quantity>_errors``   error distribution per functional (box plot with the points on top);
* ``<quantity>_parity``   computed against reference, one marker set per functional, y = x line;
* ``<quantity>_systems``  grouped bars of the error per system and functional.

Quantities without references get only a per-system bar chart of the values.
"""
from __future__ import annotations

import os
from collections.abc import Sequence

from ...errors import InputError
from ...quantities import quantity, unit_text
from .collect import ResultRow, functionals_of, ordered, systems_of

_MARKERS = "osD^vP*Xph"


def pyplot():
    try:
        import matplotlib
    except ImportError:
        raise InputError("plots need matplotlib: pip install 'ks1d[sweep]' (or matplotlib)") from None
    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    matplotlib.rcParams["svg.hashsalt"] = "ks1d-sweep"  # stable element ids: reproducible SVG files

    return plt


def _save(fig, directory: str, stem: str, formats: Sequence[str]) -> list[str]:
    paths = []
    for ext in formats:
        p = os.path.join(directory, f"{stem}.{ext}")
        fig.savefig(p, dpi=130, bbox_inches="tight", metadata={"Date": None} if ext == "svg" else None)
        paths.append(p)
    return paths


def _title(q: str) -> str:
    """The quantity's title in matplotlib mathtext (the tables' titles use Unicode instead)."""
    return quantity(q).mathtext_title


def error_distribution(plt, rows: Sequence[ResultRow], q: str):
    funcs = functionals_of(rows)
    data = [[r.error for r in rows if r.functional == f] for f in funcs]
    unit = unit_text(rows[0].unit)
    fig, ax = plt.subplots(figsize=(1.4 + 1.1 * len(funcs), 4.0))
    ax.axhline(0.0, color="0.6", lw=0.8)
    ax.boxplot(data, showfliers=False, widths=0.55)
    ax.set_xticks(range(1, len(funcs) + 1), funcs)
    for i, errs in enumerate(data, 1):
        xs = [i + 0.12 * ((k % 5) - 2) / 2 for k in range(len(errs))]
        ax.scatter(xs, errs, s=16, alpha=0.75, zorder=3)
    ax.set_ylabel(f"error ({unit})")
    ax.set_title(f"{_title(q)}: error per functional")
    return fig


def parity(plt, rows: Sequence[ResultRow], q: str):
    funcs = functionals_of(rows)
    unit = unit_text(rows[0].unit)
    fig, ax = plt.subplots(figsize=(4.8, 4.6))
    refs = [r.reference for r in rows]
    vals = [r.value for r in rows]
    lo, hi = min(refs + vals), max(refs + vals)
    pad = 0.05 * (hi - lo or 1.0)
    ax.plot([lo - pad, hi + pad], [lo - pad, hi + pad], color="0.5", lw=0.8)
    for i, f in enumerate(funcs):
        fr = [r for r in rows if r.functional == f]
        ax.scatter([r.reference for r in fr], [r.value for r in fr], s=22, marker=_MARKERS[i % len(_MARKERS)],
                   label=f, alpha=0.85)
    ax.set_xlim(lo - pad, hi + pad)
    ax.set_ylim(lo - pad, hi + pad)
    ax.set_aspect("equal")
    ax.set_xlabel(f"reference ({unit})")
    ax.set_ylabel(f"computed ({unit})")
    ax.set_title(_title(q))
    ax.legend(fontsize=8, frameon=False)
    return fig


def per_system_bars(plt, rows: Sequence[ResultRow], q: str, use_errors: bool):
    funcs = functionals_of(rows)
    systems = systems_of(rows)
    by = {(r.system, r.functional): (r.error if use_errors else r.value) for r in rows}
    unit = unit_text(rows[0].unit)
    width = 0.8 / len(funcs)
    fig, ax = plt.subplots(figsize=(max(5.0, 0.55 * len(systems) * max(1, len(funcs) / 3) + 1.5), 4.0))
    for i, f in enumerate(funcs):
        xs = [k + (i - (len(funcs) - 1) / 2) * width for k in range(len(systems))]
        ys = [by.get((s, f)) for s in systems]
        ax.bar([x for x, y in zip(xs, ys) if y is not None], [y for y in ys if y is not None], width=width,
               label=f)
    ax.axhline(0.0, color="0.4", lw=0.8)
    ax.set_xticks(range(len(systems)), systems, rotation=45 if len(systems) > 6 else 0, ha="right"
                  if len(systems) > 6 else "center")
    ax.set_ylabel(f"{'error' if use_errors else 'value'} ({unit})")
    ax.set_title(f"{_title(q)}: {'error' if use_errors else 'value'} per system")
    ax.legend(fontsize=8, frameon=False, ncol=min(len(funcs), 5), loc="best")
    return fig


def write_plots(directory: str, rows: Sequence[ResultRow], formats: Sequence[str] = ("png", "svg")) -> list[str]:
    """Draw every plot for every quantity into ``directory``; return the paths written."""
    plt = pyplot()
    os.makedirs(directory, exist_ok=True)
    written: list[str] = []
    for q in ordered(r.quantity for r in rows):
        qrows = [r for r in rows if r.quantity == q]
        with_ref = [r for r in qrows if r.error is not None]
        figs = []
        if with_ref:
            figs += [(f"{q}_errors", error_distribution(plt, with_ref, q)), (f"{q}_parity", parity(plt, with_ref, q)),
                     (f"{q}_systems", per_system_bars(plt, with_ref, q, True))]
        else:
            figs.append((f"{q}_systems", per_system_bars(plt, qrows, q, False)))
        for stem, fig in figs:
            written += _save(fig, directory, stem, formats)
            plt.close(fig)
    return written
