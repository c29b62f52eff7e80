"""The folder ledger: an SQLite index (WAL mode) beside a folder of write-once artifacts.

Layout of a ledger folder::

    LEDGER/index.sqlite                     revisions, artifacts (with SHA-256), sign-offs
    LEDGER/records/RECORD_ID/r0001/...      the artifacts of revision 1, never overwritten
    LEDGER/.abandoned/                      what builds that died left half-written

The ledger's lock is SQLite's write lock: a build holds one ``BEGIN IMMEDIATE`` transaction
from taking its revision number to its commit, so it reads the earlier revisions while no other
build can add one. Artifacts are written as files (temporary file, fsync, hard link into place:
a link refuses to replace an existing file), indexed with their SHA-256 at commit. A build that
was killed leaves at most a folder without an index row; the next build of that number moves
it to ``.abandoned`` (it holds the lock, so the folder cannot be anyone's work in progress).

A ledger on read-only media (or without write permission) is opened without writing anything:
no journal mode is set, the index is read as an immutable file (from a private copy if it has
an unmerged write-ahead log), and an older schema is migrated in memory only.
"""

from __future__ import annotations

import errno
import os
import shutil
import sqlite3
import tempfile
import time
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import replace
from pathlib import Path
from typing import Any

from orbitledger.kernel.errors import InputError

from .ledger_base import LedgerBase, RevisionWriter, status_of
from .ledger_parts import (
    Artifact,
    RevisionInfo,
    SignOff,
    atomic_write_once,
    sha256_hex,
    utc_now,
    validate_record_id,
)
from .ledger_schema import SCHEMA_VERSION, SQLITE_MIGRATIONS, refuse_newer
from .ledger_writers import SEGMENT, FolderWriter, insert_artifacts, insert_revision, insert_signoff
from .record import canonical_dumps

__all__ = ["Ledger"]

# How long a build or sign-off waits for another one's lock (a PDF build can hold it a while).
_LOCK_WAIT_S = 600.0
_DISK_FULL = {errno.ENOSPC, errno.EFBIG, errno.EDQUOT}


