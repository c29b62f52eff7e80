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

import hashlib
import json
import os
import re
import socket
import sqlite3
import time
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

from orbitledger.kernel.errors import InputError

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

_RECORD_ID = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,79}$")
_SEGMENT = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._ +-]{0,120}$")

_SCHEMA = """
CREATE TABLE IF NOT EXISTS revisions (
    record_id   TEXT NOT NULL,
    revision    INTEGER NOT NULL CHECK (revision >= 1),
    state       TEXT NOT NULL CHECK (state IN ('pending', 'committed')),
    title       TEXT NOT NULL DEFAULT '',
    author      TEXT NOT NULL DEFAULT '',
    note        TEXT NOT NULL DEFAULT '',
    built_utc   TEXT NOT NULL DEFAULT '',
    status      TEXT NOT NULL DEFAULT 'draft' CHECK (status IN ('draft', 'checked', 'approved')),
    record_json TEXT,
    host        TEXT NOT NULL DEFAULT '',
    pid         INTEGER NOT NULL DEFAULT 0,
    reserved_utc TEXT NOT NULL DEFAULT '',
    PRIMARY KEY (record_id, revision)
);
CREATE TABLE IF NOT EXISTS artifacts (
    record_id   TEXT NOT NULL,
    revision    INTEGER NOT NULL,
    name        TEXT NOT NULL,
    relpath     TEXT NOT NULL UNIQUE,
    sha256      TEXT NOT NULL,
    size        INTEGER NOT NULL,
    created_utc TEXT NOT NULL,
    PRIMARY KEY (record_id, revision, name),
    FOREIGN KEY (record_id, revision) REFERENCES revisions (record_id, revision)
);
CREATE TABLE IF NOT EXISTS signoffs (
    record_id   TEXT NOT NULL,
    revision    INTEGER NOT NULL,
    role        TEXT NOT NULL CHECK (role IN ('checked', 'approved')),
    name        TEXT NOT NULL,
    time_utc    TEXT NOT NULL,
    artifact_sha256 TEXT NOT NULL,
    PRIMARY KEY (record_id, revision, role),
    FOREIGN KEY (record_id, revision) REFERENCES revisions (record_id, revision)
);
"""

# A reservation from another host cannot be probed for liveness; after this long it is stale.
_FOREIGN_PENDING_STALE_S = 6 * 3600.0


def utc_now() -> str:
    return datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


def sha256_hex(data: bytes) -> str:
    """SHA-256 (FIPS 180-4) of ``data`` as 64 lowercase hex digits."""
    return hashlib.sha256(data).hexdigest()


def validate_record_id(record_id: str) -> str:
    """``record_id`` if it is a safe record id (letters, digits, ``.`` ``_`` ``-``), else InputError."""
    if not isinstance(record_id, str) or not _RECORD_ID.match(record_id) or ".." in record_id:
        raise InputError(
            "record_id",
            record_id,
            "a record id is 1-80 letters, digits, '.', '_' or '-', starting with a letter or digit",
        )
    return record_id


def _fsync_dir(path: Path) -> None:
    try:
        fd = os.open(path, os.O_RDONLY)
    except OSError:  # some platforms cannot open a directory
        return
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def atomic_write_once(path: Path, data: bytes) -> None:
    """Write ``data`` to ``path`` atomically, refusing to replace an existing file.

    Temporary file in the same folder, fsync, then a hard link to the final name (which fails
    if the name exists: no check-then-write race), then the temporary name is removed.
    """
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.parent / f".tmp-{path.name}-{os.getpid()}-{time.monotonic_ns()}"
    # Read-only from the start (the open descriptor can still write): write-once on disk too.
    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o444)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        try:
            os.link(tmp, path)
        except FileExistsError:
            raise InputError(
                str(path), None, "artifact exists already; artifacts are write-once"
            ) from None
        except OSError:  # a file system without hard links: exclusive create, then rename
            if path.exists():
                raise InputError(str(path), None, "artifact exists already") from None
            os.replace(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()
    _fsync_dir(path.parent)


@dataclass(frozen=True)
class Reservation:
    """A revision number taken by a build that has not committed yet."""

    record_id: str
    revision: int
    folder: Path


@dataclass(frozen=True)
class Artifact:
    record_id: str
    revision: int
    name: str
    relpath: str
    sha256: str
    size: int
    created_utc: str


@dataclass(frozen=True)
class SignOff:
    role: str
    name: str
    time_utc: str
    artifact_sha256: str


@dataclass(frozen=True)
class RevisionInfo:
    record_id: str
    revision: int
    title: str
    author: str
    note: str
    built_utc: str
    status: str


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
            for statement in _SCHEMA.split(";"):
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
            if not _pending_is_stale(host, pid, reserved):
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


def _pending_is_stale(host: str, pid: int, reserved_utc: str) -> bool:
    if host == socket.gethostname():
        if pid == os.getpid():
            return False
        try:
            os.kill(int(pid), 0)
        except ProcessLookupError:
            return True
        except PermissionError:
            return False
        return _is_zombie(int(pid))
    try:
        reserved = datetime.strptime(reserved_utc, "%Y-%m-%dT%H:%M:%SZ").replace(
            tzinfo=timezone.utc
        )
    except ValueError:
        return True
    return (datetime.now(timezone.utc) - reserved).total_seconds() > _FOREIGN_PENDING_STALE_S


def _is_zombie(pid: int) -> bool:
    """A killed child that its parent has not reaped yet still answers ``kill(pid, 0)``."""
    try:
        stat = Path(f"/proc/{pid}/stat").read_text()
    except OSError:
        return False
    return stat.rsplit(")", 1)[-1].split()[0] == "Z"
