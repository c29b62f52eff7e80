"""The printed record shows every figure whole: axes, labels and full extent on the page.

Each PDF page is rendered with poppler's ``pdftoppm`` and its words located with poppler's
``pdftotext -bbox`` (both outside the project). For every figure of the record, every axis
label the figure carries (read from its Bokeh item) must be in the text of the page that holds
the figure's caption, lie inside the printable area of that A4 page (the record's @page
margins: 15 mm at the sides, 16 mm at the top, 18 mm at the bottom), and be drawn there: the
rendered pixels under the word are not blank (a label cut off by a clipped figure would still
sit in the text layer, but print nothing). The ground track must reach both ends of its
longitude axis (-180 and 180 deg), the defect first seen on paper.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
from _record_study import simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.render_pdf import find_browser

pytestmark = [
    pytest.mark.browser,
    pytest.mark.slow,
    pytest.mark.skipif(find_browser() is None, reason="no Chromium to print with"),
    pytest.mark.skipif(
        shutil.which("pdftoppm") is None or shutil.which("pdftotext") is None,
        reason="poppler-utils (pdftoppm, pdftotext) missing",
    ),
]

_MM = 72.0 / 25.4  # PDF points per millimetre
_AXES = {"LinearAxis", "DatetimeAxis", "LogAxis", "CategoricalAxis", "MercatorAxis"}
_WORD = re.compile(
    r'<word xMin="([\d.]+)" yMin="([\d.]+)" xMax="([\d.]+)" yMax="([\d.]+)">([^<]*)</word>'
)


def _axis_labels(node, found):
    if isinstance(node, dict):
        attrs = node.get("attributes", {})
        if node.get("type") == "object" and node.get("name") in _AXES:
            label = attrs.get("axis_label")
            if isinstance(label, str) and label.strip() and attrs.get("visible", True):
                found.append(label)
        for value in node.values():
            _axis_labels(value, found)
    elif isinstance(node, list):
        for value in node:
            _axis_labels(value, found)
    return found


@pytest.fixture(scope="module")
def printed(tmp_path_factory):
    """The record of a study showing candidate A's case figures, printed to PDF."""
    import nbformat
    from orbitledger.widgets import case_figures

    from orbitledger.case import load_case
    from orbitledger.figures.show import figure_bundle

    folder = tmp_path_factory.mktemp("print")
    study = write_study(folder / "study")
    executed, manifest = simulated_run(study)
    case = load_case(study.parent / "candidate-a.case.json")
    cell = [c for c in executed.cells if c.cell_type == "code"][1]
    items = {}
    for name, fig in case_figures(case).items():
        slug = f"candidate-a-{name.replace(' ', '-')}"
        bundle = json.loads(json.dumps(figure_bundle(fig, slug, f"Candidate A: {name}")))
        cell.outputs.append(nbformat.v4.new_output("display_data", data=bundle))
        items[slug] = bundle["application/vnd.orbitledger.figure+json"]["item"]
    outcome = record_run(
        study, executed, manifest, to=("html", "pdf"), ledger_dir=folder / "ledger"
    )
    assert outcome.messages == []
    return outcome.files["pdf"], outcome.record, items, folder


def _page_words(pdf: Path, number: int) -> tuple[float, float, list[tuple]]:
    text = subprocess.run(
        ["pdftotext", "-bbox", "-f", str(number), "-l", str(number), str(pdf), "-"],
        check=True,
        capture_output=True,
        text=True,
    ).stdout
    size = re.search(r'<page width="([\d.]+)" height="([\d.]+)"', text)
    words = [(*map(float, m.groups()[:4]), m.group(5)) for m in _WORD.finditer(text)]
    return float(size.group(1)), float(size.group(2)), words


def _page_pixels(pdf: Path, number: int, folder: Path) -> np.ndarray:
    from PIL import Image

    stem = folder / f"page-{number}"
    subprocess.run(  # 72 dpi: one pixel per PDF point
        ["pdftoppm", "-r", "72", "-f", str(number), "-l", str(number), "-png", "-singlefile",
         str(pdf), str(stem)],
        check=True,
    )  # fmt: skip
    return np.asarray(Image.open(f"{stem}.png").convert("L")).astype(int)


