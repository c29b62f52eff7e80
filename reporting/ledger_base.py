"""The ledger's interface: what every back end does, and the rules they share.

A back end (``ledger_sqlite.Ledger`` for a folder, ``ledger_pg.PgLedger`` for PostgreSQL)
provides a few primitives: open a revision writer under the ledger's lock, read rows, read an
artifact's bytes, add a sign-off under the lock. Everything a verb needs on top of them (the
build protocol, sign-off rules, history rows, the latest state of a revision) is written once,
here, so that every verb behaves the same on both.

The build protocol: ``new_revision(record_id)`` takes the ledger's lock for that record id and
the next revision number; the build reads the earlier revisions (their history, the hash of the
previous record JSON) *under that lock*, writes its artifacts and commits, all in one
transaction. A build that fails or is killed leaves no revision behind; two builds of one
record id take their turns, so each record's history lists every revision before it.
"""

from __future__ import annotations

import json
from abc import ABC, abstractmethod
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import asdict
from typing import Any

from orbitledger.kernel.errors import InputError

from .ledger_parts import (
    Artifact,
    Reservation,
    RevisionInfo,
    SignOff,
    sha256_hex,
    signoff_from_row,
    validate_record_id,
)

__all__ = ["ROLE_NEEDS", "LedgerBase", "RevisionWriter", "changes_of", "status_of"]

# A sign-off role and the status the revision must have before it.
ROLE_NEEDS = {"checked": "draft", "approved": "checked"}


def status_of(roles: set[str] | list[str]) -> str:
    """The status a revision's sign-offs give it: approved, checked or draft."""
    roles = set(roles)
    return "approved" if "approved" in roles else "checked" if "checked" in roles else "draft"


class RevisionWriter(ABC):
    """One revision being written: holds the ledger's lock from creation to commit/abandon."""

    record_id: str
    revision: int
    previous_record_sha256: str | None  # SHA-256 of the previous revision's record JSON

    @abstractmethod
    def write(self, name: str, data: bytes) -> str:
        """Add one artifact (write-once); returns where it will be kept."""

    @abstractmethod
    def commit(self, record: dict[str, Any]) -> list[Artifact]:
        """Index the revision with its artifacts' SHA-256 and release the lock."""

    @abstractmethod
    def abandon(self) -> None:
        """Give the revision back (nothing of it stays visible) and release the lock."""

    @property
    def folder(self) -> Any:
        return None


_REVISIONS_SQL = (
    "SELECT r.record_id, r.revision, r.title, r.author, r.note, r.built_utc, CASE"
    " WHEN EXISTS (SELECT 1 FROM signoffs s WHERE s.record_id = r.record_id"
    " AND s.revision = r.revision AND s.role = 'approved') THEN 'approved'"
    " WHEN EXISTS (SELECT 1 FROM signoffs s WHERE s.record_id = r.record_id"
    " AND s.revision = r.revision AND s.role = 'checked') THEN 'checked'"
    " ELSE 'draft' END FROM revisions r"
)


def changes_of(record: dict[str, Any], revision: int) -> list[str]:
    for entry in record.get("history") or []:
        if entry.get("revision") == revision:
            return list(entry.get("changes") or [])
    return []


