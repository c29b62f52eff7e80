"""Verbs of signing keys: ``keys new`` (a person's key and certificate), ``keys new-ca``.

``orbitledger keys new --name NAME [--email E] [--org ORG] --out PREFIX [--passphrase-file F]
[--ca CA.key.pem --ca-cert CA.cert.pem [--ca-passphrase-file F]] [--days N]`` writes
``PREFIX.key.pem`` (PKCS#8, encrypted with the passphrase when given, mode 0600) and
``PREFIX.cert.pem``: self-signed, or issued by the team authority that ``keys new-ca`` made.
No key is ever written into a ledger.
"""

from __future__ import annotations

import argparse
import sys

from .main import UsageError

__all__ = ["register"]


def _write(args: argparse.Namespace, key, cert, passphrase) -> int:
    from orbitledger.reporting.keys import cert_fingerprint, write_key_pair

    key_path, cert_path = write_key_pair(args.out, key, cert, passphrase)
    state = "encrypted with the passphrase" if passphrase else "NOT encrypted (no --passphrase-file)"
    print(f"private key  {key_path}  (PKCS#8, {state}, mode 0600: keep it to yourself)")
    print(f"certificate  {cert_path}")
    print(f"  subject    {cert.subject.rfc4514_string()}")
    print(f"  issuer     {cert.issuer.rfc4514_string()}")
    print(f"  valid      {cert.not_valid_before_utc:%Y-%m-%dT%H:%M:%SZ} to {cert.not_valid_after_utc:%Y-%m-%dT%H:%M:%SZ}")
    print(f"  SHA-256    {cert_fingerprint(cert)}")
    return 0


def _run_new(args: argparse.Namespace) -> int:
    from orbitledger.reporting.keys import load_signer, new_certificate, read_passphrase

    passphrase = read_passphrase(args.passphrase_file)
    authority = None
    if (args.ca is None) != (args.ca_cert is None):
        raise UsageError("--ca CA.key.pem and --ca-cert CA.cert.pem go together")
    if args.ca is not None:
        authority = load_signer(
            args.ca,
            args.ca_cert,
            read_passphrase(args.ca_passphrase_file, "--ca-passphrase-file"),
            option="--ca",
            cert_option="--ca-cert",
            role="issue",
        )
        for message in authority.messages:
            print(f"orbitledger keys new: {message}", file=sys.stderr)
    elif args.ca_passphrase_file is not None:
        raise UsageError("--ca-passphrase-file goes with --ca")
    key, cert = new_certificate(
        args.name, org=args.org or "", email=args.email or "", days=args.days, authority=authority
    )
    return _write(args, key, cert, passphrase)


def _run_new_ca(args: argparse.Namespace) -> int:
    from orbitledger.reporting.keys import new_authority, read_passphrase

    passphrase = read_passphrase(args.passphrase_file)
    key, cert = new_authority(args.name, org=args.org or "", email=args.email or "", days=args.days)
    status = _write(args, key, cert, passphrase)
    print(f"give {args.out}.cert.pem to 'orbitledger verify --trust' to accept what this authority issues")
    return status


def _common(p: argparse.ArgumentParser, days: int) -> None:
    p.add_argument("--name", required=True, help="the name on the certificate (its common name)")
    p.add_argument("--org", help="organisation")
    p.add_argument("--email", help="e-mail address")
    p.add_argument("--out", required=True, metavar="PREFIX", help="writes PREFIX.key.pem and PREFIX.cert.pem")
    p.add_argument("--passphrase-file", metavar="FILE", help="encrypt the key with the passphrase on its first line")
    p.add_argument("--days", type=int, default=days, help=f"validity in days (default {days})")


def register(subparsers) -> None:
    p = subparsers.add_parser("keys", help="make signing keys and certificates (sign-offs)")
    verbs = p.add_subparsers(dest="keys_verb", metavar="new|new-ca", parser_class=type(p))
    p.set_defaults(run=lambda args: p.print_help() or 2)

    q = verbs.add_parser("new", help="a person's signing key and certificate")
    _common(q, 2 * 365)
    q.add_argument("--ca", metavar="CA.key.pem", help="issue the certificate with this authority's key")
    q.add_argument("--ca-cert", metavar="CA.cert.pem", help="the authority's certificate")
    q.add_argument("--ca-passphrase-file", metavar="FILE", help="the authority key's passphrase")
    q.set_defaults(run=_run_new)

    q = verbs.add_parser("new-ca", help="a team's own certificate authority")
    _common(q, 10 * 365)
    q.set_defaults(run=_run_new_ca)
