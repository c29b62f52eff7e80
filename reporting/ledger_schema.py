"""The ledger's tables on both back ends, as ordered migrations with a schema version.

SQLite keeps the version in ``PRAGMA user_version``; PostgreSQL in the table
``orbitledger.schema_version`` (one row per migration applied). A ledger is brought up to
``SCHEMA_VERSION`` by running, in order, every migration above its version, each in the same
transaction as the version bump. A ledger of a newer version than this orbitledger knows is
refused with both versions named (``refuse_newer``); nothing in it is touched.

Version 1 is the layout of the first orbitledger ledgers (a revision row updated from
``pending`` to ``committed``, its status updated by each sign-off). Version 2 makes every row
write-once: a revision row is inserted once, whole, at commit; the status is derived from the
sign-offs; triggers refuse any UPDATE or DELETE (PostgreSQL: also TRUNCATE, and an artifact
added to an existing revision unless a sign-off of the same transaction adds it). Version 3
stores PostgreSQL artifacts compressed with LZ4 instead of the server's default pglz (about 4 x
faster to write a record's artifacts, and smaller; servers built without LZ4 keep pglz); SQLite
keeps artifacts as files, so nothing changes there but the version number.
"""

from __future__ import annotations

from orbitledger.kernel.errors import InputError

__all__ = ["PG_MIGRATIONS", "SCHEMA_VERSION", "SQLITE_MIGRATIONS", "refuse_newer"]

SCHEMA_VERSION = 3

# --- SQLite ----------------------------------------------------------------------------------

_SQLITE_V1 = """
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

_SQLITE_WRITE_ONCE = "".join(
    f"""
CREATE TRIGGER {table}_no_{verb.lower()} BEFORE {verb} ON {table}
BEGIN SELECT RAISE(ABORT, 'orbitledger: ledger rows are write-once ({table})'); END;
"""
    for table in ("revisions", "artifacts", "signoffs")
    for verb in ("UPDATE", "DELETE")
)

# Pending rows of version 1 are builds that never committed: dropped here (their folders are
# moved aside by the back end before this runs).
_SQLITE_V2 = (
    """
DELETE FROM artifacts WHERE (record_id, revision) IN
    (SELECT record_id, revision FROM revisions WHERE state <> 'committed');
DELETE FROM revisions WHERE state <> 'committed';
CREATE TABLE revisions_v2 (
    record_id   TEXT NOT NULL,
    revision    INTEGER NOT NULL CHECK (revision >= 1),
    title       TEXT NOT NULL DEFAULT '',
    author      TEXT NOT NULL DEFAULT '',
    note        TEXT NOT NULL DEFAULT '',
    built_utc   TEXT NOT NULL DEFAULT '',
    record_json TEXT NOT NULL,
    changes     TEXT NOT NULL DEFAULT '[]',
    committed_utc TEXT NOT NULL DEFAULT '',
    PRIMARY KEY (record_id, revision)
);
INSERT INTO revisions_v2 (record_id, revision, title, author, note, built_utc, record_json,
                          committed_utc)
    SELECT record_id, revision, title, author, note, built_utc, COALESCE(record_json, '{}'),
           built_utc FROM revisions;
CREATE TABLE signoffs_v2 (
    record_id   TEXT NOT NULL,
    revision    INTEGER NOT NULL,
    role        TEXT NOT NULL CHECK (role IN ('checked', 'approved')),
    name        TEXT NOT NULL,
    time_utc    TEXT NOT NULL,
    artifact_sha256 TEXT NOT NULL,
    details     TEXT NOT NULL DEFAULT '{}',
    PRIMARY KEY (record_id, revision, role),
    FOREIGN KEY (record_id, revision) REFERENCES revisions (record_id, revision)
);
INSERT INTO signoffs_v2 (record_id, revision, role, name, time_utc, artifact_sha256)
    SELECT record_id, revision, role, name, time_utc, artifact_sha256 FROM signoffs;
DROP TABLE signoffs;
DROP TABLE revisions;
ALTER TABLE revisions_v2 RENAME TO revisions;
ALTER TABLE signoffs_v2 RENAME TO signoffs;
"""
    + _SQLITE_WRITE_ONCE
)

# (version reached, SQL). Run in order; each inside the transaction that sets the version.
SQLITE_MIGRATIONS: tuple[tuple[int, str], ...] = (
    (1, _SQLITE_V1),
    (2, _SQLITE_V2),
    (3, ""),  # artifacts are files in a folder ledger: only the version moves
)

# --- PostgreSQL ------------------------------------------------------------------------------

_PG_V1 = """
CREATE TABLE orbitledger.revisions (
    record_id     text NOT NULL,
    revision      integer NOT NULL CHECK (revision >= 1),
    title         text NOT NULL DEFAULT '',
    author        text NOT NULL DEFAULT '',
    note          text NOT NULL DEFAULT '',
    built_utc     text NOT NULL DEFAULT '',
    record_json   text NOT NULL,
    changes       text NOT NULL DEFAULT '[]',
    committed_utc text NOT NULL DEFAULT '',
    created_by    text NOT NULL DEFAULT current_user,
    created_xact  bigint NOT NULL DEFAULT txid_current(),
    PRIMARY KEY (record_id, revision)
);
CREATE TABLE orbitledger.signoffs (
    record_id       text NOT NULL,
    revision        integer NOT NULL,
    role            text NOT NULL CHECK (role IN ('checked', 'approved')),
    name            text NOT NULL,
    time_utc        text NOT NULL,
    artifact_sha256 text NOT NULL,
    details         text NOT NULL DEFAULT '{}',
    created_by      text NOT NULL DEFAULT current_user,
    created_xact    bigint NOT NULL DEFAULT txid_current(),
    PRIMARY KEY (record_id, revision, role),
    FOREIGN KEY (record_id, revision) REFERENCES orbitledger.revisions (record_id, revision)
);
CREATE TABLE orbitledger.artifacts (
    record_id   text NOT NULL,
    revision    integer NOT NULL,
    name        text NOT NULL,
    sha256      text NOT NULL CHECK (sha256 ~ '^[0-9a-f]{64}$'),
    size        bigint NOT NULL,
    created_utc text NOT NULL,
    data        bytea NOT NULL,
    PRIMARY KEY (record_id, revision, name),
    FOREIGN KEY (record_id, revision) REFERENCES orbitledger.revisions (record_id, revision),
    CHECK (octet_length(data) = size)
);

