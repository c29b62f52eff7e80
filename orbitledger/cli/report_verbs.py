"""Verbs of calculation records: build, history, diff, sign, verify, demo.

``sign`` and ``build`` sign with ``--key`` (PEM PKCS#8 or PKCS#12) and ``--cert``; ``sign
--name`` without a key records an unsigned sign-off. ``verify --trust`` checks who signed.

Default ledger: ``build`` uses ``ledger/`` beside the study notebook; ``history``, ``diff`` and
``sign`` use ``./ledger`` in the current folder. ``--ledger DIR`` (or the environment variable
``ORBITLEDGER_LEDGER``) chooses another one for every verb.
"""

from __future__ import annotations

import argparse
import logging
import os
import sys
from pathlib import Path

from .main import UsageError

__all__ = ["register"]


def _log_to_stderr() -> None:
    log = logging.getLogger("orbitledger.reporting")
    if not log.handlers:
        handler = logging.StreamHandler(sys.stderr)
        handler.setFormatter(logging.Formatter("orbitledger: %(message)s"))
        log.addHandler(handler)
        log.setLevel(logging.INFO)


def _ledger_dir(args: argparse.Namespace, default: Path) -> Path:
    if args.ledger:
        return Path(args.ledger)
    env = os.environ.get("ORBITLEDGER_LEDGER")
    return Path(env) if env else default


def _open_ledger(args: argparse.Namespace):
    from orbitledger.reporting.ledger import Ledger

    folder = _ledger_dir(args, Path.cwd() / "ledger")
    if not (folder / "index.sqlite").is_file():
        raise UsageError(
            f"--ledger {folder}: no ledger there (build a record first, or pass --ledger DIR)"
        )
    return Ledger(folder)


def _formats(text: str) -> tuple[str, ...]:
    parts = tuple(p.strip().lower() for p in text.split(",") if p.strip())
    if not parts or set(parts) - {"html", "pdf"}:
        raise UsageError(f"--to {text}: choose html, pdf or html,pdf")
    return parts


def _print_outcome(outcome) -> None:
    print(f"record {outcome.record_id} revision {outcome.revision}")
    for kind in ("html", "pdf", "json", "notebook"):
        if kind in outcome.files:
            print(f"  {kind:<9}{outcome.files[kind]}")
    for message in outcome.messages:
        print(f"orbitledger: {message}", file=sys.stderr)


def _signer(args: argparse.Namespace, *, required: bool = False):
    """The key and certificate of ``--key``/``--cert``/``--passphrase-file``, or None."""
    from orbitledger.reporting.keys import load_signer, read_passphrase

    if args.key is None:
        if args.cert is not None or args.passphrase_file is not None:
            raise UsageError("--cert and --passphrase-file go with --key KEY.key.pem (or KEY.p12)")
        if required:
            raise UsageError("give --key KEY.key.pem --cert KEY.cert.pem, or --name NAME (unsigned)")
        return None
    signer = load_signer(args.key, args.cert, read_passphrase(args.passphrase_file))
    for message in signer.messages:
        print(f"orbitledger {args.verb}: {message}", file=sys.stderr)
    return signer


def _add_key_options(p: argparse.ArgumentParser, role: str) -> None:
    p.add_argument("--key", metavar="KEY.key.pem", help=f"sign as {role} with this key (PEM PKCS#8 or .p12)")
    p.add_argument("--cert", metavar="KEY.cert.pem", help="the key's certificate (inside a .p12 already)")
    p.add_argument("--passphrase-file", metavar="FILE", help="the key's passphrase, on the first line")


def _run_build(args: argparse.Namespace) -> int:
    from orbitledger.reporting.build import BuildError, build

    _log_to_stderr()
    study = Path(args.study)
    to = _formats(args.to)
    ledger = _ledger_dir(args, study.resolve().parent / "ledger")
    signer = _signer(args)
    try:
        outcome = build(study, to=to, ledger_dir=ledger, note=args.note or "", signer=signer)
    except BuildError as err:
        print(
            f"orbitledger build: {study}: {err}\nnothing was written to the ledger", file=sys.stderr
        )
        return 2
    _print_outcome(outcome)
    return 0


def _signoff_line(s: dict) -> str:
    state = {True: "signed", False: "UNSIGNED"}.get(s["signed"], f"unknown: {s.get('problem')}")
    org = f" ({s['org']})" if s.get("org") else ""
    cert = f", certificate SHA-256 {s['cert_sha256'][:16]}..." if s.get("cert_sha256") else ""
    return f"{s['role']} by {s['name']}{org} at {s['time_utc']}, {state}{cert}"


def _run_history(args: argparse.Namespace) -> int:
    from orbitledger.reporting.signoff import signoff_summaries

    ledger = _open_ledger(args)
    revisions = ledger.revisions(args.record_id)
    if not revisions:
        raise UsageError(
            f"{args.record_id}: no revisions in {ledger.root} (known: {', '.join(ledger.record_ids()) or 'none'})"
        )
    record = ledger.record(args.record_id, revisions[-1].revision)
    changes = {h["revision"]: h["changes"] for h in record.get("history", [])}
    print(f"{args.record_id}: {revisions[-1].title}")
    for r in revisions:
        print(
            f"  rev {r.revision:<3} {r.built_utc}  {r.status:<8}  {r.author or '-'}  {r.note or ''}".rstrip()
        )
        for s in signoff_summaries(ledger, args.record_id, r.revision):
            print(f"           {_signoff_line(s)}")
        for line in changes.get(r.revision, []):
            print(f"           - {line}")
    return 0


