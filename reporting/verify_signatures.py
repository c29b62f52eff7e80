"""``verify``'s signature checks: every sign-off of a record, every PDF signature, the trust list.

For an HTML or JSON record: each entry of the record's ``signoffs`` in order (prepared,
checked, approved; each role once): a signed entry's signature over its statement
(``signatures.check_entry``: the record unchanged since, the earlier sign-offs as they were,
the certificate valid at the signing time), the files of the revision it names where they lie
beside the record, and, with a trust list, the certificate's chain; an unsigned entry is
reported as UNSIGNED. The detached ``NAME.sig.json`` beside the record must hold the same
sign-offs.

For a PDF: each PAdES signature with pyhanko's validator (the signed bytes' digest, the
signature, what changed in the file after it: only later signatures may follow), its role (the
signature's reason and field name), its signer (the certificate's name) and time, and the
trust list; the attached record's own sign-offs and a detached file beside it as above.

The trust list (``--trust CERTS.pem`` or a folder of ``*.pem``/``*.crt``/``*.cer``) holds the
certificates accepted as anchors: a signer's certificate must be one of them or chain up to
one (pyhanko-certvalidator, RFC 5280 path validation at the signing time, nothing fetched).
"""

from __future__ import annotations

import datetime as dt
import hashlib
import io
import json
import logging
from pathlib import Path
from typing import Any

from cryptography import x509
from cryptography.hazmat.primitives import serialization

from orbitledger.kernel.errors import InputError

from .keys import cert_fingerprint, cert_identity, load_certificates
from .ledger_parts import parse_utc_stamp
from .sign_pdf import ROLE_ORDER, outside_event_loop
from .signatures import check_entry

__all__ = ["check_signatures", "load_trust", "trust_problem"]

# pyhanko logs every untrusted chain with a traceback; verify reports in its own words.
for _name in ("pyhanko", "pyhanko_certvalidator"):
    logging.getLogger(_name).setLevel(logging.CRITICAL)


def load_trust(path: str | Path) -> list[x509.Certificate]:
    """The certificates of a trust list: one PEM file, or every certificate file in a folder."""
    path = Path(path)
    if path.is_dir():
        files = sorted(p for p in path.iterdir() if p.suffix.lower() in (".pem", ".crt", ".cer"))
        if not files:
            raise InputError("--trust", str(path), "holds no .pem, .crt or .cer file")
        return [c for f in files for c in load_certificates(f, "--trust")]
    return load_certificates(path, "--trust")


def _asn1(cert: x509.Certificate) -> Any:
    from asn1crypto import x509 as ax509

    return ax509.Certificate.load(cert.public_bytes(serialization.Encoding.DER))


def trust_problem(
    cert: x509.Certificate,
    chain: list[x509.Certificate],
    when: dt.datetime,
    anchors: list[x509.Certificate],
) -> tuple[str | None, str]:
    """(problem or None, how it is trusted): the chain of ``cert`` to an anchor at ``when``."""
    from pyhanko_certvalidator import CertificateValidator, ValidationContext
    from pyhanko_certvalidator.errors import PathBuildingError, PathValidationError, ValidationError

    listed = any(cert_fingerprint(a) == cert_fingerprint(cert) for a in anchors)
    if cert.issuer == cert.subject and not listed:
        return "not trusted: a self-signed certificate that is not on the trust list", ""
    context = ValidationContext(
        trust_roots=[_asn1(a) for a in anchors],
        other_certs=[_asn1(c) for c in chain],
        moment=when,
        allow_fetching=False,
        revocation_mode="soft-fail",
    )
    validator = CertificateValidator(_asn1(cert), validation_context=context)
    try:
        path = outside_event_loop(
            lambda: __import__("asyncio").run(validator.async_validate_usage(set()))
        )
    except PathBuildingError:
        issuer = cert.issuer.rfc4514_string()
        return f"not trusted: no certificate of the trust list issued it (issuer {issuer})", ""
    except (PathValidationError, ValidationError) as err:
        return f"not trusted: {err}", ""
    name = path.trust_anchor.authority.name
    anchor = name.native.get("common_name") or name.human_friendly
    if listed:
        return None, "trusted (on the trust list itself)"
    return None, f"trusted (issued under {anchor})"


def _when(text: str) -> dt.datetime | None:
    try:
        return parse_utc_stamp(text)
    except ValueError:
        return None


