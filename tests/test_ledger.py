"""The ledger: revisions, write-once artifacts with their SHA-256, path safety, crash recovery."""

from __future__ import annotations

import hashlib
import os
import sqlite3
import subprocess
import sys
import textwrap

import pytest
from orbitledger.reporting.ledger import Ledger, atomic_write_once, sha256_hex

from orbitledger.kernel.errors import InputError


def _commit(ledger: Ledger, record_id: str, payload: bytes = b"<html>r</html>") -> int:
    res = ledger.reserve(record_id, title="t", author="A. Analyst", note="n")
    ledger.write_artifact(res, "record.html", payload)
    ledger.commit(
        res, {"record_id": record_id, "title": "t", "prepared": {"name": "A. Analyst"}, "note": "n"}
    )
    return res.revision


def test_sha256_matches_the_fips_180_4_example():
    # FIPS 180-4 (and its published examples, NIST CSRC): SHA-256("abc").
    assert sha256_hex(b"abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"


def test_revisions_count_up_per_record_id(tmp_path):
    ledger = Ledger(tmp_path / "ledger")
    assert [_commit(ledger, "KES2-ORB-001") for _ in range(3)] == [1, 2, 3]
    assert _commit(ledger, "KES2-ORB-002") == 1
    assert [r.revision for r in ledger.revisions("KES2-ORB-001")] == [1, 2, 3]
    assert ledger.record_ids() == ["KES2-ORB-001", "KES2-ORB-002"]


def test_index_is_sqlite_in_wal_mode_and_holds_each_artifact_hash(tmp_path):
    ledger = Ledger(tmp_path / "ledger")
    _commit(ledger, "KES2-ORB-001", b"payload one")
    db = sqlite3.connect(tmp_path / "ledger" / "index.sqlite")
    # SQLite documentation, "Write-Ahead Logging": the journal_mode pragma reports "wal".
    assert db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    (digest,) = db.execute("SELECT sha256 FROM artifacts WHERE name = 'record.html'").fetchone()
    assert digest == hashlib.sha256(b"payload one").hexdigest()
    assert ledger.check() == []


def test_artifacts_are_write_once(tmp_path):
    target = tmp_path / "a.txt"
    atomic_write_once(target, b"first")
    with pytest.raises(InputError, match="write-once"):
        atomic_write_once(target, b"second")
    assert target.read_bytes() == b"first"
    assert [p.name for p in tmp_path.iterdir()] == ["a.txt"]  # no temporary file left


def test_ledger_refuses_paths_that_escape_its_folder(tmp_path):
    ledger = Ledger(tmp_path / "ledger")
    for bad in ("../outside", "a/../../b", "/etc/passwd", "..", ""):
        with pytest.raises(InputError):
            ledger.reserve(bad)
    res = ledger.reserve("KES2-ORB-001")
    for bad in ("../../../escape.html", "/tmp/x", "..", "sub/../../x"):
        with pytest.raises(InputError):
            ledger.write_artifact(res, bad, b"x")
    # A symbolic link inside the ledger that points outside is refused too.
    (tmp_path / "outside").mkdir()
    res.folder.mkdir(parents=True)
    os.symlink(tmp_path / "outside", res.folder / "link")
    with pytest.raises(InputError, match="escapes"):
        ledger.write_artifact(res, "link/x.html", b"x")
    assert list((tmp_path / "outside").iterdir()) == []


def test_check_reports_an_artifact_altered_on_disk(tmp_path):
    ledger = Ledger(tmp_path / "ledger")
    _commit(ledger, "KES2-ORB-001", b"original")
    path = tmp_path / "ledger" / "records" / "KES2-ORB-001" / "r0001" / "record.html"
    os.chmod(path, 0o644)
    path.write_bytes(b"changed")
    assert ledger.check() == [
        "records/KES2-ORB-001/r0001/record.html: SHA-256 differs from the index"
    ]


def test_an_abandoned_build_leaves_no_revision(tmp_path):
    ledger = Ledger(tmp_path / "ledger")
    res = ledger.reserve("KES2-ORB-001")
    ledger.write_artifact(res, "record.html", b"half")
    ledger.abandon(res)
    assert ledger.revisions("KES2-ORB-001") == []
    assert not (tmp_path / "ledger" / "records" / "KES2-ORB-001" / "r0001").exists()
    assert _commit(ledger, "KES2-ORB-001") == 1


def test_a_build_that_died_after_reserving_is_reclaimed(tmp_path):
    # A process reserves revision 1, writes half its artifacts and dies without committing.
    script = textwrap.dedent(
        f"""
        import os
        from orbitledger.reporting.ledger import Ledger
        ledger = Ledger({str(tmp_path / "ledger")!r})
        res = ledger.reserve("KES2-ORB-001")
        ledger.write_artifact(res, "record.html", b"half")
        os._exit(9)
        """
    )
    done = subprocess.run([sys.executable, "-c", script], check=False)
    assert done.returncode == 9
    ledger = Ledger(tmp_path / "ledger")
    assert ledger.revisions("KES2-ORB-001") == []  # pending, never visible
    assert _commit(ledger, "KES2-ORB-001", b"whole") == 1  # the dead reservation is reclaimed
    assert ledger.check() == []
    (artifact,) = ledger.artifacts("KES2-ORB-001", 1)
    assert ledger.artifact_path(artifact).read_bytes() == b"whole"
    assert any((tmp_path / "ledger" / ".abandoned").iterdir())  # the half revision kept aside


def test_unknown_revision_is_a_clear_input_error(tmp_path):
    ledger = Ledger(tmp_path / "ledger")
    _commit(ledger, "KES2-ORB-001")
    with pytest.raises(InputError, match=r"not found \(revisions in this ledger: \[1\]"):
        ledger.record("KES2-ORB-001", 7)
