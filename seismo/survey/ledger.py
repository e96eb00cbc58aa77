"""The results ledger: one record per star, written as each star finishes.

Two backends share one small interface (`Ledger`): `SQLiteLedger`, an
embedded SQLite database in write-ahead-log mode for real runs, and
`MemoryLedger` for tests and throw-away runs.

Kill safety
-----------
Only the submitting process writes the ledger, one transaction per star
(an ``INSERT ... ON CONFLICT DO UPDATE`` of one row). SQLite's journal makes
that transaction atomic, so a run killed at any moment (SIGINT, SIGTERM,
kill -9) leaves every finished star recorded exactly once and loses at most
the stars that were still being analysed.
"""

from __future__ import annotations

import json
import sqlite3
import time
from collections.abc import Iterator
from dataclasses import asdict, dataclass, fields, replace
from pathlib import Path
from typing import Any

from ..errors import OptionError

__all__ = ["STATUSES", "StarRecord", "Ledger", "MemoryLedger", "SQLiteLedger", "open_ledger",
           "LEDGER_NAME"]

#: Status of a star in the ledger.
STATUSES: tuple[str, ...] = ("done", "failed", "skipped")

#: File name of the SQLite ledger inside a survey folder.
LEDGER_NAME = "ledger.sqlite"


@dataclass(frozen=True)
class StarRecord:
    """What the ledger knows about one star.

    Attributes
    ----------
    path : str
        Input light-curve path (absolute); the key of the ledger.
    status : str
        One of `STATUSES`. ``"skipped"`` marks a file whose content equals
        that of another input (the one with the smaller path is ``done``).
    star_id : str or None
        Identifier given in the inputs table, if any.
    checksum : str or None
        ``"sha256:<hex>"`` of the input file (``None`` if it could not be read).
    size, mtime_ns : int or None
        Size (bytes) and modification time (ns) of the file when analysed;
        used to avoid re-hashing unchanged files on resume.
    config_hash : str
        `seismo.config.AnalysisConfig.hash` of the run's configuration.
    inputs_key : str
        JSON of the per-star inputs (Teff, its error, [Fe/H]) and id.
    run_seed : int
        Seed of the run from which the star's own seed was derived.
    result_json : str or None
        The full `seismo.results.StarResult` as JSON (done and skipped stars).
    error_class, error_message : str or None
        Exception class name and one-line message (failed stars).
    seconds : float
        Wall time of the analysis, s.
    worker : str
        ``host:pid`` of the process that ran the star.
    finished_at : float
        Unix time at which the record was written, s.
    """

    path: str
    status: str
    config_hash: str
    inputs_key: str = "{}"
    run_seed: int = 0
    star_id: str | None = None
    checksum: str | None = None
    size: int | None = None
    mtime_ns: int | None = None
    result_json: str | None = None
    error_class: str | None = None
    error_message: str | None = None
    seconds: float = 0.0
    worker: str = ""
    finished_at: float = 0.0

    def __post_init__(self) -> None:
        if self.status not in STATUSES:
            raise OptionError(f"status must be one of {list(STATUSES)}; got {self.status!r}")

    def result(self) -> dict[str, Any] | None:
        """The stored result as a dict (`StarResult.to_dict` form), or ``None``."""
        return None if self.result_json is None else json.loads(self.result_json)


_COLUMNS = tuple(f.name for f in fields(StarRecord))


class Ledger:
    """Interface of a results ledger (subclassed by the backends).

    Backends implement `get`, `put`, `records`, `get_meta`, `set_meta` and
    `close`; `put` must be atomic per record.
    """

    def get(self, path: str) -> StarRecord | None:
        """Return the record of ``path``, or ``None``."""
        raise NotImplementedError

    def put(self, record: StarRecord) -> None:
        """Insert or replace the record of ``record.path``, atomically."""
        raise NotImplementedError

    def records(self) -> Iterator[StarRecord]:
        """Every record, in path order."""
        raise NotImplementedError

    def get_meta(self, key: str) -> Any:
        """Return a run-level value stored with `set_meta` (JSON), or ``None``."""
        raise NotImplementedError

    def set_meta(self, key: str, value: Any) -> None:
        """Store a JSON-able run-level value (configuration, seed, ...)."""
        raise NotImplementedError

    def close(self) -> None:
        """Release the storage."""

    def record(self, record: StarRecord) -> StarRecord:
        """Store a finished star, marking content duplicates as skipped.

        When a done star has the same checksum, configuration and inputs as
        another done star, the one with the larger path becomes
        ``"skipped"``, whatever the order in which they finished.

        Returns
        -------
        StarRecord
            The record as stored.
        """
        if record.status == "done" and record.checksum is not None:
            for other in self.records():
                if (other.path != record.path and other.status in ("done", "skipped")
                        and other.checksum == record.checksum
                        and other.config_hash == record.config_hash
                        and other.inputs_key == record.inputs_key):
                    first, second = sorted([other, record], key=lambda r: r.path)
                    if first is record or first.status != "done":
                        first = replace(first, status="done", error_class=None,
                                        error_message=None)
                        self.put(first)
                    second = replace(second, status="skipped", error_class="DuplicateInput",
                                     error_message=f"same content as {first.path}")
                    self.put(second)
                    return second if second.path == record.path else first
        self.put(record)
        return record

    def counts(self) -> dict[str, int]:
        """Number of records by status."""
        out = dict.fromkeys(STATUSES, 0)
        for rec in self.records():
            out[rec.status] += 1
        return out

    def __enter__(self) -> Ledger:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


