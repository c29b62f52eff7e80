"""Parts of the ledger shared by its back ends: write-once files, safe names, rows.

``atomic_write_once`` writes a file the way every artifact of a folder ledger is written
(temporary file, fsync, hard link into place, read-only); ``validate_record_id`` keeps record
ids to safe names; the frozen dataclasses are the rows a ledger returns; ``signoff_details`` /
``signoff_from_row`` keep the fields of a ``SignOff`` beyond the four columns every ledger has
(role, name, time, artifact hash) in one JSON column, so a field added to ``SignOff`` (with a
default) is stored and read back without a schema change.
"""

from __future__ import annotations

import hashlib
import json
import re
from dataclasses import dataclass, field, fields
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

from orbitledger.case.canonical import canonical_json
from orbitledger.case.io import atomic_write_text
from orbitledger.kernel.errors import InputError

__all__ = [
    "Artifact",
    "Reservation",
    "RevisionInfo",
    "SignOff",
    "atomic_write_once",
    "sha256_hex",
    "signoff_details",
    "signoff_from_row",
    "utc_now",
    "parse_utc_stamp",
    "validate_record_id",
]

_RECORD_ID = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,79}$")


def utc_now() -> str:
    return datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


def parse_utc_stamp(text: Any, *, fractions: bool = False) -> datetime:
    """A time stamp as :func:`utc_now` writes it (``YYYY-MM-DDTHH:MM:SSZ``: UTC, no other zone
    offset, whole seconds) as an aware UTC datetime; ValueError for anything else.

    With ``fractions``, an instant as the kernel writes one (``utc_iso``) may also carry a
    decimal fraction of a second (``2031-05-02T06:07:08.125Z``; digits past the microsecond,
    which a datetime cannot hold, are dropped). The zone is ``Z`` either way.
    """
    text = str(text)
    whole, dot, rest = text.partition(".")
    if not (fractions and dot):
        return datetime.strptime(text, "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=timezone.utc)
    digits = rest[:-1]
    if not (rest.endswith("Z") and digits.isascii() and digits.isdigit()):
        raise ValueError(f"{text!r} is not a UTC instant YYYY-MM-DDTHH:MM:SS[.fff]Z")
    stamp = parse_utc_stamp(whole + "Z")
    return stamp.replace(microsecond=int(digits[:6].ljust(6, "0")))


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


def atomic_write_once(path: Path, data: bytes) -> None:
    """Write ``data`` to ``path`` atomically, refusing to replace an existing file.

    Temporary file in the same folder, fsync, then a hard link to the final name (which fails
    if the name exists: no check-then-write race), then the temporary name is removed.
    """
    path.parent.mkdir(parents=True, exist_ok=True)
    try:  # the one atomic writer (case/io); the artifact is read-only (0o444): write-once
        atomic_write_text(path, data, exclusive=True, mode=0o444)
    except FileExistsError:
        raise InputError(
            str(path), None, "artifact exists already; artifacts are write-once"
        ) from None


@dataclass(frozen=True)
class Reservation:
    """A revision number taken by a build that has not committed yet."""

    record_id: str
    revision: int
    folder: Path | None  # None for a ledger in PostgreSQL
    writer: Any = field(default=None, compare=False, repr=False)


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


_SIGNOFF_COLUMNS = ("role", "name", "time_utc", "artifact_sha256")


def signoff_details(signoff: SignOff) -> str:
    """The fields of ``signoff`` beyond the four columns, as canonical JSON (``{}`` if none)."""
    extra = {
        f.name: getattr(signoff, f.name) for f in fields(signoff) if f.name not in _SIGNOFF_COLUMNS
    }
    return canonical_json(extra)


def signoff_from_row(
    role: str, name: str, time_utc: str, artifact_sha256: str, details: str = "{}"
) -> SignOff:
    """A ``SignOff`` from its columns and details JSON; unknown detail keys are left out."""
    known = {f.name for f in fields(SignOff)}
    extra = {k: v for k, v in json.loads(details or "{}").items() if k in known}
    return SignOff(role, name, time_utc, artifact_sha256, **extra)


@dataclass(frozen=True)
class RevisionInfo:
    record_id: str
    revision: int
    title: str
    author: str
    note: str
    built_utc: str
    status: str
