"""The ledger on its two back ends, side by side: a long history, and building into each.

    ORBITLEDGER_BENCH_PG_URL=postgresql://... python benchmarks/bench_ledger.py [--revisions N] [--repeats N]

(``ORBITLEDGER_TEST_PG_URL`` is used when the first is not set: a superuser address of a
throw-away cluster; a fresh database is created in it and dropped at the end.)

Measures, in one run, the minimum of interleaved repeats (``_timing.min_times_s``) of

- ``orbitledger history RECORD_ID --json`` on a ledger of N revisions (default 1,000, one
  sign-off pair on every tenth) in a folder and in PostgreSQL, in-process from the command's
  entry point (the ledger's open included, the interpreter's start not): target <= 0.5 s each;
- ``orbitledger build`` of the example study (``examples/``, HTML) into a fresh folder and
  into PostgreSQL, each a fresh process: target PostgreSQL <= 1.1 x the folder;
- the part of a build that depends on the back end, in-process (``record_run`` of the executed
  study: assemble, render, store), the stricter comparison since the study's run is left out.
"""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time
import uuid
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(Path(__file__).resolve().parent))
from _timing import min_times_s  # noqa: E402

BIN = Path(sys.executable).parent
STUDY = ROOT / "examples" / "kestrel2-orbit-study.ipynb"
RID = "BENCH-ORB-001"


def _database(admin: str) -> tuple[str, str]:
    from urllib.parse import urlsplit, urlunsplit

    import psycopg

    name = f"ol_bench_{uuid.uuid4().hex[:10]}"
    with psycopg.connect(admin, autocommit=True) as conn:
        conn.execute(f'CREATE DATABASE "{name}"')
    parts = urlsplit(admin)
    return name, urlunsplit((parts.scheme, parts.netloc, f"/{name}", parts.query, parts.fragment))


def _drop(admin: str, name: str) -> None:
    import psycopg

    with psycopg.connect(admin, autocommit=True) as conn:
        conn.execute(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)')


def _fill(ledger, revisions: int) -> None:
    """``revisions`` revisions of one record: small artifacts, a record JSON, history lines."""
    from orbitledger.reporting.ledger import SignOff

    for n in range(1, revisions + 1):
        with ledger.new_revision(RID) as w:
            record = {
                "record_id": RID, "revision": n, "title": "Kestrel-2 orbit study",
                "built_utc": "2026-01-01T00:00:00Z", "prepared": {"name": "A. Analyst"},
                "note": f"iteration {n}", "previous_record_sha256": w.previous_record_sha256,
                "history": [{"revision": n, "changes": [f"orbit.altitude_km changed: {n} -> {n + 1}",
                                                        "result dv_total_km_s changed"]}],
            }  # fmt: skip
            w.write("record.html", b"<html>%d</html>" % n)
            w.write("record.json", json.dumps(record).encode())
            w.commit(record)
        if n % 10 == 0:
            for role in ("checked", "approved"):
                html = next(a for a in ledger.artifacts(RID, n) if a.name == "record.html")
                ledger.add_signoff(
                    RID, n, SignOff(role, f"{role} person", "2026-01-02T00:00:00Z", html.sha256),
                    {f"record-{role}.html": b"copy"}, role,
                )  # fmt: skip


def _history(address: str) -> None:
    from orbitledger.cli.main import main

    with contextlib.redirect_stdout(io.StringIO()) as out:
        assert main(["history", RID, "--json", "--ledger", address]) == 0
    assert out.getvalue().count('"revision":') >= 1


def _fresh_study(into: Path) -> Path:
    into.mkdir(parents=True)
    for path in STUDY.parent.iterdir():
        if path.is_file() and (path.suffix == ".ipynb" or path.name.endswith(".case.json")):
            shutil.copy2(path, into / path.name)
    return into / STUDY.name


def _cli_build(study: Path, ledger: str) -> float:
    start = time.perf_counter()
    done = subprocess.run(
        [str(BIN / "orbitledger"), "build", str(study), "--to", "html", "--ledger", ledger],
        cwd=study.parent, capture_output=True, text=True, check=False,
    )  # fmt: skip
    if done.returncode != 0:
        raise SystemExit(f"build into {ledger} failed:\n{done.stderr[-2000:]}")
    return time.perf_counter() - start


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--revisions", type=int, default=1000)
    parser.add_argument("--repeats", type=int, default=3, help="full builds per back end")
    args = parser.parse_args()
    admin = os.environ.get("ORBITLEDGER_BENCH_PG_URL") or os.environ.get("ORBITLEDGER_TEST_PG_URL")
    if not admin:
        print("set ORBITLEDGER_BENCH_PG_URL to a superuser postgresql:// address", file=sys.stderr)
        return 2
    from orbitledger.reporting.ledger import open_ledger

    made = []
    ok = True
    try:
        with tempfile.TemporaryDirectory(prefix="orbitledger-bench-") as tmp:
            folder = str(Path(tmp) / "history-ledger")
            name, pg = _database(admin)
            made.append(name)
            start = time.perf_counter()
            for address in (folder, pg):
                _fill(open_ledger(address), args.revisions)
            print(
                f"filled two ledgers with {args.revisions} revisions in {time.perf_counter() - start:.0f} s"
            )
            best = min_times_s(
                {"folder": lambda: _history(folder), "postgresql": lambda: _history(pg)}, repeats=7
            )
            for backend, seconds in best.items():
                met = seconds <= 0.5
                ok &= met
                print(f"history of {args.revisions} revisions, {backend:<11} {seconds * 1e3:8.1f} ms"
                      f"  (target <= 500 ms: {'met' if met else 'MISSED'})")  # fmt: skip

            runs: dict[str, list[float]] = {"folder": [], "postgresql": []}
            for n in range(args.repeats):  # interleaved: a slow moment hits both alike
                name, pg = _database(admin)
                made.append(name)
                runs["folder"].append(
                    _cli_build(_fresh_study(Path(tmp) / f"f{n}"), str(Path(tmp) / f"L{n}"))
                )
                runs["postgresql"].append(_cli_build(_fresh_study(Path(tmp) / f"p{n}"), pg))
            folder_s, pg_s = min(runs["folder"]), min(runs["postgresql"])
            met = pg_s <= 1.1 * folder_s
            ok &= met
            print(f"build of the example study, folder       {folder_s:8.2f} s")
            print(f"build of the example study, postgresql   {pg_s:8.2f} s  {pg_s / folder_s:5.2f} x folder"
                  f"  (target <= 1.1 x: {'met' if met else 'MISSED'})")  # fmt: skip

            from orbitledger.reporting.build import execute_study, read_notebook, record_run

            study = _fresh_study(Path(tmp) / "inproc")
            executed, manifest = execute_study(
                read_notebook(study), study.parent, name=study.name, progress=False
            )
            name, pg = _database(admin)
            made.append(name)
            target = {"folder": str(Path(tmp) / "inproc-ledger"), "postgresql": pg}
            best = min_times_s(
                {k: (lambda a=a: record_run(study, executed, manifest, ledger_dir=a)) for k, a in target.items()},
                repeats=5,
            )  # fmt: skip
            ratio = best["postgresql"] / best["folder"]
            print(f"record + render + store, folder          {best['folder']:8.2f} s")
            print(
                f"record + render + store, postgresql      {best['postgresql']:8.2f} s  {ratio:5.2f} x folder"
            )
    finally:
        for name in made:
            _drop(admin, name)
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
