"""``verify --ledger``: the hash chain finds a removed, reordered, replaced revision or an edited row.

Outside reference: FIPS 180-4 SHA-256 through ``hashlib``: the chain link of each record is
recomputed here from the previous ``record.json`` bytes, independently of the ledger's code.
"""

from __future__ import annotations

import hashlib
import json
import shutil
import sqlite3

import pytest
from _record_study import simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.ledger import Ledger, open_ledger
from orbitledger.reporting.ledger_copy import copy_ledger

from orbitledger.cli.main import main

RID = "KES2-ORB-001"


@pytest.fixture(scope="module")
def pristine(tmp_path_factory):
    """A folder ledger with three real revisions of one record (simulated study runs)."""
    folder = tmp_path_factory.mktemp("chain")
    study = write_study(folder / "study")
    for n in range(3):
        executed, manifest = simulated_run(study, results=[
            {"name": "test_length_km", "value": 40.0 + n, "unit": "km", "description": "a test value"}
        ])  # fmt: skip
        record_run(study, executed, manifest, ledger_dir=folder / "ledger", note=f"rev {n + 1}")
    return folder / "ledger"


@pytest.fixture
def ledger_dir(pristine, tmp_path):
    target = tmp_path / "ledger"
    shutil.copytree(pristine, target)
    return target


def _verify(ledger_dir, capsys) -> tuple[int, str]:
    code = main(["verify", "--ledger", str(ledger_dir)])
    return code, capsys.readouterr().out


def _folder(ledger_dir, n: int):
    return ledger_dir / "records" / RID / f"r{n:04d}"


def _unlocked(ledger_dir) -> sqlite3.Connection:
    """The index opened as someone who strips the write-once triggers would open it."""
    db = sqlite3.connect(ledger_dir / "index.sqlite", isolation_level=None)
    for (name,) in db.execute("SELECT name FROM sqlite_master WHERE type = 'trigger'").fetchall():
        db.execute(f"DROP TRIGGER {name}")
    return db


def test_each_record_links_the_previous_record_json(ledger_dir, capsys):
    records = [json.loads((_folder(ledger_dir, n) / "record.json").read_bytes()) for n in (1, 2, 3)]
    assert records[0]["previous_record_sha256"] is None
    for n in (2, 3):
        previous = (_folder(ledger_dir, n - 1) / "record.json").read_bytes()
        assert records[n - 1]["previous_record_sha256"] == hashlib.sha256(previous).hexdigest()
    code, out = _verify(ledger_dir, capsys)
    assert code == 0, out
    assert "hash chain of 3 revisions" in out and "checks, all hold" in out


def test_a_deleted_revision_folder_is_named(ledger_dir, capsys):
    shutil.rmtree(_folder(ledger_dir, 2))
    code, out = _verify(ledger_dir, capsys)
    assert code == 1
    assert f"records/{RID}/r0002/record.html: missing" in out


def test_swapped_revision_folders_are_named(ledger_dir, capsys):
    a, b = _folder(ledger_dir, 2), _folder(ledger_dir, 3)
    a.rename(ledger_dir / "tmp")
    b.rename(a)
    (ledger_dir / "tmp").rename(b)
    code, out = _verify(ledger_dir, capsys)
    assert code == 1
    assert f"records/{RID}/r0002/record.json says {RID} revision 3 (swapped or reordered?)" in out


def test_an_edited_index_row_is_named(ledger_dir, capsys):
    db = _unlocked(ledger_dir)
    (text,) = db.execute("SELECT record_json FROM revisions WHERE revision = 2").fetchone()
    record = json.loads(text)
    record["results"][0]["value"] = 99.0
    db.execute("UPDATE revisions SET record_json = ? WHERE revision = 2", (json.dumps(record),))
    db.close()
    code, out = _verify(ledger_dir, capsys)
    assert code == 1
    assert "revision 2: the index row differs from records/KES2-ORB-001/r0002/record.json" in out


def test_a_consistently_replaced_revision_breaks_the_next_link(ledger_dir, capsys):
    # The forger rewrites revision 2's record.json and fixes its hash in the index and its row.
    path = _folder(ledger_dir, 2) / "record.json"
    record = json.loads(path.read_bytes())
    record["results"][0]["value"] = 99.0
    forged = json.dumps(record, sort_keys=True, separators=(",", ":")).encode()
    path.chmod(0o644)
    path.write_bytes(forged)
    db = _unlocked(ledger_dir)
    db.execute(
        "UPDATE artifacts SET sha256 = ?, size = ? WHERE revision = 2 AND name = 'record.json'",
        (hashlib.sha256(forged).hexdigest(), len(forged)),
    )
    db.execute("UPDATE revisions SET record_json = ? WHERE revision = 2", (forged.decode(),))
    db.close()
    code, out = _verify(ledger_dir, capsys)
    assert code == 1
    assert (
        "revision 3: the record JSON of revision 2 is not the one revision 3 was built after" in out
    )


def test_a_removed_row_and_reordered_rows_are_named(ledger_dir, capsys):
    db = _unlocked(ledger_dir)
    for table in ("artifacts", "signoffs", "revisions"):
        db.execute(f"DELETE FROM {table} WHERE revision = 2")
    db.close()
    code, out = _verify(ledger_dir, capsys)
    assert code == 1
    assert "revision 2 missing from the index" in out
    assert "revision 3: was built after revision 2, which is missing" in out
    db = _unlocked(ledger_dir)
    db.execute("PRAGMA foreign_keys = OFF")
    for table in ("artifacts", "revisions"):
        db.execute(f"UPDATE {table} SET revision = 2 WHERE revision = 3")
    db.close()
    code, out = _verify(ledger_dir, capsys)
    assert code == 1
    assert "revision 2: records/KES2-ORB-001/r0003/record.json says KES2-ORB-001 revision 3" in out


def test_the_same_checks_hold_in_postgresql(pristine, pg_url, capsys):
    ledger = open_ledger(pg_url)
    copy_ledger(Ledger(pristine), ledger)
    code, out = _verify(pg_url, capsys)
    assert code == 0, out
    with ledger.connect() as conn:
        conn.execute("ALTER TABLE orbitledger.artifacts DISABLE TRIGGER USER")
        conn.execute(
            "UPDATE orbitledger.artifacts SET data = 'x'::bytea, size = 1 WHERE revision = 1 AND name = 'record.json'"
        )
    code, out = _verify(pg_url, capsys)
    assert code == 1
    assert f"records/{RID}/r0001/record.json: SHA-256 differs from the index" in out
    assert (
        "revision 2: the record JSON of revision 1 is not the one revision 2 was built after" in out
    )
