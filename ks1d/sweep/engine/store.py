"""The results store: one SQLite file, one row per job.

Durability rules (what the kill-and-resume test checks):

* the database runs in WAL mode with ``synchronous=FULL``, so a committed
  transaction survives the process being killed at any instant;
* jobs are registered as ``pending`` in one transaction before any runs;
* each finished job (done or failed) is written and committed on its own
  the moment its result arrives — one transaction per job;
* the job key (a hash of system, property, functional, settings and ks1d
  version) is the primary key, so a job can never be stored twice; a rerun
  asks the store which jobs are still to do and skips the rest;
* outputs are strict JSON: a non-finite number is stored as null.

Only the process that drives a sweep writes; workers return results to it.
"""
from __future__ import annotations

import json
import os
import socket
import sqlite3
import time
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from typing import Any

from ..._version import __version__
from ...errors import InputError
from ...serialize import plain
from .jobs import Job

SCHEMA_VERSION = 1

_SCHEMA = """
CREATE TABLE IF NOT EXISTS meta (
    name  TEXT PRIMARY KEY,
    value TEXT NOT NULL
);
CREATE TABLE IF NOT EXISTS jobs (
    key          TEXT PRIMARY KEY,
    sweep        TEXT NOT NULL,
    system       TEXT NOT NULL,
    property     TEXT NOT NULL,
    functional   TEXT NOT NULL,
    settings     TEXT NOT NULL,
    version      TEXT NOT NULL,
    inputs       TEXT NOT NULL,
    status       TEXT NOT NULL CHECK (status IN ('pending', 'done', 'failed')),
    outputs      TEXT,
    error_type   TEXT,
    error        TEXT,
    attempts     INTEGER NOT NULL DEFAULT 0,
    seconds      REAL,
    solver_seconds REAL,
    worker       TEXT,
    executor     TEXT,
    registered   REAL NOT NULL,
    finished     REAL
);
CREATE INDEX IF NOT EXISTS jobs_status ON jobs (status);
CREATE TABLE IF NOT EXISTS runs (
    id        INTEGER PRIMARY KEY AUTOINCREMENT,
    sweep     TEXT NOT NULL,
    spec      TEXT NOT NULL,
    executor  TEXT NOT NULL,
    workers   INTEGER,
    host      TEXT,
    version   TEXT NOT NULL,
    started   REAL NOT NULL,
    finished  REAL,
    done      INTEGER,
    failed    INTEGER
);
"""


class StoreError(InputError):
    """A file that is not a ks1d sweep store, or one of a newer layout."""


@dataclass(frozen=True)
class JobRow:
    """One stored job as read back from the store."""

    key: str
    sweep: str
    system: str
    property: str
    functional: str
    settings: dict[str, Any]
    version: str
    inputs: dict[str, Any]
    status: str
    outputs: dict[str, Any] | None
    error_type: str | None
    error: str | None
    attempts: int
    seconds: float | None
    solver_seconds: float | None
    worker: str | None
    executor: str | None

    def to_dict(self) -> dict[str, Any]:
        return dict(self.__dict__)