class MemoryLedger(Ledger):
    """A ledger held in a dict; nothing survives the process."""

    def __init__(self) -> None:
        self._rows: dict[str, StarRecord] = {}
        self._meta: dict[str, str] = {}

    def get(self, path: str) -> StarRecord | None:
        return self._rows.get(path)

    def put(self, record: StarRecord) -> None:
        self._rows[record.path] = replace(record, finished_at=record.finished_at or time.time())

    def records(self) -> Iterator[StarRecord]:
        return iter([self._rows[k] for k in sorted(self._rows)])

    def get_meta(self, key: str) -> Any:
        text = self._meta.get(key)
        return None if text is None else json.loads(text)

    def set_meta(self, key: str, value: Any) -> None:
        self._meta[key] = json.dumps(value, sort_keys=True)


_SCHEMA = """
CREATE TABLE IF NOT EXISTS stars (
    path TEXT PRIMARY KEY, status TEXT NOT NULL, config_hash TEXT NOT NULL,
    inputs_key TEXT NOT NULL, run_seed INTEGER NOT NULL, star_id TEXT, checksum TEXT,
    size INTEGER, mtime_ns INTEGER, result_json TEXT, error_class TEXT, error_message TEXT,
    seconds REAL NOT NULL, worker TEXT NOT NULL, finished_at REAL NOT NULL
);
CREATE INDEX IF NOT EXISTS stars_checksum ON stars (checksum);
CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
"""
_UPSERT = (
    f"INSERT INTO stars ({', '.join(_COLUMNS)}) VALUES ({', '.join('?' * len(_COLUMNS))}) "
    "ON CONFLICT(path) DO UPDATE SET "
    + ", ".join(f"{c} = excluded.{c}" for c in _COLUMNS if c != "path")
)


class SQLiteLedger(Ledger):
    """A ledger in an SQLite file (write-ahead log, one transaction per star).

    Parameters
    ----------
    path : str or Path
        Database file; created (with its folder) if missing.
    readonly : bool
        Open without creating or writing (for catalogs and monitoring).
    """

    def __init__(self, path: str | Path, *, readonly: bool = False) -> None:
        self.path = Path(path)
        if readonly:
            if not self.path.is_file():
                raise OptionError(f"{self.path}: no survey ledger here (expected {LEDGER_NAME})")
            self._db = sqlite3.connect(f"file:{self.path}?mode=ro", uri=True, timeout=30)
        else:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            self._db = sqlite3.connect(self.path, timeout=30)
            self._db.execute("PRAGMA journal_mode=WAL")
            # NORMAL is durable against a killed process in WAL mode; only a power
            # cut can lose the last few commits, and never corrupts the file.
            self._db.execute("PRAGMA synchronous=NORMAL")
            self._db.executescript(_SCHEMA)
            self._db.commit()

    def _row(self, row: tuple[Any, ...]) -> StarRecord:
        return StarRecord(**dict(zip(_COLUMNS, row, strict=True)))

    def get(self, path: str) -> StarRecord | None:
        row = self._db.execute(
            f"SELECT {', '.join(_COLUMNS)} FROM stars WHERE path = ?", (path,)).fetchone()
        return None if row is None else self._row(row)

    def put(self, record: StarRecord) -> None:
        record = replace(record, finished_at=record.finished_at or time.time())
        values = asdict(record)
        with self._db:  # one transaction: committed, or rolled back on error
            self._db.execute(_UPSERT, [values[c] for c in _COLUMNS])

    def records(self) -> Iterator[StarRecord]:
        rows = self._db.execute(
            f"SELECT {', '.join(_COLUMNS)} FROM stars ORDER BY path").fetchall()
        return iter([self._row(r) for r in rows])

    def record(self, record: StarRecord) -> StarRecord:
        if record.status == "done" and record.checksum is not None:
            twin = self._db.execute(
                "SELECT 1 FROM stars WHERE checksum = ? AND path != ? LIMIT 1",
                (record.checksum, record.path)).fetchone()
            if twin is None:  # the common case: no scan of the whole table
                self.put(record)
                return record
        return super().record(record)

    def counts(self) -> dict[str, int]:
        out = dict.fromkeys(STATUSES, 0)
        for status, n in self._db.execute("SELECT status, COUNT(*) FROM stars GROUP BY status"):
            out[status] = n
        return out

    def get_meta(self, key: str) -> Any:
        row = self._db.execute("SELECT value FROM meta WHERE key = ?", (key,)).fetchone()
        return None if row is None else json.loads(row[0])

    def set_meta(self, key: str, value: Any) -> None:
        with self._db:
            self._db.execute("INSERT OR REPLACE INTO meta (key, value) VALUES (?, ?)",
                             (key, json.dumps(value, sort_keys=True)))

    def close(self) -> None:
        self._db.close()


def open_ledger(out_dir: str | Path, *, readonly: bool = False) -> SQLiteLedger:
    """Open (or create) the SQLite ledger of a survey folder.

    Parameters
    ----------
    out_dir : str or Path
        Survey output folder; the ledger is ``out_dir / LEDGER_NAME``.
    readonly : bool
        Open an existing ledger without writing.

    Returns
    -------
    SQLiteLedger
    """
    return SQLiteLedger(Path(out_dir) / LEDGER_NAME, readonly=readonly)