def _chain(entry: dict[str, Any]) -> list[x509.Certificate]:
    try:
        return [x509.load_pem_x509_certificate(p.encode("ascii")) for p in entry.get("chain_pem", [])]
    except ValueError:
        return []


def _check_order(report: Any, entries: list[dict[str, Any]], where: str) -> None:
    roles = [e.get("role") for e in entries]
    ranks = [ROLE_ORDER.index(r) if r in ROLE_ORDER else -1 for r in roles]
    ok = -1 not in ranks and ranks == sorted(set(ranks))
    report.add(
        f"{where}: sign-offs in order",
        ok,
        ", ".join(map(str, roles)) if ok else f"{roles}: each of prepared, checked, approved once, in that order",
    )


def _check_entries(
    report: Any,
    record: dict[str, Any],
    entries: list[dict[str, Any]],
    folder: Path,
    anchors: list[x509.Certificate] | None,
    where: str,
) -> None:
    for i, entry in enumerate(entries):
        label = f"{where}: sign-off {i + 1}, {entry.get('role')} by {entry.get('name')}"
        if not entry.get("signed"):
            if anchors is not None:
                report.add(label, False, "UNSIGNED (a typed name, no signature): not trusted")
            else:
                report.add(label, True, "UNSIGNED: a typed name; nothing proves who signed")
            continue
        problems, statement, cert = check_entry(entry, record, entries[:i])
        if statement is not None and not problems:
            for name, digest in sorted(statement.get("artifacts", {}).items()):
                beside = folder / name
                if beside.is_file() and hashlib.sha256(beside.read_bytes()).hexdigest() != digest:
                    problems.append(f"{name} beside this file changed after it was signed")
        trust = "no trust list given: anyone can make a certificate in any name"
        when = _when(entry.get("time_utc", ""))
        if cert is not None and anchors is not None and when is not None and not problems:
            problem, trust = trust_problem(cert, _chain(entry), when, anchors)
            if problem:
                problems.append(problem)
        if problems:
            report.add(label, False, "; ".join(problems))
            continue
        org = f", {entry['org']}" if entry.get("org") else ""
        report.add(
            label,
            True,
            f"signature valid{org}, {entry['time_utc']}, certificate SHA-256 "
            f"{entry['cert_sha256'][:16]}..., {trust}",
        )


def _detached(report: Any, path: Path, record: dict[str, Any], anchors: Any, compare: bool) -> list[dict[str, Any]]:
    stem = path.name.rsplit(".", 1)[0]
    side = path.with_name(f"{stem}.sig.json")
    if not side.is_file():
        if any(e.get("signed") for e in record.get("signoffs", [])):
            report.notes.append(f"no detached {side.name} beside it; the embedded signatures were checked")
        return []
    try:
        body = json.loads(side.read_text(encoding="utf-8"))
        entries = list(body["signoffs"])
    except (OSError, ValueError, KeyError, TypeError) as err:
        report.add(f"{side.name}", False, f"unreadable ({err})")
        return []
    if compare:
        same = entries == record.get("signoffs", [])
        report.add(
            f"{side.name}: the same sign-offs as the record",
            same,
            "" if same else "the detached signatures differ from those the record embeds",
        )
    else:
        _check_order(report, entries, side.name)
        _check_entries(report, record, entries, path.parent, anchors, side.name)
    return entries


def check_signatures(
    report: Any, path: str | Path, record: dict[str, Any], extras: dict[str, Any], trust: Any = None
) -> None:
    """Add the signature checks of the record at ``path`` to ``report`` (see the module doc)."""
    path = Path(path)
    anchors = load_trust(trust) if trust is not None else None
    entries = record.get("signoffs", [])
    if entries:
        _check_order(report, entries, "record")
        _check_entries(report, record, entries, path.parent, anchors, "record")
    roles = [e.get("role") for e in entries if e.get("role") in ("checked", "approved")]
    status = roles[-1] if roles else "draft"
    report.add(
        "status matches the sign-offs",
        record.get("status") == status,
        "" if record.get("status") == status else f"the record says {record.get('status')!r}, its sign-offs {status!r}",
    )
    if extras.get("kind") == "pdf":
        detached = _detached(report, path, record, anchors, compare=False)
        signed = _check_pdf(report, path, anchors)
        by_role = {e.get("role"): e for e in detached if e.get("signed")}
        for role, fingerprint in signed:
            if role in by_role and by_role[role].get("cert_sha256") != fingerprint:
                report.add(
                    f"PDF signature {role}: the same signer as the detached signature",
                    False,
                    f"the PDF was signed with certificate {fingerprint[:16]}..., the detached "
                    f"signature with {by_role[role].get('cert_sha256', '')[:16]}...",
                )
        if anchors is not None and not signed and not any(e.get("signed") for e in entries):
            report.add("signatures", False, "--trust given, but the PDF carries no valid signature")
        return
    _detached(report, path, record, anchors, compare=True)
    if anchors is not None and not any(e.get("signed") for e in entries):
        report.add("signatures", False, "--trust given, but the record carries no signature")


