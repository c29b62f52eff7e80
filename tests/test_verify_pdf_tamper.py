"""verify on a PDF printed by the browser: each change after the build is refused and named.

The record is built the real way (Chromium prints it, the build attaches its data); each
tampering is then made twice, with outside tools that a reader of the file might use:

- as an incremental update appended by pyhanko's ``IncrementalPdfFileWriter`` (the bytes of
  the build stay as they were, as ISO 32000-1, 7.5.6 allows), and
- as a full rewrite by pypdf (``PdfWriter(clone_from=...)``: one revision, the build's
  attachments carried over).

poppler's ``pdfinfo`` (outside the project) confirms that each tampered file is a PDF a
reader opens, so the test does not pass on a file that is merely broken.
"""

from __future__ import annotations

import io
import re
import shutil
import subprocess

import pytest
from _record_study import simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.render_pdf import find_browser

from orbitledger.cli.main import main

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(find_browser() is None, reason="no Chromium to print with"),
    pytest.mark.skipif(shutil.which("pdfinfo") is None, reason="no pdfinfo (poppler-utils)"),
]


@pytest.fixture(scope="module")
def printed(tmp_path_factory):
    folder = tmp_path_factory.mktemp("pdf-tamper")
    study = write_study(folder / "study")
    executed, manifest = simulated_run(study)
    outcome = record_run(
        study, executed, manifest, to=("html", "pdf"), ledger_dir=folder / "ledger"
    )
    assert outcome.messages == []
    return outcome.files["pdf"].read_bytes()


def _pages(data: bytes) -> int:
    # poppler reads the tampered file as a reader would (its own parser, not pypdf's)
    out = subprocess.run(["pdfinfo", "-"], input=data, capture_output=True, check=True).stdout
    return int(re.search(rb"Pages:\s+(\d+)", out).group(1))


def _bump_digit(data: bytes) -> bytes:
    """The first number with a fraction in a content stream, its first digit changed."""
    found = re.search(rb"\d\.\d+ ", data)
    at = found.start()
    return data[:at] + bytes([ord("0") + (data[at] - ord("0") + 1) % 10]) + data[at + 1 :]


_RED_NOTE = "DECISION AMENDED"


# --- incremental updates, with pyhanko's writer -------------------------------------------


def _incremental(data: bytes, edit) -> bytes:
    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter

    writer = IncrementalPdfFileWriter(io.BytesIO(data), strict=False)
    edit(writer)
    out = io.BytesIO()
    writer.write(out)
    assert out.getvalue().startswith(data)  # an update appended, the build's bytes unchanged
    return out.getvalue()


def _inc_digit(w):
    from pyhanko.pdf_utils import generic

    page_ref, _ = w.find_page_for_modification(0)
    page = page_ref.get_object()
    contents = page.raw_get("/Contents")
    stream = contents.get_object()
    new = generic.StreamObject(stream_data=_bump_digit(stream.data))
    page["/Contents"] = w.add_object(new)
    w.update_container(page)


def _inc_annotation(w):
    from pyhanko.pdf_utils import generic

    page_ref, _ = w.find_page_for_modification(0)
    note = generic.DictionaryObject(
        {
            generic.pdf_name("/Type"): generic.pdf_name("/Annot"),
            generic.pdf_name("/Subtype"): generic.pdf_name("/FreeText"),
            generic.pdf_name("/Rect"): generic.ArrayObject(
                map(generic.FloatObject, (60, 560, 400, 610))
            ),
            generic.pdf_name("/Contents"): generic.pdf_string(_RED_NOTE),
            generic.pdf_name("/DA"): generic.pdf_string("/Helv 20 Tf 1 0 0 rg"),
            generic.pdf_name("/C"): generic.ArrayObject(map(generic.FloatObject, (1, 0, 0))),
        }
    )
    w.register_annotation(page_ref, w.add_object(note))


def _inc_page(w):
    from pyhanko.pdf_utils import generic
    from pyhanko.pdf_utils.writer import PageObject

    text = b"BT /F1 24 Tf 72 720 Td (DECISION AMENDED) Tj ET"
    w.insert_page(
        PageObject(
            contents=w.add_object(generic.StreamObject(stream_data=text)),
            media_box=(0, 0, 595, 842),
        )
    )


def _inc_field(w):
    from pyhanko.pdf_utils import generic

    page_ref, _ = w.find_page_for_modification(0)
    field = generic.DictionaryObject(
        {
            generic.pdf_name("/Type"): generic.pdf_name("/Annot"),
            generic.pdf_name("/Subtype"): generic.pdf_name("/Widget"),
            generic.pdf_name("/FT"): generic.pdf_name("/Tx"),
            generic.pdf_name("/T"): generic.pdf_string("amendment"),
            generic.pdf_name("/V"): generic.pdf_string(_RED_NOTE),
            generic.pdf_name("/Rect"): generic.ArrayObject(
                map(generic.FloatObject, (60, 560, 400, 610))
            ),
            generic.pdf_name("/P"): page_ref,
        }
    )
    ref = w.add_object(field)
    w.register_annotation(page_ref, ref)
    root = w.root
    form = generic.DictionaryObject({generic.pdf_name("/Fields"): generic.ArrayObject([ref])})
    root["/AcroForm"] = w.add_object(form)
    w.update_root()