class LedgerBase(ABC):
    """What every ledger offers; see the module doc for the protocol."""

    kind = ""
    address = ""

    # --- primitives of a back end --------------------------------------------------------

    @abstractmethod
    def _begin(self, record_id: str) -> RevisionWriter: ...

    @abstractmethod
    def _query(self, sql: str, params: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
        """Rows of one read-only query (``?`` placeholders, the ledger's tables unqualified)."""

    @abstractmethod
    def read_artifact(self, artifact: Artifact) -> bytes: ...

    @abstractmethod
    def _add_signoff_locked(
        self,
        record_id: str,
        revision: int,
        signoff: SignOff,
        files: dict[str, bytes],
    ) -> list[Artifact]:
        """Under the lock: re-check the status, then write the copies and the row, or nothing."""

    @abstractmethod
    def location(self, record_id: str, revision: int, name: str) -> Any:
        """Where an artifact is kept: a path (folder) or an address (PostgreSQL)."""

    @abstractmethod
    def check(self) -> list[str]:
        """Problems found in the store itself (integrity, every artifact against its hash)."""

    @abstractmethod
    def insert_copied(
        self,
        info: RevisionInfo,
        record_text: str,
        changes: list[str],
        committed_utc: str,
        artifacts: list[tuple[Artifact, bytes]],
        signoffs: list[SignOff],
    ) -> None:
        """``ledger copy``: add one revision whole (or its missing sign-offs) in one transaction."""

    def check_writable(self) -> None:
        """InputError now if this ledger cannot take a revision or a sign-off (read-only).

        Writable by default; a back end that can be opened read-only overrides it."""
        return None

    # --- the build protocol --------------------------------------------------------------

    @contextmanager
    def new_revision(self, record_id: str) -> Iterator[RevisionWriter]:
        """The next revision of ``record_id``, written and committed under the ledger's lock."""
        writer = self._begin(validate_record_id(record_id))
        try:
            yield writer
        except BaseException:
            writer.abandon()
            raise

    def reserve(
        self, record_id: str, *, title: str = "", author: str = "", note: str = ""
    ) -> Reservation:
        """Take the next revision of ``record_id`` and the ledger's lock until commit/abandon.

        (The step-by-step form of ``new_revision``; ``title``, ``author`` and ``note`` are
        taken from the record at commit.)
        """
        writer = self._begin(validate_record_id(record_id))
        return Reservation(record_id, writer.revision, writer.folder, writer)

    def write_artifact(self, reservation: Reservation, name: str, data: bytes) -> Any:
        return reservation.writer.write(name, data)

    def commit(self, reservation: Reservation, record: dict[str, Any]) -> list[Artifact]:
        return reservation.writer.commit(record)

    def abandon(self, reservation: Reservation) -> None:
        reservation.writer.abandon()

    # --- reading -------------------------------------------------------------------------

    _RELPATH = "relpath"  # the SQL of an artifact's path inside the ledger

    def revisions(self, record_id: str) -> list[RevisionInfo]:
        """The committed revisions of ``record_id`` in order, each with its status."""
        validate_record_id(record_id)
        rows = self._query(
            _REVISIONS_SQL + " WHERE r.record_id = ? ORDER BY r.revision", (record_id,)
        )
        return [RevisionInfo(*row) for row in rows]

    def record_ids(self) -> list[str]:
        return [r[0] for r in self._query("SELECT DISTINCT record_id FROM revisions ORDER BY 1")]

    def _record_text(self, record_id: str, revision: int) -> str | None:
        rows = self._query(
            "SELECT record_json FROM revisions WHERE record_id = ? AND revision = ?",
            (record_id, revision),
        )
        return rows[0][0] if rows else None

    def artifacts(self, record_id: str, revision: int) -> list[Artifact]:
        rows = self._query(
            f"SELECT record_id, revision, name, {self._RELPATH}, sha256, size, created_utc"
            " FROM artifacts WHERE record_id = ? AND revision = ? ORDER BY name",
            (record_id, int(revision)),
        )
        return [Artifact(*row) for row in rows]

    def signoffs(self, record_id: str, revision: int) -> list[SignOff]:
        return self.record_signoffs(record_id, int(revision)).get(int(revision), [])

    def record_signoffs(
        self, record_id: str, revision: int | None = None
    ) -> dict[int, list[SignOff]]:
        """Sign-offs of a record id (or of one revision), by revision, in signing order."""
        sql = (
            "SELECT revision, role, name, time_utc, artifact_sha256, details FROM signoffs"
            " WHERE record_id = ?"
        )
        params: tuple[Any, ...] = (record_id,)
        if revision is not None:
            sql, params = sql + " AND revision = ?", (record_id, revision)
        out: dict[int, list[SignOff]] = {}
        order = {"checked": 0, "approved": 1}
        rows = sorted(self._query(sql, params), key=lambda r: (r[0], r[3], order.get(r[1], 9)))
        for rev, *cols in rows:
            out.setdefault(int(rev), []).append(signoff_from_row(*cols))
        return out

    def record_changes(self, record_id: str) -> dict[int, list[str]]:
        """What changed in each revision of a record id (its history entry), by revision."""
        rows = self._query(
            "SELECT revision, changes FROM revisions WHERE record_id = ?", (record_id,)
        )
        return {int(rev): json.loads(text or "[]") for rev, text in rows}

    def committed_utc(self, record_id: str, revision: int) -> str:
        rows = self._query(
            "SELECT committed_utc FROM revisions WHERE record_id = ? AND revision = ?",
            (record_id, int(revision)),
        )
        return rows[0][0] if rows else ""

    def previous_record_sha256(self, record_id: str, revision: int) -> str | None:
        """SHA-256 of the record JSON of revision ``revision - 1`` (its ``record.json``), if any."""
        if revision <= 1:
            return None
        for a in self.artifacts(record_id, revision - 1):
            if a.name == "record.json":
                return a.sha256
        text = self._record_text(record_id, revision - 1)
        return sha256_hex(text.encode("utf-8")) if text is not None else None

    def record(self, record_id: str, revision: int) -> dict[str, Any]:
        """The record JSON of a committed revision; InputError if there is none."""
        validate_record_id(record_id)
        text = self._record_text(record_id, int(revision))
        if text is None:
            known = [r.revision for r in self.revisions(record_id)]
            have = f"revisions in this ledger: {known}" if known else "no revisions in this ledger"
            raise InputError(
                "revision", f"{record_id} {revision}", f"not found ({have}; {self.address})"
            )
        return json.loads(text)

    def info(self, record_id: str, revision: int) -> RevisionInfo:
        """The row of one committed revision; InputError naming the known ones if absent."""
        for r in self.revisions(record_id):
            if r.revision == int(revision):
                return r
        self.record(record_id, revision)  # raises the "not found" error
        raise AssertionError("unreachable")

    def latest_state(self, record_id: str, revision: int) -> dict[str, Any]:
        """The artifacts a reader should open for a revision: the latest signed copies.

        ``record.html`` keeps saying draft after approval (it is write-once); the signed copy
        of the last sign-off (``record-approved.html``, ...) is the revision's current state.
        """
        names = {a.name: a for a in self.artifacts(record_id, revision)}
        return _latest(names, self.signoffs(record_id, revision))

    def record_artifacts(self, record_id: str) -> dict[int, dict[str, Artifact]]:
        """The ``record*`` artifacts of every revision of a record, by revision and name (one query)."""
        names: dict[int, dict[str, Artifact]] = {}
        for row in self._query(
            f"SELECT record_id, revision, name, {self._RELPATH}, sha256, size, created_utc"
            " FROM artifacts WHERE record_id = ? AND name LIKE 'record%'",
            (record_id,),
        ):
            a = Artifact(*row)
            names.setdefault(a.revision, {})[a.name] = a
        return names

    def history(self, record_id: str) -> list[dict[str, Any]]:
        """Every committed revision: status, sign-offs, changes, latest state (JSON-ready).

        Four queries whatever the number of revisions (revisions, sign-offs, changes, the
        record artifacts' names), so a long history lists as fast as a short one.
        """
        revisions = self.revisions(record_id)
        signoffs = self.record_signoffs(record_id)
        changes = self.record_changes(record_id)
        names = self.record_artifacts(record_id)
        rows = []
        for r in revisions:
            signed = signoffs.get(r.revision, [])
            rows.append(
                {
                    "record_id": r.record_id,
                    "revision": r.revision,
                    "title": r.title,
                    "author": r.author,
                    "note": r.note,
                    "built_utc": r.built_utc,
                    "status": r.status,
                    "signoffs": [asdict(s) for s in signed],
                    "changes": changes.get(r.revision, []),
                    "latest": _latest(names.get(r.revision, {}), signed),
                }
            )
        return rows

    # --- sign-off ------------------------------------------------------------------------

    def add_signoff(
        self, record_id: str, revision: int, signoff: SignOff, files: dict[str, bytes], status: str
    ) -> list[Artifact]:
        """Record ``signoff`` and add the signed copies ``files`` beside the original artifacts.

        Everything is checked before anything is written: the revision is committed, the role
        is known, the status allows it, each copy's name is ``record-ROLE.*``. Then, under the
        ledger's lock, the status is checked again and the copies and the row are written
        together, or nothing is (a refused sign-off leaves no file to block a later one).
        """
        validate_record_id(record_id)
        if signoff.role not in ROLE_NEEDS:
            raise InputError("--role", signoff.role, "choose checked or approved")
        if status not in (signoff.role, status_of([signoff.role])):
            raise InputError(
                "status", status, f"a {signoff.role} sign-off sets it to {signoff.role}"
            )
        try:
            revision = int(revision)
        except (TypeError, ValueError):
            raise InputError("revision", revision, "not a revision number") from None
        info = self.info(record_id, revision)  # InputError naming the known revisions
        self.check_signoff_order(info, signoff.role)
        for name in files:
            if not name.startswith(f"record-{signoff.role}."):
                raise InputError(
                    "signed copy", name, f"a {signoff.role} sign-off adds record-{signoff.role}.*"
                )
        return self._add_signoff_locked(record_id, revision, signoff, dict(files))

    @staticmethod
    def check_signoff_order(info: RevisionInfo, role: str) -> None:
        needs = ROLE_NEEDS[role]
        if info.status != needs:
            raise InputError(
                "--role", role, f"revision {info.revision} is {info.status}, needs {needs}"
            )


def _latest(names: dict[str, Artifact], signed: list[SignOff]) -> dict[str, Any]:
    out: dict[str, Any] = {"status": status_of([s.role for s in signed])}
    for kind in ("html", "pdf", "json"):
        chosen = names.get(f"record.{kind}")
        for s in signed:  # in signing order: the last one wins
            chosen = names.get(f"record-{s.role}.{kind}", chosen)
        if chosen is not None:
            out[kind] = chosen.relpath
            out[f"{kind}_sha256"] = chosen.sha256
    return out
