"""The ledger: an SQLite index (WAL mode) beside a folder of write-once artifacts.

Layout of a ledger folder::

    LEDGER/index.sqlite                     revisions, artifacts (with SHA-256), sign-offs
    LEDGER/records/RECORD_ID/r0001/...      the artifacts of revision 1, never overwritten

A build first *reserves* the next revision of its record id (one ``BEGIN IMMEDIATE``
transaction, so two builds can never take the same number), writes its artifacts (temporary
file, fsync, hard link into place: a link refuses to replace an existing file), then *commits*
the revision with the artifacts' hashes in a second transaction. Until the commit the revision
is ``pending`` and invisible to ``history``; a reservation whose process died (an interrupted
build) is reclaimed by the next build, its partial folder moved aside to ``LEDGER/.abandoned``.
Every path the ledger touches is checked to stay inside its folder.
"""

from __future__ import annotations

import json
import os
import re
import socket
import sqlite3
import time
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from orbitledger.kernel.errors import InputError

from .ledger_parts import (
    INDEX_SCHEMA,
    Artifact,
    Reservation,
    RevisionInfo,
    SignOff,
    atomic_write_once,
    pending_is_stale,
    sha256_hex,
    utc_now,
    validate_record_id,
)

__all__ = [
    "Artifact",
    "Ledger",
    "Reservation",
    "RevisionInfo",
    "SignOff",
    "atomic_write_once",
    "sha256_hex",
    "validate_record_id",
]

# One path segment inside the ledger: a safe file or folder name.
_SEGMENT = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._ +-]{0,120}$")