def _inc_info(w):
    from pyhanko.pdf_utils import generic

    info = w.trailer_view["/Info"].get_object()
    changed = generic.DictionaryObject(dict(info))
    changed["/Author"] = generic.pdf_string("Someone Else, flight dynamics")
    w.set_info(changed)


def _inc_nothing_visible(w):
    w.update_root()  # the catalogue written again as it was: an update that is no signature


# --- full rewrites, with pypdf ------------------------------------------------------------


def _rewrite(data: bytes, edit) -> bytes:
    from pypdf import PdfReader, PdfWriter

    writer = PdfWriter(clone_from=PdfReader(io.BytesIO(data)))
    edit(writer)
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()


def _rw_digit(w):
    stream = w.pages[0]["/Contents"].get_object()
    stream.set_data(_bump_digit(stream.get_data()))


def _rw_annotation(w):
    from pypdf.annotations import FreeText

    note = FreeText(
        text=_RED_NOTE, rect=(60, 560, 400, 610), font_size="20pt", font_color="ff0000",
        border_color="ff0000", background_color="ffffff",
    )  # fmt: skip
    w.add_annotation(0, note)


def _rw_page(w):
    w.add_blank_page()


def _rw_field(w):
    from pypdf.generic import (
        ArrayObject,
        DictionaryObject,
        NameObject,
        RectangleObject,
        TextStringObject,
    )

    page = w.pages[0]
    field = DictionaryObject(
        {
            NameObject("/Type"): NameObject("/Annot"),
            NameObject("/Subtype"): NameObject("/Widget"),
            NameObject("/FT"): NameObject("/Tx"),
            NameObject("/T"): TextStringObject("amendment"),
            NameObject("/V"): TextStringObject(_RED_NOTE),
            NameObject("/Rect"): RectangleObject((60, 560, 400, 610)),
        }
    )
    ref = w._add_object(field)
    page.setdefault(NameObject("/Annots"), ArrayObject()).append(ref)
    w._root_object[NameObject("/AcroForm")] = DictionaryObject(
        {NameObject("/Fields"): ArrayObject([ref])}
    )


def _rw_info(w):
    w.add_metadata({"/Author": "Someone Else, flight dynamics"})


# (what, tampered bytes from the printed ones, pages a reader sees, words a DIFF line must hold)
_TAMPERS = [
    ("digit in a content stream, update", lambda d: _incremental(d, _inc_digit), 0, "page 1: its content differs"),
    ("digit in a content stream, rewrite", lambda d: _rewrite(d, _rw_digit), 0, "page 1: its content differs"),
    ("red free-text annotation, update", lambda d: _incremental(d, _inc_annotation), 0, "annotation /freetext added"),
    ("red free-text annotation, rewrite", lambda d: _rewrite(d, _rw_annotation), 0, "annotation /freetext added"),
    ("page added, update", lambda d: _incremental(d, _inc_page), 1, "pages, the build printed"),
    ("page added, rewrite", lambda d: _rewrite(d, _rw_page), 1, "pages, the build printed"),
    ("form field added, update", lambda d: _incremental(d, _inc_field), 0, "other fields: amendment"),
    ("form field added, rewrite", lambda d: _rewrite(d, _rw_field), 0, "other fields: amendment"),
    ("Info metadata changed, update", lambda d: _incremental(d, _inc_info), 0, "author says 'someone else"),
    ("Info metadata changed, rewrite", lambda d: _rewrite(d, _rw_info), 0, "author says 'someone else"),
    ("an update that is no signature", lambda d: _incremental(d, _inc_nothing_visible), 0, "not a signature"),
]  # fmt: skip


def test_the_printed_record_verifies(printed, tmp_path):
    path = tmp_path / "record.pdf"
    path.write_bytes(printed)
    assert main(["verify", str(path)]) == 0


@pytest.mark.parametrize(
    ("what", "tamper", "added", "named"), _TAMPERS, ids=[t[0] for t in _TAMPERS]
)
def test_each_change_after_the_build_is_refused_naming_it(
    printed, tmp_path, capsys, what, tamper, added, named
):
    data = tamper(printed)
    assert data != printed
    assert _pages(data) == _pages(printed) + added, what  # a PDF poppler opens, as changed
    path = tmp_path / "tampered.pdf"
    path.write_bytes(data)
    capsys.readouterr()
    assert main(["verify", str(path)]) == 1, what
    out = capsys.readouterr().out
    diffs = [line.lower() for line in out.splitlines() if line.strip().startswith("DIFF")]
    assert any(named in line for line in diffs), (what, out)
    if data.startswith(printed):  # an appended update is named as one, whatever it holds
        assert any("not a signature" in line for line in diffs), (what, out)