def _caption_page(pdf: Path, n: int) -> int:
    from pypdf import PdfReader

    pages = PdfReader(pdf).pages
    hits = [k for k, p in enumerate(pages, start=1) if f"Figure {n}." in p.extract_text()]
    assert hits, f"no page carries the caption of figure {n}"
    return hits[0]


def test_every_axis_label_of_every_figure_is_printed_on_its_page(printed):
    pdf, record, items, folder = printed
    assert len(record["figures"]) == len(items) + 1  # the test study's own figure, then these
    checked = 0
    for n, fig in enumerate(record["figures"], start=1):
        if fig["name"] not in items:
            continue
        labels = _axis_labels(items[fig["name"]], [])
        assert labels, f"{fig['name']}: no axis labels to check"
        number = _caption_page(pdf, n)
        width, height, words = _page_words(pdf, number)
        pixels = _page_pixels(pdf, number, folder)
        inside = (15 * _MM - 1, 16 * _MM - 1, width - 15 * _MM + 1, height - 18 * _MM + 1)
        for label in labels:
            for token in label.split():
                boxes = [w for w in words if w[4] == token]
                assert boxes, f"figure {n} ({fig['name']}): axis label {label!r} not on page {number}"
                x0, y0, x1, y1, _ = boxes[0]
                assert inside[0] <= x0 and x1 <= inside[2] and inside[1] <= y0 and y1 <= inside[3], (
                    f"figure {n}: {token!r} of {label!r} at {boxes[0][:4]} lies outside the page's "
                    f"printable area {inside}"
                )
                ink = pixels[int(y0) : int(np.ceil(y1)) + 1, int(x0) : int(np.ceil(x1)) + 1]
                assert (ink < 170).any(), f"figure {n}: {label!r} is in the text but not drawn"
                checked += 1
    assert checked >= 8


def test_the_ground_track_reaches_both_ends_of_its_longitude_axis(printed):
    pdf, record, items, folder = printed
    (n,) = [k for k, f in enumerate(record["figures"], 1) if f["name"].endswith("ground-track")]
    number = _caption_page(pdf, n)
    width, _, words = _page_words(pdf, number)
    (east,) = [w for w in words if w[4] == "180"]  # latitude ends at 90: 180 is a longitude
    row = {w[4]: w for w in words if abs(w[1] - east[1]) < 2}  # the longitude tick labels
    # Bokeh writes negative tick labels with U+2212 (minus sign).
    wanted = ["\u2212180", "\u221290", "0", "90", "120", "180"]
    missing = [t for t in wanted if t not in row]
    assert not missing, f"longitude ticks {missing} missing from the printed ground track"
    xs = [row[t][0] for t in wanted]
    assert xs == sorted(xs) and east[2] <= width - 15 * _MM + 1  # in order, inside the margin
    # The map is drawn up to its east end (Kuru Ridge, 133.9 deg E, sits there): the band
    # above the ticks from 120 to 180 deg E is inked, not blank.
    pixels = _page_pixels(pdf, number, folder)
    y = int(east[1])
    band = pixels[y - 150 : y - 4, int(row["120"][0]) : int(east[2])]
    assert (band < 200).sum() > 300, "nothing drawn east of 120 deg E"


def test_figures_print_as_vector_text_not_pictures_of_text(printed):
    # Axis tick labels are text on the page (SVG drawing), once each: BokehJS's invisible
    # outline copies are removed before printing, so copying a number gives it once.
    pdf, record, _, _ = printed
    (n,) = [k for k, f in enumerate(record["figures"], 1) if f["name"].endswith("orbit-plane")]
    _, _, words = _page_words(pdf, _caption_page(pdf, n))
    labels = [w for w in words if w[4] == "(km)"]
    positions = {(round(w[0]), round(w[1])) for w in labels}
    assert len(labels) == len(positions) >= 2
