"""verify trusts nothing: each tampering of a built record exits 1 with a line naming it.

The tamperings are those of a review board's probe (issues 12 and 16): text a reader sees,
names inside the embedded record JSON, injected script or markup, a decoy record, and, for a
browser-printed PDF, changes made after the build with pypdf. The reference is the record's own
embedded data: verify must find each change (a check that differs), and say where.
"""

from __future__ import annotations

import io
import json
import re
from collections.abc import Callable

import pytest
from _record_study import simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.verify import verify_file

from orbitledger.cli.main import main

_RECORD = re.compile(
    r'(<script type="application/json" id="orbitledger-record">)(.*?)(</script>)', re.DOTALL
)


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    folder = tmp_path_factory.mktemp("tamper")
    study = write_study(folder / "study")
    executed, manifest = simulated_run(study)
    return record_run(study, executed, manifest, ledger_dir=folder / "ledger")


def _outside_record(html: str, edit: Callable[[str], str]) -> str:
    """``html`` with ``edit`` applied to the markup before the embedded record JSON only."""
    match = _RECORD.search(html)
    head = edit(html[: match.start()])
    return head + html[match.start() :]


def _in_record(html: str, edit: Callable[[dict], None]) -> str:
    match = _RECORD.search(html)
    record = json.loads(match.group(2))
    edit(record)
    body = json.dumps(record, sort_keys=True).replace("<", "\\u003c")
    return html[: match.start(2)] + body + html[match.end(2) :]


def _replace_once(old: str, new: str) -> Callable[[str], str]:
    def edit(text: str) -> str:
        assert old in text, old
        return text.replace(old, new, 1)

    return edit


def _set_prepared(record: dict) -> None:
    record["prepared"]["name"] = "Someone Else, flight dynamics"


def _set_status(record: dict) -> None:
    record["status"] = "approved"


def _decoy(html: str) -> str:
    # A second, altered record JSON hidden in an HTML comment before the real one.
    match = _RECORD.search(html)
    record = json.loads(match.group(2))
    record["decision"]["decision"] = "We fly candidate B."
    decoy = (
        '<!-- <script type="application/json" id="orbitledger-record">'
        + json.dumps(record, sort_keys=True).replace("<", "\\u003c")
        + "</script> -->"
    )
    return html[: match.start()] + decoy + html[match.start() :]


# (name, tampering of the HTML text, words the failing lines must contain)
_HTML_TAMPERS = [
    (
        "decision text changed on the page",
        lambda h: _outside_record(h, _replace_once(">We fly candidate A.", ">We fly candidate B.")),
        "decision",
    ),
    (
        "a value in the narrative changed",
        lambda h: _outside_record(
            h, _replace_once("The baseline orbit, candidate A", "The baseline orbit, candidate B")
        ),
        "analysis",
    ),
    (
        "a value in a notebook output changed",
        lambda h: _outside_record(
            h, _replace_once("</span> = <b>42.5</b> km", "</span> = <b>42.6</b> km")
        ),
        "analysis",
    ),
    (
        "prepared (sign-off) name changed in the embedded JSON",
        lambda h: _in_record(h, _set_prepared),
        "cover",
    ),
    (
        "cover status changed to approved on the page",
        lambda h: _outside_record(
            h, _replace_once('status-draft">draft<', 'status-draft">approved<')
        ),
        "cover",
    ),
    ("cover status changed to approved in the JSON", lambda h: _in_record(h, _set_status), "cover"),
    (
        "an extra script injected",
        lambda h: h.replace("</body>", "<script>document.title='x'</script></body>", 1),
        "script",
    ),
    (
        "an onerror attribute added",
        lambda h: _outside_record(
            h,
            _replace_once("<p>The baseline orbit", '<p onerror="alert(1)">The baseline orbit'),
        ),
        "onerror",
    ),
    ("a decoy record JSON in an HTML comment", _decoy, "comment"),
]


@pytest.mark.parametrize(
    ("what", "tamper", "named"), _HTML_TAMPERS, ids=[t[0] for t in _HTML_TAMPERS]
)
def test_each_html_tampering_exits_1_naming_it(built, tmp_path, capsys, what, tamper, named):
    html = built.files["html"].read_text(encoding="utf-8")
    altered = tamper(html)
    assert altered != html
    path = tmp_path / "tampered.html"
    path.write_text(altered, encoding="utf-8")
    assert main(["verify", str(path)]) == 1, what
    out = capsys.readouterr().out
    diffs = [line for line in out.splitlines() if line.strip().startswith("DIFF")]
    assert diffs, out
    assert any(named in line.lower() for line in diffs), "\n".join(diffs)


def test_the_untouched_record_still_verifies(built):
    report = verify_file(built.files["html"])
    assert report.ok, report.text()


