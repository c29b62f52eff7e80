"""Verbs of the ledger: history, diff, index, and ``ledger copy | export | init``.

Every verb takes ``--ledger ADDRESS``: a folder, or ``postgresql://user@host/database``; else
the environment variable ``ORBITLEDGER_LEDGER``; else ``./ledger``. Reading verbs never write
to the ledger (an archive on read-only media is listed, diffed, indexed and exported as is).
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

__all__ = ["open_for_reading", "register", "register_history_diff", "verify_whole_ledger"]

_LEDGER_HELP = (
    "a ledger folder or postgresql://user@host/db (default ./ledger; env ORBITLEDGER_LEDGER)"
)


def open_for_reading(args: argparse.Namespace, *, create: bool = False):
    from orbitledger.reporting.ledger import ledger_address, open_ledger

    return open_ledger(ledger_address(args.ledger, Path.cwd() / "ledger"), create=create)


def _revision(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a revision number") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"{text!r}: revisions count from 1")
    return value


def _signoff_line(s: dict) -> str:
    if "signed" not in s:  # the ledger's row alone (no signed copy with entries to read)
        return f"{s['role']} by {s['name']} at {s['time_utc']}"
    state = {True: "signed", False: "UNSIGNED"}.get(s["signed"], f"unknown: {s.get('problem')}")
    org = f" ({s['org']})" if s.get("org") else ""
    cert = f", certificate SHA-256 {s['cert_sha256'][:16]}..." if s.get("cert_sha256") else ""
    return f"{s['role']} by {s['name']}{org} at {s['time_utc']}, {state}{cert}"


def _run_history(args: argparse.Namespace) -> int:
    from orbitledger.reporting.signoff import signoff_summaries

    from .main import UsageError

    ledger = open_for_reading(args)
    rows = ledger.history(args.record_id)
    if not rows:
        known = ", ".join(ledger.record_ids()) or "none"
        raise UsageError(f"{args.record_id}: no revisions in {ledger.address} (known: {known})")
    if not any(r["changes"] for r in rows):  # ledgers of schema 1 kept them in the records only
        kept = ledger.record(args.record_id, rows[-1]["revision"]).get("history", [])
        by_rev = {h["revision"]: h.get("changes", []) for h in kept}
        for r in rows:
            r["changes"] = by_rev.get(r["revision"], [])
    names = ledger.record_artifacts(args.record_id) if any(r["signoffs"] for r in rows) else {}
    signed = ledger.record_signoffs(args.record_id) if names else {}
    for r in rows:
        if r["signoffs"]:  # signed or unsigned, name and certificate: from the signed copy
            by_role = {s["role"]: s for s in r["signoffs"]}
            summaries = signoff_summaries(
                ledger, args.record_id, r["revision"],
                artifacts=names.get(r["revision"], {}), signoffs=signed.get(r["revision"], []),
            )  # fmt: skip
            if [x["role"] for x in summaries if x["role"] in by_role] == list(by_role):
                r["signoffs"] = [{**by_role.get(x["role"], {}), **x} for x in summaries]
    if args.json:
        doc = {"ledger": ledger.address, "record_id": args.record_id, "revisions": rows}
        json.dump(doc, sys.stdout, indent=2, ensure_ascii=False)
        sys.stdout.write("\n")
        return 0
    print(f"{args.record_id}: {rows[-1]['title']}")
    for r in rows:
        line = f"  rev {r['revision']:<3} {r['built_utc']}  {r['status']:<8}  {r['author'] or '-'}"
        print(f"{line}  {r['note'] or ''}".rstrip())
        for s in r["signoffs"]:
            print(f"           {_signoff_line(s)}")
        if r["status"] != "draft" and "html" in r["latest"]:
            where = ledger.location(
                args.record_id, r["revision"], r["latest"]["html"].rsplit("/", 1)[-1]
            )
            print(f"           current state ({r['status']}): {where}")
        for line in r["changes"]:
            print(f"           - {line}")
    return 0


def _run_diff(args: argparse.Namespace) -> int:
    from orbitledger.reporting.diff import diff_records, format_side_by_side

    ledger = open_for_reading(args)
    a = ledger.record(args.record_id, args.rev_a)
    b = ledger.record(args.record_id, args.rev_b)
    if args.html:
        from orbitledger.reporting.review_pages import diff_page

        out = Path(args.html)
        out.parent.mkdir(parents=True, exist_ok=True)
        out.write_text(diff_page(a, b, ledger=ledger), encoding="utf-8")
        print(f"{args.record_id} revisions {args.rev_a} -> {args.rev_b}: {out}")
        return 0
    sys.stdout.write(format_side_by_side(diff_records(a, b), args.rev_a, args.rev_b))
    return 0


def verify_whole_ledger(args: argparse.Namespace) -> int:
    """``verify --ledger ADDRESS``: every artifact's hash and every record id's hash chain."""
    from orbitledger.reporting.ledger_chain import verify_ledger

    from .main import UsageError

    if not args.ledger:
        raise UsageError("give RECORD.html|RECORD.pdf, or --ledger ADDRESS to check a whole ledger")
    report = verify_ledger(open_for_reading(args))
    sys.stdout.write(report.text())
    return 0 if report.ok else 1


def _run_index(args: argparse.Namespace) -> int:
    from orbitledger.reporting.review_index import write_index

    ledger = open_for_reading(args)
    site = write_index(ledger, Path(args.out))
    print(f"review index of {ledger.address}: {site.pages} pages, open {site.home}")
    return 0


def _run_copy(args: argparse.Namespace) -> int:
    from orbitledger.reporting.ledger import open_ledger
    from orbitledger.reporting.ledger_copy import copy_ledger

    source = open_ledger(args.source, create=False)
    target = open_ledger(args.target, create=True)
    done = copy_ledger(source, target)
    print(
        f"copied {done.revisions} revisions ({done.artifacts} artifacts, {done.bytes} bytes, "
        f"every SHA-256 checked) to {target.address}; {done.skipped} were there already"
    )
    return 0


def _run_export(args: argparse.Namespace) -> int:
    from orbitledger.reporting.ledger_copy import export_artifacts

    ledger = open_for_reading(args)
    written = export_artifacts(ledger, Path(args.out), args.record_id, args.rev)
    print(f"exported {len(written)} artifacts (SHA-256 checked) to {args.out}")
    return 0


def _run_init(args: argparse.Namespace) -> int:
    from orbitledger.reporting.ledger import ledger_address, open_ledger

    ledger = open_ledger(ledger_address(args.address, Path.cwd() / "ledger"), create=True)
    print(f"ledger ready at {ledger.address} ({ledger.kind})")
    return 0


def register_history_diff(subparsers) -> None:
    p = subparsers.add_parser("history", help="the revisions of a record, with what changed")
    p.add_argument("record_id", metavar="RECORD_ID")
    p.add_argument("--json", action="store_true", help="print the history as JSON")
    p.add_argument("--ledger", metavar="ADDRESS", help=_LEDGER_HELP)
    p.set_defaults(run=_run_history)

    p = subparsers.add_parser("diff", help="inputs and results of two revisions side by side")
    p.add_argument("record_id", metavar="RECORD_ID")
    p.add_argument("rev_a", metavar="REV_A", type=_revision)
    p.add_argument("rev_b", metavar="REV_B", type=_revision)
    p.add_argument("--html", metavar="OUT.html", help="write the side-by-side page to a file")
    p.add_argument("--ledger", metavar="ADDRESS", help=_LEDGER_HELP)
    p.set_defaults(run=_run_diff)


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "index", help="write the review index: a static, offline site of the whole ledger"
    )
    p.add_argument("--out", metavar="DIR", required=True, help="the site's folder")
    p.add_argument("--ledger", metavar="ADDRESS", help=_LEDGER_HELP)
    p.set_defaults(run=_run_index)

    p = subparsers.add_parser("ledger", help="copy, export or create a ledger")
    kinds = p.add_subparsers(dest="ledger_verb", metavar="ACTION", required=True)
    q = kinds.add_parser("copy", help="copy every revision to another ledger, SHA-256 checked")
    q.add_argument("source", metavar="SRC", help="a ledger folder or postgresql:// address")
    q.add_argument("target", metavar="DST", help="an empty ledger, or one holding the same records")
    q.set_defaults(run=_run_copy)
    q = kinds.add_parser("export", help="write the artifacts of revisions to a folder")
    q.add_argument("record_id", metavar="RECORD_ID", nargs="?", help="default: every record")
    q.add_argument("rev", metavar="REV", nargs="?", type=_revision, help="default: every revision")
    q.add_argument("--out", metavar="DIR", required=True)
    q.add_argument("--ledger", metavar="ADDRESS", help=_LEDGER_HELP)
    q.set_defaults(run=_run_export)
    q = kinds.add_parser("init", help="create an empty ledger (PostgreSQL: as the database owner)")
    q.add_argument("address", metavar="ADDRESS", nargs="?", help=_LEDGER_HELP)
    q.set_defaults(run=_run_init)
