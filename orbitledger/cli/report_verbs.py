"""Verbs of calculation records: build, history, diff, sign, verify, demo.

``sign`` and ``build`` sign with ``--key`` (PEM PKCS#8 or PKCS#12) and ``--cert``; ``sign
--name`` without a key records an unsigned sign-off. ``verify --trust`` checks who signed.

Default ledger: ``build`` uses ``ledger/`` beside the study notebook; ``history``, ``diff`` and
``sign`` use ``./ledger`` in the current folder. ``--ledger ADDRESS`` (a folder or a
``postgresql://`` address; or the environment variable ``ORBITLEDGER_LEDGER``) chooses another
one for every verb. history and diff live in ``ledger_verbs``, beside index and ledger.
"""

from __future__ import annotations

import argparse
import logging
import sys
from pathlib import Path

from .ledger_verbs import register_history_diff
from .main import UsageError

__all__ = ["register"]


def _log_to_stderr() -> None:
    log = logging.getLogger("orbitledger.reporting")
    if not log.handlers:
        handler = logging.StreamHandler(sys.stderr)
        handler.setFormatter(logging.Formatter("orbitledger: %(message)s"))
        log.addHandler(handler)
        log.setLevel(logging.INFO)


def _ledger_dir(args: argparse.Namespace, default: Path) -> str | Path:
    from orbitledger.reporting.ledger import ledger_address

    return ledger_address(args.ledger, default)


def _open_ledger(args: argparse.Namespace):
    """The ledger ``sign`` writes to (refused at once when it is read-only)."""
    from .ledger_verbs import open_for_reading

    ledger = open_for_reading(args)
    ledger.check_writable()
    return ledger


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
    from orbitledger.reporting.findings import FailingCriteria

    _log_to_stderr()
    study = Path(args.study)
    to = _formats(args.to)
    ledger = _ledger_dir(args, study.resolve().parent / "ledger")
    signer = _signer(args)
    try:
        outcome = build(
            study,
            to=to,
            ledger_dir=ledger,
            note=args.note or "",
            strict=args.strict,
            accept_failing=args.accept_failing,
            signer=signer,
        )
    except FailingCriteria as err:  # a check that did not hold: exit 1
        print(
            f"orbitledger build: {study}: {err}\nnothing was written to the ledger", file=sys.stderr
        )
        return 1
    except BuildError as err:
        print(
            f"orbitledger build: {study}: {err}\nnothing was written to the ledger", file=sys.stderr
        )
        return 2
    _print_outcome(outcome)
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

    if args.record is None:  # verify --ledger ADDRESS: the whole ledger and its hash chain
        from .ledger_verbs import verify_whole_ledger

        return verify_whole_ledger(args)

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
    p = subparsers.add_parser(
        "build", help="run a study notebook cleanly and record it in the ledger"
    )
    p.add_argument("study", metavar="STUDY.ipynb")
    p.add_argument("--to", default="html", help="html, pdf or html,pdf (default html)")
    p.add_argument(
        "--ledger",
        metavar="ADDRESS",
        help="ledger folder or postgresql://user@host/db (default: ledger/ beside the notebook)",
    )
    p.add_argument("--note", default="", help="what changed in this revision")
    p.add_argument(
        "--strict",
        action="store_true",
        help="refuse to write a record in which a criterion fails (exit 1)",
    )
    p.add_argument(
        "--accept-failing",
        metavar="REASON",
        help="record it although a criterion fails; the reason is kept in the record",
    )
    _add_key_options(p, "prepared")
    p.set_defaults(run=_run_build)

    register_history_diff(subparsers)

    p = subparsers.add_parser("sign", help="sign off a revision: checked, then approved")
    p.add_argument("record_id", metavar="RECORD_ID")
    p.add_argument("rev", metavar="REV", type=_revision)
    p.add_argument("--role", required=True, choices=["checked", "approved"])
    _add_key_options(p, "this role")
    p.add_argument("--name", help="without --key: who signs (recorded as UNSIGNED)")
    p.add_argument("--note", default="", help="a remark kept with the sign-off")
    p.add_argument(
        "--ledger", metavar="ADDRESS", help="ledger folder or postgresql:// (default ./ledger)"
    )
    p.set_defaults(run=_run_sign)

    p = subparsers.add_parser(
        "verify", help="check a record from the file alone (exit 1 if anything differs)"
    )
    p.add_argument("record", metavar="RECORD.html|RECORD.pdf|RECORD.json", nargs="?")
    p.add_argument(
        "--ledger",
        metavar="ADDRESS",
        help="without RECORD: check a whole ledger (folder or postgresql://), its hash chain",
    )
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
