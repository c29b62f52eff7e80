"""Folder ledgers under faults: schema versions, sign-off defects, read-only media, a full disk.

Outside references: SQLite's documentation (``PRAGMA user_version``; "Write-Ahead Logging":
setting the journal mode writes the database; ``immutable=1`` URI parameter for read-only
media); Linux ``mount(8)`` read-only bind mounts (EROFS) and ``setrlimit(2)`` RLIMIT_FSIZE
(EFBIG, Python ignores SIGXFSZ: Python ``signal`` module documentation).
"""

from __future__ import annotations

import hashlib
import json
import os
import resource
import shutil
import sqlite3
import subprocess
import sys
import tempfile
import textwrap
from pathlib import Path

import pytest
from orbitledger.reporting.ledger import Ledger, SignOff
from orbitledger.reporting.ledger_schema import SCHEMA_VERSION, SQLITE_MIGRATIONS

from orbitledger.kernel.errors import InputError

RID = "KES2-ORB-001"


def _record(n: int = 1) -> dict:
    return {"record_id": RID, "revision": n, "title": "t", "prepared": {"name": "A"}, "note": f"n{n}",
            "built_utc": "2026-01-01T00:00:00Z", "history": [{"revision": k, "changes": [f"c{k}"]} for k in range(1, n + 1)]}  # fmt: skip


def _commit(ledger: Ledger) -> int:
    with ledger.new_revision(RID) as w:
        w.write("record.html", b"<html>r</html>")
        w.write("record.json", json.dumps(_record(w.revision)).encode())
        w.commit(_record(w.revision))
        return w.revision


def _signoff(role: str) -> SignOff:
    return SignOff(role, "C. Checker", "2026-01-01T00:00:00Z", "0" * 64)


def test_a_new_ledger_has_the_current_schema_and_refuses_updates(tmp_path):
    ledger = Ledger(tmp_path / "ledger")
    _commit(ledger)
    db = sqlite3.connect(tmp_path / "ledger" / "index.sqlite")
    assert db.execute("PRAGMA user_version").fetchone() == (SCHEMA_VERSION,)
    for sql in (
        "UPDATE revisions SET note = 'x'",
        "DELETE FROM artifacts",
        "DELETE FROM revisions",
    ):
        with pytest.raises(sqlite3.DatabaseError, match="write-once"):
            db.execute(sql)


def _version_1_ledger(folder: Path, revisions: int = 1) -> None:
    """A ledger as the first orbitledger wrote it (schema 1), with a dead build's leftovers."""
    folder.mkdir(parents=True)
    db = sqlite3.connect(folder / "index.sqlite")
    db.executescript(dict(SQLITE_MIGRATIONS)[1])
    for n in range(1, revisions + 1):
        path = folder / "records" / RID / f"r{n:04d}" / "record.html"
        path.parent.mkdir(parents=True)
        path.write_bytes(b"<html>%d</html>" % n)
        db.execute(
            "INSERT INTO revisions (record_id, revision, state, status, record_json, built_utc)"
            " VALUES (?, ?, 'committed', ?, ?, 't')",
            (RID, n, "checked" if n == 1 else "draft", json.dumps(_record(n))),
        )
        db.execute(
            "INSERT INTO artifacts VALUES (?, ?, 'record.html', ?, ?, ?, 't')",
            (
                RID,
                n,
                path.relative_to(folder).as_posix(),
                hashlib.sha256(path.read_bytes()).hexdigest(),
                path.stat().st_size,
            ),
        )
    first = hashlib.sha256(b"<html>1</html>").hexdigest()
    db.execute("INSERT INTO signoffs VALUES (?, 1, 'checked', 'C', 't', ?)", (RID, first))
    n = revisions + 1  # a build that died after reserving: pending row, half a folder
    (folder / "records" / RID / f"r{n:04d}").mkdir()
    (folder / "records" / RID / f"r{n:04d}" / "record.html").write_bytes(b"half")
    db.execute(
        "INSERT INTO revisions (record_id, revision, state) VALUES (?, ?, 'pending')", (RID, n)
    )
    db.commit()
    db.close()


