"""Concurrent builds into one ledger: distinct revisions, none lost; a killed build leaves it sound."""

from __future__ import annotations

import os
import signal
import sqlite3
import subprocess
import sys
import textwrap
import time
from concurrent.futures import ProcessPoolExecutor

import pytest
from _record_study import write_study
from orbitledger.reporting.ledger import Ledger


def _one_build(ledger_dir: str, n: int) -> int:
    ledger = Ledger(ledger_dir)
    res = ledger.reserve("KES2-ORB-001", title=f"build {n}")
    ledger.write_artifact(res, "record.html", f"<html>{n}</html>".encode())
    time.sleep(0.05)  # widen the window between reserve and commit
    ledger.commit(
        res, {"record_id": "KES2-ORB-001", "title": f"build {n}", "prepared": {"name": ""}}
    )
    return res.revision


def _simulated_build(args: tuple[str, str, int]) -> int:
    from pathlib import Path

    from _record_study import simulated_run
    from orbitledger.reporting.build import record_run

    study, ledger_dir, n = args
    executed, manifest = simulated_run(Path(study))
    outcome = record_run(Path(study), executed, manifest, ledger_dir=ledger_dir, note=f"build {n}")
    return outcome.revision


def _consistent(ledger_dir) -> None:
    db = sqlite3.connect(os.path.join(ledger_dir, "index.sqlite"))
    # SQLite documentation: PRAGMA integrity_check returns the single row "ok" for a sound file.
    assert db.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
    assert Ledger(ledger_dir).check() == []  # every committed artifact matches its SHA-256


def test_eight_concurrent_processes_get_eight_distinct_revisions(tmp_path):
    ledger_dir = str(tmp_path / "ledger")
    Ledger(ledger_dir)
    with ProcessPoolExecutor(max_workers=8) as pool:
        revisions = list(pool.map(_one_build, [ledger_dir] * 8, range(8)))
    assert sorted(revisions) == list(range(1, 9))
    assert [r.revision for r in Ledger(ledger_dir).revisions("KES2-ORB-001")] == list(range(1, 9))
    _consistent(ledger_dir)


@pytest.mark.slow
def test_eight_concurrent_record_builds_each_list_every_earlier_revision(tmp_path):
    study = write_study(tmp_path / "study")
    ledger_dir = str(tmp_path / "ledger")
    Ledger(ledger_dir)
    with ProcessPoolExecutor(max_workers=8) as pool:
        jobs = [(str(study), ledger_dir, n) for n in range(8)]
        assert sorted(pool.map(_simulated_build, jobs)) == list(range(1, 9))
    ledger = Ledger(ledger_dir)
    for n in range(1, 9):  # issue 16: r0003 called itself the first revision, r0008 listed [1, 8]
        record = ledger.record("KES2-ORB-001", n)
        assert [h["revision"] for h in record["history"]] == list(range(1, n + 1))
        previous = ledger.previous_record_sha256("KES2-ORB-001", n)
        assert record["previous_record_sha256"] == previous
    _consistent(ledger_dir)


def test_killing_a_build_midway_leaves_the_ledger_consistent(tmp_path):
    ledger_dir = str(tmp_path / "ledger")
    _one_build(ledger_dir, 0)
    script = textwrap.dedent(
        f"""
        import sys, time
        from orbitledger.reporting.ledger import Ledger
        ledger = Ledger({ledger_dir!r})
        res = ledger.reserve("KES2-ORB-001")
        ledger.write_artifact(res, "record.html", b"x" * 100000)
        print("reserved", flush=True)
        time.sleep(60)
        """
    )
    proc = subprocess.Popen([sys.executable, "-c", script], stdout=subprocess.PIPE, text=True)
    assert proc.stdout.readline().strip() == "reserved"
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    _consistent(ledger_dir)
    assert [r.revision for r in Ledger(ledger_dir).revisions("KES2-ORB-001")] == [1]
    assert _one_build(ledger_dir, 2) == 2  # the killed build's number is taken back
    _consistent(ledger_dir)


@pytest.mark.slow
def test_eight_concurrent_cli_builds_of_one_study(tmp_path):
    study = write_study(tmp_path / "study")
    ledger_dir = tmp_path / "ledger"
    env = dict(os.environ, PYTHONWARNINGS="ignore")
    procs = [
        subprocess.Popen(
            [
                sys.executable,
                "-m",
                "orbitledger",
                "build",
                str(study),
                "--ledger",
                str(ledger_dir),
                "--note",
                f"build {n}",
            ],
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
            env=env,
        )
        for n in range(8)
    ]
    outs = [p.communicate(timeout=600) for p in procs]
    assert [p.returncode for p in procs] == [0] * 8, [err[-500:] for _, err in outs]
    ledger = Ledger(ledger_dir)
    assert [r.revision for r in ledger.revisions("KES2-ORB-001")] == list(range(1, 9))
    assert sorted(r.note for r in ledger.revisions("KES2-ORB-001")) == [
        f"build {n}" for n in range(8)
    ]
    for n in range(1, 9):  # the history in each record was read under the ledger's lock
        history = ledger.record("KES2-ORB-001", n)["history"]
        assert [h["revision"] for h in history] == list(range(1, n + 1))
    _consistent(ledger_dir)
