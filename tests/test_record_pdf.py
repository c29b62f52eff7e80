"""The PDF record: printed by Chromium, figures drawn, footer on every page, data attached."""

from __future__ import annotations

import json
import shutil
import subprocess

import numpy as np
import pytest
from _record_study import simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.render_pdf import find_browser
from orbitledger.reporting.verify import verify_file

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(find_browser() is None, reason="no Chromium to print with"),
]


@pytest.fixture(scope="module")
def pdf(tmp_path_factory):
    folder = tmp_path_factory.mktemp("pdf")
    study = write_study(folder / "study")
    executed, manifest = simulated_run(study)
    outcome = record_run(
        study, executed, manifest, to=("html", "pdf"), ledger_dir=folder / "ledger"
    )
    assert outcome.messages == []
    return outcome.files["pdf"]


def test_pdf_carries_metadata_and_attachments(pdf):
    from pypdf import PdfReader

    reader = PdfReader(pdf)
    meta = reader.metadata
    assert meta.title == "Kestrel-2 record test study (KES2-ORB-001 rev 1)"
    assert meta["/OrbitLedgerRecordId"] == "KES2-ORB-001" and meta["/OrbitLedgerRevision"] == "1"
    attachments = reader.attachments
    assert set(attachments) == {
        "record.json",
        "notebook.ipynb",
        "case-candidate-a.case.json",
        "pages.json",
    }
    record = json.loads(attachments["record.json"][0])
    assert record["revision"] == 1
    report = verify_file(pdf)
    assert report.ok, report.text()


def test_every_page_has_the_footer_and_a_page_number(pdf):
    from pypdf import PdfReader

    pages = PdfReader(pdf).pages
    assert len(pages) >= 3
    for n, page in enumerate(pages, start=1):
        text = " ".join(page.extract_text().split())
        assert "KES2-ORB-001 rev 1" in text, n
        assert f"page {n} of {len(pages)}" in text, n
    first = " ".join(pages[0].extract_text().split())
    assert "Calculation record" in first.title() or "CALCULATION RECORD" in first.upper()
    last = " ".join(pages[-1].extract_text().split())
    assert "Appendix: code of the study notebook" in last  # code appears in the appendix


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="pdftoppm (poppler-utils) missing")
def test_the_figure_is_drawn_on_its_page(pdf, tmp_path):
    from PIL import Image
    from pypdf import PdfReader

    pages = PdfReader(pdf).pages
    (number,) = [n for n, p in enumerate(pages, start=1) if "Figure 1." in p.extract_text()]
    subprocess.run(
        [
            "pdftoppm",
            "-r",
            "60",
            "-f",
            str(number),
            "-l",
            str(number),
            "-png",
            str(pdf),
            str(tmp_path / "p"),
        ],
        check=True,
    )
    (png,) = tmp_path.glob("p*.png")
    pixels = np.asarray(Image.open(png).convert("RGB")).astype(int)
    # The test figure's line is Bokeh's default line colour #1f77b4 (Bokeh documentation,
    # "Styling visual attributes": the default palette's first colour), 3 px wide.
    target = np.array([0x1F, 0x77, 0xB4])
    hits = int(np.all(np.abs(pixels - target) <= 40, axis=-1).sum())
    assert hits > 100, f"the figure area looks blank: {hits} line-coloured pixels"
    # And the rest of a drawn figure: axes, ticks and labels make many non-white pixels.
    assert int((pixels.sum(axis=-1) < 600).sum()) > 2000


@pytest.mark.slow
def test_the_pdf_exporter_prints_a_record_from_a_notebook_alone(tmp_path):
    # What `jupyter nbconvert --to orbitrecord_pdf` does: run, render, print; no ledger.
    from orbitledger.reporting.exporter import OrbitRecordPDFExporter
    from pypdf import PdfReader

    body, resources = OrbitRecordPDFExporter().from_filename(str(write_study(tmp_path)))
    assert resources["output_extension"] == ".pdf" and body[:5] == b"%PDF-"
    out = tmp_path / "study.pdf"
    out.write_bytes(body)
    assert verify_file(out).ok
    assert PdfReader(out).metadata["/OrbitLedgerRevision"] == "unrecorded"
