"""The HTML record: its sections, one inlined BokehJS, nothing remote, the embedded record, sign-off."""

from __future__ import annotations

import json
import re
from html.parser import HTMLParser

import bokeh
import pytest
from _record_study import simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.ledger import Ledger
from orbitledger.reporting.verify import read_record, verify_file

from orbitledger.cli.main import main


class _Page(HTMLParser):
    """Ids, script elements and every URL-bearing attribute of a page (Python's html.parser)."""

    def __init__(self) -> None:
        super().__init__()
        self.ids: list[str] = []
        self.scripts: list[dict[str, str]] = []
        self.urls: list[str] = []
        self.links: list[str] = []
        self.hidden_code = 0

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if "id" in a:
            self.ids.append(a["id"])
        if tag == "script":
            self.scripts.append(a)
        if tag == "link":
            self.links.append(a.get("href", ""))
        for name in ("src", "href", "action", "data"):
            if a.get(name):
                self.urls.append(a[name])
        if "code-input" in (a.get("class") or "").split():
            self.hidden_code += 1


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    folder = tmp_path_factory.mktemp("html")
    study = write_study(folder / "study")
    executed, manifest = simulated_run(study)
    return record_run(study, executed, manifest, ledger_dir=folder / "ledger", note="first issue")


def _page(path) -> tuple[str, _Page]:
    html = path.read_text(encoding="utf-8")
    page = _Page()
    page.feed(html)
    return html, page


def test_every_section_of_the_record_is_there(built):
    html, page = _page(built.files["html"])
    for section in ("cover", "decision", "inputs", "models", "results", "analysis", "environment",
                    "fingerprints", "history", "appendix-code"):  # fmt: skip
        assert section in page.ids, section
    record = built.record
    for text in ("KES2-ORB-001", "Kestrel-2 record test study", "draft", "We fly candidate A.",
                 record["fingerprints"]["inputs"], record["fingerprints"]["notebook"],
                 "Figure 1.", "Altitude over the first orbits", "test_length_km",
                 "semi_major_axis_km", "World Geodetic System 1984",
                 "Preliminary analysis with the stated models"):  # fmt: skip
        assert text in html, text
    # The case's altitude is listed with its unit (docs/case-file.md: altitude_km in km).
    assert re.search(
        r">altitude_km</td><td class=\"unit\">km</td><td class=\"num\" data-check=\"[^\"]*\">540</td>",
        html,
    )


def test_one_inlined_bokehjs_and_nothing_fetched(built):
    html, page = _page(built.files["html"])
    # BokehJS inlined exactly once (bokeh.resources INLINE marks each file it inlines).
    assert html.count("/* BEGIN bokeh.min.js */") == 1
    assert "bokeh-widgets" not in html and "bokeh-tables" not in html  # not needed here
    inline = [m.start() for m in re.finditer(r"<script>\n", html)]
    assert len(inline) == 2  # BokehJS, then the record's own small script
    assert all(not s.get("src") for s in page.scripts), "no script is loaded from anywhere"
    assert page.links == [], "no stylesheet or font is linked"
    assert all(u.startswith(("#", "data:")) for u in page.urls), [
        u for u in page.urls if not u.startswith(("#", "data:"))
    ]
    assert "default-src 'none'" in html and "connect-src 'none'" in html  # CSP blocks any request
    assert len(html.encode()) < 3_000_000


def test_code_is_hidden_by_default_with_a_toggle(built):
    html, page = _page(built.files["html"])
    assert page.hidden_code == 3  # the three code cells of the study
    assert 'id="toggle-code"' in html
    assert (
        ".code-input { display: none;" in html
        and "body.show-code .code-input { display: block; }" in html
    )


def test_embedded_record_is_the_ledgers_record(built):
    record, extras = read_record(built.files["html"])
    assert record == json.loads(built.files["json"].read_text())
    assert record == Ledger(built.files["html"].parents[3]).record("KES2-ORB-001", 1)
    assert [name for name, _ in extras["figures"]] == ["altitude"]
    env = record["environment"]
    assert env["orbitledger"] and env["python"] and env["packages"]["bokeh"] == bokeh.__version__
    assert re.fullmatch(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ", env["built_utc"])


def test_sign_off_writes_a_signed_copy_and_keeps_the_original(built, capsys):
    ledger_dir = built.files["html"].parents[3]
    original = built.files["html"].read_bytes()
    args = ["--ledger", str(ledger_dir)]
    assert (
        main(["sign", "KES2-ORB-001", "1", "--role", "approved", "--name", "B. Boss", *args]) == 2
    )
    assert "needs checked" in capsys.readouterr().err
    assert (
        main(["sign", "KES2-ORB-001", "1", "--role", "checked", "--name", "C. Checker", *args]) == 0
    )
    out = capsys.readouterr().out
    assert "checked by C. Checker" in out
    assert (
        main(["sign", "KES2-ORB-001", "1", "--role", "approved", "--name", "D. Director", *args])
        == 0
    )
    capsys.readouterr()
    assert built.files["html"].read_bytes() == original  # never edited
    folder = built.files["html"].parent
    checked = (folder / "record-checked.html").read_text()
    approved = (folder / "record-approved.html").read_text()
    assert "C. Checker" in checked and "D. Director" not in checked
    assert "C. Checker" in approved and "D. Director" in approved
    signed, _ = read_record(folder / "record-approved.html")
    first = json.loads(built.files["json"].read_text())
    assert signed["fingerprints"] == first["fingerprints"]  # same revision, same fingerprints
    assert signed["status"] == "approved"
    digest = Ledger(ledger_dir).artifacts("KES2-ORB-001", 1)
    html_sha = next(a.sha256 for a in digest if a.name == "record.html")
    assert [s["artifact_sha256"] for s in signed["signoffs"]] == [html_sha, html_sha]
    assert verify_file(folder / "record-approved.html").ok
    assert Ledger(ledger_dir).revisions("KES2-ORB-001")[0].status == "approved"
    assert Ledger(ledger_dir).check() == []
    # A second "checked" is refused: the lifecycle only moves forward.
    assert main(["sign", "KES2-ORB-001", "1", "--role", "checked", "--name", "E. Else", *args]) == 2


def test_the_nbconvert_exporter_is_offered_by_name():
    from importlib.metadata import entry_points

    # Registered in pyproject.toml under [project.entry-points."nbconvert.exporters"].
    names = {ep.name for ep in entry_points(group="nbconvert.exporters")}
    assert {"orbitrecord", "orbitrecord_pdf"} <= names
    from nbconvert.exporters import get_exporter
    from orbitledger.reporting.exporter import OrbitRecordExporter, OrbitRecordPDFExporter

    assert get_exporter("orbitrecord") is OrbitRecordExporter
    assert get_exporter("orbitrecord_pdf") is OrbitRecordPDFExporter


@pytest.mark.slow
def test_the_exporter_builds_a_record_from_a_notebook_alone(tmp_path):
    # What `jupyter nbconvert --to orbitrecord` and JupyterLab's export menu do: no ledger.
    from orbitledger.reporting.exporter import OrbitRecordExporter

    study = write_study(tmp_path)
    body, _ = OrbitRecordExporter().from_filename(str(study))
    out = tmp_path / "study.html"
    out.write_text(body, encoding="utf-8")
    report = verify_file(out)
    assert report.ok, report.text()
    assert report.revision is None and "unrecorded" in body
