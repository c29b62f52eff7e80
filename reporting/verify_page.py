"""verify, HTML: the page shows what its record says, and carries nothing the build did not write.

``check_page(report, record, html)`` adds these checks to a ``verify.VerifyReport``:

- the fingerprints of what a reader is shown (``record_page.shown_fingerprints``: cover,
  sign-offs, decision, page), recomputed from the embedded record;
- the page's text (the DOM's text outside scripts and styles, read by ``record_text``) against
  the record's ``page.sections``, naming the first difference with its section;
- what the record's data says must be on the page: title, record id, revision and status on the
  cover, every sign-off's name, role and time, the decision and rationale, every named result
  as displayed;
- the script blocks: exactly the executable scripts the record lists (by SHA-256), one record
  JSON, one figure JSON per figure; the style blocks; the Content-Security-Policy;
- no event-handler attribute, no element that loads or frames other content (``iframe``,
  ``object``, ``embed``, ``form``, ``base``, ``link``, ``svg``, ...), no comment (a decoy record
  could hide in one);
- no drawn figure carries code or raw HTML (``safe_bokeh.problems``);
- the page's markup fingerprint: any other change (an attribute, a class, the layout).
"""

from __future__ import annotations

import json
from typing import Any

from .record_page import _sha, markup_sha256, policy_with, shown_fingerprints
from .record_text import Page, read_page, section_text

__all__ = ["check_page", "first_text_difference", "table_values"]

_WHAT = {
    "cover": "the cover (title, record id, revision, status, date, note, prepared)",
    "signoffs": "the sign-off entries (names, roles, times)",
    "decision": "the decision and rationale",
    "page": "the page text, scripts, styles or markup listed",
}


def _around(text: str, at: int) -> str:
    return text[max(0, at - 30) : at + 40]


def first_text_difference(shown: list[dict[str, Any]], stated: list[dict[str, Any]]) -> str:
    """The first difference between the page's sections and the record's, or ``""``."""
    stated_by = {s["id"]: s for s in stated}
    shown_by = {s["id"]: s for s in shown}
    for s in shown:
        if s["id"] not in stated_by:
            text = section_text(s)[:80]
            return f"the page has a section {s['title']!r} the record does not list: {text!r}"
    for s in stated:
        if s["id"] not in shown_by:
            return f"section {s['title']!r} of the record is not on the page"
        a, b = section_text(shown_by[s["id"]]), section_text(s)
        if a != b:
            at = next((i for i, (x, y) in enumerate(zip(a, b, strict=False)) if x != y), None)
            at = min(len(a), len(b)) if at is None else at
            return (
                f"section {s['title']!r}: the page shows {_around(a, at)!r}, "
                f"the record says {_around(b, at)!r}"
            )
        if [k for k, _ in shown_by[s["id"]]["runs"]] != [k for k, _ in s["runs"]]:
            return f"section {s['title']!r}: text moved between screen and paper"
    return ""


def _required(record: dict[str, Any]) -> list[tuple[str, str, str]]:
    """(section id, what, text) that the record's own data puts on the page."""
    from .display import display_result
    from .exporter import safe_markdown

    rev = record.get("revision")
    out = [
        ("cover", "the title", str(record.get("title", ""))),
        ("cover", "the record id", str(record.get("record_id", ""))),
        ("cover", "the revision", str(rev) if rev is not None else "unrecorded"),
        ("cover", "the status", str(record.get("status", ""))),
        ("cover", "the build date", str(record.get("built_utc", ""))),
    ]
    for s in record.get("signoffs", []):
        role = str(s.get("role", "")).capitalize()
        out.append(("cover", f"sign-off {role}: name", f"{role} {s.get('name', '')}"))
        out.append(("cover", f"sign-off {role}: time", str(s.get("time_utc", ""))))
    decision = record.get("decision", {})
    for key in ("decision", "rationale"):
        if decision.get(key):
            page = read_page(f"<section id='x'>{safe_markdown(decision[key])}</section>")
            text = section_text(page.section("x")) if page.section("x") else ""
            out.append(("decision", f"the {key}", text))
    for r in record.get("results", []):
        shown = display_result(r, record.get("built_utc"))
        out.append(("results", f"named result {r['name']}", f"{r['name']} {shown}"))
    return [(sid, what, " ".join(text.split())) for sid, what, text in out if text.strip()]


def _check_required(report: Any, record: dict[str, Any], page: Page) -> None:
    missing = []
    for sid, what, text in _required(record):
        section = page.section(sid)
        if section is None or text not in section_text(section):
            missing.append(f"{what} ({text[:60]!r}) is not in section {sid!r}")
    report.add(
        "page shows the record's data (cover, sign-offs, decision, named results)",
        not missing,
        "; ".join(missing[:3]),
    )


