"""verify, PDF: the pages are those the build printed, and say what the record says.

The build prints the record with Chromium (revision 1 of the file) and adds, as one
incremental update (revision 2), the metadata and the attachments: ``record.json``,
``notebook.ipynb``, each case file and ``pages.json``, the digest of each printed page
(``page_digests``: SHA-256 of its decoded content streams and of the XObjects they draw, and
the kinds of its annotations). ``check_pdf(report, record, data, attachments)`` then checks:

- attachments: exactly those the build writes (the record's own, the notebook, one per case,
  ``pages.json``); nothing added;
- metadata: the document information is what the build wrote (``info_entries``, written by ``render_pdf``:
  record id, revision, title, status, author, creator), nothing added but dates and producer;
- revisions: every incremental update after the build's is a signature revision that pyhanko
  reads as one (``PdfFileReader.embedded_signatures``, each covering its whole revision), that
  writes only what adding a signature writes (the signature field, its widget and signature
  dictionary, the catalogue, form and page entries that list them, document information,
  XMP metadata, the document security store), and after which pyhanko's modification analysis
  (``DEFAULT_DIFF_POLICY``) finds no more than further signatures (``FORM_FILLING``);
- form fields: signature fields only;
- pages: as many as the build printed, each with its footer "page N of M", each page's content
  and images as printed, no annotation other than the printed links and signature widgets;
- text: pypdf's text of every page against the text the record says its page shows
  (``pdf_text``), the first difference named with its page and section.
"""

from __future__ import annotations

import hashlib
import io
import json
import logging
from html import escape, unescape
from typing import Any

from .record import canonical_dumps

__all__ = ["PAGES_ATTACHMENT", "check_pdf", "info_entries", "page_digests"]

PAGES_ATTACHMENT = "pages.json"
# Schema /2: the digests of /1 were all of empty data (a decoded content stream tests falsy).
_PAGES_SCHEMA = "orbitledger.pdf-pages/2"
# Objects an added signature may rewrite (besides the ones it introduces), and the entries of
# the catalogue and of a page it may change.
_SIGNATURE_TOUCHES = {"/Catalog", "/Page", "/Metadata", "/AcroForm", "/Info", "/DSS", "/Annots"}
_MAY_CHANGE = {
    "/Catalog": {"/AcroForm", "/Perms", "/DSS", "/Metadata", "/Version", "/Extensions"},
    "/Page": {"/Annots"},
}


def _quiet() -> None:
    logging.getLogger("pypdf").setLevel(logging.ERROR)
    logging.getLogger("pyhanko").setLevel(logging.CRITICAL)


def _data_sha(obj: Any, seen: set[int], out: list[str]) -> None:
    xobjects = obj.get("/Resources", {}).get("/XObject", {}) if hasattr(obj, "get") else {}
    for name in sorted(xobjects):
        x = xobjects[name].get_object()
        if id(x) in seen:
            continue
        seen.add(id(x))
        out.append(f"{name}:{hashlib.sha256(x.get_data()).hexdigest()}")
        if x.get("/Subtype") == "/Form":
            _data_sha(x, seen, out)


def _page_digest(page: Any) -> dict[str, Any]:
    contents = page.get_contents()
    drawn: list[str] = []
    _data_sha(page, set(), drawn)
    return {
        # ``is not None``: a decoded content stream is an empty (so falsy) dictionary in pypdf
        "content": hashlib.sha256(b"" if contents is None else contents.get_data()).hexdigest(),
        "xobjects": hashlib.sha256("\n".join(drawn).encode()).hexdigest(),
        "annotations": [str(a.get_object().get("/Subtype")) for a in page.get("/Annots") or []],
    }


def page_digests(pdf: bytes) -> bytes:
    """``pages.json`` of a printed record: the digest of each page (module doc)."""
    from pypdf import PdfReader

    _quiet()
    pages = [_page_digest(p) for p in PdfReader(io.BytesIO(pdf)).pages]
    return canonical_dumps({"schema": _PAGES_SCHEMA, "pages": pages}).encode("utf-8")


def _label(record: dict[str, Any]) -> str:
    rev = record.get("revision")
    return str(rev) if rev is not None else "unrecorded"


def _check_attachments(report: Any, record: dict[str, Any], attachments: dict[str, bytes]) -> None:
    expected = {"record.json", "notebook.ipynb", PAGES_ATTACHMENT}
    expected |= {"case-" + c["name"].replace("/", "_") for c in record.get("inputs", [])}
    extra, missing = sorted(set(attachments) - expected), sorted(expected - set(attachments))
    detail = "; ".join(
        ([f"added: {', '.join(extra)}"] if extra else [])
        + ([f"missing: {', '.join(missing)}"] if missing else [])
    )
    report.add("PDF attachments: exactly those the build writes", not detail, detail)


# Entries of the document information that Chromium and the signing may write (dates, producer).
_INFO_FREE = {"/Producer", "/CreationDate", "/ModDate"}


