"""``ledger copy`` and ``ledger export``: every artifact bit for bit, hashes checked, resumable.

Outside references: FIPS 180-4 SHA-256 through ``hashlib``; GNU coreutils ``sha256sum -c``
checks the exported ``SHA256SUMS``.
"""

from __future__ import annotations

import hashlib
import shutil
import subprocess

import pytest
from orbitledger.reporting.ledger import Ledger, SignOff, open_ledger
from orbitledger.reporting.ledger_copy import copy_ledger, export_artifacts

from orbitledger.cli.main import main
from orbitledger.kernel.errors import InputError


def _fill(ledger, record_ids=("KES2-ORB-001", "KES2-ORB-002"), revisions=3) -> None:
    for rid in record_ids:
        for n in range(revisions):
            with ledger.new_revision(rid) as w:
                w.write("record.html", f"<html>{rid} {n}</html>".encode() + bytes(range(256)))
                w.write("record.json", f'{{"record_id": "{rid}", "n": {n}}}'.encode())
                w.write("notebook.ipynb", b"\x00\xff binary-safe \r\n" * 50)
                w.commit(
                    {
                        "record_id": rid,
                        "title": f"title {rid}",
                        "prepared": {"name": "A"},
                        "note": f"n{n}",
                        "history": [{"revision": w.revision, "changes": [f"change {n}"]}],
                    }
                )
    (html,) = [a for a in ledger.artifacts(record_ids[0], 1) if a.name == "record.html"]
    ledger.add_signoff(
        record_ids[0], 1, SignOff("checked", "C. Checker", "2026-01-02T03:04:05Z", html.sha256),
        {"record-checked.html": b"checked copy", "record-checked.json": b"{}"}, "checked",
    )  # fmt: skip


def _everything(ledger) -> dict:
    """Every row and every artifact's bytes, as a comparable value (paths aside)."""
    out = {}
    for rid in ledger.record_ids():
        for r in ledger.revisions(rid):
            arts = {
                a.name: (a.sha256, a.size, a.created_utc, ledger.read_artifact(a))
                for a in ledger.artifacts(rid, r.revision)
            }
            out[(rid, r.revision)] = (
                r,
                ledger._record_text(rid, r.revision),
                ledger.record_changes(rid)[r.revision],
                ledger.committed_utc(rid, r.revision),
                ledger.signoffs(rid, r.revision),
                arts,
            )
    return out


def test_folder_to_postgresql_to_folder_is_bit_for_bit(tmp_path, pg_url):
    first = Ledger(tmp_path / "first")
    _fill(first)
    pg = open_ledger(pg_url)
    done = copy_ledger(first, pg)
    assert (done.revisions, done.skipped) == (6, 0)
    back = Ledger(tmp_path / "back")
    copy_ledger(pg, back)
    assert _everything(back) == _everything(pg) == _everything(first)
    for path in (tmp_path / "first" / "records").rglob("*"):  # the files themselves, byte for byte
        if path.is_file():
            twin = tmp_path / "back" / path.relative_to(tmp_path / "first")
            assert (
                hashlib.sha256(twin.read_bytes()).digest()
                == hashlib.sha256(path.read_bytes()).digest()
            )
    assert back.check() == [] and pg.check() == []


def test_an_interrupted_copy_resumes_and_a_later_signoff_follows(tmp_path, monkeypatch):
    source = Ledger(tmp_path / "src")
    _fill(source)
    target = Ledger(tmp_path / "dst")
    real = type(target).insert_copied
    calls = []

    def dies_on_the_fourth(self, *args, **kwargs):
        calls.append(1)
        if len(calls) == 4:
            raise KeyboardInterrupt  # the copy is stopped midway
        return real(self, *args, **kwargs)

    monkeypatch.setattr(type(target), "insert_copied", dies_on_the_fourth)
    with pytest.raises(KeyboardInterrupt):
        copy_ledger(source, target)
    monkeypatch.setattr(type(target), "insert_copied", real)
    assert sum(len(target.revisions(r)) for r in target.record_ids()) == 3  # whole revisions only
    assert target.check() == []
    done = copy_ledger(source, target)
    assert (done.revisions, done.skipped) == (3, 3)
    html = next(a for a in source.artifacts("KES2-ORB-001", 1) if a.name == "record.html")
    source.add_signoff(
        "KES2-ORB-001", 1, SignOff("approved", "A. Approver", "2026-01-03T00:00:00Z", html.sha256),
        {"record-approved.html": b"approved copy"}, "approved",
    )  # fmt: skip
    copy_ledger(source, target)
    assert _everything(target) == _everything(source)


def test_a_destination_with_other_records_is_refused_before_any_write(tmp_path):
    source = Ledger(tmp_path / "src")
    _fill(source, record_ids=("KES2-ORB-001",))
    other = Ledger(tmp_path / "other")
    _fill(other, record_ids=("KES2-ORB-009",), revisions=1)
    before = _everything(other)
    with pytest.raises(InputError, match="not empty: holds KES2-ORB-009 revision 1"):
        copy_ledger(source, other)
    assert _everything(other) == before


def test_a_damaged_source_artifact_is_named_and_not_copied(tmp_path):
    source = Ledger(tmp_path / "src")
    _fill(source, record_ids=("KES2-ORB-001",), revisions=1)
    path = tmp_path / "src" / "records" / "KES2-ORB-001" / "r0001" / "notebook.ipynb"
    path.chmod(0o644)
    path.write_bytes(b"damaged")
    target = Ledger(tmp_path / "dst")
    with pytest.raises(InputError, match="r0001/notebook.ipynb.*SHA-256 differs"):
        copy_ledger(source, target)
    assert target.record_ids() == []


def test_export_writes_files_that_sha256sum_checks(tmp_path, capsys):
    ledger = Ledger(tmp_path / "ledger")
    _fill(ledger)
    out = tmp_path / "export"
    code = main(
        [
            "ledger",
            "export",
            "KES2-ORB-001",
            "1",
            "--out",
            str(out),
            "--ledger",
            str(tmp_path / "ledger"),
        ]
    )
    assert code == 0 and "exported 5 artifacts" in capsys.readouterr().out
    export_artifacts(ledger, out)  # everything; what is there already is left as it is
    if shutil.which("sha256sum") is None:
        pytest.skip("GNU coreutils sha256sum not installed")
    done = subprocess.run(
        ["sha256sum", "-c", "SHA256SUMS"], cwd=out, capture_output=True, text=True
    )
    assert done.returncode == 0, done.stdout + done.stderr
    assert done.stdout.count(": OK") == 2 * 3 * 3 + 2


def test_copy_verb_from_the_command_line(tmp_path, capsys):
    _fill(Ledger(tmp_path / "src"))
    code = main(["ledger", "copy", str(tmp_path / "src"), str(tmp_path / "dst")])
    assert code == 0
    assert "copied 6 revisions (20 artifacts" in capsys.readouterr().out
    assert main(["ledger", "copy", str(tmp_path / "src"), str(tmp_path / "dst")]) == 0
    assert "6 were there already" in capsys.readouterr().out
