"""The sweep package's layer rules, checked by import-linter (contracts ``sweep-*`` in pyproject.toml).

* ``sweep-engine``: the engine (jobs, store, executors, worker, runner, progress) imports no physics —
  not the properties, the output, the spec, the solvers or the validation layer; it reaches job kinds only
  through the registry it is given (:mod:`ks1d.sweep.engine.registry`);
* ``sweep-output``: the output layer (collect, statistics, tables, plots, writers) runs no job and calls
  no solver;
* ``sweep-layers``: report > sweep.run > sweep.spec > sweep.output > sweep.properties > sweep.engine.

Imports inside functions count (grimp reads every import statement).  Besides checking that the contracts
hold, each contract is shown to fail on a copy of the package with one violating import added, so a
contract that checks nothing (a typo in a module name, say) would fail this test.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

pytest.importorskip("importlinter")  # the test extra installs import-linter (and grimp)

ROOT = Path(__file__).resolve().parents[1]
CONTRACTS = ("sweep-engine", "sweep-output", "sweep-layers")


def _lint(root: Path, *contracts: str) -> subprocess.CompletedProcess:
    exe = shutil.which("lint-imports") or str(Path(sys.executable).with_name("lint-imports"))
    args = [exe, "--config", str(root / "pyproject.toml"), "--no-cache"]
    for c in contracts:
        args += ["--contract", c]
    env = dict(os.environ, PYTHONPATH=str(root))  # analyse this tree's ks1d, not an installed copy
    return subprocess.run(args, cwd=root, env=env, capture_output=True, text=True, timeout=300)


def test_the_sweep_contracts_hold():
    proc = _lint(ROOT, *CONTRACTS)
    assert proc.returncode == 0, proc.stdout + proc.stderr
    assert proc.stdout.count("KEPT") == len(CONTRACTS), proc.stdout


# (contract, module to edit, the violating import added inside a function)
VIOLATIONS = [
    ("sweep-engine", "ks1d/sweep/engine/worker.py", "from ..properties import registry"),
    ("sweep-engine", "ks1d/sweep/engine/runner.py", "from ...radial import scf"),
    ("sweep-output", "ks1d/sweep/output/tables.py", "from ..engine import runner"),
    ("sweep-output", "ks1d/sweep/output/collect.py", "from ..properties import calculations"),
    ("sweep-layers", "ks1d/sweep/properties/kinds.py", "from ..output import collect"),
    ("sweep-layers", "ks1d/sweep/spec.py", "from . import run"),
]


@pytest.fixture(scope="module")
def package_copy(tmp_path_factory):
    dest = tmp_path_factory.mktemp("arch")
    shutil.copytree(ROOT / "ks1d", dest / "ks1d", ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copy(ROOT / "pyproject.toml", dest / "pyproject.toml")
    return dest


@pytest.mark.parametrize("contract, module, statement", VIOLATIONS,
                         ids=[f"{c}:{m.rsplit('/', 1)[1]}" for c, m, _ in VIOLATIONS])
def test_each_contract_breaks_on_a_violating_import(package_copy, contract, module, statement):
    path = package_copy / module
    original = path.read_text(encoding="utf-8")
    try:
        path.write_text(original + f"\n\ndef _architecture_test_violation():\n    {statement}  # noqa: F401\n",
                        encoding="utf-8")
        proc = _lint(package_copy, contract)
    finally:
        path.write_text(original, encoding="utf-8")
    assert proc.returncode != 0, proc.stdout
    assert "BROKEN" in proc.stdout, proc.stdout
