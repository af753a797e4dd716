"""The inspection log: one SQLite file holding the history of jobs and check-standard readings.

Every CLI measurement given ``--log FILE`` appends one record: job name, time, kind, spec,
the calibration file and its SHA-256, the image path and its SHA-256, every reading with its
expanded uncertainty (k = 2), the verdict and the warnings. ``profilecheck check`` adds a
check-standard row (scale error of a known pin) so drift of the camera set-up shows.

Storage rules
-------------
* WAL journal (readers never block the writer), ``synchronous = FULL``: a committed record
  survives a killed process and a power cut (SQLite documentation, "Write-Ahead Logging"
  and "PRAGMA synchronous").
* Each record is written in one ``BEGIN IMMEDIATE`` transaction: a process killed mid-way
  leaves the log as it was before that record, never half a record.
* Two processes may log at once: the second waits for the lock (``busy_timeout``, 30 s).
* The schema is versioned twice over, in ``PRAGMA user_version`` and in the ``meta`` table,
  and migrated forward on open inside one transaction (:data:`SCHEMA_VERSION`). A log made
  by a newer profilecheck is refused, not rewritten.

Schema history
--------------
1. ``records`` (one row per job, readings only inside ``result_json``) and ``meta``.
2. adds the file hashes and warnings to ``records``, a ``readings`` table (one row per
   quantity, filled from ``result_json`` for old records) and ``standard_checks``.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import sqlite3
import time
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, Mapping

from ._files import json_safe
from .errors import LogError

__all__ = ["InspectionLog", "SCHEMA_VERSION", "file_sha256", "BUSY_TIMEOUT_S"]

#: Current schema version (``PRAGMA user_version`` and ``meta.schema_version``).
SCHEMA_VERSION = 2

#: How long a writer waits for another process's transaction to finish.
BUSY_TIMEOUT_S = 30.0

_APP = "profilecheck inspection log"

_V1 = (
    "CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL)",
    "CREATE TABLE records (id INTEGER PRIMARY KEY AUTOINCREMENT, job TEXT NOT NULL, "
    "time TEXT NOT NULL, kind TEXT NOT NULL, spec TEXT, calibration_path TEXT, "
    "image_path TEXT, verdict TEXT, result_json TEXT NOT NULL)",
    "CREATE INDEX records_time ON records(time)",
)

_V1_TO_V2 = (
    "ALTER TABLE records ADD COLUMN calibration_sha256 TEXT",
    "ALTER TABLE records ADD COLUMN image_sha256 TEXT",
    "ALTER TABLE records ADD COLUMN warnings_json TEXT NOT NULL DEFAULT '[]'",
    "CREATE TABLE readings (id INTEGER PRIMARY KEY AUTOINCREMENT, "
    "record_id INTEGER NOT NULL REFERENCES records(id) ON DELETE CASCADE, "
    "quantity TEXT NOT NULL, value REAL NOT NULL, u REAL NOT NULL, unit TEXT NOT NULL, "
    "min REAL, max REAL, result TEXT, source TEXT, n_points INTEGER)",
    "CREATE INDEX readings_record ON readings(record_id)",
    "CREATE TABLE standard_checks (record_id INTEGER PRIMARY KEY "
    "REFERENCES records(id) ON DELETE CASCADE, nominal_mm REAL NOT NULL, "
    "measured_mm REAL NOT NULL, u_mm REAL NOT NULL, scale_error REAL NOT NULL, "
    "u_scale REAL NOT NULL, drift INTEGER NOT NULL)",
)


def file_sha256(path: str | os.PathLike[str] | None) -> str | None:
    """SHA-256 (hex) of a file's bytes, or None when ``path`` is None or not a file."""
    if path is None:
        return None
    p = Path(path)
    if not p.is_file():
        return None
    h = hashlib.sha256()
    with open(p, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def _now() -> str:
    return datetime.now(timezone.utc).isoformat(timespec="seconds")


def _json(o: Any) -> str:
    return json.dumps(json_safe(o), sort_keys=True, allow_nan=False, default=str)


def _migrate_1_to_2(con: sqlite3.Connection) -> None:
    """v1 -> v2: hashes and warnings columns; readings split out of result_json."""
    for stmt in _V1_TO_V2:
        con.execute(stmt)
    rows = con.execute("SELECT id, result_json FROM records ORDER BY id").fetchall()
    for rid, text in rows:
        try:
            result = json.loads(text)
        except (TypeError, ValueError):
            continue  # an unreadable old record keeps its text; it has no reading rows
        if not isinstance(result, dict):
            continue
        con.execute("UPDATE records SET warnings_json = ? WHERE id = ?",
                    (_json([str(w) for w in result.get("warnings") or []]), rid))
        _insert_readings(con, rid, result)


_MIGRATIONS = {1: _migrate_1_to_2}


def _insert_readings(con: sqlite3.Connection, record_id: int, result: Mapping[str, Any]) -> int:
    from .report._rows import readings

    n = 0
    for r in readings(dict(result)):
        con.execute("INSERT INTO readings (record_id, quantity, value, u, unit, min, max, "
                    "result, source, n_points) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                    (record_id, r.quantity, r.value, r.u, r.unit, r.min, r.max,
                     r.result or None, r.source or None, r.n_points))
        n += 1
    return n