def _check_metadata(report: Any, record: dict[str, Any], reader: Any) -> None:

    info = reader.metadata or {}
    expected = info_entries(record)
    wrong = [
        f"{k[1:]} says {info.get(k)!r}, the record {v!r}"
        for k, v in expected.items()
        if info.get(k) != v
    ]
    wrong += [
        f"{k[1:]} added ({info[k]!r})" for k in sorted(set(info) - set(expected) - _INFO_FREE)
    ]
    report.add("PDF metadata: agrees with the record", not wrong, "; ".join(wrong[:2]))


def _same(ref: Any, other: Any) -> bool:
    """One object: a ``Reference`` of the xref table and an ``IndirectObject`` of a trailer."""
    key = lambda r: (getattr(r, "idnum", None), getattr(r, "generation", None))  # noqa: E731
    return other is not None and key(ref) == key(other)


def _kind(resolver: Any, ref: Any, catalog_ref: Any, info_ref: Any, acroform_ref: Any) -> str:
    if _same(ref, catalog_ref):
        return "/Catalog"
    if _same(ref, info_ref):
        return "/Info"
    if _same(ref, acroform_ref):
        return "/AcroForm"
    obj = resolver(ref).get_object()
    if isinstance(obj, list):
        return "/Annots"
    get = getattr(obj, "get", None)
    if get is None:
        return type(obj).__name__
    if "/VRI" in obj or "/OCSPs" in obj or "/CRLs" in obj or "/Certs" in obj:
        return "/DSS"
    return str(get("/Type") or get("/FT") or get("/Subtype") or "an object")


def _has_attachments(root: Any) -> bool:
    return "/Names" in root and "/EmbeddedFiles" in root["/Names"]


def _changed_entries(reader: Any, rev: int, ref: Any, kind: str) -> list[str]:
    """Entries of a rewritten catalogue or page that a signature has no reason to change."""
    if kind not in _MAY_CHANGE:
        return []
    old = reader.get_historical_resolver(rev - 1)(ref).get_object()
    new = reader.get_historical_resolver(rev)(ref).get_object()
    keys = (set(old) | set(new)) - _MAY_CHANGE[kind]

    def raw(d: Any, k: str) -> str:
        return str(d.raw_get(k)) if k in d else ""

    return sorted(k for k in keys if raw(old, k) != raw(new, k))


def _check_revisions(report: Any, data: bytes) -> None:
    from pyhanko.pdf_utils.reader import PdfFileReader
    from pyhanko.sign.diff_analysis import DEFAULT_DIFF_POLICY, DiffResult, ModificationLevel
    from pyhanko.sign.validation.status import SignatureCoverageLevel

    _quiet()
    try:
        reader = PdfFileReader(io.BytesIO(data), strict=False)
        total = reader.xrefs.total_revisions
        build = next(
            r for r in range(total) if _has_attachments(reader.get_historical_resolver(r).root)
        )
        signatures = list(reader.embedded_signatures)
    except StopIteration:
        report.add(
            "PDF revisions: the build's, then signatures only",
            False,
            "no revision carries the record's attachments",
        )
        return
    except Exception as err:  # pyhanko raises several kinds for a damaged file
        report.add("PDF revisions: the build's, then signatures only", False, f"unreadable: {err}")
        return
    problems = []
    signed = {s.signed_revision: s for s in signatures}
    for rev in range(build + 1, total):
        if rev not in signed:
            problems.append(
                f"revision {rev + 1} of {total} is an update after the build, not a signature"
            )
            continue
        resolver = reader.get_historical_resolver(rev)
        root_ref = resolver.trailer_view.raw_get("/Root")
        info_ref = (
            resolver.trailer_view.raw_get("/Info") if "/Info" in resolver.trailer_view else None
        )
        acro_ref = resolver.root.raw_get("/AcroForm") if "/AcroForm" in resolver.root else None
        for ref in reader.xrefs.explicit_refs_in_revision(rev):
            if reader.xrefs.get_introducing_revision(ref) == rev:
                continue  # new objects: reachable only through the ones checked here
            kind = _kind(resolver, ref, root_ref, info_ref, acro_ref)
            changed = _changed_entries(reader, rev, ref, kind)
            if (kind not in _SIGNATURE_TOUCHES and kind != "/XRef") or changed:
                what = f"{kind} {ref.idnum}" + (f" ({', '.join(changed)})" if changed else "")
                problems.append(
                    f"revision {rev + 1} (signature {signed[rev].field_name}) rewrites {what}"
                )
    for s in signatures:
        try:
            s.compute_integrity_info(DEFAULT_DIFF_POLICY)
        except Exception as err:  # a broken signature dictionary
            problems.append(f"signature {s.field_name}: unreadable ({err})")
            continue
        if s.coverage is None or s.coverage.value < SignatureCoverageLevel.ENTIRE_REVISION.value:
            problems.append(f"signature {s.field_name} does not cover its whole revision")
        result = s.diff_result
        if not isinstance(result, DiffResult):
            problems.append(f"after signature {s.field_name}: {result}")
        elif result.modification_level.value > ModificationLevel.FORM_FILLING.value:
            problems.append(
                f"after signature {s.field_name}: {result.modification_level.name.lower()} changes"
            )
    report.add(
        f"PDF revisions: the build's, then {len(signatures)} signature(s) only",
        not problems,
        "; ".join(problems[:3]),
    )


