"""The record exporters as nbconvert and the Jupyter front ends find them: by entry-point name
through nbconvert's own registry (``nbconvert.exporters.get_exporter``), each with the readable
name nbconvert defines for menus (``Exporter.export_from_notebook``, "a friendly name" in
nbconvert's exporter.py) and the MIME type the front end downloads.

JupyterLab 4 (and Notebook 7) label the *Save and Export Notebook As* items with the entry-point
name, first letter capitalised (``Orbitrecord``); docs/records.md says which item is which.
"""

from __future__ import annotations

from nbconvert.exporters import get_export_names, get_exporter
from orbitledger.reporting.exporter import OrbitRecordExporter, OrbitRecordPDFExporter


def test_the_record_exporters_are_found_by_name_with_readable_labels() -> None:
    assert {"orbitrecord", "orbitrecord_pdf"} <= set(get_export_names())
    html, pdf = get_exporter("orbitrecord"), get_exporter("orbitrecord_pdf")
    assert html is OrbitRecordExporter and pdf is OrbitRecordPDFExporter
    assert html.export_from_notebook == "Orbit calculation record"
    assert pdf.export_from_notebook == "Orbit calculation record (PDF)"
    assert (html.output_mimetype, pdf.output_mimetype) == ("text/html", "application/pdf")
    assert (html().file_extension, pdf().file_extension) == (".html", ".pdf")
