"""Sign-off: draft -> checked -> approved, each signed with a key (or typed, and marked unsigned).

``sign(ledger, record_id, revision, role, name, signer=...)`` first checks, before anything is
written: the role's order (checked, then approved; each once), that the revision is the latest,
and that every file of the revision still has the SHA-256 the ledger recorded. It then signs
exactly those files' contents (see ``signatures``) and writes *signed copies* beside the
originals, which stay as they were written:

- ``record-ROLE.json`` and ``record-ROLE.html``: the record with the chain of sign-offs so far
  (rendered from the hash-checked ``record.json``/``notebook.ipynb``, never from the index);
- ``record-ROLE.sig.json``: the detached signatures of every sign-off so far;
- ``record-ROLE.pdf``: the previous PDF of the revision with one more PAdES signature added as
  an incremental update (signed sign-offs only: a PDF holds sign-offs as signatures).

A sign-off by ``name`` without a key is kept, but marked **unsigned** wherever it is shown.
"""

from __future__ import annotations

import copy
import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import nbformat

from orbitledger.kernel.errors import InputError

from .keys import Signer
from .ledger import Ledger, SignOff, sha256_hex, utc_now
from .record import canonical_dumps
from .signatures import detached_file, record_content_sha256, signed_entry, unsigned_entry

__all__ = ["ROLES", "SignResult", "sign", "signoff_summaries", "verified_artifacts"]

ROLES = ("checked", "approved")
_NEEDS = {"checked": "draft", "approved": "checked"}


@dataclass(frozen=True)
class SignResult:
    record_id: str
    revision: int
    role: str
    name: str
    time_utc: str
    artifact_sha256: str
    files: dict[str, Path]
    messages: tuple[str, ...] = ()
    signed: bool = False
    org: str = ""
    cert_sha256: str = ""


def verified_artifacts(ledger: Ledger, record_id: str, revision: int) -> dict[str, bytes]:
    """The bytes of every file of the revision, each checked against the ledger's SHA-256."""
    out = {}
    for a in ledger.artifacts(record_id, revision):
        try:
            data = ledger.read_artifact(a)
        except OSError as err:
            raise InputError(a.name, a.relpath, f"cannot be read ({err.strerror}); not signing") from None
        if sha256_hex(data) != a.sha256:
            raise InputError(
                a.name,
                a.relpath,
                f"changed on disk since the ledger recorded it (SHA-256 {sha256_hex(data)[:16]}..., "
                f"ledger {a.sha256[:16]}...); not signing a file that differs from the archive",
            )
        out[a.name] = data
    return out


def _check_order(ledger: Ledger, record_id: str, revision: int, role: str) -> None:
    if role not in ROLES:
        raise InputError("--role", role, "choose checked or approved")
    known = ledger.revisions(record_id)
    if not known:
        ids = ", ".join(ledger.record_ids()) or "none"
        raise InputError("RECORD_ID", record_id, f"no revisions in {ledger.root} (known: {ids})")
    info = next((r for r in known if r.revision == revision), None)
    if info is None:
        ledger.record(record_id, revision)  # raises the ledger's own "not found" message
    latest = known[-1].revision
    if revision != latest:
        raise InputError(
            "REV", revision, f"revision {latest} is the latest; only the latest revision is signed"
        )
    done = {s.role: s for s in ledger.signoffs(record_id, revision)}
    if role in done:
        raise InputError(
            "--role", role, f"revision {revision} was {role} by {done[role].name} already; each role signs once"
        )
    if info.status != _NEEDS[role]:
        raise InputError(
            "--role", role, f"revision {revision} is {info.status}; {role} needs {_NEEDS[role]} first"
        )


