"""Sign-off entries of a record and their detached signatures (``record-ROLE.sig.json``).

A sign-off is an entry of the record's ``signoffs`` list, in order (prepared, checked,
approved). A *signed* entry carries a **statement**, the exact UTF-8 text that was signed (a
canonical JSON document, schema ``orbitledger.signoff/1``):

- ``record_id``, ``revision``, ``role``, ``note``, ``time_utc`` (UTC, as the signer's clock says);
- ``name``, ``org``, ``email`` and ``cert_sha256``: the signer, from the certificate;
- ``record_sha256``: SHA-256 of the canonical JSON of the record *without* its ``signoffs``
  and ``status`` (what every copy of the revision has in common: inputs, results, notebook,
  figures, environment, history);
- ``artifacts``: name -> SHA-256 of every file of the revision that the ledger held when
  signing (each checked against the ledger before it was signed);
- ``previous``: SHA-256 of the canonical JSON of each earlier entry, so that a later
  signature also covers every earlier sign-off.

The signature is ECDSA (FIPS 186-4) or RSA PKCS#1 v1.5 (RFC 8017) over SHA-256 of the
statement's bytes, DER-encoded and then Base64 (RFC 4648), with the signer's certificate PEM
beside it: ``openssl dgst -sha256 -verify PUBKEY -signature SIG.der STATEMENT`` checks it.
An *unsigned* entry (``--name`` without a key) has ``"signed": false`` and nothing to check.
"""

from __future__ import annotations

import base64
import json
from typing import Any

from cryptography import x509
from cryptography.exceptions import InvalidSignature
from cryptography.hazmat.primitives import hashes
from cryptography.hazmat.primitives.asymmetric import ec, padding, rsa

from .keys import Signer, cert_fingerprint, cert_identity
from .ledger_parts import parse_utc_stamp
from .record import canonical_dumps, fingerprint_of

__all__ = [
    "SIGNATURES_SCHEMA",
    "STATEMENT_SCHEMA",
    "check_entry",
    "detached_file",
    "record_content_sha256",
    "signed_entry",
    "unsigned_entry",
]

STATEMENT_SCHEMA = "orbitledger.signoff/1"
SIGNATURES_SCHEMA = "orbitledger.signatures/1"
# What a sign-off does not cover: the list of sign-offs itself and the status it implies.
# What differs between the copies of one revision: the sign-offs and the status, and what the
# copy's page shows of them (the page's text and the fingerprints of what is shown, which
# verify checks against each copy's own page).
_NOT_SIGNED = ("signoffs", "status", "page", "shown_fingerprints")


def record_content_sha256(record: dict[str, Any]) -> str:
    """SHA-256 of the canonical JSON of ``record`` without what differs between its copies."""
    return fingerprint_of({k: v for k, v in record.items() if k not in _NOT_SIGNED})


def _algorithm(key: Any) -> str:
    if isinstance(key, ec.EllipticCurvePrivateKey | ec.EllipticCurvePublicKey):
        return "ECDSA-SHA256"
    if isinstance(key, rsa.RSAPrivateKey | rsa.RSAPublicKey):
        return "RSA-PKCS1v15-SHA256"
    return "unsupported"


def _statement(
    record: dict[str, Any],
    role: str,
    who: dict[str, str],
    time_utc: str,
    artifacts: dict[str, str],
    note: str,
) -> dict[str, Any]:
    return {
        "schema": STATEMENT_SCHEMA,
        "record_id": record["record_id"],
        "revision": record["revision"],
        "role": role,
        "note": note,
        "time_utc": time_utc,
        "name": who["name"],
        "org": who["org"],
        "email": who["email"],
        "cert_sha256": who["cert_sha256"],
        "record_sha256": record_content_sha256(record),
        "artifacts": dict(sorted(artifacts.items())),
        "previous": [fingerprint_of(e) for e in record.get("signoffs", [])],
    }


def unsigned_entry(
    role: str, name: str, time_utc: str, artifact_sha256: str, note: str = ""
) -> dict[str, Any]:
    """A sign-off by a typed name: marked unsigned, nothing proves who made it."""
    return {
        "role": role,
        "name": name,
        "org": "",
        "time_utc": time_utc,
        "note": note,
        "signed": False,
        "cert_sha256": "",
        "artifact_sha256": artifact_sha256,
    }


