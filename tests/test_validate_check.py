"""``ks1d check``: the validation suite runs, passes on this build and reports well-formed results.

Each check in the suite names its own source (NIST SRD 141, numerical HF limits,
NIST ASD / CRC experiment, pyscf run at test time); this module tests that the
quick suite passes against them and that the command's output and exit codes
follow the contract (0 all pass, 1 a check fails, 2 bad input).
"""
from __future__ import annotations

import json
import math

import pytest

from ks1d import cli
from ks1d.validate import checks
from ks1d.validate.checks import CheckResult, _compare

pytest.importorskip("pyscf")


@pytest.fixture(autouse=True)
def _cli_knows_check(monkeypatch):
    if "check" not in cli.COMMANDS:
        monkeypatch.setattr(cli, "COMMANDS", cli.COMMANDS + ("check",))


REQUIRED = {"name", "value", "reference", "deviation", "tolerance", "passed", "unit", "source"}


@pytest.fixture(scope="module")
def quick_json():
    import io
    from contextlib import redirect_stdout

    cmds = cli.COMMANDS if "check" in cli.COMMANDS else cli.COMMANDS + ("check",)
    saved, cli.COMMANDS = cli.COMMANDS, cmds
    buf = io.StringIO()
    try:
        with redirect_stdout(buf):
            code = cli.main(["check", "--quick", "--json"])
    finally:
        cli.COMMANDS = saved
    return code, buf.getvalue()


def test_quick_check_passes_with_exit_code_zero(quick_json):
    code, out = quick_json
    data = json.loads(out)  # exactly one JSON object on stdout
    failed = [c["name"] + ": " + c.get("note", "") for c in data["checks"] if not c["passed"]]
    assert failed == []
    assert code == 0 and data["passed"] is True


def test_quick_check_json_is_well_formed(quick_json):
    data = json.loads(quick_json[1])
    assert data["level"] == "quick" and data["xc"] == "pbe"
    assert len(data["checks"]) == data["n_checks"] >= 20
    for c in data["checks"]:
        assert REQUIRED <= set(c)
        assert c["source"]
        assert isinstance(c["passed"], bool)
        assert math.isclose(c["deviation"], c["value"] - c["reference"], rel_tol=0, abs_tol=1e-12)
        assert c["tolerance"] > 0
    groups = {c["group"] for c in data["checks"]}
    assert groups == {"nist", "hf_limit", "radial_pyscf", "gaussian_pyscf", "ip_pyscf", "ip", "ea", "relativity"}


def test_table_output_lists_every_check(capsys):
    code = cli.main(["check", "--quick", "--group", "hf_limit"])
    out = capsys.readouterr().out
    assert code == 0
    for head in ("check", "value", "reference", "deviation", "tolerance", "result"):
        assert head in out.splitlines()[0]
    assert sum(line.endswith(" pass") for line in out.splitlines()) == 3 and "FAIL" not in out


def test_a_failing_check_gives_exit_code_one(monkeypatch, capsys):
    # a group whose comparison is off by 2e-6 Ha against a 1e-6 Ha tolerance (tests the
    # pass/fail plumbing, not the physics)
    bad = lambda level, xc: [_compare("synthetic", "synthetic", 1.0 + 2e-6, 1.0, 1e-6, "hartree", "test")]
    monkeypatch.setitem(checks.GROUPS, "synthetic", bad)
    code = cli.main(["check", "--group", "synthetic", "--json"])
    data = json.loads(capsys.readouterr().out)
    assert code == 1 and data["passed"] is False and data["n_failed"] == 1


def test_one_sided_band():
    c = _compare("x", "g", -1e-6, 0.0, 3e-6, "hartree", "s", lower=-3e-6, upper=2e-8)
    assert c.passed
    assert not _compare("x", "g", 1e-7, 0.0, 3e-6, "hartree", "s", lower=-3e-6, upper=2e-8).passed
    assert _compare("mae", "g", 0.1, 0.2, 0.1, "eV", "s", lower=None, upper=0.1).passed
    assert isinstance(c, CheckResult) and json.dumps(c.to_dict())


@pytest.mark.parametrize("argv", [
    ["check", "--xc", "pbe00"],           # unknown functional
    ["check", "--xc", "hse06"],           # no published accuracy recorded / range-separated
    ["check", "--group", "nonsense"],     # unknown group
])
def test_bad_input_exits_with_code_two(argv, capsys):
    assert cli.main(argv) == 2
    err = capsys.readouterr().err
    assert err.startswith("ks1d: error:") and "Traceback" not in err


def test_contradictory_levels_exit_with_code_two(capsys):
    with pytest.raises(SystemExit) as exc:
        cli.main(["check", "--quick", "--full"])
    assert exc.value.code == 2
