"""The sweep results store: one row per job, committed at once, surviving SIGKILL.

These tests check mechanics on real (cheap) solver runs: the H, He, ..., Ne
atoms with LDA/PBE on the low-precision radial mesh.  The physics of the
values is checked in test_sweep_properties.py against outside references.
"""
from __future__ import annotations

import csv
import json
import os
import signal
import sqlite3
import subprocess
import sys
import textwrap
import time

import pytest

from ks1d.sweep import InlineExecutor, Store, StoreError, parse_spec, run_sweep
from ks1d.sweep.engine.jobs import Job
from ks1d.sweep.properties.systems import System

CHEAP = textwrap.dedent("""
    name = "cheap-atoms"
    functionals = ["lda", "pbe"]
    [solver]
    precision = "low"
    atom_options = { estimate_error = false }
    [[study]]
    property = "total_energy"
    systems = ["H", "He", "Li", "Be", "B", "C", "N", "O", "F", "Ne"]
""")


def _hydrogen_only() -> str:
    return (CHEAP.replace('["H", "He", "Li", "Be", "B", "C", "N", "O", "F", "Ne"]', '["H"]')
            .replace('["lda", "pbe"]', '["lda"]'))


def _rows(path):
    db = sqlite3.connect(path)
    try:
        return {k: (s, o, a, f) for k, s, o, a, f in
                db.execute("SELECT key, status, outputs, attempts, finished FROM jobs")}
    finally:
        db.close()


def test_rerun_skips_finished_jobs_and_retries_failed_or_all_jobs_on_request(tmp_path):
    # a job that fails for certain: an SCF allowed only 2 iterations raises ConvergenceError
    spec = parse_spec(textwrap.dedent("""
        name = "retry"
        functionals = ["lda"]
        [solver]
        atoms = "basis"
        basis = "def2-svp"
        molecule_options = { max_iterations = 2 }
        [[study]]
        property = "total_energy"
        systems = ["H"]
    """))
    store = str(tmp_path / "s.sqlite")
    first = run_sweep(spec, store, InlineExecutor(), progress=False)
    assert (first.ran, first.done, first.failed) == (1, 0, 1)
    with Store(store) as st:
        (row,) = list(st.rows())
    assert row.status == "failed" and row.error_type == "ConvergenceError" and row.attempts == 1
    assert "did not converge" in row.error

    again = run_sweep(spec, store, InlineExecutor(), progress=False)
    assert (again.skipped, again.ran) == (1, 0)  # failed jobs stay failed unless asked
    retried = run_sweep(spec, store, InlineExecutor(), progress=False, retry_failed=True)
    assert retried.ran == 1
    with Store(store) as st:
        (row,) = list(st.rows())
    assert row.attempts == 2

    good = parse_spec(_hydrogen_only())
    r1 = run_sweep(good, store, InlineExecutor(), progress=False)
    r2 = run_sweep(good, store, InlineExecutor(), progress=False)
    assert (r1.ran, r1.done) == (1, 1)
    assert (r2.skipped, r2.ran) == (1, 0)
    with Store(store) as st:
        counts = st.counts()
    assert counts == {"pending": 0, "done": 1, "failed": 1}
    r3 = run_sweep(good, store, InlineExecutor(), progress=False, rerun=True)  # forced: finished jobs again
    assert (r3.skipped, r3.ran, r3.done) == (0, 1, 1)
    with Store(store) as st:
        done = list(st.rows(status="done"))
    assert len(done) == 1 and done[0].attempts == 2


def test_job_key_changes_with_settings_functional_system_and_version():
    spec = parse_spec(CHEAP)
    jobs = spec.jobs()
    assert len({j.key for j in jobs}) == len(jobs) == 20
    j = jobs[0]
    assert Job.from_dict(json.loads(json.dumps(j.to_dict())), System.from_dict).key == j.key
    other = parse_spec(CHEAP.replace('precision = "low"', 'precision = "normal"')).jobs()[0]
    assert other.key != j.key
    newer = Job(system=j.system, property=j.property, functional=j.functional, settings=j.settings,
                version=j.version + ".post1")
    assert newer.key != j.key


