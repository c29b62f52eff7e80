"""The record's account of its own page: what it shows and carries, and fingerprints of both.

``seal(html, record)`` runs once per rendering, after the templates (``exporter``): it

1. puts the hashes of the page's scripts into its Content-Security-Policy (the template writes
   ``SCRIPT_SOURCES`` where they go): ``script-src`` allows those scripts and nothing else,
   no ``'unsafe-inline'``, no ``'unsafe-eval'``, so an inserted script or event handler does not run;
2. completes the record (the caller's dict, in place, so that the JSON written next is the
   one on the page) with ``record["page"]``: the text of every section as runs
   (``record_text``), the SHA-256 of each script and style block, the policy, and the SHA-256
   of the page's markup: the whole HTML with the content of its JSON data blocks left out
   (the record's own JSON, and the figures, which their fingerprints cover; line ends read as
   ``\\n``);
3. adds ``record["shown_fingerprints"]``: SHA-256 of the canonical JSON of the cover (title,
   record id, revision, status, build time, note, prepared), of the sign-offs (names, roles,
   times, signed hashes), of the decision and of ``record["page"]``;
4. writes that record into the page's record JSON.

``verify_page`` checks all of it against the file; ``verify_pdf`` the PDF's text against the
same runs.
"""

from __future__ import annotations

import base64
import hashlib
import re
from typing import Any

from .record import canonical_dumps, fingerprint_of
from .record_text import read_page

__all__ = [
    "COVER_FIELDS",
    "SCRIPT_SOURCES",
    "RECORD_JSON",
    "csp_source",
    "markup_sha256",
    "policy_with",
    "seal",
    "shown_fingerprints",
]

SCRIPT_SOURCES = "'orbitledger-script-hashes'"  # not a valid source: unsealed, nothing runs
POLICY = (
    "default-src 'none'; script-src {scripts}; style-src 'unsafe-inline'; img-src data: blob:; "
    "font-src data:; connect-src 'none'; frame-src 'none'; object-src 'none'; "
    "form-action 'none'; base-uri 'none'"
)
_DATA_BLOCK = re.compile(
    r'(<script\b[^>]*\btype="application/json"[^>]*>)(.*?)(</script>)', re.DOTALL | re.IGNORECASE
)
RECORD_JSON = re.compile(
    r'(<script\b[^>]*\bid="orbitledger-record"[^>]*>)(.*?)(</script>)', re.DOTALL | re.IGNORECASE
)
COVER_FIELDS = ("title", "record_id", "revision", "status", "built_utc", "note", "prepared")


def csp_source(script: str) -> str:
    """The CSP hash source of an inline script (CSP Level 3, "hash-source"): base64 SHA-256."""
    digest = hashlib.sha256(script.encode("utf-8")).digest()
    return "'sha256-" + base64.b64encode(digest).decode("ascii") + "'"


def policy_with(scripts: list[str]) -> str:
    """The record's Content-Security-Policy allowing exactly ``scripts`` (their texts)."""
    return POLICY.format(scripts=" ".join(csp_source(s) for s in scripts) or "'none'")


def markup_sha256(html: str) -> str:
    """SHA-256 of the page without the content of its JSON data blocks (line ends as ``\\n``).

    The data blocks are the record JSON and the figures, which their own fingerprints cover.
    """
    blank = _DATA_BLOCK.sub(lambda m: m.group(1) + m.group(3), html)
    return hashlib.sha256(blank.replace("\r\n", "\n").encode("utf-8")).hexdigest()


def _sha(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def shown_fingerprints(record: dict[str, Any]) -> dict[str, str]:
    """Fingerprints of what a reader is shown: cover, sign-offs, decision, page."""
    return {
        "cover": fingerprint_of({k: record.get(k) for k in COVER_FIELDS}),
        "signoffs": fingerprint_of(record.get("signoffs", [])),
        "decision": fingerprint_of(record.get("decision", {})),
        "page": fingerprint_of(record.get("page", {})),
    }


def seal(html: str, record: dict[str, Any]) -> str:
    """The page with its policy and its complete record JSON; ``record`` completed (module doc)."""
    from .filters import json_for_script

    page = read_page(html)
    executable = [b.text for b in page.scripts if b.executable]
    policy = policy_with(executable)
    html = html.replace(SCRIPT_SOURCES, policy.split("script-src ", 1)[1].split(";", 1)[0], 1)
    record["page"] = {
        "sections": page.sections,
        "scripts": [_sha(s) for s in executable],
        "styles": [_sha(s) for s in page.styles],
        "policy": policy,
        "markup_sha256": markup_sha256(html),
    }
    record["shown_fingerprints"] = shown_fingerprints(record)
    body = str(json_for_script(canonical_dumps(record)))
    found = RECORD_JSON.search(html)
    if found is None:
        raise ValueError("the rendered page has no record JSON element")
    return html[: found.start(2)] + body + html[found.end(2) :]