def _check_fields(report: Any, reader: Any) -> list[Any]:
    root = reader.trailer["/Root"]
    fields = root.get("/AcroForm", {}).get("/Fields", []) if "/AcroForm" in root else []
    fields = [f.get_object() for f in fields]
    other = [str(f.get("/T")) for f in fields if f.get("/FT") != "/Sig"]
    report.add(
        "PDF form fields: signature fields only",
        not other,
        f"other fields: {', '.join(other[:5])}" if other else "",
    )
    return fields


def _check_pages(
    report: Any, record: dict[str, Any], reader: Any, digests: Any, texts: list[str]
) -> None:
    pages = reader.pages
    problems = []
    try:
        stored = json.loads(digests)
        built = stored["pages"]
    except (TypeError, ValueError, KeyError):
        built = None
        problems.append("pages.json is missing or unreadable")
    else:
        if stored.get("schema") != _PAGES_SCHEMA:
            built = None
            problems.append(
                f"pages.json is of schema {stored.get('schema')!r}, not {_PAGES_SCHEMA!r}: "
                "its page digests cannot be checked (build the record again)"
            )
    n = len(pages)
    for i, text in enumerate(texts, start=1):
        if f"page {i} of {n}" not in " ".join(text.split()):
            problems.append(
                f"page {i} has no footer 'page {i} of {n}' (a page added, removed or moved?)"
            )
            break
    if built is not None:
        if len(built) != n:
            problems.append(f"{n} pages, the build printed {len(built)}")
        for i, (page, was) in enumerate(zip(pages, built, strict=False), start=1):
            now = _page_digest(page)
            if now["content"] != was.get("content") or now["xobjects"] != was.get("xobjects"):
                problems.append(f"page {i}: its content differs from what the build printed")
            added = list(now["annotations"])
            for kind in was.get("annotations", []):
                if kind in added:
                    added.remove(kind)
            widgets = [a.get_object() for a in page.get("/Annots") or []]
            sig_widgets = sum(1 for a in widgets if a.get("/Subtype") == "/Widget" and _is_sig(a))
            extra = [k for k in added if k != "/Widget"] + ["/Widget"] * max(
                0, added.count("/Widget") - sig_widgets
            )
            if extra:
                problems.append(f"page {i}: annotation {', '.join(extra)} added after the build")
    report.add(
        f"PDF pages: the {n} the build printed, unchanged", not problems, "; ".join(problems[:3])
    )


def _is_sig(annot: Any) -> bool:
    field = annot
    while field is not None:
        if field.get("/FT") == "/Sig":
            return True
        parent = field.get("/Parent")
        field = parent.get_object() if parent is not None else None
    return False


def _check_text(report: Any, record: dict[str, Any], texts: list[str]) -> None:
    from .pdf_text import compare_pages, paper_stream

    sections = (record.get("page") or {}).get("sections")
    if not sections:
        report.add(
            "PDF text: as the record says", False, "the record does not list what its page shows"
        )
        return
    status = f"{record.get('status', '')} when printed"  # render_pdf._footer
    label = f"{record.get('record_id')} rev {_label(record)} · {status}"
    title = unescape(escape(str(record.get("title", "")))[:90])
    difference = compare_pages(paper_stream(sections), texts, [[label, title]] * len(texts))
    report.add("PDF text: as the record says", difference is None, difference or "")


def check_pdf(
    report: Any, record: dict[str, Any], data: bytes, attachments: dict[str, bytes]
) -> None:
    """Every check of the module docstring on the PDF bytes ``data`` of ``record``."""
    from pypdf import PdfReader

    _quiet()
    reader = PdfReader(io.BytesIO(data))
    _check_attachments(report, record, attachments)
    _check_metadata(report, record, reader)
    _check_revisions(report, data)
    _check_fields(report, reader)
    texts = [p.extract_text() or "" for p in reader.pages]
    _check_pages(report, record, reader, attachments.get(PAGES_ATTACHMENT), texts)
    _check_text(report, record, texts)


def info_entries(record: dict[str, Any]) -> dict[str, str]:
    """The document information the build writes (``render_pdf.attach``) and verify expects."""
    rev = record.get("revision")
    label = str(rev) if rev is not None else "unrecorded"
    return {
        "/Title": f"{record.get('title')} ({record.get('record_id')} rev {label})",
        "/Subject": "orbitledger calculation record",
        "/Author": (record.get("prepared") or {}).get("name", ""),
        "/Keywords": f"record_id={record.get('record_id')}; revision={label}; status={record.get('status')}",
        "/OrbitLedgerRecordId": str(record.get("record_id")),
        "/OrbitLedgerRevision": label,
        "/Creator": f"orbitledger {(record.get('environment') or {}).get('orbitledger', '')}",
    }
