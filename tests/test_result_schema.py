"""Both solvers' results speak one vocabulary (ks1d.results): one shared schema test for both.

The reference here is the documented contract itself (ks1d/results.py) plus two physical identities
that hold for any result: the components add up to the total energy, and the spin-channel electron
counts add up to the electron count.
"""
from __future__ import annotations

import json

import pytest

import ks1d
from ks1d.errors import IterationRecord
from ks1d.results import SPIN_CHANNELS, SPIN_TREATMENTS, EnergyComponents, SCFOptions

SHARED = ("total_energy", "components", "converged", "iterations", "history", "spin", "multiplicity",
          "n_alpha", "n_beta", "functional", "warnings", "error_estimate", "version", "settings", "timings")


@pytest.fixture(scope="module")
def results():
    atom = ks1d.solve_atom("O", xc="pbe", estimate_error=True)
    atom_r = ks1d.solve_atom("N", xc="pbe0", spin="restricted", estimate_error=False)
    mol = ks1d.solve_molecule("O 0 0 0\nH 0 0 0.97", basis="6-31g", xc="pbe", multiplicity=2, grid="coarse")
    mol_r = ks1d.solve_molecule("H 0 0 0\nH 0 0 0.74", basis="sto-3g", xc="lda", grid="coarse")
    return {"atom": atom, "atom_restricted": atom_r, "molecule": mol, "molecule_restricted": mol_r}


@pytest.mark.parametrize("name", ["atom", "atom_restricted", "molecule", "molecule_restricted"])
def test_shared_schema(results, name):
    res = results[name]
    for f in SHARED:
        assert hasattr(res, f), f
    assert isinstance(res.components, EnergyComponents)
    assert res.components.total == pytest.approx(res.total_energy, abs=1e-9)
    assert res.converged is True and res.iterations == len(res.history) >= 1
    assert all(isinstance(h, IterationRecord) for h in res.history)
    assert res.spin in SPIN_TREATMENTS
    assert {o.spin for o in res.orbitals} <= set(SPIN_CHANNELS)
    assert res.n_alpha + res.n_beta == pytest.approx(sum(o.occupation for o in res.orbitals), abs=1e-9)
    assert res.multiplicity == pytest.approx(abs(res.n_alpha - res.n_beta) + 1, abs=1e-12)
    assert res.version == ks1d.__version__
    assert set(res.settings["scf"]) == set(SCFOptions.names())
    assert res.error_estimate is None or res.error_estimate >= 0
    assert isinstance(res.warnings, tuple) and isinstance(res.functional, dict) and "libxc" in res.functional
    d = res.to_dict()
    for f in SHARED:
        assert f in d, f
    assert set(d["components"]) == set(EnergyComponents.names())
    text = json.dumps(d, allow_nan=False)  # strict JSON: raises on NaN/Infinity
    assert json.loads(text)["total_energy"] == res.total_energy
    assert d["history"][0]["delta_energy"] is None  # no energy change in the first iteration


def test_spin_words_are_shared(results):
    assert results["atom"].spin == "polarized" and results["atom"].multiplicity == 3  # O: 3P (Hund)
    assert results["atom_restricted"].spin == "restricted" and results["atom_restricted"].multiplicity == 1
    assert results["molecule"].spin == "polarized" and results["molecule"].multiplicity == 2  # OH doublet
    assert results["molecule_restricted"].spin == "restricted"
    assert {o.spin for o in results["atom_restricted"].orbitals} == {"both"}
    assert {o.spin for o in results["molecule"].orbitals} == {"alpha", "beta"}
