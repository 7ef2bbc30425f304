"""Bad input to the atomic solver and CLI: clear ks1d errors (ValueError subclasses), CLI exit code 2."""
import json
import subprocess
import sys

import pytest

import ks1d
from ks1d.errors import (
    ConfigurationError,
    ConvergenceError,
    InputError,
    SettingsError,
    SpinError,
    UnknownElement,
    UnknownFunctional,
)
from ks1d.results import SCFOptions


@pytest.mark.parametrize("kwargs, exc, pattern", [
    (dict(element="Xx"), UnknownElement, "not an element symbol"),
    (dict(element=0), UnknownElement, "outside the supported range"),
    (dict(element=93), UnknownElement, "outside the supported range"),
    (dict(element="C", charge=6), ConfigurationError, "without electrons"),
    (dict(element="C", config="1s2 2s2 2x2"), ConfigurationError, "cannot read '2x2'"),
    (dict(element="C", config="1s2 2s2 2p7", charge=-1), ConfigurationError, "at most 6 electrons"),
    (dict(element="C", config="1s2 2s2 2p(4,0)"), ConfigurationError, "at most 3 electrons per spin"),
    (dict(element="C", config="1s2 2s2"), ConfigurationError, "holds 4 electrons"),
    (dict(element="C", config="1s2 2s2 2p(2,0)", spin="restricted"), SpinError, "contradicts"),
    (dict(element="C", spin=3), SpinError, "parity"),
    (dict(element="C", spin="high"), SpinError, "polarized"),
    (dict(element="C", xc="pbe00"), UnknownFunctional, "did you mean 'pbe0'"),
    (dict(element="C", precision="ultra"), SettingsError, "precision must be one of"),
])
def test_bad_input_raises_specific_value_error(kwargs, exc, pattern):
    with pytest.raises(exc, match=pattern) as info:
        ks1d.solve_atom(**kwargs)
    assert isinstance(info.value, InputError) and isinstance(info.value, ValueError)


def test_non_converging_scf_raises_with_history():
    with pytest.raises(ConvergenceError) as info:
        ks1d.solve_atom("Fe", xc="pbe", scf=SCFOptions(max_iterations=3))
    err = info.value
    assert len(err.history) == 3
    assert "diagnosis" in str(err)
    assert [h.iteration for h in err.history] == [1, 2, 3]


def test_unbound_anion_orbital_is_reported():
    # Known LDA failure (self-interaction): the extra electron of O- is unbound in LDA, its 2p
    # eigenvalue is positive (e.g. Jarecki and Davidson, Chem. Phys. Lett. 300, 44 (1999); common practice)
    res = ks1d.solve_atom("O", xc="lda", charge=-1, estimate_error=False)
    homo = res.homo
    assert homo.energy > 0
    assert any("unbound" in w for w in res.warnings)


def run_cli(*args):
    return subprocess.run([sys.executable, "-m", "ks1d", *args], capture_output=True, text=True, timeout=300)


@pytest.mark.parametrize("args, pattern", [
    (["atom", "Xx"], "not an element symbol"),
    (["atom", "C", "--xc", "pbe00"], "did you mean"),
    (["atom", "C", "--config", "1s2 2s2 2p7"], "at most 6"),
    (["atom", "C", "--charge", "7"], "without electrons"),
    (["atom", "C", "--charge", "abc"], "invalid float"),
    (["atom", "C", "--restricted", "--spin", "2"], "contradict"),
])
def test_cli_bad_input_exits_2_with_one_line(args, pattern):
    p = run_cli(*args)
    assert p.returncode == 2
    assert pattern in p.stderr
    assert "Traceback" not in p.stderr


def test_cli_json_has_the_documented_keys():
    p = run_cli("atom", "N", "--json", "--no-error-estimate")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    for key in ("total_energy", "converged", "iterations", "orbitals", "components", "settings", "configuration"):
        assert key in d
    assert {"n", "l", "spin", "occupation", "energy"} <= set(d["orbitals"][0])
    # N: Hund's rule puts all three 2p electrons in the up channel (spherical 4S-like atom)
    assert d["configuration"] == "1s2 2s2 2p(3,0)"
    # NIST LSD total energy of N (Kotochigova et al., PRA 55, 191 (1997), from memory): -54.136799
    assert d["total_energy"] == pytest.approx(-54.136799, abs=1e-6)


def test_cli_table_output_is_readable():
    p = run_cli("atom", "He", "--no-error-estimate")
    assert p.returncode == 0
    assert "total" in p.stdout and "1s" in p.stdout and "hartree" in p.stdout