def test_a_version_1_ledger_is_migrated_in_order(tmp_path):
    folder = tmp_path / "ledger"
    _version_1_ledger(folder)
    ledger = Ledger(folder)
    assert [(r.revision, r.status) for r in ledger.revisions(RID)] == [(1, "checked")]
    assert sqlite3.connect(folder / "index.sqlite").execute("PRAGMA user_version").fetchone() == (
        SCHEMA_VERSION,
    )
    assert not (folder / "records" / RID / "r0002").exists()  # moved to .abandoned
    assert ledger.check() == []
    assert _commit(ledger) == 2


def test_a_newer_schema_is_refused_naming_both_versions(tmp_path):
    Ledger(tmp_path / "ledger")
    db = sqlite3.connect(tmp_path / "ledger" / "index.sqlite")
    db.execute("PRAGMA user_version = 7")
    db.close()
    with pytest.raises(InputError, match=f"schema version 7 is newer than version {SCHEMA_VERSION}"):
        Ledger(tmp_path / "ledger")


def test_signoff_defects_are_clear_errors_and_leave_nothing(tmp_path):
    ledger = Ledger(tmp_path / "ledger")
    _commit(ledger)
    folder = tmp_path / "ledger" / "records" / RID / "r0001"
    with pytest.raises(
        InputError,
        match=r"revision = 'KES2-ORB-001 5': not found \(revisions in this ledger: \[1\]",
    ):
        ledger.add_signoff(RID, 5, _signoff("checked"), {"record-checked.html": b"x"}, "checked")
    with pytest.raises(InputError, match="--role = 'reviewed': choose checked or approved"):
        ledger.add_signoff(RID, 1, _signoff("reviewed"), {}, "reviewed")
    with pytest.raises(InputError, match="revision 1 is draft, needs checked"):
        ledger.add_signoff(RID, 1, _signoff("approved"), {"record-approved.html": b"x"}, "approved")
    assert sorted(p.name for p in folder.iterdir()) == ["record.html", "record.json"]
    ledger.add_signoff(RID, 1, _signoff("checked"), {"record-checked.html": b"ok"}, "checked")
    assert ledger.revisions(RID)[0].status == "checked"


def test_a_copy_left_by_an_older_refused_signoff_does_not_block(tmp_path):
    ledger = Ledger(tmp_path / "ledger")
    _commit(ledger)
    stray = tmp_path / "ledger" / "records" / RID / "r0001" / "record-checked.html"
    stray.write_bytes(b"written before the status check by orbitledger 0.x")
    ledger.add_signoff(RID, 1, _signoff("checked"), {"record-checked.html": b"valid"}, "checked")
    assert stray.read_bytes() == b"valid"
    assert ledger.check() == []


def _read_only_run(ledger_dir: Path, *argv: str) -> subprocess.CompletedProcess:
    """Run the CLI with ``ledger_dir`` on a read-only file system (EROFS), as it is on a DVD."""
    cmd = [sys.executable, "-m", "orbitledger", *argv]
    if os.geteuid() == 0:
        if shutil.which("unshare") is None:
            pytest.skip("read-only test as root needs unshare(1) for a private read-only mount")
        script = 'mount --bind -o ro "$0" "$0" && exec "$@"'
        cmd = [
            "unshare",
            "--mount",
            "--propagation",
            "private",
            "sh",
            "-c",
            script,
            str(ledger_dir),
            *cmd,
        ]
        return subprocess.run(cmd, capture_output=True, text=True, check=False)
    for path in [ledger_dir, *ledger_dir.rglob("*")]:
        path.chmod(path.stat().st_mode & ~0o222)
    try:
        return subprocess.run(cmd, capture_output=True, text=True, check=False)
    finally:
        for path in [ledger_dir, *ledger_dir.rglob("*")]:
            path.chmod(path.stat().st_mode | 0o200)


