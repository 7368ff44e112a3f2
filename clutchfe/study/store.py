"""The study's sample store: one SQLite file, written as samples finish.

A sample id is the primary key, so a sample can be stored once only; a study
started again reads what is stored and plans the rest.  Every write is its own
transaction: an interrupted study loses at most the samples still in flight.
"""
from __future__ import annotations

import json
import sqlite3
import time
from pathlib import Path

from ..case import CaseError

SCHEMA_SQL = """
CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS samples (
    sample_id INTEGER PRIMARY KEY,
    status TEXT NOT NULL CHECK (status IN ('done', 'failed')),
    inputs TEXT NOT NULL,
    outputs TEXT,
    reason TEXT,
    worker TEXT,
    seconds REAL,
    finished_at REAL NOT NULL
);
"""


class SampleStore:
    def __init__(self, path: Path, fingerprint: str, planned: int):
        self.path = Path(path)
        self.path.parent.mkdir(parents=True, exist_ok=True)
        # one connection in the process that runs the study; workers only return results
        self.db = sqlite3.connect(self.path, timeout=30.0)
        self.db.execute("PRAGMA journal_mode=WAL")
        self.db.execute("PRAGMA synchronous=FULL")
        self.db.executescript(SCHEMA_SQL)
        self._claim(fingerprint, planned)

    def _claim(self, fingerprint: str, planned: int) -> None:
        row = self.db.execute("SELECT value FROM meta WHERE key = 'fingerprint'").fetchone()
        if row is None:
            with self.db:
                self.db.execute("INSERT INTO meta VALUES ('fingerprint', ?), ('planned', ?)",
                                (fingerprint, str(planned)))
        elif row[0] != fingerprint:
            self.db.close()
            raise CaseError([f"{self.path}: holds samples of a different study plan (the study file or its base "
                             "case changed since); allowed: the same study to continue it, or remove that "
                             "folder (or rename the study) to start afresh"])

    def finished_ids(self) -> set[int]:
        return {r[0] for r in self.db.execute("SELECT sample_id FROM samples")}

    def add(self, records: list[dict], inputs: dict[int, dict]) -> int:
        """Store finished samples; returns how many were new (a repeat is ignored, never doubled)."""
        rows = [(r["sample_id"], r["status"], json.dumps(inputs[r["sample_id"]]),
                 None if r["outputs"] is None else json.dumps(r["outputs"]), r["reason"], r.get("worker"),
                 r.get("seconds"), time.time()) for r in records]
        with self.db:
            before = self.db.total_changes
            self.db.executemany("INSERT OR IGNORE INTO samples VALUES (?, ?, ?, ?, ?, ?, ?, ?)", rows)
            return self.db.total_changes - before

    def rows(self) -> list[dict]:
        """Every stored sample, by id."""
        cur = self.db.execute("SELECT sample_id, status, inputs, outputs, reason, worker, seconds "
                              "FROM samples ORDER BY sample_id")
        return [{"sample_id": i, "status": s, "inputs": json.loads(a), "outputs": json.loads(o) if o else None,
                 "reason": r, "worker": w, "seconds": t} for i, s, a, o, r, w, t in cur]

    def meta(self, key: str):
        row = self.db.execute("SELECT value FROM meta WHERE key = ?", (key,)).fetchone()
        return None if row is None else json.loads(row[0]) if key not in ("fingerprint", "planned") else row[0]

    def set_meta(self, key: str, value) -> None:
        with self.db:
            self.db.execute("INSERT OR REPLACE INTO meta VALUES (?, ?)", (key, json.dumps(value)))

    def close(self) -> None:
        self.db.close()


def read_store(path: Path) -> list[dict]:
    """The stored samples of a study folder's store (read-only use, e.g. tests and reports)."""
    db = sqlite3.connect(path)
    try:
        cur = db.execute("SELECT sample_id, status, inputs, outputs, reason FROM samples ORDER BY sample_id")
        return [{"sample_id": i, "status": s, "inputs": json.loads(a), "outputs": json.loads(o) if o else None,
                 "reason": r} for i, s, a, o, r in cur]
    finally:
        db.close()
