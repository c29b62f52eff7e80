"""A PostgreSQL server for the ledger tests: a fresh database per test, roles set up from the docs.

The server comes from ``ORBITLEDGER_TEST_PG_URL``, a superuser address of a throw-away
cluster (``.ci/run`` starts one with initdb + pg_ctl as an unprivileged user and exports it).
Without it every PostgreSQL test is skipped with that message: never passed silently.
"""

from __future__ import annotations

import os
import re
import uuid
from pathlib import Path
from urllib.parse import urlsplit, urlunsplit

import pytest

ENV = "ORBITLEDGER_TEST_PG_URL"
DOCS = Path(__file__).resolve().parent.parent / "docs" / "ledger.md"


def admin_url() -> str:
    url = os.environ.get(ENV)
    if not url:
        pytest.skip(
            f"PostgreSQL ledger tests need {ENV}: a superuser postgresql:// address of a "
            "throw-away cluster (.ci/run starts one)"
        )
    return url


def with_database(
    url: str, dbname: str, user: str | None = None, password: str | None = None
) -> str:
    """``url`` pointing at another database (and, if given, as another user)."""
    parts = urlsplit(url)
    netloc = parts.netloc.rsplit("@", 1)[-1]
    if user is not None:
        netloc = f"{user}:{password}@{netloc}" if password else f"{user}@{netloc}"
    elif "@" in parts.netloc:
        netloc = parts.netloc
    return urlunsplit((parts.scheme, netloc, f"/{dbname}", parts.query, parts.fragment))


def connect_admin(url: str | None = None):
    import psycopg

    return psycopg.connect(url or admin_url(), autocommit=True)


@pytest.fixture
def pg_url():
    """The address of a fresh, empty database (dropped after the test)."""
    admin = admin_url()
    name = f"ol_test_{uuid.uuid4().hex[:12]}"
    with connect_admin(admin) as conn:
        conn.execute(f'CREATE DATABASE "{name}"')
    try:
        yield with_database(admin, name)
    finally:
        with connect_admin(admin) as conn:
            conn.execute(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)')


def docs_sql(heading: str) -> str:
    """The ```sql block under ``heading`` in docs/ledger.md (the tests run what the docs say)."""
    text = DOCS.read_text(encoding="utf-8")
    start = text.index(heading)
    block = re.search(r"```sql\n(.*?)```", text[start:], re.DOTALL)
    assert block, f"no sql block under {heading!r} in {DOCS}"
    return block.group(1)
