"""The package's architecture rules, checked on its import graph (grimp, which import-linter uses).

* the import-linter contracts in pyproject.toml hold (layers: cli > commands > report > sweep >
  validate > solvers > shared kernels > basics; the Gaussian solver reaches the radial one only
  through its atomic profiles);
* no module inside ks1d imports the package facade ``ks1d`` (each imports the defining module);
* there are no import cycles between ks1d's modules, counting imports inside functions.
"""
from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest

grimp = pytest.importorskip("grimp")  # installed with import-linter (test extra)

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def graph():
    return grimp.build_graph("ks1d")


def test_import_linter_contracts_hold():
    exe = shutil.which("lint-imports") or str(Path(sys.executable).with_name("lint-imports"))
    proc = subprocess.run([exe, "--config", str(ROOT / "pyproject.toml")], cwd=ROOT, capture_output=True,
                          text=True, timeout=300)
    assert proc.returncode == 0, proc.stdout + proc.stderr


def test_no_module_imports_the_package_facade(graph):
    offenders = sorted(m for m in graph.modules if m != "ks1d" and graph.direct_import_exists(importer=m,
                                                                                             imported="ks1d"))
    assert offenders == [], f"modules importing the ks1d facade instead of the defining module: {offenders}"


def _cycles(graph) -> list[list[str]]:
    """Strongly connected components with more than one module (Tarjan, iterative)."""
    adj = {m: sorted(graph.find_modules_directly_imported_by(m)) for m in sorted(graph.modules)}
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    out: list[list[str]] = []
    counter = 0
    for root in adj:
        if root in index:
            continue
        work = [(root, iter(adj[root]))]
        index[root] = low[root] = counter
        counter += 1
        stack.append(root)
        on.add(root)
        while work:
            v, it = work[-1]
            nxt = next(it, None)
            if nxt is not None:
                if nxt not in adj:
                    continue
                if nxt not in index:
                    index[nxt] = low[nxt] = counter
                    counter += 1
                    stack.append(nxt)
                    on.add(nxt)
                    work.append((nxt, iter(adj[nxt])))
                elif nxt in on:
                    low[v] = min(low[v], index[nxt])
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[v])
            if low[v] == index[v]:
                comp = []
                while True:
                    w = stack.pop()
                    on.discard(w)
                    comp.append(w)
                    if w == v:
                        break
                if len(comp) > 1:
                    out.append(sorted(comp))
    return out


def test_no_import_cycles_counting_function_level_imports(graph):
    assert _cycles(graph) == []