def _run_diff(args: argparse.Namespace) -> int:
    from orbitledger.reporting.diff import diff_records, format_side_by_side

    ledger = _open_ledger(args)
    a = ledger.record(args.record_id, args.rev_a)
    b = ledger.record(args.record_id, args.rev_b)
    sys.stdout.write(format_side_by_side(diff_records(a, b), args.rev_a, args.rev_b))
    return 0


def _run_sign(args: argparse.Namespace) -> int:
    from orbitledger.reporting.signoff import sign

    _log_to_stderr()
    if args.key is None and not args.name:
        raise UsageError("give --key KEY.key.pem --cert KEY.cert.pem, or --name NAME (unsigned)")
    signer = _signer(args)
    ledger = _open_ledger(args)
    done = sign(
        ledger, args.record_id, args.rev, args.role, args.name,
        signer=signer, note=args.note or "",
    )  # fmt: skip
    org = f" ({done.org})" if done.org else ""
    print(
        f"{done.record_id} revision {done.revision}: {done.role} by {done.name}{org} at {done.time_utc}"
    )
    if done.signed:
        print(f"  signed with the certificate SHA-256 {done.cert_sha256}")
    else:
        print("  UNSIGNED: a typed name without a key; records and verify show it as unsigned")
    print(f"  refers to record.html SHA-256 {done.artifact_sha256}")
    for name, path in done.files.items():
        print(f"  {name:<25} {path}")
    for message in done.messages:
        print(f"orbitledger: {message}", file=sys.stderr)
    return 0


def _run_verify(args: argparse.Namespace) -> int:
    from orbitledger.reporting.verify import verify_file

    if args.execute:
        print(
            "orbitledger verify: warning: --execute runs the code embedded in this record in a new "
            "Python kernel, with your permissions. Only do this for a record you trust.",
            file=sys.stderr,
        )
    report = verify_file(args.record, execute=args.execute, trust=args.trust)
    sys.stdout.write(report.text())
    return 0 if report.ok else 1


def _run_demo(args: argparse.Namespace) -> int:
    from orbitledger.reporting.demo import run_demo

    _log_to_stderr()
    out = Path(args.out) if args.out else Path.cwd() / "orbitledger-demo"
    outcome = run_demo(out)
    print(f"demo study copied to {out / 'study'}; ledger at {out / 'ledger'}")
    _print_outcome(outcome)
    print(f"check it: orbitledger verify {outcome.files['html']}")
    return 0


def _revision(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a revision number") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"{text!r}: revisions count from 1")
    return value


def register(subparsers) -> None:
    ledger_help = "ledger folder (default: see 'orbitledger build --help'; env ORBITLEDGER_LEDGER)"

    p = subparsers.add_parser(
        "build", help="run a study notebook cleanly and record it in the ledger"
    )
    p.add_argument("study", metavar="STUDY.ipynb")
    p.add_argument("--to", default="html", help="html, pdf or html,pdf (default html)")
    p.add_argument(
        "--ledger", metavar="DIR", help="ledger folder (default: ledger/ beside the notebook)"
    )
    p.add_argument("--note", default="", help="what changed in this revision")
    _add_key_options(p, "prepared")
    p.set_defaults(run=_run_build)

    p = subparsers.add_parser("history", help="the revisions of a record, with what changed")
    p.add_argument("record_id", metavar="RECORD_ID")
    p.add_argument(
        "--ledger",
        metavar="DIR",
        help=ledger_help.replace("see 'orbitledger build --help'", "./ledger"),
    )
    p.set_defaults(run=_run_history)

    p = subparsers.add_parser("diff", help="inputs and results of two revisions side by side")
    p.add_argument("record_id", metavar="RECORD_ID")
    p.add_argument("rev_a", metavar="REV_A", type=_revision)
    p.add_argument("rev_b", metavar="REV_B", type=_revision)
    p.add_argument("--ledger", metavar="DIR", help="ledger folder (default ./ledger)")
    p.set_defaults(run=_run_diff)

    p = subparsers.add_parser("sign", help="sign off a revision: checked, then approved")
    p.add_argument("record_id", metavar="RECORD_ID")
    p.add_argument("rev", metavar="REV", type=_revision)
    p.add_argument("--role", required=True, choices=["checked", "approved"])
    _add_key_options(p, "this role")
    p.add_argument("--name", help="without --key: who signs (recorded as UNSIGNED)")
    p.add_argument("--note", default="", help="a remark kept with the sign-off")
    p.add_argument("--ledger", metavar="DIR", help="ledger folder (default ./ledger)")
    p.set_defaults(run=_run_sign)

    p = subparsers.add_parser(
        "verify", help="check a record from the file alone (exit 1 if anything differs)"
    )
    p.add_argument("record", metavar="RECORD.html|RECORD.pdf|RECORD.json")
    p.add_argument(
        "--execute", action="store_true", help="also re-run the embedded notebook (runs its code)"
    )
    p.add_argument(
        "--trust",
        metavar="CERTS.pem|DIR",
        help="accept only signatures whose certificate is, or is issued by, one of these",
    )
    p.set_defaults(run=_run_verify)

    p = subparsers.add_parser(
        "demo", help="build the Kestrel-2 example study: HTML and PDF records"
    )
    p.add_argument("--out", metavar="DIR", help="a new folder (default ./orbitledger-demo)")
    p.set_defaults(run=_run_demo)