def _check_blocks(report: Any, record: dict[str, Any], page: Page, listed: dict[str, Any]) -> None:
    executable = [b for b in page.scripts if b.executable]
    extra = [b for b in executable if _sha(b.text) not in listed.get("scripts", [])]
    problems = [f"a script the build did not write ({b.text.strip()[:50]!r})" for b in extra]
    if len(executable) != len(listed.get("scripts", [])) and not extra:
        problems.append(f"{len(executable)} scripts, the record lists {len(listed['scripts'])}")
    data = [b for b in page.scripts if not b.executable]
    records = [b for b in data if b.attrs.get("id") == "orbitledger-record"]
    figures = [b for b in data if "orbitledger-figure" in b.attrs.get("class", "").split()]
    if len(records) != 1:
        problems.append(f"{len(records)} record JSON blocks (a second record?)")
    if len(figures) != len(record.get("figures", [])):
        problems.append(f"{len(figures)} figure blocks, the record lists {len(record['figures'])}")
    for b in data:
        if b not in records and b not in figures:
            problems.append(f"a data block the build did not write ({b.attrs})")
    styles = [_sha(s) for s in page.styles]
    if styles != listed.get("styles", []):
        problems.append(
            f"{len(styles)} style blocks differ from the {len(listed['styles'])} listed"
        )
    report.add(
        "page scripts and styles: only those the build wrote", not problems, "; ".join(problems[:3])
    )
    expected = policy_with([b.text for b in executable if b not in extra])
    ok = page.policies == [expected] and listed.get("policy") == expected
    detail = "" if ok else f"the page declares {page.policies!r:.160}"
    report.add("Content-Security-Policy: only the listed scripts run", ok, detail)


def _check_foreign(report: Any, page: Page) -> None:
    found = [f"an event-handler attribute ({h})" for h in page.handlers]
    found += [f"an element that loads or frames content (<{t}>)" for t in page.foreign]
    for c in page.comments:
        holds = "{" in c and '"' in c
        found.append("a comment holding JSON" if holds else f"a comment ({c.strip()[:40]!r})")
    report.add("page: no event handler, frame or comment", not found, "; ".join(found[:3]))


def check_page(report: Any, record: dict[str, Any], html: str) -> None:
    """Every check of the module docstring on the HTML text ``html`` of ``record``."""
    from .safe_bokeh import problems

    listed = record.get("page")
    stated_fp = record.get("shown_fingerprints")
    if not isinstance(listed, dict) or not isinstance(stated_fp, dict):
        report.add("page: the record lists what it shows", False, "no page section in the record")
        return
    for key, value in shown_fingerprints(record).items():
        ok = stated_fp.get(key) == value
        detail = "" if ok else f"{_WHAT[key]} in the embedded record were altered"
        report.add(f"{key} fingerprint (shown)", ok, detail)
    page = read_page(html)
    difference = first_text_difference(page.sections, listed.get("sections", []))
    report.add("page text: as the record says", not difference, difference)
    _check_required(report, record, page)
    _check_blocks(report, record, page, listed)
    _check_foreign(report, page)
    drawn = [b for b in page.scripts if "orbitledger-figure" in b.attrs.get("class", "")]
    unsafe = []
    for b in drawn:
        try:
            import json

            unsafe += [f"{b.attrs.get('data-name')}: {p}" for p in problems(json.loads(b.text))]
        except ValueError:
            unsafe.append(f"{b.attrs.get('data-name')}: not JSON")
    report.add("figures: no code, no raw HTML", not unsafe, "; ".join(unsafe[:3]))
    same = markup_sha256(html) == listed.get("markup_sha256")
    detail = "" if same else "the page's markup differs from what the build wrote"
    report.add("page markup fingerprint", same, detail)


def table_values(record: dict[str, Any]) -> dict[str, str]:
    """What the tables must show for each value of the record (the templates' formatting)."""
    from .diff import flatten
    from .display import display_input, display_result

    built = record.get("built_utc")
    out = {f"r|{r['name']}": display_result(r, built) for r in record.get("results", [])}
    for block in record.get("standard_results", []):
        for r in block["results"]:  # rounded by tolerance; verify_results checks the tolerance
            out[f"s|{block['case']}|{r['name']}"] = display_result(r)
    for case in record.get("inputs", []):
        try:
            fields = flatten(json.loads(case["canonical"]))
        except ValueError:
            continue  # a broken canonical text is reported by the fingerprint check
        for path, value in fields.items():
            out[f"i|{case['name']}|{path}"] = display_input(value)
    return out