CREATE FUNCTION orbitledger.refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION 'orbitledger: ledger rows are write-once (%)', TG_TABLE_NAME
        USING ERRCODE = 'OL001';
END $$;

-- An artifact joins a revision only in the transaction that inserts the revision, or as the
-- signed copy of a sign-off inserted in the same transaction (its name: record-ROLE.*).
CREATE FUNCTION orbitledger.artifact_joins_revision() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF EXISTS (SELECT 1 FROM orbitledger.revisions r WHERE r.record_id = NEW.record_id
               AND r.revision = NEW.revision AND r.created_xact = txid_current()) THEN
        RETURN NEW;
    END IF;
    IF EXISTS (SELECT 1 FROM orbitledger.signoffs s WHERE s.record_id = NEW.record_id
               AND s.revision = NEW.revision AND s.created_xact = txid_current()
               AND NEW.name LIKE 'record-' || s.role || '.%') THEN
        RETURN NEW;
    END IF;
    RAISE EXCEPTION 'orbitledger: artifact % may join revision % of % only with it or with its sign-off',
        NEW.name, NEW.revision, NEW.record_id USING ERRCODE = 'OL001';
END $$;
CREATE TRIGGER artifacts_join BEFORE INSERT ON orbitledger.artifacts
    FOR EACH ROW EXECUTE FUNCTION orbitledger.artifact_joins_revision();

-- Sign-off order in the database too: approved only after checked.
CREATE FUNCTION orbitledger.signoff_in_order() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF NEW.role = 'approved' AND NOT EXISTS (SELECT 1 FROM orbitledger.signoffs s
        WHERE s.record_id = NEW.record_id AND s.revision = NEW.revision AND s.role = 'checked')
    THEN
        RAISE EXCEPTION 'orbitledger: approved needs checked first' USING ERRCODE = 'OL002';
    END IF;
    RETURN NEW;
END $$;
CREATE TRIGGER signoffs_order BEFORE INSERT ON orbitledger.signoffs
    FOR EACH ROW EXECUTE FUNCTION orbitledger.signoff_in_order();

-- Who signs for which role: members of orbitledger_checker sign 'checked', members of
-- orbitledger_approver sign 'approved' (the owner of the tables is not bound by this).
CREATE FUNCTION orbitledger.has_duty(duty text) RETURNS boolean LANGUAGE sql STABLE AS $$
    SELECT EXISTS (SELECT 1 FROM pg_roles r WHERE r.rolname = duty
                   AND pg_has_role(current_user, r.oid, 'MEMBER'))
$$;
ALTER TABLE orbitledger.signoffs ENABLE ROW LEVEL SECURITY;
CREATE POLICY signoffs_read ON orbitledger.signoffs FOR SELECT USING (true);
CREATE POLICY signoffs_by_duty ON orbitledger.signoffs FOR INSERT WITH CHECK (
    (role = 'checked' AND orbitledger.has_duty('orbitledger_checker'))
    OR (role = 'approved' AND orbitledger.has_duty('orbitledger_approver')));
"""

_PG_WRITE_ONCE = "".join(
    f"""
CREATE TRIGGER {table}_write_once BEFORE UPDATE OR DELETE ON orbitledger.{table}
    FOR EACH ROW EXECUTE FUNCTION orbitledger.refuse_change();
CREATE TRIGGER {table}_no_truncate BEFORE TRUNCATE ON orbitledger.{table}
    FOR EACH STATEMENT EXECUTE FUNCTION orbitledger.refuse_change();
"""
    for table in ("revisions", "artifacts", "signoffs")
)

# PostgreSQL ledgers start at version 2 (the write-once layout); version 1 has no PostgreSQL
# form, so a new PostgreSQL ledger runs the one migration that creates version 2.
# Version 3: LZ4 for the artifacts' bytes (PostgreSQL 14+ built with LZ4, as Debian's is);
# rows already written keep their compression; a server without LZ4 keeps pglz.
_PG_V3 = """
DO $$
BEGIN
    EXECUTE 'ALTER TABLE orbitledger.artifacts ALTER COLUMN data SET COMPRESSION lz4';
EXCEPTION WHEN OTHERS THEN
    RAISE NOTICE 'orbitledger: artifacts keep the default compression (%)', SQLERRM;
END $$;
"""

PG_MIGRATIONS: tuple[tuple[int, str], ...] = ((2, _PG_V1 + _PG_WRITE_ONCE), (3, _PG_V3))


def refuse_newer(address: str, found: int) -> None:
    """InputError when a ledger's schema version is newer than this orbitledger knows."""
    if found > SCHEMA_VERSION:
        from orbitledger._version import __version__

        raise InputError(
            "--ledger",
            address,
            f"ledger schema version {found} is newer than version {SCHEMA_VERSION}, the newest "
            f"this orbitledger {__version__} knows; upgrade orbitledger to read it",
        )