def test_a_non_store_file_is_refused_with_a_clear_message(tmp_path):
    bad = tmp_path / "notes.sqlite"
    bad.write_text("this is not a database, just text " * 100)
    with pytest.raises(StoreError, match="not a ks1d sweep store"):
        Store(str(bad))


def test_sigkill_mid_run_loses_and_duplicates_nothing(tmp_path):
    spec_path = tmp_path / "cheap.toml"
    spec_path.write_text(CHEAP)
    store = str(tmp_path / "cheap.sqlite")
    cmd = [sys.executable, "-m", "ks1d", "sweep", "run", str(spec_path), "--store", store, "--workers", "2",
           "--no-progress"]
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    proc = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE, start_new_session=True, env=env)
    try:
        deadline = time.monotonic() + 150
        done_before = 0
        while time.monotonic() < deadline and proc.poll() is None:
            time.sleep(0.05)
            if os.path.exists(store):
                try:
                    done_before = sum(1 for s, *_ in _rows(store).values() if s == "done")
                except sqlite3.Error:
                    continue
            if done_before >= 2:
                break
        assert proc.poll() is None, "the sweep finished before it could be killed: " + proc.stderr.read().decode()
        assert 2 <= done_before < 20
        os.kill(proc.pid, signal.SIGKILL)  # the driver dies mid-run, between or during commits
        proc.wait(timeout=30)
    finally:
        try:
            os.killpg(proc.pid, signal.SIGKILL)  # the pool workers this test started
        except ProcessLookupError:
            pass
    assert proc.returncode == -signal.SIGKILL

    db = sqlite3.connect(store)
    assert db.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    db.close()
    at_kill = _rows(store)
    finished_at_kill = {k: v for k, v in at_kill.items() if v[0] == "done"}
    assert len(at_kill) == 20 and len(finished_at_kill) >= done_before
    assert all(v[0] == "pending" for k, v in at_kill.items() if k not in finished_at_kill)

    resume = subprocess.run(cmd + ["--json"], capture_output=True, text=True, timeout=170)
    assert resume.returncode == 0, resume.stderr
    summary = json.loads(resume.stdout)
    assert summary["skipped"] == len(finished_at_kill)
    assert summary["ran"] == 20 - len(finished_at_kill)

    after = _rows(store)
    assert len(after) == 20  # one row per job, nothing duplicated
    assert all(v[0] == "done" and v[2] == 1 for v in after.values())  # each job ran exactly once
    for k, v in finished_at_kill.items():
        assert after[k] == v  # finished jobs kept untouched: same outputs, same finish time
    db = sqlite3.connect(store)
    dup = db.execute("SELECT COUNT(*) FROM (SELECT system, property, functional, COUNT(*) c FROM jobs "
                     "GROUP BY system, property, functional HAVING c > 1)").fetchone()[0]
    db.close()
    assert dup == 0


def test_cli_plan_run_status_report(tmp_path, capsys):
    # the H atom's LSD energy, -0.478671 Ha in NIST SRD 141, shows up as value and reference in the report
    from ks1d.cli import main as cli_main

    def main(argv):
        return cli_main(["sweep", *argv])

    spec = tmp_path / "h.toml"
    spec.write_text(_hydrogen_only())
    store = str(tmp_path / "h.sqlite")
    assert main(["plan", str(spec)]) == 0
    assert "1 jobs" in capsys.readouterr().out
    assert main(["run", str(spec), "--store", store, "--workers", "0", "--no-progress"]) == 0
    assert "1 done, 0 failed" in capsys.readouterr().out
    assert main(["status", "--store", store]) == 0
    assert "1 done, 0 failed, 0 pending" in capsys.readouterr().out
    out_dir = tmp_path / "out"
    assert main(["report", "--store", store, "--out", str(out_dir), "--plots", "none"]) == 0
    rows = list(csv.DictReader(open(out_dir / "values.csv")))
    assert len(rows) == 1 and float(rows[0]["reference"]) == -0.478671
    assert abs(float(rows[0]["value"]) + 0.478671) < 2e-6
    assert main(["report", "--store", str(tmp_path / "missing.sqlite"), "--out", str(out_dir)]) == 2
    assert "does not exist" in capsys.readouterr().err
