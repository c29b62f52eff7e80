"""Sign-off: draft -> checked -> approved, each with a name and a time, never editing a record.

``sign(ledger, record_id, revision, role, name)`` refers the sign-off to the SHA-256 of the
revision's original artifact (``record.html``, and ``record.pdf`` where there is one) and writes
a *signed copy* of the same revision beside the original: ``record-checked.html`` (and
``.pdf``), the same record with the sign-off on its cover. The fingerprints of inputs, results
and notebook are those of the original; the original artifacts stay as they were written.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass
from pathlib import Path

import nbformat

from orbitledger.kernel.errors import InputError

from .ledger import Ledger, SignOff, utc_now
from .record import canonical_dumps

__all__ = ["ROLES", "SignResult", "sign"]

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


def sign(ledger: Ledger, record_id: str, revision: int, role: str, name: str) -> SignResult:
    """Sign revision ``revision`` of ``record_id`` as ``role`` by ``name`` (see module doc)."""
    from .render_html import render_html

    if role not in ROLES:
        raise InputError("--role", role, "choose checked or approved")
    if not isinstance(name, str) or not name.strip():
        raise InputError("--name", name, "the person signing needs a name")
    record = ledger.record(record_id, revision)
    info = next(r for r in ledger.revisions(record_id) if r.revision == revision)
    if info.status != _NEEDS[role]:
        raise InputError(
            "--role", role, f"revision {revision} is {info.status}; {role} needs {_NEEDS[role]}"
        )
    artifacts = {a.name: a for a in ledger.artifacts(record_id, revision)}
    original = artifacts.get("record.html")
    notebook = artifacts.get("notebook.ipynb")
    if original is None or notebook is None:
        raise InputError("revision", revision, "the ledger has no HTML record or notebook for it")
    now = utc_now()
    signed = copy.deepcopy(record)
    prior = {s.role: s for s in ledger.signoffs(record_id, revision)}
    signed["signoffs"] = [
        {
            "role": s.role,
            "name": s.name,
            "time_utc": s.time_utc,
            "artifact_sha256": s.artifact_sha256,
        }
        for s in prior.values()
    ]
    entry = {
        "role": role,
        "name": name.strip(),
        "time_utc": now,
        "artifact_sha256": original.sha256,
    }
    if "record.pdf" in artifacts:
        entry["pdf_sha256"] = artifacts["record.pdf"].sha256
    signed["signoffs"].append(entry)
    signed["status"] = role
    executed = nbformat.reads(
        ledger.read_artifact(notebook).decode("utf-8"), as_version=4
    )
    html = render_html(executed, signed)
    files = {
        f"record-{role}.html": html.encode("utf-8"),
        f"record-{role}.json": canonical_dumps(signed).encode("utf-8"),
    }
    messages: list[str] = []
    if "record.pdf" in artifacts:
        from .render_pdf import BrowserMissing, print_record_pdf

        try:
            files[f"record-{role}.pdf"] = print_record_pdf(
                html, signed, ledger.read_artifact(notebook)
            )
        except BrowserMissing as err:
            messages.append(str(err))
    signoff = SignOff(role, name.strip(), now, original.sha256)
    ledger.add_signoff(record_id, revision, signoff, files, status=role)
    paths = {n: ledger.location(record_id, revision, n) for n in files}
    return SignResult(
        record_id, revision, role, name.strip(), now, original.sha256, paths, tuple(messages)
    )
