"""The PostgreSQL ledger: the same protocol as the folder, write-once in the database, bad input named.

Outside references: PostgreSQL's documentation (SQLSTATE 42501 insufficient_privilege; a
transaction is rolled back when its session ends; ``txid_current``); libpq's messages for a
refused connection; FIPS 180-4 for SHA-256 (computed by ``hashlib`` and by the server).
"""

from __future__ import annotations

import hashlib
import os
import signal
import socket
import subprocess
import sys
import textwrap
import threading
import time
from concurrent.futures import ProcessPoolExecutor

import pytest
from _pg import admin_url, connect_admin, with_database
from _record_study import simulated_run, write_study
from orbitledger.reporting.ledger import SignOff, open_ledger

from orbitledger.kernel.errors import InputError

RID = "KES2-ORB-001"


def _commit(ledger, payload: bytes, n: int = 0) -> int:
    with ledger.new_revision(RID) as w:
        w.write("record.html", payload)
        w.write("record.json", b'{"n": %d}' % n)
        w.commit({"record_id": RID, "title": "t", "prepared": {"name": "A"}, "note": f"n{n}"})
        return w.revision


def test_revisions_artifacts_and_signoffs_round_trip(pg_url):
    ledger = open_ledger(pg_url)
    assert [_commit(ledger, f"<html>{n}</html>".encode(), n) for n in range(3)] == [1, 2, 3]
    (html,) = [a for a in ledger.artifacts(RID, 2) if a.name == "record.html"]
    # FIPS 180-4 SHA-256 via hashlib; the bytes come back from the database unchanged.
    assert html.sha256 == hashlib.sha256(b"<html>1</html>").hexdigest()
    assert ledger.read_artifact(html) == b"<html>1</html>"
    ledger.add_signoff(
        RID, 2, SignOff("checked", "C. Checker", "2026-01-01T00:00:00Z", html.sha256),
        {"record-checked.html": b"signed"}, "checked",
    )  # fmt: skip
    assert [r.status for r in ledger.revisions(RID)] == ["draft", "checked", "draft"]
    assert ledger.latest_state(RID, 2)["html"] == f"records/{RID}/r0002/record-checked.html"
    # history() finds the same states in one query of the artifacts (a LIKE with '%' in it)
    assert [h["latest"] for h in ledger.history(RID)] == [
        ledger.latest_state(RID, n) for n in (1, 2, 3)
    ]
    assert ledger.check() == []  # the server's own sha256() agrees with every stored hash


def test_the_database_refuses_update_delete_truncate_and_stray_artifacts(pg_url):
    import psycopg

    ledger = open_ledger(pg_url)
    _commit(ledger, b"x")
    with ledger.connect() as conn:  # the owner of the tables: still bound by the triggers
        for sql in (
            "UPDATE artifacts SET sha256 = repeat('0', 64)",
            "DELETE FROM revisions",
            "TRUNCATE signoffs",
            "INSERT INTO artifacts VALUES ('KES2-ORB-001', 1, 'extra.html', repeat('a', 64), 1, '', 'x')",
        ):
            with pytest.raises(psycopg.Error, match="orbitledger: "):
                conn.execute(sql)
    assert [a.name for a in ledger.artifacts(RID, 1)] == ["record.html", "record.json"]


def test_a_killed_build_leaves_no_half_revision(pg_url):
    _commit(open_ledger(pg_url), b"first")
    script = textwrap.dedent(
        f"""
        import time
        from orbitledger.reporting.ledger import open_ledger
        ledger = open_ledger({pg_url!r})
        res = ledger.reserve({RID!r})
        ledger.write_artifact(res, "record.html", b"x" * 100000)
        print("reserved", res.revision, flush=True)
        time.sleep(120)
        """
    )
    proc = subprocess.Popen([sys.executable, "-c", script], stdout=subprocess.PIPE, text=True)
    assert proc.stdout.readline().split() == ["reserved", "2"]
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    ledger = open_ledger(pg_url)
    # PostgreSQL documentation: a session that ends rolls back its open transaction.
    assert [r.revision for r in ledger.revisions(RID)] == [1]
    assert _commit(ledger, b"second") == 2  # the lock went with the dead session
    assert ledger.check() == []


def _simulated_build(args: tuple[str, str, int]) -> int:
    from orbitledger.reporting.build import record_run

    study, url, n = args
    from pathlib import Path

    executed, manifest = simulated_run(Path(study))
    return record_run(Path(study), executed, manifest, ledger_dir=url, note=f"build {n}").revision


@pytest.mark.slow
def test_eight_concurrent_builds_from_separate_processes(pg_url, tmp_path):
    study = write_study(tmp_path / "study")
    open_ledger(pg_url)  # created once; the eight builds race for the revision numbers
    with ProcessPoolExecutor(max_workers=8) as pool:
        revisions = list(pool.map(_simulated_build, [(str(study), pg_url, n) for n in range(8)]))
    assert sorted(revisions) == list(range(1, 9))
    ledger = open_ledger(pg_url)
    rows = ledger.revisions(RID)
    assert [r.revision for r in rows] == list(range(1, 9))
    assert sorted(r.note for r in rows) == [f"build {n}" for n in range(8)]
    for n in range(1, 9):  # each record's history lists every revision before it, in order
        record = ledger.record(RID, n)
        assert [h["revision"] for h in record["history"]] == list(range(1, n + 1))
        assert record["history"][0]["changes"] == ["first revision"]
    from orbitledger.reporting.ledger_chain import verify_ledger

    report = verify_ledger(ledger)
    assert report.ok, report.text()