def signed_entry(
    record: dict[str, Any],
    role: str,
    signer: Signer,
    time_utc: str,
    artifacts: dict[str, str],
    note: str = "",
) -> dict[str, Any]:
    """A sign-off signed with ``signer``'s key over the statement (see the module docstring)."""
    from cryptography.hazmat.primitives import serialization

    who = {**cert_identity(signer.cert), "cert_sha256": signer.fingerprint}
    text = canonical_dumps(_statement(record, role, who, time_utc, artifacts, note))
    data = text.encode("utf-8")
    if isinstance(signer.key, rsa.RSAPrivateKey):
        raw = signer.key.sign(data, padding.PKCS1v15(), hashes.SHA256())
    else:
        raw = signer.key.sign(data, ec.ECDSA(hashes.SHA256()))
    pem = serialization.Encoding.PEM
    return {
        "role": role,
        "name": who["name"],
        "org": who["org"],
        "time_utc": time_utc,
        "note": note,
        "signed": True,
        "cert_sha256": who["cert_sha256"],
        "artifact_sha256": artifacts.get("record.html", ""),
        "statement": text,
        "algorithm": _algorithm(signer.key),
        "signature": base64.b64encode(raw).decode("ascii"),
        "certificate_pem": signer.cert.public_bytes(pem).decode("ascii"),
        "chain_pem": [c.public_bytes(pem).decode("ascii") for c in signer.chain],
    }


def _verify_raw(cert: x509.Certificate, algorithm: str, raw: bytes, data: bytes) -> bool:
    public = cert.public_key()
    if algorithm != _algorithm(public):
        return False
    try:
        if isinstance(public, rsa.RSAPublicKey):
            public.verify(raw, data, padding.PKCS1v15(), hashes.SHA256())
        else:
            public.verify(raw, data, ec.ECDSA(hashes.SHA256()))
    except InvalidSignature:
        return False
    return True


def check_entry(
    entry: dict[str, Any], record: dict[str, Any], earlier: list[dict[str, Any]]
) -> tuple[list[str], dict[str, Any] | None, x509.Certificate | None]:
    """(problems, statement, certificate) of one signed entry of ``record``'s sign-offs.

    Checks the signature over the statement with the certificate's key, and that the statement
    speaks of this record (id, revision, content hash), of this role and signer (as the entry
    shows them), of the earlier entries as they are, and of a time inside the certificate's
    validity. Trust (who issued the certificate) is for ``verify_signatures`` to judge.
    """
    try:
        cert = x509.load_pem_x509_certificate(entry["certificate_pem"].encode("ascii"))
        data = entry["statement"].encode("utf-8")
        statement = json.loads(data)
        raw = base64.b64decode(entry["signature"], validate=True)
    except (KeyError, ValueError, TypeError, AttributeError) as err:
        return [f"the signature data is unreadable ({type(err).__name__}: {err})"], None, None
    if not _verify_raw(cert, entry.get("algorithm", ""), raw, data):
        return ["the signature does not match the statement and the certificate's key"], statement, cert
    problems = []
    who = cert_identity(cert)
    expected = {
        "schema": STATEMENT_SCHEMA,
        "record_id": record.get("record_id"),
        "revision": record.get("revision"),
        "role": entry.get("role"),
        "name": who["name"],
        "org": who["org"],
        "cert_sha256": cert_fingerprint(cert),
        "time_utc": entry.get("time_utc"),
    }
    for key, value in expected.items():
        if statement.get(key) != value:
            problems.append(f"the statement says {key} {statement.get(key)!r}, expected {value!r}")
    for key in ("name", "org", "cert_sha256", "note"):
        if entry.get(key, "") != statement.get(key, ""):
            problems.append(f"the record shows {key} {entry.get(key)!r}, the signer signed {statement.get(key)!r}")
    content = record_content_sha256(record)
    if statement.get("record_sha256") != content:
        problems.append(
            f"the record changed after it was signed (its content hashes to {content[:16]}..., "
            f"the signer signed {str(statement.get('record_sha256'))[:16]}...)"
        )
    try:
        when = parse_utc_stamp(statement.get("time_utc"))
    except ValueError:
        problems.append(f"the signing time {statement.get('time_utc')!r} is not a UTC time")
    else:
        if not cert.not_valid_before_utc <= when <= cert.not_valid_after_utc:
            problems.append(
                f"the certificate was not valid at the signing time {statement['time_utc']} "
                f"(valid {cert.not_valid_before_utc:%Y-%m-%dT%H:%M:%SZ} to "
                f"{cert.not_valid_after_utc:%Y-%m-%dT%H:%M:%SZ})"
            )
    if statement.get("previous") != [fingerprint_of(e) for e in earlier]:
        problems.append("the earlier sign-offs are not the ones this signer saw (removed, reordered or edited)")
    return problems, statement, cert


def detached_file(record: dict[str, Any]) -> bytes:
    """The ``.sig.json`` beside a signed copy: every sign-off so far, in order (UTF-8 JSON)."""
    body = {
        "schema": SIGNATURES_SCHEMA,
        "record_id": record["record_id"],
        "revision": record["revision"],
        "record_sha256": record_content_sha256(record),
        "signoffs": record.get("signoffs", []),
    }
    return (json.dumps(body, indent=2, sort_keys=True, ensure_ascii=False) + "\n").encode("utf-8")