class Ledger:
    """The archive of records in the folder ``root`` (created on first use)."""

    def __init__(self, root: str | Path) -> None:
        self.root = Path(root).absolute()
        if self.root.exists() and not self.root.is_dir():
            raise InputError("--ledger", str(root), "is a file, not a ledger folder")
        self.root.mkdir(parents=True, exist_ok=True)
        self.root = self.root.resolve()
        self.index_path = self.root / "index.sqlite"
        with self._transaction() as db:
            for statement in INDEX_SCHEMA.split(";"):
                if statement.strip():
                    db.execute(statement)

    # --- plumbing ------------------------------------------------------------------------

    def _connect(self) -> sqlite3.Connection:
        db = sqlite3.connect(self.index_path, timeout=60.0, isolation_level=None)
        db.execute("PRAGMA busy_timeout = 60000")
        db.execute("PRAGMA journal_mode = WAL")
        db.execute("PRAGMA synchronous = FULL")
        db.execute("PRAGMA foreign_keys = ON")
        return db

    @contextmanager
    def _transaction(self) -> Iterator[sqlite3.Connection]:
        """One ``BEGIN IMMEDIATE`` transaction: the write lock is taken before anything is read."""
        db = self._connect()
        try:
            db.execute("BEGIN IMMEDIATE")
            try:
                yield db
            except BaseException:
                db.execute("ROLLBACK")
                raise
            db.execute("COMMIT")
        finally:
            db.close()

    def path_inside(self, *parts: str) -> Path:
        """``root/parts...``; InputError if a part is unsafe or the result escapes the ledger."""
        for part in parts:
            for segment in str(part).split("/"):
                if not _SEGMENT.match(segment) or segment in (".", ".."):
                    raise InputError("path", str(part), "not a safe name inside the ledger")
        path = self.root.joinpath(*parts)
        resolved = path.resolve()
        if resolved != self.root and self.root not in resolved.parents:
            raise InputError("path", str(path), "escapes the ledger folder")
        return resolved

    def _folder(self, record_id: str, revision: int) -> Path:
        return self.path_inside("records", validate_record_id(record_id), f"r{revision:04d}")

    # --- the build protocol --------------------------------------------------------------

    def reserve(
        self, record_id: str, *, title: str = "", author: str = "", note: str = ""
    ) -> Reservation:
        """Take the next revision of ``record_id`` (reclaiming any left by a dead build)."""
        validate_record_id(record_id)
        with self._transaction() as db:
            self._reclaim_stale(db, record_id)
            (last,) = db.execute(
                "SELECT COALESCE(MAX(revision), 0) FROM revisions WHERE record_id = ?", (record_id,)
            ).fetchone()
            revision = int(last) + 1
            db.execute(
                "INSERT INTO revisions (record_id, revision, state, title, author, note, host,"
                " pid, reserved_utc) VALUES (?, ?, 'pending', ?, ?, ?, ?, ?, ?)",
                (
                    record_id,
                    revision,
                    title,
                    author,
                    note,
                    socket.gethostname(),
                    os.getpid(),
                    utc_now(),
                ),
            )
        folder = self._folder(record_id, revision)
        return Reservation(record_id, revision, folder)

    def _reclaim_stale(self, db: sqlite3.Connection, record_id: str) -> None:
        rows = db.execute(
            "SELECT revision, host, pid, reserved_utc FROM revisions"
            " WHERE record_id = ? AND state = 'pending'",
            (record_id,),
        ).fetchall()
        for revision, host, pid, reserved in rows:
            if not pending_is_stale(host, pid, reserved):
                continue
            db.execute(
                "DELETE FROM artifacts WHERE record_id = ? AND revision = ?", (record_id, revision)
            )
            db.execute(
                "DELETE FROM revisions WHERE record_id = ? AND revision = ?", (record_id, revision)
            )
            self._move_aside(record_id, revision)

    def _move_aside(self, record_id: str, revision: int) -> None:
        folder = self._folder(record_id, revision)
        if folder.exists():
            aside = self.root / ".abandoned"  # fixed internal name, inside the ledger
            aside.mkdir(exist_ok=True)
            folder.rename(aside / f"{record_id}-r{revision:04d}-{time.time_ns()}")

    def write_artifact(self, reservation: Reservation, name: str, data: bytes) -> Path:
        """Write one artifact of a reserved revision (write-once, atomic)."""
        path = self.path_inside(
            "records", reservation.record_id, f"r{reservation.revision:04d}", name
        )
        atomic_write_once(path, data)
        return path

    def commit(self, reservation: Reservation, record: dict[str, Any]) -> list[Artifact]:
        """Index every artifact of the reservation with its SHA-256 and make it visible."""
        folder = reservation.folder
        artifacts = []
        now = utc_now()
        for path in sorted(
            p for p in folder.rglob("*") if p.is_file() and not p.name.startswith(".tmp-")
        ):
            data = path.read_bytes()
            rel = path.relative_to(self.root).as_posix()
            name = path.relative_to(folder).as_posix()
            artifacts.append(
                Artifact(
                    reservation.record_id,
                    reservation.revision,
                    name,
                    rel,
                    sha256_hex(data),
                    len(data),
                    now,
                )
            )
        with self._transaction() as db:
            (state,) = db.execute(
                "SELECT state FROM revisions WHERE record_id = ? AND revision = ?",
                (reservation.record_id, reservation.revision),
            ).fetchone() or (None,)
            if state != "pending":
                raise InputError(
                    "revision", reservation.revision, "the reservation was lost (taken as stale?)"
                )
            for a in artifacts:
                db.execute(
                    "INSERT INTO artifacts VALUES (?, ?, ?, ?, ?, ?, ?)",
                    (a.record_id, a.revision, a.name, a.relpath, a.sha256, a.size, a.created_utc),
                )
            db.execute(
                "UPDATE revisions SET state = 'committed', record_json = ?, built_utc = ?,"
                " title = ?, author = ?, note = ? WHERE record_id = ? AND revision = ?",
                (
                    json.dumps(record, sort_keys=True, ensure_ascii=False),
                    record.get("built_utc", now),
                    record.get("title", ""),
                    record.get("prepared", {}).get("name", ""),
                    record.get("note", ""),
                    reservation.record_id,
                    reservation.revision,
                ),
            )
        return artifacts

    def abandon(self, reservation: Reservation) -> None:
        """Give a reservation back after a failed render: no half revision stays behind."""
        with self._transaction() as db:
            db.execute(
                "DELETE FROM revisions WHERE record_id = ? AND revision = ? AND state = 'pending'",
                (reservation.record_id, reservation.revision),
            )
            self._move_aside(reservation.record_id, reservation.revision)

    # --- reading -------------------------------------------------------------------------

    def revisions(self, record_id: str) -> list[RevisionInfo]:
        validate_record_id(record_id)
        db = self._connect()
        try:
            rows = db.execute(
                "SELECT record_id, revision, title, author, note, built_utc, status FROM revisions"
                " WHERE record_id = ? AND state = 'committed' ORDER BY revision",
                (record_id,),
            ).fetchall()
        finally:
            db.close()
        return [RevisionInfo(*row) for row in rows]

    def record_ids(self) -> list[str]:
        db = self._connect()
        try:
            rows = db.execute(
                "SELECT DISTINCT record_id FROM revisions WHERE state = 'committed' ORDER BY 1"
            ).fetchall()
        finally:
            db.close()
        return [r[0] for r in rows]

    def record(self, record_id: str, revision: int) -> dict[str, Any]:
        """The record JSON of a committed revision; InputError if there is none."""
        validate_record_id(record_id)
        db = self._connect()
        try:
            row = db.execute(
                "SELECT record_json FROM revisions WHERE record_id = ? AND revision = ?"
                " AND state = 'committed'",
                (record_id, int(revision)),
            ).fetchone()
        finally:
            db.close()
        if row is None:
            known = [r.revision for r in self.revisions(record_id)]
            have = f"revisions in this ledger: {known}" if known else "no revisions in this ledger"
            raise InputError(
                "revision", f"{record_id} {revision}", f"not found ({have}; {self.root})"
            )
        return json.loads(row[0])

    def artifacts(self, record_id: str, revision: int) -> list[Artifact]:
        db = self._connect()
        try:
            rows = db.execute(
                "SELECT record_id, revision, name, relpath, sha256, size, created_utc FROM artifacts"
                " WHERE record_id = ? AND revision = ? ORDER BY name",
                (record_id, int(revision)),
            ).fetchall()
        finally:
            db.close()
        return [Artifact(*row) for row in rows]

    def artifact_path(self, artifact: Artifact) -> Path:
        return self.path_inside(*artifact.relpath.split("/"))

    def signoffs(self, record_id: str, revision: int) -> list[SignOff]:
        db = self._connect()
        try:
            rows = db.execute(
                "SELECT role, name, time_utc, artifact_sha256 FROM signoffs"
                " WHERE record_id = ? AND revision = ? ORDER BY time_utc",
                (record_id, int(revision)),
            ).fetchall()
        finally:
            db.close()
        return [SignOff(*row) for row in rows]

    # --- sign-off ------------------------------------------------------------------------

    def add_signoff(
        self, record_id: str, revision: int, signoff: SignOff, files: dict[str, bytes], status: str
    ) -> list[Artifact]:
        """Record ``signoff`` and add the signed copies ``files`` beside the original artifacts.

        The signed copies are written first (write-once), then indexed with the sign-off in one
        transaction that also re-checks the status, so two sign-offs cannot both win.
        """
        written = []
        for name, data in files.items():
            path = self.path_inside("records", record_id, f"r{revision:04d}", name)
            atomic_write_once(path, data)
            written.append((name, path, data))
        now = utc_now()
        artifacts = []
        with self._transaction() as db:
            (current,) = db.execute(
                "SELECT status FROM revisions WHERE record_id = ? AND revision = ? AND state = 'committed'",
                (record_id, revision),
            ).fetchone()
            expected = {"checked": "draft", "approved": "checked"}[signoff.role]
            if current != expected:
                raise InputError(
                    "--role", signoff.role, f"revision {revision} is {current}, needs {expected}"
                )
            db.execute(
                "INSERT INTO signoffs VALUES (?, ?, ?, ?, ?, ?)",
                (
                    record_id,
                    revision,
                    signoff.role,
                    signoff.name,
                    signoff.time_utc,
                    signoff.artifact_sha256,
                ),
            )
            db.execute(
                "UPDATE revisions SET status = ? WHERE record_id = ? AND revision = ?",
                (status, record_id, revision),
            )
            for name, path, data in written:
                a = Artifact(
                    record_id,
                    revision,
                    name,
                    path.relative_to(self.root).as_posix(),
                    sha256_hex(data),
                    len(data),
                    now,
                )
                db.execute(
                    "INSERT INTO artifacts VALUES (?, ?, ?, ?, ?, ?, ?)",
                    (a.record_id, a.revision, a.name, a.relpath, a.sha256, a.size, a.created_utc),
                )
                artifacts.append(a)
        return artifacts

    # --- consistency ---------------------------------------------------------------------

    def check(self) -> list[str]:
        """Problems found: SQLite ``integrity_check``, and every artifact against its hash."""
        problems = []
        db = self._connect()
        try:
            (integrity,) = db.execute("PRAGMA integrity_check").fetchone()
            if integrity != "ok":
                problems.append(f"index: {integrity}")
            rows = db.execute(
                "SELECT a.relpath, a.sha256 FROM artifacts a JOIN revisions r"
                " USING (record_id, revision) WHERE r.state = 'committed'"
            ).fetchall()
        finally:
            db.close()
        for relpath, digest in rows:
            path = self.root / relpath
            if not path.is_file():
                problems.append(f"{relpath}: missing")
            elif sha256_hex(path.read_bytes()) != digest:
                problems.append(f"{relpath}: SHA-256 differs from the index")
        return problems
