"""The PostgreSQL ledger: revisions, sign-offs and every artifact's bytes in one database.

``PgLedger("postgresql://user@host/db")`` keeps the same rows as the folder ledger in the
schema ``orbitledger`` of that database, and each artifact (HTML, PDF, JSON, notebook, signed
copies) in ``artifacts.data`` beside its SHA-256 and size. The ledger's lock for a record id is
a transaction-level advisory lock: a build takes it with its revision number and holds it, in
one transaction, until its commit; a build that dies is rolled back by the server, whole.

Write-once is enforced by the database too (``ledger_schema``): triggers refuse UPDATE,
DELETE and TRUNCATE; an artifact joins a revision only in the transaction that creates it or
as the signed copy of a sign-off of the same transaction; row-level security lets members of
``orbitledger_checker`` sign ``checked`` and members of ``orbitledger_approver`` sign
``approved`` (docs/ledger.md has the SQL that sets up the three duties).

Connecting waits at most 10 s (``connect_timeout`` in the address overrides it). What the
server refuses becomes one line naming the address (its password hidden) and the reason.
"""

from __future__ import annotations

import os
import re
from typing import Any

from orbitledger.kernel.errors import InputError

from .ledger_base import LedgerBase, RevisionWriter, status_of
from .ledger_parts import (
    Artifact,
    RevisionInfo,
    SignOff,
    utc_now,
)
from .ledger_schema import PG_MIGRATIONS, SCHEMA_VERSION, refuse_newer
from .ledger_writers import (
    PgWriter,
    insert_artifacts,
    insert_revision,
    insert_signoff,
    new_artifact,
)
from .record import canonical_dumps

__all__ = ["CONNECT_TIMEOUT_S", "DUTIES", "PgLedger"]

CONNECT_TIMEOUT_S = 10
# The database roles of the three duties (docs/ledger.md sets them up).
DUTIES = {
    "build": ("builder", "orbitledger_builder"),
    "checked": ("checker", "orbitledger_checker"),
    "approved": ("approver", "orbitledger_approver"),
}
_MIGRATION_LOCK = 0x6F72_6269_746C  # any constant: serialises two first connections
_PREFIX = re.compile(r"^(connection (failed|is bad): )?(connection to server .*? failed: )?")


def _redacted(url: str) -> str:
    return re.sub(r"(://[^:/@]*):[^@/]*@", r"\1:***@", url)