@pytest.mark.parametrize("old_schema", [False, True])
def test_a_read_only_ledger_is_listed_and_verified(tmp_path, old_schema):
    ledger_dir = Path(tempfile.mkdtemp(dir=tmp_path)) / "ledger"
    if old_schema:  # an archive written by the first orbitledger: schema 1, migrated in memory
        _version_1_ledger(ledger_dir, revisions=2)
    else:
        ledger = Ledger(ledger_dir)
        _commit(ledger)
        _commit(ledger)
    before = {p: p.read_bytes() for p in ledger_dir.rglob("*") if p.is_file()}
    for argv in (
        ["history", RID],
        ["diff", RID, "1", "2"],
        ["verify", "--ledger", str(ledger_dir)],
        ["ledger", "export", RID, "--out", str(tmp_path / "out")],
        ["index", "--out", str(tmp_path / "site")],
    ):
        done = _read_only_run(
            ledger_dir, *argv, *([] if "verify" in argv else ["--ledger", str(ledger_dir)])
        )
        assert done.returncode == 0, (argv, done.stderr)
    done = _read_only_run(
        ledger_dir,
        "sign",
        RID,
        "1",
        "--role",
        "checked",
        "--name",
        "C",
        "--ledger",
        str(ledger_dir),
    )
    assert done.returncode == 2
    assert done.stderr.count("\n") == 1 and "the ledger is read-only here" in done.stderr
    assert {p: p.read_bytes() for p in ledger_dir.rglob("*") if p.is_file()} == before


def test_a_full_disk_gives_one_line_and_leaves_the_ledger_as_it_was(tmp_path):
    ledger_dir = tmp_path / "ledger"
    _commit(Ledger(ledger_dir))
    script = textwrap.dedent(
        f"""
        import sys
        from orbitledger.kernel.errors import InputError
        from orbitledger.reporting.ledger import Ledger
        ledger = Ledger({str(ledger_dir)!r})
        try:
            with ledger.new_revision({RID!r}) as w:
                w.write("record.html", b"x" * 2_000_000)  # beyond the file-size limit
                w.commit({{"record_id": {RID!r}}})
        except InputError as err:
            print(err, file=sys.stderr)
            sys.exit(2)
        """
    )
    limit = 1_000_000

    def limited() -> None:
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit, limit))

    done = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, preexec_fn=limited
    )
    assert done.returncode == 2, done.stderr
    assert (
        done.stderr.count("\n") == 1
        and "disk full (File too large): nothing was recorded" in done.stderr
    )
    ledger = Ledger(ledger_dir)
    assert [r.revision for r in ledger.revisions(RID)] == [1]
    assert ledger.check() == []
    assert not (ledger_dir / "records" / RID / "r0002").exists()


def test_history_names_a_record_json_that_is_not_a_record(tmp_path, capsys):
    # Common practice: a reading verb reports a damaged archive entry and goes on; it does not
    # stop with a traceback. The bytes match the ledger's hash, so they were stored so at build.
    from orbitledger.cli.main import main

    ledger = Ledger(tmp_path / "ledger")
    with ledger.new_revision(RID) as w:
        w.write("record.html", b"<html>r</html>")
        w.write("record.json", b"{'record_id': 'not JSON'}")  # a Python repr, not JSON
        w.commit(_record(w.revision))
    html = next(a for a in ledger.artifacts(RID, 1) if a.name == "record.html")
    ledger.add_signoff(RID, 1, SignOff("checked", "C. Checker", "2026-01-02T00:00:00Z", html.sha256),
                       {"record-checked.html": b"copy"}, "checked")  # fmt: skip
    assert main(["history", RID, "--ledger", str(tmp_path / "ledger")]) == 0
    out = capsys.readouterr().out
    assert "checked by C. Checker" in out
    assert "unknown: record.json holds no readable sign-off list" in out
