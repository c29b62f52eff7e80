"""The pages of the review index: what changed between two revisions, findings, shared layout.

``diff_page(old, new)`` is the page of ``orbitledger diff RECORD_ID A B --html OUT`` and of
each revision in the review index: every input of every case and every result of the two
revisions side by side, each changed row highlighted and marked (changed, added, removed: in
words as well as colour), the figures' fingerprints compared. The pages are static HTML with
their CSS inlined and no script at all; their Content-Security-Policy forbids every request,
so they open offline from ``file://``. Layout lives in ``templates/review`` (Jinja, escaped).

``findings(record)`` reads the criteria a record carries (``criteria`` or ``findings``: each
with a pass/fail verdict) and returns the failing ones, for the index to flag.
"""

from __future__ import annotations

import json
import math
from typing import Any

import jinja2

from .diff import diff_records, flatten, summary_lines
from .exporter import TEMPLATES_DIR

__all__ = ["diff_page", "environment", "findings", "render"]

_KIND_WORD = {"changed": "changed", "added": "added", "removed": "removed", "same": ""}


def environment() -> jinja2.Environment:
    env = jinja2.Environment(
        loader=jinja2.FileSystemLoader(str(TEMPLATES_DIR / "review")),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.globals["css"] = (TEMPLATES_DIR / "review" / "review.css").read_text(encoding="utf-8")
    return env


def render(template: str, **context: Any) -> str:
    return environment().get_template(template).render(**context)


def _text(value: Any) -> str:
    from .templating import format_value

    return "—" if value is None else format_value(value)


def _kind(a: Any, b: Any, in_a: bool, in_b: bool) -> str:
    if not in_a:
        return "added"
    if not in_b:
        return "removed"
    return "same" if a == b and type(a) is type(b) else "changed"


def _delta(a: Any, b: Any) -> str:
    numeric = (int, float)
    if isinstance(a, numeric) and isinstance(b, numeric) and not isinstance(a, bool | str):
        if isinstance(b, bool) or not (math.isfinite(a) and math.isfinite(b)):
            return ""
        return f"{b - a:+.6g}" if a != b else ""
    return ""


def _input_tables(old: dict[str, Any], new: dict[str, Any]) -> list[dict[str, Any]]:
    from .templating import unit_of

    def cases(record: dict[str, Any]) -> dict[str, dict[str, Any]]:
        return {c["name"]: flatten(json.loads(c["canonical"])) for c in record.get("inputs", [])}

    a, b = cases(old), cases(new)
    tables = []
    for name in list(dict.fromkeys([*b, *a])):
        fa, fb = a.get(name, {}), b.get(name, {})
        rows = []
        for path in list(dict.fromkeys([*fb, *fa])):
            kind = _kind(fa.get(path), fb.get(path), path in fa, path in fb)
            rows.append(
                {
                    "label": path,
                    "unit": unit_of(path),
                    "old": _text(fa.get(path)) if path in fa else "",
                    "new": _text(fb.get(path)) if path in fb else "",
                    "kind": kind,
                    "word": _KIND_WORD[kind],
                    "delta": _delta(fa.get(path), fb.get(path)),
                }
            )
        state = "added" if name not in a else "removed" if name not in b else ""
        changed = sum(r["kind"] != "same" for r in rows)
        tables.append({"title": name, "state": state, "changed": changed, "rows": rows})
    return tables


def _result_rows(old: list[dict[str, Any]], new: list[dict[str, Any]]) -> list[dict[str, Any]]:
    a, b = {r["name"]: r for r in old}, {r["name"]: r for r in new}
    rows = []
    for name in list(dict.fromkeys([*b, *a])):
        ra, rb = a.get(name), b.get(name)
        va = ra["value"] if ra else None
        vb = rb["value"] if rb else None
        kind = _kind(va, vb, ra is not None, rb is not None)
        rows.append(
            {
                "label": name,
                "unit": (rb or ra or {}).get("unit", ""),
                "old": _text(va) if ra else "",
                "new": _text(vb) if rb else "",
                "kind": kind,
                "word": _KIND_WORD[kind],
                "delta": _delta(va, vb),
            }
        )
    return rows


def _result_tables(old: dict[str, Any], new: dict[str, Any]) -> list[dict[str, Any]]:
    tables = [
        {
            "title": "Named results",
            "rows": _result_rows(old.get("results", []), new.get("results", [])),
        }
    ]
    blocks_a = {blk["case"]: blk["results"] for blk in old.get("standard_results", [])}
    blocks_b = {blk["case"]: blk["results"] for blk in new.get("standard_results", [])}
    for case in list(dict.fromkeys([*blocks_b, *blocks_a])):
        rows = _result_rows(blocks_a.get(case, []), blocks_b.get(case, []))
        tables.append({"title": f"Standard results: {case}", "rows": rows})
    for t in tables:
        t["changed"] = sum(r["kind"] != "same" for r in t["rows"])
    return tables


def _figure_rows(old: dict[str, Any], new: dict[str, Any]) -> list[dict[str, Any]]:
    a = {f["name"]: f for f in old.get("figures", [])}
    b = {f["name"]: f for f in new.get("figures", [])}
    rows = []
    for name in list(dict.fromkeys([*b, *a])):
        fa, fb = a.get(name), b.get(name)
        kind = _kind(fa and fa["sha256"], fb and fb["sha256"], fa is not None, fb is not None)
        rows.append(
            {
                "label": name,
                "unit": "",
                "old": fa["sha256"][:16] + "..." if fa else "",
                "new": fb["sha256"][:16] + "..." if fb else "",
                "kind": kind,
                "word": {"same": "same drawing data", "changed": "drawn from other data"}.get(
                    kind, kind
                ),
                "delta": (fb or fa or {}).get("caption", ""),
            }
        )
    return rows


def findings(record: dict[str, Any]) -> list[dict[str, str]]:
    """The failing criteria a record carries (``criteria`` or ``findings``), as text rows."""
    rows = record.get("criteria") or record.get("findings") or []
    if isinstance(rows, dict):
        rows = rows.get("criteria") or rows.get("items") or []
    out = []
    for row in rows if isinstance(rows, list) else []:
        if not isinstance(row, dict):
            continue
        verdict = row.get("passed", row.get("pass", row.get("ok")))
        status = str(row.get("status", row.get("result", ""))).lower()
        if verdict is False or status in ("fail", "failed", "failing"):
            label = row.get("text") or row.get("criterion") or row.get("name") or "criterion"
            value = row.get("value", row.get("actual", ""))
            unit = row.get("unit", "")
            shown = f"{_text(value)} {unit}".strip() if value != "" else ""
            out.append({"criterion": str(label), "value": shown, "case": str(row.get("case", ""))})
    return out


def diff_page(
    old: dict[str, Any],
    new: dict[str, Any],
    *,
    ledger: Any = None,
    links: dict[str, str] | None = None,
) -> str:
    """The side-by-side page of what changed from record ``old`` to record ``new``."""
    statuses = {}
    if ledger is not None:
        for rec in (old, new):
            statuses[rec["revision"]] = ledger.latest_state(rec["record_id"], rec["revision"])[
                "status"
            ]
    changes = diff_records(old, new)
    sides = [
        {
            "revision": rec["revision"],
            "built_utc": rec.get("built_utc", ""),
            "author": (rec.get("prepared") or {}).get("name", ""),
            "note": rec.get("note", ""),
            "status": statuses.get(rec["revision"], rec.get("status", "draft")),
        }
        for rec in (old, new)
    ]
    return render(
        "diff.html.j2",
        record_id=new["record_id"],
        title=new.get("title", ""),
        old=sides[0],
        new=sides[1],
        summary=summary_lines(changes) if changes else ["no change in inputs or results"],
        inputs=_input_tables(old, new),
        results=_result_tables(old, new),
        figures=_figure_rows(old, new),
        findings=findings(new),
        links=links or {},
        ledger_address=getattr(ledger, "address", "the ledger"),
    )