class PgLedger(LedgerBase):
    """A ledger in the PostgreSQL database at ``url`` (see the module doc)."""

    kind = "postgresql"
    _RELPATH = "'records/' || record_id || '/r' || lpad(revision::text, 4, '0') || '/' || name"

    def __init__(self, url: str, *, create: bool = True) -> None:
        self.url = url
        self.address = _redacted(url)
        self._reader: tuple[int, Any] | None = None
        self._prepare(create)

    # --- the one connection helper -------------------------------------------------------

    def connect(self, *, autocommit: bool = True) -> Any:
        """A new connection to the ledger's database (search path: the ledger's schema)."""
        import psycopg

        try:
            given = psycopg.conninfo.conninfo_to_dict(self.url)
        except psycopg.ProgrammingError as err:
            raise InputError("--ledger", self.address, f"not a PostgreSQL address: {err}") from None
        timeout = int(given.get("connect_timeout") or CONNECT_TIMEOUT_S)
        try:
            return psycopg.connect(
                self.url,
                autocommit=autocommit,
                connect_timeout=timeout,
                application_name="orbitledger",
                options="-c search_path=orbitledger",
            )
        except psycopg.Error as err:
            raise self._connect_error(err, timeout) from None

    def _connect_error(self, err: Exception, timeout: int) -> InputError:
        text = _PREFIX.sub("", str(err).strip().splitlines()[0]).replace("FATAL:  ", "").strip()
        if "password authentication failed" in text or "no password supplied" in text:
            why = f"wrong credentials ({text})"
        elif re.search(r'role ".*" does not exist', text):
            why = f"wrong credentials: no such user on the server ({text})"
        elif "pg_hba.conf" in text:
            why = f"the server refuses this user from here ({text})"
        elif re.search(r'database ".*" does not exist', text):
            why = f"no such database on the server ({text})"
        elif "timeout" in text.lower():
            why = f"unreachable: no answer within {timeout} s"
        else:
            why = f"unreachable ({text})"
        return InputError("--ledger", self.address, why)

    def translate(self, err: Exception, duty: str = "") -> Exception:
        """One line for what the server refused: a missing duty, write-once, disk full..."""
        import psycopg

        if not isinstance(err, psycopg.Error):
            return err
        state = getattr(err, "sqlstate", None) or ""
        text = (str(err).strip().splitlines() or [""])[0]
        if state == "42501":  # insufficient_privilege (and row-level security)
            return self.duty_error(duty, text)
        if state in ("OL001", "OL002"):
            return InputError("--ledger", self.address, text.removeprefix("orbitledger: "))
        if state == "53100":
            return InputError("--ledger", self.address, f"the server's disk is full ({text})")
        if state == "25006":
            return InputError("--ledger", self.address, f"the server is read-only here ({text})")
        if state == "42P01":
            return InputError("--ledger", self.address, f"no ledger there ({text})")
        if isinstance(err, psycopg.OperationalError):
            return InputError("--ledger", self.address, f"lost the server ({text})")
        return err

    def duty_error(self, duty: str, text: str = "") -> InputError:
        """The connection's role may not do ``duty`` (build, checked, approved): named."""
        who = self._user()
        if duty in DUTIES:
            noun, role = DUTIES[duty]
            what = "adding revisions" if duty == "build" else f"signing as {duty}"
            why = f"role {who} lacks the privilege: {what} is the {noun}'s duty (role {role})"
        else:
            why = f"role {who} lacks the privilege ({text})"
        return InputError("--ledger", self.address, why)

    def _user(self) -> str:
        try:
            return str(self._reading().info.user)
        except Exception:  # the name only decorates a message
            return "?"

    def _reading(self) -> Any:
        """This process's connection for reading (autocommit), opened on first use."""
        if self._reader is None or self._reader[0] != os.getpid() or self._reader[1].closed:
            self._reader = (os.getpid(), self.connect())
        return self._reader[1]

    def _query(self, sql: str, params: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
        import psycopg

        try:
            # psycopg's placeholders are %s: a literal % (LIKE 'record%') is written %%
            sql = sql.replace("%", "%%").replace("?", "%s")
            return self._reading().execute(sql, params).fetchall()
        except psycopg.Error as err:
            raise self.translate(err) from None

    def close(self) -> None:
        if self._reader is not None and self._reader[0] == os.getpid():
            self._reader[1].close()
        self._reader = None

    # --- schema --------------------------------------------------------------------------

    def _version(self) -> int | None:
        (exists,) = self._query("SELECT to_regclass('orbitledger.schema_version') IS NOT NULL")[0]
        if not exists:
            return None
        return int(self._query("SELECT COALESCE(MAX(version), 0) FROM schema_version")[0][0])

    def _prepare(self, create: bool) -> None:
        import psycopg

        found = self._version()
        if found is not None:
            refuse_newer(self.address, found)
            if found == SCHEMA_VERSION:
                return
        elif not create:
            raise InputError("--ledger", self.address, "no ledger there (build a record first)")
        conn = self.connect(autocommit=False)
        try:
            with conn.transaction():
                conn.execute("SELECT pg_advisory_xact_lock(%s)", (_MIGRATION_LOCK,))
                conn.execute("CREATE SCHEMA IF NOT EXISTS orbitledger")
                conn.execute(
                    "CREATE TABLE IF NOT EXISTS orbitledger.schema_version"
                    " (version integer PRIMARY KEY, applied_utc text NOT NULL)"
                )
                (found,) = conn.execute(
                    "SELECT COALESCE(MAX(version), 0) FROM orbitledger.schema_version"
                ).fetchone()
                refuse_newer(self.address, found)
                for version, script in PG_MIGRATIONS:
                    if version > found:
                        conn.execute(script)
                        conn.execute(
                            "INSERT INTO orbitledger.schema_version VALUES (%s, %s)",
                            (version, utc_now()),
                        )
        except psycopg.Error as err:
            if getattr(err, "sqlstate", "") == "42501":
                raise InputError(
                    "--ledger",
                    self.address,
                    f"role {self._user()} may not create or migrate the ledger's tables (schema "
                    f"version {found or 0} -> {SCHEMA_VERSION}); the database owner runs "
                    "'orbitledger ledger init' first (docs/ledger.md)",
                ) from None
            raise self.translate(err) from None
        finally:
            conn.close()

    # --- artifacts -----------------------------------------------------------------------

    def location(self, record_id: str, revision: int, name: str) -> str:
        return f"{self.address}#records/{record_id}/r{int(revision):04d}/{name}"

    def read_artifact(self, artifact: Artifact) -> bytes:
        rows = self._query(
            "SELECT data FROM artifacts WHERE record_id = ? AND revision = ? AND name = ?",
            (artifact.record_id, artifact.revision, artifact.name),
        )
        if not rows:
            raise InputError(artifact.relpath, None, f"missing from {self.address}")
        return bytes(rows[0][0])

    # --- writing -------------------------------------------------------------------------

    def _begin(self, record_id: str) -> RevisionWriter:
        return PgWriter(self, record_id)

    def _locked(self, conn: Any, record_id: str) -> None:
        conn.execute(
            "SELECT pg_advisory_xact_lock(hashtextextended(%s, 0))", (f"orbitledger/{record_id}",)
        )

    def _add_signoff_locked(
        self, record_id: str, revision: int, signoff: SignOff, files: dict[str, bytes]
    ) -> list[Artifact]:
        import psycopg

        conn = self.connect(autocommit=False)
        now, artifacts = utc_now(), []
        try:
            with conn.transaction():
                self._locked(conn, record_id)
                roles = [r for (r,) in conn.execute(
                    "SELECT role FROM signoffs WHERE record_id = %s AND revision = %s",
                    (record_id, revision),
                )]  # fmt: skip
                self.check_signoff_order(
                    RevisionInfo(record_id, revision, "", "", "", "", status_of(roles)),
                    signoff.role,
                )
                insert_signoff(conn, record_id, revision, signoff)
                for name, data in files.items():
                    artifacts.append(new_artifact(record_id, revision, name, data, now))
                insert_artifacts(conn, [(a, files[a.name]) for a in artifacts])
        except psycopg.Error as err:
            raise self.translate(err, duty=signoff.role) from None
        finally:
            conn.close()
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
        import psycopg

        conn = self.connect(autocommit=False)
        try:
            with conn.transaction():
                self._locked(conn, info.record_id)
                have = conn.execute(
                    "SELECT 1 FROM revisions WHERE record_id = %s AND revision = %s",
                    (info.record_id, info.revision),
                ).fetchone()
                if not have:
                    insert_revision(
                        conn, info, record_text, canonical_dumps(changes), committed_utc
                    )
                for s in signoffs:
                    insert_signoff(conn, info.record_id, info.revision, s)
                insert_artifacts(conn, artifacts)
        except psycopg.Error as err:
            raise self.translate(err) from None
        finally:
            conn.close()

    # --- consistency ---------------------------------------------------------------------

    def check(self) -> list[str]:
        """Every artifact's bytes against its SHA-256 and size (hashed by the server)."""
        rows = self._query(
            f"SELECT {self._RELPATH}, encode(pg_catalog.sha256(data), 'hex') = sha256,"
            " octet_length(data) = size FROM artifacts ORDER BY 1"
        )
        return [
            f"{rel}: SHA-256 differs from the index"
            for rel, same, size in rows
            if not (same and size)
        ]
