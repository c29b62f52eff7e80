"""The writers of a revision on both back ends, and the rows they insert.

A writer holds the ledger's lock from the moment it takes its revision number to its commit
(``ledger_base`` has the protocol): ``FolderWriter`` inside one SQLite ``BEGIN IMMEDIATE``
transaction, writing artifact files as it goes; ``PgWriter`` inside one PostgreSQL transaction
under an advisory lock for the record id, keeping the artifacts' bytes until the commit
inserts them. Any failure gives the revision back whole. The ``insert_*`` functions are the
one form of each row on both back ends (``?`` placeholders, ``%s`` for PostgreSQL).
"""

from __future__ import annotations

import re
import sqlite3
from pathlib import Path
from typing import Any

from orbitledger.kernel.errors import InputError

from .ledger_base import RevisionWriter, changes_of
from .ledger_parts import Artifact, RevisionInfo, SignOff, sha256_hex, signoff_details, utc_now
from .record import canonical_dumps

__all__ = [
    "SEGMENT",
    "FolderWriter",
    "PgWriter",
    "insert_artifacts",
    "insert_revision",
    "insert_signoff",
    "new_artifact",
    "revision_info",
]

# One path segment inside the ledger: a safe file or folder name.
SEGMENT = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._ +-]{0,120}$")


def _is_pg(cur: Any) -> bool:
    return not isinstance(cur, sqlite3.Connection | sqlite3.Cursor)


def _sql(cur: Any, text: str) -> str:
    return text.replace("?", "%s") if _is_pg(cur) else text


def revision_info(record: dict[str, Any], record_id: str, revision: int) -> RevisionInfo:
    """The row of a revision from its record (status: a new revision is a draft)."""
    return RevisionInfo(
        record_id,
        revision,
        str(record.get("title", "")),
        str((record.get("prepared") or {}).get("name", "")),
        str(record.get("note", "")),
        str(record.get("built_utc", utc_now())),
        "draft",
    )


def new_artifact(record_id: str, revision: int, name: str, data: bytes, now: str) -> Artifact:
    rel = f"records/{record_id}/r{revision:04d}/{name}"
    return Artifact(record_id, revision, name, rel, sha256_hex(data), len(data), now)


def insert_revision(
    cur: Any, info: RevisionInfo, record_text: str, changes: str, when: str
) -> None:
    cur.execute(
        _sql(cur, "INSERT INTO revisions (record_id, revision, title, author, note, built_utc,"
             " record_json, changes, committed_utc) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)"),
        (info.record_id, info.revision, info.title, info.author, info.note, info.built_utc,
         record_text, changes, when),
    )  # fmt: skip


def insert_signoff(cur: Any, record_id: str, revision: int, s: SignOff) -> None:
    cur.execute(
        _sql(cur, "INSERT INTO signoffs (record_id, revision, role, name, time_utc,"
             " artifact_sha256, details) VALUES (?, ?, ?, ?, ?, ?, ?)"),
        (record_id, revision, s.role, s.name, s.time_utc, s.artifact_sha256, signoff_details(s)),
    )  # fmt: skip


def insert_artifacts(cur: Any, artifacts: list[tuple[Artifact, bytes | None]]) -> None:
    """Artifact rows: SQLite keeps the path of the file, PostgreSQL the bytes themselves."""
    if _is_pg(cur):
        with cur.cursor() as c:
            c.executemany(
                "INSERT INTO artifacts (record_id, revision, name, sha256, size, created_utc, data)"
                " VALUES (%s, %s, %s, %s, %s, %s, %s)",
                [(a.record_id, a.revision, a.name, a.sha256, a.size, a.created_utc, data)
                 for a, data in artifacts],
            )  # fmt: skip
        return
    cur.executemany(
        "INSERT INTO artifacts (record_id, revision, name, relpath, sha256, size, created_utc)"
        " VALUES (?, ?, ?, ?, ?, ?, ?)",
        [(a.record_id, a.revision, a.name, a.relpath, a.sha256, a.size, a.created_utc)
         for a, _ in artifacts],
    )  # fmt: skip