def _check_pdf(report: Any, path: Path, anchors: list[x509.Certificate] | None) -> list[tuple[str, str]]:
    """Every PAdES signature of the PDF; returns (role, certificate SHA-256) of the valid ones."""
    from pyhanko.pdf_utils.reader import PdfFileReader
    from pyhanko.sign.diff_analysis import ModificationLevel
    from pyhanko.sign.validation import SignatureCoverageLevel, validate_pdf_signature
    from pyhanko.sign.validation.settings import KeyUsageConstraints

    try:
        reader = PdfFileReader(io.BytesIO(path.read_bytes()), strict=False)
        signatures = sorted(reader.embedded_signatures, key=lambda s: s.signed_revision)
    except Exception as err:  # pyhanko raises several kinds for a damaged file
        report.add("PDF signatures", False, f"the PDF cannot be read for its signatures: {err}")
        return []
    usage = KeyUsageConstraints(key_usage={"non_repudiation", "digital_signature"}, match_all_key_usages=False)
    done: list[tuple[str, str]] = []
    ranks = []
    for n, sig in enumerate(signatures, start=1):
        reason = str(sig.sig_object.get("/Reason", ""))
        try:
            status = outside_event_loop(lambda sig=sig: validate_pdf_signature(sig, key_usage_settings=usage))
        except Exception as err:  # a mangled signature dictionary or CMS blob
            report.add(f"PDF signature {n} ({sig.field_name})", False, f"cannot be checked: {err}")
            continue
        cert = x509.load_der_x509_certificate(status.signing_cert.dump())
        name = cert_identity(cert)["name"]
        when = status.signer_reported_dt
        label = f"PDF signature {n}, {reason or sig.field_name} by {name}"
        problems = []
        if not (status.intact and status.valid):
            problems.append("the signed bytes changed after signing (digest or signature does not match)")
        last = n == len(signatures)
        if last and status.coverage != SignatureCoverageLevel.ENTIRE_FILE:
            problems.append("the file was changed after this signature (an update no signature covers)")
        level = status.modification_level
        if level is None or level > ModificationLevel.FORM_FILLING or status.docmdp_ok is False:
            problems.append(f"changed after this signature beyond adding signatures ({getattr(level, 'name', level)})")
        if reason not in ROLE_ORDER or sig.field_name != reason:
            problems.append(f"role {reason!r} in field {sig.field_name!r}: expected prepared, checked or approved in the field of that name")
        else:
            ranks.append(ROLE_ORDER.index(reason))
        if when is None:
            problems.append("no signing time")
        elif not cert.not_valid_before_utc <= when <= cert.not_valid_after_utc:
            problems.append(f"the certificate was not valid at the signing time {when:%Y-%m-%dT%H:%M:%SZ}")
        trust = "no trust list given: anyone can make a certificate in any name"
        if anchors is not None and when is not None and not problems:
            chain = [x509.load_der_x509_certificate(c.dump()) for c in sig.other_embedded_certs]
            problem, trust = trust_problem(cert, chain, when, anchors)
            if problem:
                problems.append(problem)
        if problems:
            report.add(label, False, "; ".join(problems))
            continue
        fingerprint = cert_fingerprint(cert)
        org = cert_identity(cert)["org"]
        report.add(
            label,
            True,
            f"signature valid{', ' + org if org else ''}, {when:%Y-%m-%dT%H:%M:%SZ} (signer's clock), "
            f"certificate SHA-256 {fingerprint[:16]}..., {trust}",
        )
        done.append((reason, fingerprint))
    if signatures:
        ok = ranks == sorted(set(ranks))
        report.add("PDF signatures in order", ok, "" if ok else "each role signs once: prepared, checked, approved")
    return done