class Store:
    """A sweep results store at ``path`` (created on first use)."""

    def __init__(self, path: str):
        self.path = path
        d = os.path.dirname(os.path.abspath(path))
        if not os.path.isdir(d):
            raise StoreError(f"the folder of store '{path}' does not exist")
        try:
            self._db = sqlite3.connect(path, timeout=30.0, isolation_level=None)
            self._db.execute("PRAGMA journal_mode=WAL")
            self._db.execute("PRAGMA synchronous=FULL")
            self._db.executescript(_SCHEMA)
        except sqlite3.DatabaseError as exc:
            raise StoreError(f"'{path}' is not a ks1d sweep store ({exc})") from None
        row = self._db.execute("SELECT value FROM meta WHERE name='schema'").fetchone()
        if row is None:
            self._db.execute("INSERT OR IGNORE INTO meta VALUES ('schema', ?)", (str(SCHEMA_VERSION),))
            self._db.execute("INSERT OR IGNORE INTO meta VALUES ('created_by', ?)", (f"ks1d {__version__}",))
        elif int(row[0]) > SCHEMA_VERSION:
            raise StoreError(f"store '{path}' has layout {row[0]}; this ks1d reads up to {SCHEMA_VERSION}")

    # ---------------------------------------------------------------- context
    def close(self) -> None:
        self._db.close()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    # -------------------------------------------------------------- writing
    def register(self, sweep: str, jobs: Iterable[Job]) -> int:
        """Add jobs not yet in the store as ``pending`` (one transaction); return how many were new."""
        now = time.time()
        rows = [
            (j.key, sweep, j.system.name, j.property, j.functional, json.dumps(j.settings_dict, sort_keys=True),
             j.version, json.dumps(j.to_dict(), sort_keys=True), now)
            for j in jobs
        ]
        with self._transaction():
            before = self._db.total_changes
            self._db.executemany(
                "INSERT OR IGNORE INTO jobs (key, sweep, system, property, functional, settings, version, inputs,"
                " status, registered) VALUES (?, ?, ?, ?, ?, ?, ?, ?, 'pending', ?)",
                rows,
            )
            return self._db.total_changes - before

    def to_run(self, keys: Iterable[str], retry_failed: bool = False, rerun_done: bool = False) -> set[str]:
        """Which of ``keys`` still need running: pending, plus failed / finished ones when asked."""
        wanted = ("pending",) + (("failed",) if retry_failed else ()) + (("done",) if rerun_done else ())
        keys = list(keys)
        out: set[str] = set()
        for i in range(0, len(keys), 500):
            chunk = keys[i:i + 500]
            q = (f"SELECT key FROM jobs WHERE status IN ({','.join('?' * len(wanted))}) "
                 f"AND key IN ({','.join('?' * len(chunk))})")
            out.update(r[0] for r in self._db.execute(q, (*wanted, *chunk)))
        return out

    def record(self, key: str, outcome: dict[str, Any], executor: str) -> None:
        """Store one finished job's outcome and commit at once."""
        status = outcome["status"]
        if status not in ("done", "failed"):
            raise ValueError(f"outcome status must be 'done' or 'failed', got {status!r}")
        with self._transaction():
            cur = self._db.execute(
                "UPDATE jobs SET status=?, outputs=?, error_type=?, error=?, attempts=attempts+1, seconds=?,"
                " solver_seconds=?, worker=?, executor=?, finished=? WHERE key=?",
                (
                    status,
                    json.dumps(plain(outcome.get("outputs")), sort_keys=True, allow_nan=False)
                    if status == "done" else None,
                    outcome.get("error_type"),
                    outcome.get("error"),
                    outcome.get("seconds"),
                    outcome.get("solver_seconds"),
                    outcome.get("worker"),
                    executor,
                    time.time(),
                    key,
                ),
            )
            if cur.rowcount != 1:
                raise StoreError(f"job {key[:12]} is not registered in store '{self.path}'")

    def start_run(self, sweep: str, spec_text: str, executor: str, workers: int | None) -> int:
        with self._transaction():
            cur = self._db.execute(
                "INSERT INTO runs (sweep, spec, executor, workers, host, version, started) VALUES (?,?,?,?,?,?,?)",
                (sweep, spec_text, executor, workers, socket.gethostname(), __version__, time.time()),
            )
            return int(cur.lastrowid)

    def finish_run(self, run_id: int, done: int, failed: int) -> None:
        with self._transaction():
            self._db.execute("UPDATE runs SET finished=?, done=?, failed=? WHERE id=?",
                             (time.time(), done, failed, run_id))

    class _Tx:
        def __init__(self, db: sqlite3.Connection):
            self.db = db

        def __enter__(self):
            self.db.execute("BEGIN IMMEDIATE")

        def __exit__(self, et, ev, tb):
            self.db.execute("ROLLBACK" if et else "COMMIT")

    def _transaction(self) -> Store._Tx:
        return Store._Tx(self._db)

    # -------------------------------------------------------------- reading
    def counts(self) -> dict[str, int]:
        out = {"pending": 0, "done": 0, "failed": 0}
        for status, n in self._db.execute("SELECT status, COUNT(*) FROM jobs GROUP BY status"):
            out[status] = n
        return out

    def rows(self, status: str | None = None, sweep: str | None = None) -> Iterator[JobRow]:
        q = ("SELECT key, sweep, system, property, functional, settings, version, inputs, status, outputs,"
             " error_type, error, attempts, seconds, solver_seconds, worker, executor FROM jobs")
        cond, args = [], []
        if status:
            cond.append("status=?")
            args.append(status)
        if sweep:
            cond.append("sweep=?")
            args.append(sweep)
        if cond:
            q += " WHERE " + " AND ".join(cond)
        q += " ORDER BY registered, rowid"
        for r in self._db.execute(q, args):
            yield JobRow(
                key=r[0], sweep=r[1], system=r[2], property=r[3], functional=r[4], settings=json.loads(r[5]),
                version=r[6], inputs=json.loads(r[7]), status=r[8],
                outputs=json.loads(r[9]) if r[9] else None, error_type=r[10], error=r[11], attempts=r[12],
                seconds=r[13], solver_seconds=r[14], worker=r[15], executor=r[16],
            )

    def runs(self) -> list[dict[str, Any]]:
        cols = ("id", "sweep", "executor", "workers", "host", "version", "started", "finished", "done", "failed")
        return [dict(zip(cols, r)) for r in self._db.execute(f"SELECT {', '.join(cols)} FROM runs ORDER BY id")]
