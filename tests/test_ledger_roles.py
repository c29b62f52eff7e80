"""The three duties in PostgreSQL, set up with the SQL of docs/ledger.md, and what each may not do.

Outside reference: PostgreSQL's documentation on privileges (GRANT), row-level security
(CREATE POLICY ... WITH CHECK) and SQLSTATE 42501 insufficient_privilege, which the server
raises for a missing privilege and for a row that a policy refuses.
"""

from __future__ import annotations

import pytest
from _pg import admin_url, connect_admin, docs_sql, with_database
from orbitledger.reporting.ledger import SignOff, open_ledger

from orbitledger.kernel.errors import InputError

RID = "KES2-ORB-001"


@pytest.fixture
def duties(pg_url):
    """A ledger with the duties of docs/ledger.md; the address of the ledger as each person."""
    with connect_admin(admin_url()) as conn:
        if not conn.execute(
            "SELECT 1 FROM pg_roles WHERE rolname = 'orbitledger_builder'"
        ).fetchone():
            conn.execute(docs_sql("Run this once\nper cluster"))
    open_ledger(pg_url)  # `orbitledger ledger init` as the database's owner
    with connect_admin(pg_url) as conn:
        conn.execute(docs_sql("and this in each ledger's database"))
    dbname = pg_url.split("?")[0].rsplit("/", 1)[-1]
    return {who: with_database(pg_url, dbname, who) for who in ("alice", "carol", "dave")}


def _build(url: str) -> int:
    ledger = open_ledger(url)
    with ledger.new_revision(RID) as w:
        w.write("record.html", b"<html>built</html>")
        w.commit({"record_id": RID, "title": "t", "prepared": {"name": "alice"}})
        return w.revision


def _sign(url: str, role: str, revision: int = 1) -> None:
    ledger = open_ledger(url)
    (html,) = [a for a in ledger.artifacts(RID, revision) if a.name == "record.html"]
    ledger.add_signoff(
        RID, revision, SignOff(role, role, "2026-01-01T00:00:00Z", html.sha256),
        {f"record-{role}.html": b"signed"}, role,
    )  # fmt: skip


def test_a_builder_builds_but_cannot_sign_or_delete(duties):
    import psycopg

    assert _build(duties["alice"]) == 1
    with pytest.raises(
        InputError,
        match=r"role alice lacks the privilege: signing as checked is the checker's duty \(role orbitledger_checker\)",
    ):
        _sign(duties["alice"], "checked")
    with open_ledger(duties["alice"]).connect() as conn:
        for sql in (
            "DELETE FROM artifacts",
            "DELETE FROM revisions",
            "UPDATE revisions SET note = 'x'",
        ):
            with pytest.raises(psycopg.errors.InsufficientPrivilege):
                conn.execute(sql)
    assert open_ledger(duties["alice"]).revisions(RID)[0].status == "draft"
    assert open_ledger(duties["alice"]).signoffs(RID, 1) == []


def test_checker_and_approver_sign_only_their_role(duties):
    _build(duties["alice"])
    with pytest.raises(InputError, match="adding revisions is the builder's duty"):
        _build(duties["carol"])
    # Rows inserted past the code's checks: the database's row-level security refuses them.
    with pytest.raises(InputError, match="signing as checked is the checker's duty"):
        _force_signoff(duties["dave"], "checked")
    _sign(duties["carol"], "checked")
    with pytest.raises(InputError, match="signing as approved is the approver's duty"):
        _force_signoff(duties["carol"], "approved")
    _sign(duties["dave"], "approved")
    assert open_ledger(duties["carol"]).revisions(RID)[0].status == "approved"
    assert [s.role for s in open_ledger(duties["alice"]).signoffs(RID, 1)] == [
        "checked",
        "approved",
    ]


def _force_signoff(url: str, role: str) -> None:
    """Insert a sign-off row directly (as a user who skips the code's checks would)."""
    ledger = open_ledger(url)
    import psycopg

    try:
        with ledger.connect() as conn:
            conn.execute(
                "INSERT INTO signoffs (record_id, revision, role, name, time_utc, artifact_sha256)"
                " VALUES (%s, 1, %s, 'x', 't', %s)",
                (RID, role, "0" * 64),
            )
    except psycopg.Error as err:
        raise ledger.translate(err, duty=role) from None


def test_a_checker_cannot_slip_a_file_into_a_revision(duties):
    import psycopg

    _build(duties["alice"])
    with open_ledger(duties["carol"]).connect() as conn:
        with pytest.raises(psycopg.Error, match="may join revision 1 of KES2-ORB-001 only with it"):
            conn.execute(
                "INSERT INTO artifacts VALUES (%s, 1, 'evil.html', repeat('a', 64), 1, '', 'x')",
                (RID,),
            )
