"""Hostile text in titles, notes, names, markdown and outputs comes out of the record inert.

The vectors are classics of the OWASP "XSS Filter Evasion Cheat Sheet" (script tags, event
handler attributes, javascript: and data: URLs, SVG with script, breaking out of a script
element with ``</script>``).
"""

from __future__ import annotations

import json
from html.parser import HTMLParser

import nbformat
import pytest
from _record_study import CASE_NAME, EXAMPLES, simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.signoff import sign

HOSTILE_TITLE = "<script>alert(1)</script>"
HOSTILE_MARKDOWN = (
    "## Findings <script>alert(4)</script>\n\n"
    "<img src=x onerror=alert(5)>\n\n"
    "[click me](javascript:alert(6))\n\n"
    '<iframe src="javascript:alert(7)"></iframe>\n\n'
    '<a href="data:text/html,<script>alert(8)</script>">data link</a>\n\n'
    "<svg/onload=alert(14)>"
)
HOSTILE_RESULT = {
    "name": "</script><script>alert(9)</script>",
    "value": 1.0,
    "unit": "<b onmouseover=alert(15)>km</b>",
    "description": '"><img src=x onerror=alert(16)>',
}


class _Audit(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.scripts: list[dict[str, str | None]] = []
        self.script_text: list[str] = []
        self.bad: list[str] = []
        self.h1: list[str] = []
        self._in_script = False
        self._in_h1 = False

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "script":
            self.scripts.append(a)
            self._in_script = True
        if tag in ("iframe", "object", "embed", "base", "form", "meta") and not (
            tag == "meta" and set(a) <= {"charset", "name", "content", "http-equiv"}
        ):
            self.bad.append(f"<{tag}>")
        for name, value in attrs:
            if name.startswith("on"):
                self.bad.append(f"{tag} {name}={value}")
            if name in ("href", "src", "action") and value:
                v = value.strip().lower()
                if v.startswith(("javascript:", "vbscript:", "data:text")):
                    self.bad.append(f"{tag} {name}={value}")
        if tag == "h1":
            self._in_h1 = True
            self.h1.append("")

    def handle_endtag(self, tag):
        if tag == "script":
            self._in_script = False
        if tag == "h1":
            self._in_h1 = False

    def handle_data(self, data):
        if self._in_script:
            self.script_text.append(data)
        if self._in_h1:
            self.h1[-1] += data


@pytest.fixture(scope="module")
def hostile(tmp_path_factory):
    folder = tmp_path_factory.mktemp("xss")
    study_dir = folder / "study"
    study_dir.mkdir()
    case = json.loads((EXAMPLES / CASE_NAME).read_text())
    case["meta"]["author"] = "<svg onload=alert(3)>"
    case["meta"]["title"] = "<img src=x onerror=alert(17)>"
    (study_dir / CASE_NAME).write_text(json.dumps(case))
    extra = [nbformat.v4.new_markdown_cell(HOSTILE_MARKDOWN)]
    study = write_study(study_dir, title=HOSTILE_TITLE, extra_cells=extra)
    executed, manifest = simulated_run(study, results=[HOSTILE_RESULT])
    executed.cells[2].outputs.append(
        nbformat.v4.new_output(
            "display_data",
            data={
                "text/html": "<script>alert(10)</script><b onmouseover=alert(11)>bold</b>"
                "<style>body{display:none}</style>",
                "text/plain": "x",
            },
        )
    )
    executed.cells[2].outputs.append(
        nbformat.v4.new_output(
            "display_data", data={"image/svg+xml": "<svg><script>alert(12)</script></svg>"}
        )
    )
    executed.cells[2].outputs.append(
        nbformat.v4.new_output("display_data", data={"application/javascript": "alert(18)"})
    )
    outcome = record_run(
        study, executed, manifest, ledger_dir=folder / "ledger", note="<img src=x onerror=alert(2)>"
    )
    from orbitledger.reporting.ledger import Ledger

    signed = sign(
        Ledger(folder / "ledger"), "KES2-ORB-001", 1, "checked", "<script>alert(13)</script>"
    )
    return outcome.files["html"], signed.files["record-checked.html"]


def _audit(path) -> tuple[str, _Audit]:
    html = path.read_text(encoding="utf-8")
    audit = _Audit()
    audit.feed(html)
    return html, audit


@pytest.mark.parametrize("which", [0, 1], ids=["record", "signed copy"])
def test_no_hostile_markup_survives(hostile, which):
    html, audit = _audit(hostile[which])
    assert audit.bad == []
    # Only our scripts: the record JSON, the figure JSON, BokehJS and the record's own script.
    kinds = sorted(
        (s.get("type") or "", s.get("id") or s.get("class") or "") for s in audit.scripts
    )
    assert kinds == [
        ("", ""),
        ("", ""),
        ("application/json", "orbitledger-figure"),
        ("application/json", "orbitledger-record"),
    ]
    for n in range(1, 19):
        assert f"alert({n})" not in "".join(audit.script_text[-1:])  # the record's own script
    assert "alert(18)" not in html  # a JavaScript output is dropped entirely
    assert "alert(12)" not in html.replace("base64", "")  # SVG only as a base64 <img>


@pytest.mark.parametrize("which", [0, 1], ids=["record", "signed copy"])
def test_hostile_text_is_shown_as_text(hostile, which):
    html, audit = _audit(hostile[which])
    assert audit.h1[0].strip() == HOSTILE_TITLE  # the title, escaped, reads as typed
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
    assert "&lt;img src=x onerror=alert(2)&gt;" in html  # the note
    assert "&lt;svg onload=alert(3)&gt;" in html  # the author on the cover
    if which == 1:
        assert "&lt;script&gt;alert(13)&lt;/script&gt;" in html  # the checker's name
    # Embedded JSON cannot close its script element: every "<" is written as \\u003c.
    record_json = next(t for t in audit.script_text if '"schema":"orbitledger.record/1"' in t)
    assert "<" not in record_json
    assert json.loads(record_json)["title"] == HOSTILE_TITLE


@pytest.mark.browser
def test_no_script_runs_in_a_browser(hostile):
    from orbitledger.reporting.render_pdf import BrowserMissing, chromium, wait_for_figures

    try:
        with chromium() as browser:
            for path in hostile:
                page = browser.new_page()
                dialogs: list[str] = []
                page.on("dialog", lambda d, seen=dialogs: (seen.append(d.message), d.dismiss()))
                page.goto(path.as_uri())
                wait_for_figures(page, 30_000)
                assert dialogs == []
                assert page.title().startswith(HOSTILE_TITLE)
                page.close()
    except BrowserMissing as err:
        pytest.skip(str(err))