def test_a_url_never_becomes_a_folder(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    with pytest.raises(InputError, match="not a ledger address"):
        open_ledger("mysql://u@h/db")
    with pytest.raises(InputError, match="unreachable"):
        open_ledger("postgresql://nobody@127.0.0.1:1/nodb")  # port 1: nothing listens
    assert list(tmp_path.iterdir()) == []


def test_connecting_waits_ten_seconds_by_default(monkeypatch):
    import psycopg

    seen = {}

    def fake_connect(conninfo, **kwargs):
        seen.update(kwargs)
        raise psycopg.OperationalError("connection failed: timeout expired")

    monkeypatch.setattr(psycopg, "connect", fake_connect)
    with pytest.raises(InputError, match="unreachable: no answer within 10 s"):
        open_ledger("postgresql://u@db.invalid/ledger")
    assert seen["connect_timeout"] == 10


def test_a_server_that_never_answers_times_out_in_one_line():
    # A listening socket that accepts and says nothing: libpq waits for the server's reply
    # until connect_timeout (libpq documentation, "connect_timeout"), here 2 s to keep it short.
    listener = socket.socket()
    listener.bind(("127.0.0.1", 0))
    listener.listen(8)
    port = listener.getsockname()[1]
    held = []
    threading.Thread(target=lambda: held.append(listener.accept()), daemon=True).start()
    start = time.monotonic()
    with pytest.raises(InputError) as err:
        open_ledger(f"postgresql://u@127.0.0.1:{port}/db?connect_timeout=2")
    assert time.monotonic() - start < 8
    assert "unreachable: no answer within 2 s" in str(err.value) and "\n" not in str(err.value)
    listener.close()


def test_wrong_credentials_are_named_and_the_password_hidden(pg_url):
    admin = admin_url()
    with pytest.raises(InputError, match=r'wrong credentials: no such user .*"no_such_person"'):
        open_ledger(
            with_database(pg_url, pg_url.rsplit("/", 1)[-1].split("?")[0], "no_such_person")
        )
    tcp = os.environ.get("ORBITLEDGER_TEST_PG_TCP_URL")
    if not tcp:
        pytest.skip("a wrong password needs ORBITLEDGER_TEST_PG_TCP_URL (password auth; .ci/run)")
    with connect_admin(admin) as conn:
        conn.execute("DROP ROLE IF EXISTS ol_pw_user")
        conn.execute("CREATE ROLE ol_pw_user LOGIN PASSWORD 'right-one'")
    bad = with_database(tcp, "postgres", "ol_pw_user", "wrong-one")
    with pytest.raises(InputError) as err:
        open_ledger(bad)
    text = str(err.value)
    assert "wrong credentials (password authentication failed" in text
    assert "wrong-one" not in text and "ol_pw_user:***@" in text


def test_a_newer_schema_version_is_refused_naming_both(pg_url):
    open_ledger(pg_url)
    with connect_admin(pg_url) as conn:
        conn.execute("INSERT INTO orbitledger.schema_version VALUES (9, 'future')")
    with pytest.raises(InputError, match="schema version 9 is newer than version 3"):
        open_ledger(pg_url)


def test_artifacts_are_stored_lz4_compressed_when_the_server_has_lz4(pg_url):
    # PostgreSQL 15 documentation, "Database Object Size Functions": pg_column_compression()
    # names the method a stored value was compressed with (NULL when stored uncompressed).
    # Debian's server is built with LZ4 (pg_config --configure lists --with-lz4); a server
    # without it keeps pglz, as the migration says.
    ledger = open_ledger(pg_url)
    page = b"<html>" + b"<p>Kestrel-2 orbit study</p>" * 4000 + b"</html>"  # compressible
    _commit(ledger, page)
    with connect_admin(pg_url) as conn:
        (versions,) = conn.execute(
            "SELECT array_agg(version ORDER BY version) FROM orbitledger.schema_version"
        ).fetchone()
        (method,) = conn.execute(
            "SELECT pg_column_compression(data) FROM orbitledger.artifacts WHERE name = 'record.html'"
        ).fetchone()
    assert versions == [2, 3]
    assert method == ("lz4" if _server_has_lz4(pg_url) else "pglz")
    (html,) = [a for a in ledger.artifacts(RID, 1) if a.name == "record.html"]
    assert ledger.read_artifact(html) == page and ledger.check() == []


def _server_has_lz4(url: str) -> bool:
    """Whether the server accepts LZ4 (PostgreSQL 15 docs: default_toast_compression)."""
    import psycopg

    with connect_admin(url) as conn:
        try:
            conn.execute("SET default_toast_compression = 'lz4'")
        except psycopg.Error:  # "invalid value for parameter": built without LZ4
            return False
    return True


def test_reading_verbs_do_not_create_a_ledger(pg_url):
    with pytest.raises(InputError, match="no ledger there"):
        open_ledger(pg_url, create=False)
    with connect_admin(pg_url) as conn:
        assert conn.execute("SELECT to_regnamespace('orbitledger')").fetchone()[0] is None