def sign(
    ledger: Ledger,
    record_id: str,
    revision: int,
    role: str,
    name: str | None = None,
    *,
    signer: Signer | None = None,
    note: str = "",
) -> SignResult:
    """Sign revision ``revision`` of ``record_id`` as ``role`` (see the module docstring).

    With ``signer`` (a key and certificate from ``keys.load_signer``) the name comes from the
    certificate; without one, ``name`` is recorded as an unsigned sign-off.
    """
    from .render_html import render_html

    if signer is None and (not isinstance(name, str) or not name.strip()):
        raise InputError("--name", name, "the person signing needs a name (or sign with --key)")
    if signer is not None and name and name.strip() != signer.name:
        raise InputError(
            "--name", name, f"the certificate names {signer.name!r}; leave --name out with --key"
        )
    if not isinstance(note, str) or len(note) > 500 or "\n" in note:
        raise InputError("--note", note, "one line of at most 500 characters")
    _check_order(ledger, record_id, revision, role)
    files_in = verified_artifacts(ledger, record_id, revision)
    if "record.json" not in files_in or "notebook.ipynb" not in files_in:
        raise InputError("REV", revision, "the ledger has no record.json or notebook for it")
    original = json.loads(files_in["record.json"])
    if record_content_sha256(ledger.record(record_id, revision)) != record_content_sha256(original):
        raise InputError(
            "REV", revision, "the ledger index's record differs from its record.json; not signing"
        )
    done = sorted((s.role for s in ledger.signoffs(record_id, revision)), key=ROLES.index)
    prefix = f"record-{done[-1]}" if done else "record"
    if f"{prefix}.json" not in files_in:
        raise InputError(f"{prefix}.json", None, "is missing from the ledger; not signing")
    source = json.loads(files_in[f"{prefix}.json"])
    chain = [e.get("role") for e in source.get("signoffs", []) if e.get("role") in ROLES]
    if chain != done or record_content_sha256(source) != record_content_sha256(original):
        raise InputError(f"{prefix}.json", None, "does not match the ledger's sign-offs; not signing")
    html_sha = sha256_hex(files_in.get("record.html", b""))
    now = utc_now()
    hashes = {n: sha256_hex(data) for n, data in files_in.items()}
    if signer is not None:
        entry = signed_entry(source, role, signer, now, hashes, note.strip())
    else:
        entry = unsigned_entry(role, name.strip(), now, html_sha, note.strip())
    signed = copy.deepcopy(source)
    signed["signoffs"] = [*source.get("signoffs", []), entry]
    signed["status"] = role
    executed = nbformat.reads(files_in["notebook.ipynb"].decode("utf-8"), as_version=4)
    files = {
        f"record-{role}.html": render_html(executed, signed).encode("utf-8"),
        f"record-{role}.json": canonical_dumps(signed).encode("utf-8"),
        f"record-{role}.sig.json": detached_file(signed),
    }
    messages: list[str] = []
    pdfs = [f"record-{r}.pdf" for r in reversed(done)] + ["record.pdf"]
    pdf_name = next((n for n in pdfs if n in files_in), None)
    if pdf_name is not None and signer is not None:
        from .sign_pdf import sign_pdf

        files[f"record-{role}.pdf"] = sign_pdf(files_in[pdf_name], signer, role, now)
    elif pdf_name is not None:
        messages.append(
            f"no record-{role}.pdf: a PDF carries sign-offs as signatures, and this one is unsigned"
        )
    ledger.add_signoff(record_id, revision, SignOff(role, entry["name"], now, html_sha), files, status=role)
    paths = {n: ledger.location(record_id, revision, n) for n in files}
    return SignResult(
        record_id,
        revision,
        role,
        entry["name"],
        now,
        html_sha,
        paths,
        tuple(messages),
        signed=entry["signed"],
        org=entry.get("org", ""),
        cert_sha256=entry.get("cert_sha256", ""),
    )


def signoff_summaries(
    ledger: Ledger,
    record_id: str,
    revision: int,
    *,
    artifacts: dict[str, Any] | None = None,
    signoffs: list[Any] | None = None,
) -> list[dict[str, Any]]:
    """Role, name, organisation, time, certificate SHA-256 and signed/unsigned of each
    sign-off of a revision, read from its latest signed copy (checked against the ledger).

    When that copy differs from the ledger's hash, the ledger's rows are given with
    ``"signed": None`` and a ``problem``. A caller listing many revisions passes what it has
    read already: the revision's ``record*`` ``artifacts`` by name and its ``signoffs``.
    """
    if artifacts is None:
        artifacts = {a.name: a for a in ledger.artifacts(record_id, revision)}
    if signoffs is None:
        signoffs = ledger.signoffs(record_id, revision)
    rows = sorted(signoffs, key=lambda s: ROLES.index(s.role))
    name = next(
        (f"record-{s.role}.json" for s in reversed(rows) if f"record-{s.role}.json" in artifacts),
        "record.json",
    )
    artifact = artifacts.get(name)
    entries = None
    problem = f"{name} differs from the ledger's SHA-256"
    if artifact is not None:
        try:
            data = ledger.read_artifact(artifact)
        except OSError:
            data = b""
        if sha256_hex(data) == artifact.sha256:
            entries = _signoff_entries(data)
            problem = f"{name} holds no readable sign-off list"
    keys = ("role", "name", "org", "time_utc", "signed", "cert_sha256", "note")
    if entries is not None:
        return [{k: e.get(k, "") for k in keys} for e in entries]
    return [
        {"role": s.role, "name": s.name, "org": "", "time_utc": s.time_utc, "signed": None,
         "cert_sha256": "", "note": "", "problem": problem}
        for s in rows
    ]  # fmt: skip


def _signoff_entries(data: bytes) -> list[dict] | None:
    """The ``signoffs`` list of a record's JSON, or None when the bytes are not such a record."""
    try:
        record = json.loads(data)
    except (UnicodeDecodeError, ValueError):
        return None
    entries = record.get("signoffs", []) if isinstance(record, dict) else None
    if not isinstance(entries, list) or not all(isinstance(e, dict) for e in entries):
        return None
    return entries
