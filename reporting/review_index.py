"""``orbitledger index --out DIR``: the review index, a static offline site of a whole ledger.

Layout of the site::

    DIR/index.html                        every record: latest revision, status, sign-offs, findings
    DIR/records/RECORD_ID.html            its revisions: status, sign-offs, what changed, current state
    DIR/diffs/RECORD_ID/r0002.html        revision 2 side by side with revision 1 (``review_pages``)
    DIR/artifacts/records/RECORD_ID/...   the current state (latest signed copy) of each latest revision
    DIR/.orbitledger-index                marks the folder as a review index (it may be rewritten)

The pages are plain HTML with inlined CSS and no script; they link to each other by relative
paths, so the folder can be copied anywhere and opened from ``file://``. The current state of a
revision is its latest signed copy (``record-approved.html`` after approval), not the draft
``record.html``; each copied artifact is checked against its SHA-256 first.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from orbitledger.kernel.errors import InputError

from .ledger_parts import sha256_hex, utc_now
from .review_pages import diff_page, findings, render

__all__ = ["Site", "write_index"]

_MARKER = ".orbitledger-index"


@dataclass(frozen=True)
class Site:
    home: Path
    pages: int


def _prepare(out: Path) -> None:
    if out.exists() and not out.is_dir():
        raise InputError("--out", str(out), "is a file; give a folder for the review index")
    if out.is_dir() and any(out.iterdir()) and not (out / _MARKER).exists():
        raise InputError(
            "--out", str(out), "is not empty and holds no review index; choose a new folder"
        )
    out.mkdir(parents=True, exist_ok=True)
    (out / _MARKER).write_text("orbitledger review index\n", encoding="utf-8")


def _write(path: Path, text: str) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.tmp")
    tmp.write_text(text, encoding="utf-8")
    tmp.replace(path)


def _copy_current(
    ledger: Any, out: Path, record_id: str, revision: int, state: dict[str, Any]
) -> dict[str, str]:
    """Copy the current-state HTML and PDF of a revision into the site; their paths in it."""
    by_rel = {a.relpath: a for a in ledger.artifacts(record_id, revision)}
    copied = {}
    for kind in ("html", "pdf"):
        rel = state.get(kind)
        if not rel:
            continue
        artifact = by_rel[rel]
        data = ledger.read_artifact(artifact)
        if sha256_hex(data) != artifact.sha256:
            raise InputError(
                ledger.address, rel, "SHA-256 differs from the ledger's index; not copied"
            )
        target = out / "artifacts" / rel
        if not (target.exists() and sha256_hex(target.read_bytes()) == artifact.sha256):
            target.parent.mkdir(parents=True, exist_ok=True)
            tmp = target.with_name(f".{target.name}.tmp")
            tmp.write_bytes(data)
            tmp.replace(target)
        copied[kind] = f"artifacts/{rel}"
    return copied


def write_index(ledger: Any, out: Path) -> Site:
    """Write the review index of ``ledger`` into ``out`` (see the module doc)."""
    out = Path(out)
    _prepare(out)
    common = {"ledger_address": ledger.address, "written_utc": utc_now()}
    pages = 0
    summary = []
    for record_id in ledger.record_ids():
        rows = ledger.history(record_id)
        previous: dict[str, Any] | None = None
        latest_record: dict[str, Any] = {}
        for row in rows:
            record = ledger.record(record_id, row["revision"])
            row["findings"] = findings(record)
            row["has_criteria"] = bool(record.get("criteria") or record.get("findings"))
            state = row["latest"]
            row["current_name"] = (state.get("html") or "").rsplit("/", 1)[-1]
            row["current_sha256"] = state.get("html_sha256", "")
            row["current"] = ""
            if not row["changes"]:
                kept = {h.get("revision"): h.get("changes", []) for h in record.get("history", [])}
                row["changes"] = kept.get(row["revision"], [])
            row["diff"] = ""
            if previous is not None:
                name = f"r{row['revision']:04d}.html"
                links = {"index": "../../index.html", "record": f"../../records/{record_id}.html"}
                _write(
                    out / "diffs" / record_id / name,
                    diff_page(previous, record, ledger=ledger, links=links),
                )
                row["diff"] = f"../diffs/{record_id}/{name}"
                pages += 1
            previous = record
            latest_record = record
        last = rows[-1]
        copied = _copy_current(ledger, out, record_id, last["revision"], last["latest"])
        if "html" in copied:
            last["current"] = f"../{copied['html']}"
        newest_first = list(reversed(rows))
        _write(
            out / "records" / f"{record_id}.html",
            render(
                "record.html.j2",
                record_id=record_id,
                title=last["title"],
                revisions=newest_first,
                findings=last["findings"],
                **common,
            ),
        )
        pages += 1
        summary.append(
            {
                "record_id": record_id,
                "title": latest_record.get("title", last["title"]),
                "latest": last["revision"],
                "status": last["status"],
                "signoffs": last["signoffs"],
                "findings": last["findings"],
                "has_criteria": last["has_criteria"],
                "built_utc": last["built_utc"],
                "page": f"records/{record_id}.html",
                "current": copied.get("html", ""),
                "current_name": last["current_name"],
                "diff": last["diff"].removeprefix("../") if last["diff"] else "",
            }
        )
    flagged = sum(bool(r["findings"]) for r in summary)
    _write(out / "index.html", render("index.html.j2", records=summary, flagged=flagged, **common))
    return Site(out / "index.html", pages + 1)
