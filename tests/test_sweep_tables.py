"""Statistics, tables and plots of sweep results.

The rows fed in are real data from two outside sources: the G2-1 atoms'
ionisation energies as carried by ASE (NIST CCCBDB, two decimals) taken as
"computed" values, against NIST ASD ionisation energies from ks1d's reference
data.  Statistics are checked against numpy; tables are read back with the
standard csv/json modules; plots are checked to be valid PNG and SVG files.
"""
from __future__ import annotations

import csv
import io
import json
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from ks1d.sweep.output.collect import ResultRow
from ks1d.sweep.output.statistics import error_statistics
from ks1d.sweep.output.tables import results_markdown, statistics_csv, values_csv, write_tables
from ks1d.sweep.properties.datasets import reference_for
from ks1d.sweep.properties.systems import parse_atom


@pytest.fixture(scope="module")
def rows():
    g2 = pytest.importorskip("ase.data.g2_1")
    out = []
    for sym in g2.atom_names:
        ref = reference_for("ionisation_potential", parse_atom(sym))
        for name, shift in (("g2-1 as is", 0.0), ("g2-1 + 0.1 eV", 0.1)):
            v = float(g2.data[sym]["ionization energy"]) + shift
            out.append(ResultRow(sym, "ionisation_potential", name, v, "eV", ref.value, v - ref.value, ref.source,
                                 ref.from_memory, "none"))
    return out


def test_statistics_agree_with_numpy(rows):
    stats = error_statistics(rows)
    assert [s.functional for s in stats] == ["g2-1 as is", "g2-1 + 0.1 eV"]
    for s in stats:
        e = np.array([r.error for r in rows if r.functional == s.functional])
        assert s.n == len(e) == 12
        assert s.mse == pytest.approx(e.mean(), abs=1e-12)
        assert s.mae == pytest.approx(np.abs(e).mean(), abs=1e-12)
        assert s.rms == pytest.approx(np.sqrt((e ** 2).mean()), abs=1e-12)
        worst = [r for r in rows if r.functional == s.functional][int(np.argmax(np.abs(e)))]
        assert s.max_abs == pytest.approx(abs(worst.error)) and s.worst_system == worst.system
    # the two decimals of G2-1 vs NIST ASD: agreement to 0.01 eV (rounding), so the shifted set has MSE ~ +0.1 eV
    assert stats[0].max_abs < 0.011
    assert stats[1].mse == pytest.approx(0.1, abs=0.011)


def test_tables_read_back_with_the_standard_library(rows, tmp_path):
    stats = error_statistics(rows)
    back = list(csv.DictReader(io.StringIO(values_csv(rows))))
    assert len(back) == len(rows)
    assert [float(b["value"]) for b in back] == [r.value for r in rows]
    assert back[0]["reference_source"].startswith("NIST Atomic Spectra Database")
    st = list(csv.DictReader(io.StringIO(statistics_csv(stats))))
    assert float(st[1]["mae"]) == pytest.approx(stats[1].mae, rel=1e-12)
    paths = write_tables(str(tmp_path), "demo", rows, stats, [])
    doc = json.loads((tmp_path / "results.json").read_text())
    assert len(doc["values"]) == 24 and doc["statistics"][0]["worst_system"] == stats[0].worst_system
    md = (tmp_path / "results.md").read_text()
    assert md == results_markdown("demo", rows, stats, [])
    blocks, cur = [], []
    for ln in md.splitlines() + [""]:
        if ln.startswith("|"):
            cur.append(ln)
        elif cur:
            blocks.append(cur)
            cur = []
    assert len(blocks) == 4  # MAE overview; statistics; values of the quantity; its statistics
    for b in blocks:
        assert len({ln.count("|") for ln in b}) == 1, b[0]  # no stray '|' breaks a table's columns
    assert len(paths) == 5


def test_plots_are_valid_png_and_svg(rows, tmp_path):
    pytest.importorskip("matplotlib")
    from ks1d.sweep.output.plots import write_plots

    paths = write_plots(str(tmp_path), rows)
    assert sorted(p.rsplit("/", 1)[1] for p in paths) == sorted(
        f"ionisation_potential_{k}.{ext}" for k in ("errors", "parity", "systems") for ext in ("png", "svg"))
    for p in paths:
        if p.endswith(".png"):
            assert open(p, "rb").read(8) == b"\x89PNG\r\n\x1a\n"
        else:
            assert ET.parse(p).getroot().tag.endswith("svg")