class FolderWriter(RevisionWriter):
    """A revision being built into a folder ledger, under SQLite's write lock."""

    def __init__(self, ledger: Any, record_id: str) -> None:
        self.ledger, self.record_id = ledger, record_id
        self._written: list[Artifact] = []
        self._open = True
        try:
            self.db = ledger._open(write=True)
            self.db.execute("BEGIN IMMEDIATE")
            (last,) = self.db.execute(
                "SELECT COALESCE(MAX(revision), 0) FROM revisions WHERE record_id = ?", (record_id,)
            ).fetchone()
        except sqlite3.Error as err:
            self._close()
            raise ledger.translate(err) from None
        self.revision = int(last) + 1
        self.previous_record_sha256 = ledger.previous_record_sha256(record_id, self.revision)
        ledger._move_aside(record_id, self.revision)  # left by a build that was killed

    @property
    def folder(self) -> Path:
        return self.ledger._folder(self.record_id, self.revision)

    def write(self, name: str, data: bytes) -> Path:
        path = self.ledger.location(self.record_id, self.revision, name)
        self.ledger._write_file(path, data)
        rel = path.relative_to(self.ledger.root).as_posix()
        self._written.append(
            Artifact(
                self.record_id, self.revision, name, rel, sha256_hex(data), len(data), utc_now()
            )
        )
        return path

    def commit(self, record: dict[str, Any]) -> list[Artifact]:
        if not self._open:
            raise InputError("revision", self.revision, "this revision was given back already")
        now = utc_now()
        try:
            insert_revision(
                self.db,
                revision_info(record, self.record_id, self.revision),
                canonical_dumps(record),
                canonical_dumps(changes_of(record, self.revision)),
                now,
            )
            insert_artifacts(self.db, [(a, None) for a in self._written])
            self.db.execute("COMMIT")
        except sqlite3.Error as err:
            self.abandon()
            raise self.ledger.translate(err) from None
        except BaseException:
            self.abandon()
            raise
        self._close()
        return list(self._written)

    def abandon(self) -> None:
        if not self._open:
            return
        try:
            if self.db.in_transaction:
                self.db.execute("ROLLBACK")
        except sqlite3.Error:
            pass  # the connection closes next: SQLite rolls back what it did not commit
        self.ledger._move_aside(self.record_id, self.revision)
        self._close()

    def _close(self) -> None:
        self._open = False
        db = getattr(self, "db", None)
        if db is not None:
            db.close()

    def __del__(self) -> None:  # a reservation dropped without commit gives its number back
        if getattr(self, "_open", False):
            self.abandon()


class PgWriter(RevisionWriter):
    """A revision being built into PostgreSQL: one transaction under the record id's lock."""

    def __init__(self, ledger: Any, record_id: str) -> None:
        import psycopg

        self.ledger, self.record_id = ledger, record_id
        self._artifacts: list[tuple[Artifact, bytes]] = []
        self.conn = ledger.connect(autocommit=False)
        self._open = True
        try:
            allowed = self.conn.execute(
                "SELECT has_table_privilege('orbitledger.revisions', 'INSERT')"
                " AND has_table_privilege('orbitledger.artifacts', 'INSERT')"
            ).fetchone()[0]
            if not allowed:
                raise ledger.duty_error("build")
            ledger._locked(self.conn, record_id)
            (last,) = self.conn.execute(
                "SELECT COALESCE(MAX(revision), 0) FROM revisions WHERE record_id = %s",
                (record_id,),
            ).fetchone()
        except psycopg.Error as err:
            self._close()
            raise ledger.translate(err, duty="build") from None
        except BaseException:
            self._close()
            raise
        self.revision = int(last) + 1
        self.previous_record_sha256 = ledger.previous_record_sha256(record_id, self.revision)

    def write(self, name: str, data: bytes) -> str:
        segments = name.split("/")
        if not all(SEGMENT.match(s) and s not in (".", "..") for s in segments):
            raise InputError("path", name, "not a safe name inside the ledger")
        if any(a.name == name for a, _ in self._artifacts):
            raise InputError(name, None, "artifact exists already; artifacts are write-once")
        self._artifacts.append(
            (new_artifact(self.record_id, self.revision, name, data, utc_now()), data)
        )
        return self.ledger.location(self.record_id, self.revision, name)

    def commit(self, record: dict[str, Any]) -> list[Artifact]:
        import psycopg

        if not self._open:
            raise InputError("revision", self.revision, "this revision was given back already")
        info = revision_info(record, self.record_id, self.revision)
        try:
            insert_revision(
                self.conn,
                info,
                canonical_dumps(record),
                canonical_dumps(changes_of(record, self.revision)),
                utc_now(),
            )
            insert_artifacts(self.conn, self._artifacts)
            self.conn.commit()
        except psycopg.Error as err:
            self.abandon()
            raise self.ledger.translate(err, duty="build") from None
        except BaseException:
            self.abandon()
            raise
        self._close()
        return [a for a, _ in self._artifacts]

    def abandon(self) -> None:
        if self._open:
            try:
                self.conn.rollback()
            except Exception:  # the server rolls back a transaction whose connection closes
                pass
            self._close()

    def _close(self) -> None:
        self._open = False
        self.conn.close()

    def __del__(self) -> None:
        if getattr(self, "_open", False):
            self.abandon()