class InspectionLog:
    """An open inspection log (SQLite file, WAL mode, versioned schema).

    Parameters
    ----------
    path : path-like
        The log file; created (with its folder required to exist) when missing.
    create : bool
        Create the file if it does not exist (default True); False raises LogError.

    Raises
    ------
    LogError
        Folder missing, file not a log, damaged, or made by a newer profilecheck.

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp()
    >>> with InspectionLog(os.path.join(d, 'shop.db')) as log:
    ...     rid = log.record({'kind': 'thread', 'measurements': {}}, job='demo')
    ...     log.show(rid)['job']
    'demo'
    """

    def __init__(self, path: str | os.PathLike[str], *, create: bool = True) -> None:
        self.path = Path(path)
        parent = self.path.parent if str(self.path.parent) else Path(".")
        if not parent.is_dir():
            raise LogError(f"log {self.path}: folder {parent} does not exist")
        if self.path.is_dir():
            raise LogError(f"log {self.path} is a folder, not a file")
        if not create and not self.path.exists():
            raise LogError(f"log {self.path}: no such file")
        try:
            self._con = sqlite3.connect(str(self.path), timeout=BUSY_TIMEOUT_S,
                                        isolation_level=None)
        except sqlite3.Error as e:
            raise LogError(f"log {self.path}: cannot open ({e})") from None
        try:
            self._setup()
        except sqlite3.DatabaseError as e:
            self._con.close()
            raise LogError(f"log {self.path}: not a readable inspection log ({e})") from None
        except BaseException:
            self._con.close()
            raise

    # -- opening and schema ------------------------------------------------------------------
    def _setup(self) -> None:
        con = self._con
        con.execute(f"PRAGMA busy_timeout = {int(BUSY_TIMEOUT_S * 1000)}")
        # Another process creating the same new file may hold the lock: the pragma then
        # answers with the old mode instead of waiting, so ask again until the busy timeout.
        deadline = time.monotonic() + BUSY_TIMEOUT_S
        while True:
            try:
                mode = con.execute("PRAGMA journal_mode = WAL").fetchone()[0]
            except sqlite3.OperationalError as e:
                if "locked" not in str(e) and "busy" not in str(e):
                    raise
                mode = "locked"
            if str(mode).lower() == "wal" or time.monotonic() > deadline:
                break
            time.sleep(0.02)
        if str(mode).lower() != "wal":
            raise LogError(f"log {self.path}: cannot switch to WAL mode (got {mode}); "
                           "is it on a network drive?")
        con.execute("PRAGMA synchronous = FULL")
        con.execute("PRAGMA foreign_keys = ON")
        version = con.execute("PRAGMA user_version").fetchone()[0]
        if version == SCHEMA_VERSION:
            return
        if version > SCHEMA_VERSION:
            raise LogError(f"log {self.path} has schema version {version}, newer than this "
                           f"profilecheck reads ({SCHEMA_VERSION}): update profilecheck")
        con.execute("BEGIN IMMEDIATE")
        try:
            version = con.execute("PRAGMA user_version").fetchone()[0]  # re-read under lock
            if version == 0:
                tables = con.execute("SELECT count(*) FROM sqlite_master").fetchone()[0]
                if tables:
                    raise LogError(f"{self.path} is an SQLite file but not an inspection log")
                self._create_v1(con)
                version = 1
            while version < SCHEMA_VERSION:
                _MIGRATIONS[version](con)
                version += 1
                con.execute(f"PRAGMA user_version = {version}")
                con.execute("INSERT OR REPLACE INTO meta (key, value) VALUES "
                            "('schema_version', ?)", (str(version),))
                con.execute("INSERT OR REPLACE INTO meta (key, value) VALUES "
                            "(?, ?)", (f"migrated_to_{version}", _now()))
            con.execute("COMMIT")
        except BaseException:
            con.execute("ROLLBACK")
            raise

    @staticmethod
    def _create_v1(con: sqlite3.Connection) -> None:
        for stmt in _V1:
            con.execute(stmt)
        con.execute("INSERT INTO meta (key, value) VALUES ('application', ?)", (_APP,))
        con.execute("INSERT INTO meta (key, value) VALUES ('created', ?)", (_now(),))
        con.execute("INSERT INTO meta (key, value) VALUES ('schema_version', '1')")
        con.execute("PRAGMA user_version = 1")

    @classmethod
    def create_v1(cls, path: str | os.PathLike[str]) -> None:
        """Create an empty log at schema version 1 (to test and demonstrate migration)."""
        con = sqlite3.connect(str(path), isolation_level=None)
        try:
            con.execute("BEGIN IMMEDIATE")
            cls._create_v1(con)
            con.execute("COMMIT")
        finally:
            con.close()

    @property
    def schema_version(self) -> int:
        return int(self._con.execute("PRAGMA user_version").fetchone()[0])

    def meta(self) -> dict[str, str]:
        """The ``meta`` table as a dict (application, created, schema_version, ...)."""
        return dict(self._con.execute("SELECT key, value FROM meta").fetchall())

    def integrity_check(self) -> str:
        """Result of ``PRAGMA integrity_check``: 'ok' for a sound file."""
        return "; ".join(r[0] for r in self._con.execute("PRAGMA integrity_check").fetchall())

    # -- writing -----------------------------------------------------------------------------
    def record(self, result_dict: Mapping[str, Any], *, job: str,
               image_path: str | os.PathLike[str] | None = None,
               calibration_path: str | os.PathLike[str] | None = None,
               time: str | None = None, standard_check: Mapping[str, Any] | None = None) -> int:
        """Append one measurement to the log in a single transaction.

        Parameters
        ----------
        result_dict : mapping
            The measurement's ``to_dict()`` JSON (stored whole, and its readings one row
            each).
        job : str
            Job name (non-empty).
        image_path, calibration_path : path-like, optional
            Files the result came from; their SHA-256 is stored beside the path.
        time : str, optional
            ISO 8601 time stamp (default: now, UTC).
        standard_check : mapping, optional
            Check-standard numbers ``nominal_mm, measured_mm, u_mm, scale_error, u_scale,
            drift`` (see :mod:`profilecheck.commands.check`).

        Returns
        -------
        int
            The new record's id.
        """
        if not isinstance(result_dict, Mapping):
            raise TypeError(f"result_dict must be a dict, got {type(result_dict).__name__}")
        if not isinstance(job, str) or not job.strip():
            raise ValueError("job must be a non-empty string")
        result = dict(result_dict)
        from .report._context import spec_designation

        verdict = result.get("verdict")
        overall = verdict.get("overall") if isinstance(verdict, Mapping) else None
        warnings = [str(w) for w in result.get("warnings") or []]
        row = (job.strip(), time or _now(), str(result.get("kind") or "measurement"),
               spec_designation(result) or None,
               None if calibration_path is None else str(calibration_path),
               file_sha256(calibration_path),
               None if image_path is None else str(image_path), file_sha256(image_path),
               None if overall is None else str(overall), _json(warnings), _json(result))
        sc = None
        if standard_check is not None:
            keys = ("nominal_mm", "measured_mm", "u_mm", "scale_error", "u_scale")
            try:
                sc = [float(standard_check[k]) for k in keys]
            except (KeyError, TypeError, ValueError):
                raise ValueError(f"standard_check needs numbers {', '.join(keys)}") from None
            if not all(math.isfinite(v) for v in sc):
                raise ValueError("standard_check values must be finite")
            sc.append(int(bool(standard_check.get("drift", False))))
        con = self._con
        try:
            con.execute("BEGIN IMMEDIATE")
            try:
                cur = con.execute(
                    "INSERT INTO records (job, time, kind, spec, calibration_path, "
                    "calibration_sha256, image_path, image_sha256, verdict, warnings_json, "
                    "result_json) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)", row)
                rid = int(cur.lastrowid)
                _insert_readings(con, rid, result)
                if sc is not None:
                    con.execute("INSERT INTO standard_checks (record_id, nominal_mm, "
                                "measured_mm, u_mm, scale_error, u_scale, drift) VALUES "
                                "(?, ?, ?, ?, ?, ?, ?)", (rid, *sc))
                con.execute("COMMIT")
            except BaseException:
                con.execute("ROLLBACK")
                raise
        except sqlite3.OperationalError as e:
            raise LogError(f"log {self.path}: could not write the record ({e})") from None
        return rid

    # -- reading -----------------------------------------------------------------------------
    def list(self, *, kind: str | None = None, limit: int | None = None) -> list[dict[str, Any]]:
        """Summaries of the records, oldest first: id, job, time, kind, spec, verdict,
        readings (count), image_path."""
        sql = ("SELECT r.id, r.job, r.time, r.kind, r.spec, r.verdict, r.image_path, "
               "(SELECT count(*) FROM readings WHERE record_id = r.id) FROM records r")
        args: list[Any] = []
        if kind is not None:
            sql += " WHERE r.kind = ?"
            args.append(kind)
        sql += " ORDER BY r.id"
        if limit is not None:
            if isinstance(limit, bool) or not isinstance(limit, int) or limit < 1:
                raise ValueError(f"limit must be a positive int, got {limit!r}")
            sql = f"SELECT * FROM ({sql} DESC LIMIT {limit}) ORDER BY 1"
        keys = ("id", "job", "time", "kind", "spec", "verdict", "image_path", "readings")
        return [dict(zip(keys, r)) for r in self._con.execute(sql, args).fetchall()]

    def show(self, record_id: int) -> dict[str, Any]:
        """Everything held for one record, readings and stored result included.

        Raises
        ------
        LogError
            No record with that id.
        """
        if isinstance(record_id, bool) or not isinstance(record_id, int):
            raise TypeError(f"record_id must be an int, got {type(record_id).__name__}")
        cols = ("id", "job", "time", "kind", "spec", "calibration_path", "calibration_sha256",
                "image_path", "image_sha256", "verdict", "warnings_json", "result_json")
        row = self._con.execute(f"SELECT {', '.join(cols)} FROM records WHERE id = ?",
                                (record_id,)).fetchone()
        if row is None:
            raise LogError(f"log {self.path}: no record {record_id}")
        d = dict(zip(cols, row))
        d["warnings"] = json.loads(d.pop("warnings_json") or "[]")
        try:
            d["result"] = json.loads(d.pop("result_json"))
        except (TypeError, ValueError):
            d["result"] = None
        rcols = ("quantity", "value", "u", "unit", "min", "max", "result", "source", "n_points")
        d["readings"] = [dict(zip(rcols, r)) for r in self._con.execute(
            f"SELECT {', '.join(rcols)} FROM readings WHERE record_id = ? ORDER BY id",
            (record_id,)).fetchall()]
        sc = self._con.execute("SELECT nominal_mm, measured_mm, u_mm, scale_error, u_scale, "
                               "drift FROM standard_checks WHERE record_id = ?",
                               (record_id,)).fetchone()
        if sc is not None:
            d["standard_check"] = dict(zip(("nominal_mm", "measured_mm", "u_mm", "scale_error",
                                            "u_scale", "drift"), sc))
            d["standard_check"]["drift"] = bool(sc[5])
        return d

    def standard_checks(self, *, calibration_sha256: str | None = None) -> list[dict[str, Any]]:
        """History of check-standard readings, oldest first (optionally for one
        calibration file, by its hash)."""
        sql = ("SELECT r.id, r.time, r.job, r.calibration_path, r.calibration_sha256, "
               "s.nominal_mm, s.measured_mm, s.u_mm, s.scale_error, s.u_scale, s.drift "
               "FROM standard_checks s JOIN records r ON r.id = s.record_id")
        args: list[Any] = []
        if calibration_sha256 is not None:
            sql += " WHERE r.calibration_sha256 = ?"
            args.append(calibration_sha256)
        keys = ("id", "time", "job", "calibration_path", "calibration_sha256", "nominal_mm",
                "measured_mm", "u_mm", "scale_error", "u_scale", "drift")
        out = []
        for r in self._con.execute(sql + " ORDER BY r.id", args).fetchall():
            d = dict(zip(keys, r))
            d["drift"] = bool(d["drift"])
            out.append(d)
        return out

    def export_csv(self, path: str | os.PathLike[str]) -> int:
        """Write every reading of every record as a readings CSV
        (:data:`profilecheck.report.csv.COLUMNS`), atomically; return the row count."""
        from .report.annotate import write_bytes_atomic
        from .report.csv import format_readings_csv

        sql = ("SELECT r.job, r.time, r.kind, r.image_path, r.spec, g.quantity, g.value, g.u, "
               "g.unit, g.min, g.max, g.result, g.source, g.n_points FROM readings g "
               "JOIN records r ON r.id = g.record_id ORDER BY r.id, g.id")
        keys = ("job", "time", "kind", "image", "spec", "quantity", "value", "u", "unit", "min",
                "max", "result", "source", "n_points")
        rows = [dict(zip(keys, r)) for r in self._con.execute(sql).fetchall()]
        write_bytes_atomic(path, format_readings_csv(rows).encode("utf-8"))
        return len(rows)

    # -- lifetime ----------------------------------------------------------------------------
    def close(self) -> None:
        """Close the connection (the WAL is checkpointed by SQLite on the last close)."""
        con = getattr(self, "_con", None)
        if con is not None:
            con.close()
            self._con = None  # type: ignore[assignment]

    def __enter__(self) -> "InspectionLog":
        return self

    def __exit__(self, *exc: Any) -> None:
        self.close()

    def __repr__(self) -> str:
        return f"InspectionLog({str(self.path)!r})"