class Ledger(LedgerBase):
    """The archive of records in the folder ``root`` (created on first use unless ``create=False``)."""

    kind = "sqlite"

    def __init__(self, root: str | Path, *, create: bool = True) -> None:
        path = Path(root).absolute()
        if path.exists() and not path.is_dir():
            raise InputError("--ledger", str(root), "is a file, not a ledger folder")
        self.index_path = path / "index.sqlite"
        if not self.index_path.is_file() and not create:
            raise InputError(
                "--ledger", str(path), "no ledger there (build a record first, or pass --ledger)"
            )
        if not path.exists():
            path.mkdir(parents=True)
        self.root = path.resolve()
        self.index_path = self.root / "index.sqlite"
        self.address = str(self.root)
        self.readonly = not os.access(self.root, os.W_OK) or (
            self.index_path.exists() and not os.access(self.index_path, os.W_OK)
        )
        self._memory: sqlite3.Connection | None = None
        self._prepare()

    # --- the one connection helper -------------------------------------------------------

    def _open(self, *, write: bool) -> sqlite3.Connection:
        if write and self.readonly:
            raise self._read_only_error()
        if self.readonly:
            uri = f"{self.index_path.as_uri()}?immutable=1"
            return sqlite3.connect(uri, uri=True, isolation_level=None)
        db = sqlite3.connect(self.index_path, timeout=_LOCK_WAIT_S, isolation_level=None)
        db.execute(f"PRAGMA busy_timeout = {int(_LOCK_WAIT_S * 1000)}")
        db.execute("PRAGMA synchronous = FULL")
        db.execute("PRAGMA foreign_keys = ON")
        return db

    @contextmanager
    def _session(
        self, *, write: bool = False, foreign_keys: bool = True
    ) -> Iterator[sqlite3.Connection]:
        """A connection: for writing, one ``BEGIN IMMEDIATE`` transaction (the ledger's lock)."""
        if self._memory is not None and not write:
            yield self._memory
            return
        try:
            db = self._open(write=write)
        except sqlite3.Error as err:
            raise self.translate(err) from None
        try:
            if not foreign_keys:  # a migration rebuilding tables (SQLite's ALTER TABLE advice)
                db.execute("PRAGMA foreign_keys = OFF")
            if write:
                db.execute("BEGIN IMMEDIATE")
            try:
                yield db
            except BaseException:
                if db.in_transaction:
                    db.execute("ROLLBACK")
                raise
            if write:
                db.execute("COMMIT")
        except sqlite3.Error as err:
            raise self.translate(err) from None
        finally:
            db.close()

    def translate(self, err: BaseException) -> BaseException:
        """A user's one-line error for what the store said (disk full, read-only, busy...)."""
        text = str(err)
        if isinstance(err, OSError) and err.errno in _DISK_FULL:
            return InputError(
                "--ledger", self.address, f"disk full ({err.strerror}): nothing was recorded"
            )
        if isinstance(err, OSError) and err.errno in (errno.EROFS, errno.EACCES, errno.EPERM):
            return self._read_only_error()
        if "disk is full" in text or "disk I/O error" in text:
            return InputError("--ledger", self.address, f"disk full ({text}): nothing was recorded")
        if "readonly" in text or "read-only" in text:
            return self._read_only_error()
        if "locked" in text or "busy" in text:
            return InputError(
                "--ledger", self.address, f"busy for {_LOCK_WAIT_S:.0f} s ({text}); try again"
            )
        if "write-once" in text:
            return InputError("--ledger", self.address, text)
        if isinstance(err, sqlite3.DatabaseError) and not isinstance(err, sqlite3.IntegrityError):
            return InputError(
                "--ledger", str(self.index_path), f"not a readable ledger index: {text}"
            )
        return err

    def check_writable(self) -> None:
        if self.readonly or self._memory is not None:
            raise self._read_only_error()

    def _read_only_error(self) -> InputError:
        return InputError(
            "--ledger",
            self.address,
            "the ledger is read-only here: history, diff, index, export and verify --ledger "
            "read it; build and sign need write access",
        )

    def _query(self, sql: str, params: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
        with self._session() as db:
            return db.execute(sql, params).fetchall()

    # --- schema --------------------------------------------------------------------------

    def _prepare(self) -> None:
        if not self.index_path.exists():
            if self.readonly:
                raise InputError("--ledger", self.address, "no ledger there, and it is read-only")
            try:
                db = self._open(write=True)
                db.execute("PRAGMA journal_mode = WAL")  # set once, when the index is created
                db.close()
            except sqlite3.Error as err:
                raise self.translate(err) from None
        (found,) = self._query("PRAGMA user_version")[0]
        refuse_newer(self.address, found)
        if found == SCHEMA_VERSION:
            return
        if self.readonly:
            try:
                self._memory = self._migrated_in_memory()
            except sqlite3.Error as err:
                raise self.translate(err) from None
            return
        with self._session(write=True, foreign_keys=False) as db:
            (found,) = db.execute("PRAGMA user_version").fetchone()  # again, under the lock
            self._migrate(db, found)
            broken = db.execute("PRAGMA foreign_key_check").fetchall()
            if broken:
                raise InputError(
                    "--ledger", self.address, f"migration left broken rows: {broken[:3]}"
                )

    def _migrate(self, db: sqlite3.Connection, found: int, *, move_aside: bool = True) -> None:
        for version, script in SQLITE_MIGRATIONS:
            if version <= found:
                continue
            if version == 2 and move_aside:
                pending = db.execute(
                    "SELECT record_id, revision FROM revisions WHERE state <> 'committed'"
                ).fetchall()
                for record_id, revision in pending:
                    self._move_aside(record_id, revision)
            for statement in _statements(script):
                db.execute(statement)
            db.execute(f"PRAGMA user_version = {version}")

    def _migrated_in_memory(self) -> sqlite3.Connection:
        """A read-only ledger of an older schema: its index copied into memory and migrated."""
        memory = sqlite3.connect(":memory:", isolation_level=None)
        with tempfile.TemporaryDirectory(prefix="orbitledger-ro-") as tmp:
            source = self.index_path
            wal = Path(f"{source}-wal")
            if wal.exists() and wal.stat().st_size:  # unmerged log: let SQLite merge a copy
                shutil.copy(source, Path(tmp) / "index.sqlite")
                shutil.copy(wal, Path(tmp) / "index.sqlite-wal")
                disk = sqlite3.connect(Path(tmp) / "index.sqlite")
            else:
                disk = sqlite3.connect(f"{source.as_uri()}?immutable=1", uri=True)
            disk.backup(memory)
            disk.close()
        (found,) = memory.execute("PRAGMA user_version").fetchone()
        memory.execute("BEGIN")
        self._migrate(memory, found, move_aside=False)
        memory.execute("COMMIT")
        return memory

    # --- paths ---------------------------------------------------------------------------

    def path_inside(self, *parts: str) -> Path:
        """``root/parts...``; InputError if a part is unsafe or the result escapes the ledger."""
        for part in parts:
            for segment in str(part).split("/"):
                if not SEGMENT.match(segment) or segment in (".", ".."):
                    raise InputError("path", str(part), "not a safe name inside the ledger")
        path = self.root.joinpath(*parts)
        resolved = path.resolve()
        if resolved != self.root and self.root not in resolved.parents:
            raise InputError("path", str(path), "escapes the ledger folder")
        return resolved

    def _folder(self, record_id: str, revision: int) -> Path:
        return self.path_inside("records", validate_record_id(record_id), f"r{revision:04d}")

    def location(self, record_id: str, revision: int, name: str) -> Path:
        return self.path_inside("records", record_id, f"r{int(revision):04d}", name)

    def artifact_path(self, artifact: Artifact) -> Path:
        return self.path_inside(*artifact.relpath.split("/"))

    def read_artifact(self, artifact: Artifact) -> bytes:
        try:
            return self.artifact_path(artifact).read_bytes()
        except FileNotFoundError:
            raise InputError(artifact.relpath, None, "missing from the ledger folder") from None

    def _move_aside(self, record_id: str, revision: int, name: str | None = None) -> None:
        folder = self._folder(record_id, revision)
        target = folder / name if name else folder
        if target.exists():
            aside = self.root / ".abandoned"  # fixed internal name, inside the ledger
            aside.mkdir(exist_ok=True)
            label = f"{record_id}-r{revision:04d}" + (f"-{name}" if name else "")
            target.rename(aside / f"{label}-{time.time_ns()}")

    def _write_file(self, path: Path, data: bytes) -> None:
        try:
            atomic_write_once(path, data)
        except OSError as err:
            raise self.translate(err) from None

    # --- writing -------------------------------------------------------------------------

    def _begin(self, record_id: str) -> RevisionWriter:
        return FolderWriter(self, record_id)

    def _add_signoff_locked(
        self, record_id: str, revision: int, signoff: SignOff, files: dict[str, bytes]
    ) -> list[Artifact]:
        written: list[Path] = []
        try:
            with self._session(write=True) as db:
                roles = [r for (r,) in db.execute(
                    "SELECT role FROM signoffs WHERE record_id = ? AND revision = ?",
                    (record_id, revision),
                )]  # fmt: skip
                self.check_signoff_order(
                    RevisionInfo(record_id, revision, "", "", "", "", status_of(roles)),
                    signoff.role,
                )
                indexed = {n for (n,) in db.execute(
                    "SELECT name FROM artifacts WHERE record_id = ? AND revision = ?",
                    (record_id, revision),
                )}  # fmt: skip
                now, artifacts = utc_now(), []
                for name, data in files.items():
                    if name in indexed:
                        raise InputError(name, None, "exists already; artifacts are write-once")
                    self._move_aside(record_id, revision, name)  # a refused sign-off's leftover
                    path = self.location(record_id, revision, name)
                    self._write_file(path, data)
                    written.append(path)
                    artifacts.append(
                        Artifact(
                            record_id,
                            revision,
                            name,
                            path.relative_to(self.root).as_posix(),
                            sha256_hex(data),
                            len(data),
                            now,
                        )
                    )
                insert_signoff(db, record_id, revision, signoff)
                insert_artifacts(db, [(a, None) for a in artifacts])
        except BaseException:
            for path in written:  # never indexed: they must not block a later sign-off
                path.unlink(missing_ok=True)
            raise
        return artifacts

    def insert_copied(
        self,
        info: RevisionInfo,
        record_text: str,
        changes: list[str],
        committed_utc: str,
        artifacts: list[tuple[Artifact, bytes]],
        signoffs: list[SignOff],
    ) -> None:
        written: list[Path] = []
        try:
            with self._session(write=True) as db:
                have = db.execute(
                    "SELECT 1 FROM revisions WHERE record_id = ? AND revision = ?",
                    (info.record_id, info.revision),
                ).fetchone()
                if not have:
                    self._move_aside(info.record_id, info.revision)
                    insert_revision(db, info, record_text, canonical_dumps(changes), committed_utc)
                for s in signoffs:
                    insert_signoff(db, info.record_id, info.revision, s)
                rows = []
                for a, data in artifacts:
                    path = self.location(a.record_id, a.revision, a.name)
                    self._move_aside(a.record_id, a.revision, a.name)
                    self._write_file(path, data)
                    written.append(path)
                    rows.append(replace(a, relpath=path.relative_to(self.root).as_posix()))
                insert_artifacts(db, [(a, None) for a in rows])
        except BaseException:
            for path in written:
                path.unlink(missing_ok=True)
            raise

    # --- consistency ---------------------------------------------------------------------

    def check(self) -> list[str]:
        """Problems found: SQLite ``integrity_check``, and every artifact against its hash."""
        problems = []
        with self._session() as db:
            (integrity,) = db.execute("PRAGMA integrity_check").fetchone()
            rows = db.execute("SELECT relpath, sha256 FROM artifacts ORDER BY relpath").fetchall()
        if integrity != "ok":
            problems.append(f"index: {integrity}")
        for relpath, digest in rows:
            path = self.root / relpath
            if not path.is_file():
                problems.append(f"{relpath}: missing")
            elif sha256_hex(path.read_bytes()) != digest:
                problems.append(f"{relpath}: SHA-256 differs from the index")
        return problems


def _statements(script: str) -> list[str]:
    """The statements of a migration script (triggers keep their inner ``;``)."""
    out, current = [], ""
    for line in script.splitlines(keepends=True):
        current += line
        if sqlite3.complete_statement(current):
            if current.strip():
                out.append(current.strip())
            current = ""
    return out