def test_script_policy_has_no_unsafe_inline(built):
    # A strict CSP allows scripts by hash only (W3C Content Security Policy Level 3, sections
    # 2.3 and 6.7.3: 'unsafe-inline' is ignored where a hash is present; common practice is to
    # leave it out altogether).
    html = built.files["html"].read_text(encoding="utf-8")
    policy = re.search(r'http-equiv="Content-Security-Policy" content="([^"]*)"', html).group(1)
    directives = dict(
        (d.split()[0], d.split()[1:]) for d in (p.strip() for p in policy.split(";")) if d
    )
    assert "'unsafe-inline'" not in directives["script-src"]
    assert all(s.startswith("'sha256-") for s in directives["script-src"])
    assert directives["default-src"] == ["'none'"]
    # Each hash is that of an inline script of the page (CSP3 section 8.3: base64 SHA-256 of
    # the script's text).
    import base64
    import hashlib

    bodies = re.findall(r"<script(?![^>]*application/json)[^>]*>(.*?)</script>", html, re.DOTALL)
    hashes = {
        "'sha256-" + base64.b64encode(hashlib.sha256(b.encode()).digest()).decode() + "'"
        for b in bodies
    }
    assert set(directives["script-src"]) == hashes


def _build_with_figure(tmp_path, model):
    """Build the test study with its figure output replaced by ``model``'s bundle."""
    import nbformat

    from orbitledger.figures.show import figure_bundle

    study = write_study(tmp_path / "study")
    executed, manifest = simulated_run(study)
    bundle = json.loads(json.dumps(figure_bundle(model, "altitude", "Altitude"), sort_keys=True))
    code = [c for c in executed.cells if c.cell_type == "code"]
    code[1].outputs = [nbformat.v4.new_output("display_data", data=bundle)]
    return record_run(study, executed, manifest, ledger_dir=tmp_path / "ledger")


def test_a_figure_with_a_customjs_callback_is_refused_at_build(tmp_path):
    from bokeh.models import CustomJS
    from bokeh.plotting import figure
    from orbitledger.reporting.build import BuildError

    fig = figure(width=300, height=200)
    fig.line([0, 1], [0, 1])
    fig.js_on_event("tap", CustomJS(code="alert(1)"))
    with pytest.raises(BuildError, match="CustomJS"):
        _build_with_figure(tmp_path, fig)
    assert not list((tmp_path / "ledger").rglob("record.html"))  # nothing written


def test_raw_html_in_a_div_is_cleaned_at_build_and_the_record_verifies(tmp_path):
    # The XSS probe of OWASP's XSS Filter Evasion Cheat Sheet: an image whose error handler runs.
    from bokeh.models import Div

    outcome = _build_with_figure(tmp_path, Div(text="<img src=x onerror=alert(1)>"))
    html = outcome.files["html"].read_text(encoding="utf-8")
    assert "alert(1)" not in html and "onerror=alert" not in html  # BokehJS has "assertionerror="
    report = verify_file(outcome.files["html"])
    assert report.ok, report.text()


# The PDF part without a browser (as test_verify does): the record attached to a one-page PDF
# made by pypdf. Its blank page already differs in two checks (footer, text); each tampering
# after the build must make at least one more check differ, naming it.
_BLANK_DIFFS = {"PDF pages: the 1 the build printed, unchanged", "PDF text: as the record says"}


@pytest.fixture(scope="module")
def pdf_bytes(built):
    from orbitledger.reporting.render_pdf import attach
    from pypdf import PdfWriter

    record = json.loads(built.files["json"].read_text())
    blank = io.BytesIO()
    writer = PdfWriter()
    writer.add_blank_page(595, 842)
    writer.write(blank)
    return attach(blank.getvalue(), record, built.files["notebook"].read_bytes())


def _incremental(data: bytes, edit) -> bytes:
    from pypdf import PdfWriter

    writer = PdfWriter(io.BytesIO(data), incremental=True)
    edit(writer)
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()


def _annotate(w):
    from pypdf.annotations import FreeText

    w.add_annotation(0, FreeText(text="DECISION AMENDED", rect=(50, 700, 300, 750)))


def _attach_extra(w):
    w.add_attachment("extra.txt", b"not from the build")


def _other_revision(w):
    w.add_metadata({"/OrbitLedgerRevision": "2"})


_PDF_TAMPERS = [
    ("an annotation added", _annotate),
    ("an extra attachment", _attach_extra),
    ("metadata naming another revision", _other_revision),
    ("an incremental update appended", lambda w: w.add_metadata({"/Subject": "amended"})),
]


@pytest.mark.parametrize(("what", "edit"), _PDF_TAMPERS, ids=[t[0] for t in _PDF_TAMPERS])
def test_each_pdf_tampering_after_the_build_is_named(pdf_bytes, tmp_path, what, edit):
    good = tmp_path / "good.pdf"
    good.write_bytes(pdf_bytes)
    assert {c.what for c in verify_file(good).checks if not c.ok} == _BLANK_DIFFS
    bad = tmp_path / "bad.pdf"
    bad.write_bytes(_incremental(pdf_bytes, edit))
    report = verify_file(bad)
    assert not report.ok
    assert {c.what for c in report.checks if not c.ok} - _BLANK_DIFFS, (what, report.text())
