"""verify: a record checks out from the file alone, and any altered digit is named."""

from __future__ import annotations

import io
import json
import math
import re

import pytest
from _record_study import simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.verify import read_record, verify_file

from orbitledger.cli.main import main

_RECORD = re.compile(
    r'(<script type="application/json" id="orbitledger-record">)(.*?)(</script>)', re.DOTALL
)


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    folder = tmp_path_factory.mktemp("verify")
    study = write_study(folder / "study")
    executed, manifest = simulated_run(study)
    outcome = record_run(study, executed, manifest, ledger_dir=folder / "ledger")
    return outcome


def _tampered(built, tmp_path, edit) -> str:
    """A copy of the HTML record whose embedded record JSON went through ``edit(record)``."""
    html = built.files["html"].read_text(encoding="utf-8")
    match = _RECORD.search(html)
    record = json.loads(match.group(2))
    edit(record)
    body = json.dumps(record, sort_keys=True).replace("<", "\\u003c")
    out = tmp_path / "tampered.html"
    out.write_text(html[: match.start(2)] + body + html[match.end(2) :], encoding="utf-8")
    return str(out)


def test_an_untouched_record_verifies(built, capsys):
    report = verify_file(built.files["html"])
    assert report.ok, report.text()
    assert any("standard results of candidate-a.case.json" in c.what for c in report.checks)
    assert main(["verify", str(built.files["html"])]) == 0
    assert "all hold" in capsys.readouterr().out


def test_embedded_period_agrees_with_keplers_third_law(built):
    # Independent check of a recomputed standard result: T = 2 pi sqrt(a^3 / mu)
    # (Curtis, Orbital Mechanics for Engineering Students, 3rd ed., eq. 2.83), with the
    # WGS-84 GM of the Earth (NIMA TR8350.2, Table 3.1) and a = R + h = 6378.137 + 540 km
    # for the example case's 540 km altitude.
    record, _ = read_record(built.files["html"])
    rows = {r["name"]: r for r in record["standard_results"][0]["results"]}
    a_km = 6378.137 + 540.0
    expected_s = 2 * math.pi * math.sqrt(a_km**3 / 398600.4418)
    assert abs(rows["semi_major_axis_km"]["value"] - a_km) < 1e-6  # 1 mm
    assert abs(rows["period_s"]["value"] - expected_s) < 1e-3  # 1 ms


def test_one_digit_changed_in_a_named_result_fails(built, tmp_path, capsys):
    def edit(r):
        r["results"][0]["value"] = 42.6

    path = _tampered(built, tmp_path, edit)
    assert main(["verify", path]) == 1
    out = capsys.readouterr().out
    assert "DIFF results fingerprint" in out and "a named or standard result was altered" in out


def test_one_digit_changed_in_an_input_fails_naming_the_case(built, tmp_path, capsys):
    def edit(r):
        r["inputs"][0]["canonical"] = r["inputs"][0]["canonical"].replace(
            '"altitude_km":540.0', '"altitude_km":541.0'
        )

    path = _tampered(built, tmp_path, edit)
    assert main(["verify", path]) == 1
    out = capsys.readouterr().out
    assert "DIFF input candidate-a.case.json: fingerprint" in out


def test_a_changed_notebook_fails(built, tmp_path, capsys):
    def edit(r):
        r["notebook"]["cells"][4]["source"] = r["notebook"]["cells"][4]["source"].replace(
            "42.5", "42.6"
        )

    path = _tampered(built, tmp_path, edit)
    assert main(["verify", path]) == 1
    assert "DIFF notebook fingerprint" in capsys.readouterr().out


def test_a_forged_standard_result_is_caught_by_recomputation(built, tmp_path):
    # A forger changes a standard result and recomputes the results fingerprint as well:
    # recomputing the result from the embedded inputs still finds it.
    from orbitledger.reporting import record as rec

    def edit(r):
        rows = r["standard_results"][0]["results"]
        period = next(x for x in rows if x["name"] == "period_s")
        period["value"] += 0.5
        r["fingerprints"]["results"] = rec.results_fingerprint(r["results"], r["standard_results"])

    report = verify_file(_tampered(built, tmp_path, edit))
    failed = {c.what: c.detail for c in report.checks if not c.ok}
    assert failed["standard result of candidate-a.case.json"].startswith("period_s: record")
    # ... and the table still shows the value the record was built with.
    assert "period_s shows" in next(v for k, v in failed.items() if k.startswith("tables:"))
    assert len(failed) == 2


def test_an_altered_figure_fails(built, tmp_path):
    html = built.files["html"].read_text(encoding="utf-8")
    altered = html.replace('"line_width": 3', '"line_width": 4', 1)
    assert altered != html
    path = tmp_path / "figure.html"
    path.write_text(altered, encoding="utf-8")
    report = verify_file(path)
    assert [c.what for c in report.checks if not c.ok] == ["figure altitude: fingerprint"]


def test_a_file_that_is_not_a_record_is_bad_input(tmp_path, capsys):
    path = tmp_path / "page.html"
    path.write_text("<html><body>hello</body></html>")
    assert main(["verify", str(path)]) == 2
    assert "not an orbitledger record" in capsys.readouterr().err
    assert main(["verify", str(tmp_path / "missing.html")]) == 2


def test_a_pdf_record_verifies_and_an_altered_attachment_fails(built, tmp_path):
    # The PDF part without a browser: attach the record to a one-page PDF made by pypdf. Its
    # blank page carries neither the footer nor the text of the record: those two checks
    # differ (test_record_pdf checks a printed record whole); every other check holds.
    from orbitledger.reporting.render_pdf import attach
    from pypdf import PdfReader, PdfWriter

    record = json.loads(built.files["json"].read_text())
    blank = io.BytesIO()
    writer = PdfWriter()
    writer.add_blank_page(595, 842)
    writer.write(blank)
    notebook = built.files["notebook"].read_bytes()
    good = tmp_path / "good.pdf"
    good.write_bytes(attach(blank.getvalue(), record, notebook))
    report = verify_file(good)
    failed = {c.what for c in report.checks if not c.ok}
    assert failed == {"PDF pages: the 1 the build printed, unchanged", "PDF text: as the record says"}
    meta = PdfReader(good).metadata
    assert meta["/OrbitLedgerRecordId"] == "KES2-ORB-001" and meta["/OrbitLedgerRevision"] == "1"

    bad = tmp_path / "bad.pdf"
    bad.write_bytes(attach(blank.getvalue(), record, notebook.replace(b"42.5", b"42.6")))
    report = verify_file(bad)
    assert {c.what for c in report.checks if not c.ok} - failed == {
        "attachment notebook.ipynb: fingerprint"
    }


@pytest.mark.slow
def test_execute_reruns_the_embedded_notebook(built, capsys):
    assert main(["verify", str(built.files["html"]), "--execute"]) == 0
    captured = capsys.readouterr()
    assert "runs the code embedded in this record" in captured.err
    assert "ok   --execute: result test_length_km" in captured.out


def test_a_digit_changed_in_a_visible_table_fails(built, tmp_path, capsys):
    # The embedded JSON untouched, the table a reader sees altered: verify compares the two.
    html = built.files["html"].read_text(encoding="utf-8")
    altered = html.replace(
        'data-check="r|test_length_km">42.5<', 'data-check="r|test_length_km">42.6<'
    )
    assert altered != html
    path = tmp_path / "shown.html"
    path.write_text(altered, encoding="utf-8")
    assert main(["verify", str(path)]) == 1
    out = capsys.readouterr().out
    assert "test_length_km shows '42.6', the record says '42.5'" in out
