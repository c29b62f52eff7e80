"""Parts of the ledger beside its index: write-once files, safe names, rows, liveness.

``atomic_write_once`` writes a file the way every artifact is written (temporary file, fsync,
hard link into place, read-only); ``validate_record_id`` keeps record ids to safe names; the
frozen dataclasses are the rows ``Ledger`` returns; ``pending_is_stale`` tells a reservation
whose build died from one still running.
"""

from __future__ import annotations

import hashlib
import os
import re
import socket
import time
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

from orbitledger.kernel.errors import InputError

__all__ = [
    "INDEX_SCHEMA",
    "Artifact",
    "Reservation",
    "RevisionInfo",
    "SignOff",
    "atomic_write_once",
    "pending_is_stale",
    "sha256_hex",
    "utc_now",
    "validate_record_id",
]

_RECORD_ID = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,79}$")

INDEX_SCHEMA = """
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


def pending_is_stale(host: str, pid: int, reserved_utc: str) -> bool:
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
