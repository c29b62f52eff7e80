"""The record exporters as nbconvert and the Jupyter front ends find them: by entry-point name
through nbconvert's own registry (``nbconvert.exporters.get_exporter``), each with the readable
name nbconvert defines for menus (``Exporter.export_from_notebook``, "a friendly name" in
nbconvert's exporter.py) and the MIME type the front end downloads.

JupyterLab 4 (and Notebook 7) label the *Save and Export Notebook As* items with the entry-point
name, first letter capitalised (``Orbitrecord``); our plugin in labextension/ renames them after
``export_from_notebook``. Its build is committed and installed as data files; the checks below
keep the source, the build and the install list in step (the browser test,
test_browser_export_labels.py, looks at the menu itself).
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import tomllib
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


ROOT = Path(__file__).resolve().parents[1]
PLUGIN = ROOT / "labextension"
BUILT = PLUGIN / "prebuilt" / "@orbitledger" / "export-labels"


def _labels_in(text: str) -> dict[str, str]:
    """The ``format: 'label'`` pairs of the plugin's LABELS table (source or minified build)."""
    return dict(re.findall(r"(orbitrecord(?:_pdf)?)\s*:\s*[\"']([^\"']+)[\"']", text))


def test_the_menu_plugin_uses_the_exporters_own_names_in_its_source_and_its_build() -> None:
    wanted = {
        "orbitrecord": OrbitRecordExporter.export_from_notebook,
        "orbitrecord_pdf": OrbitRecordPDFExporter.export_from_notebook,
    }
    assert _labels_in((PLUGIN / "src" / "index.js").read_text()) == wanted
    built = "".join(p.read_text() for p in (BUILT / "static").glob("*.js"))
    assert _labels_in(built) == wanted, "labextension/prebuilt is stale: run labextension/build.sh"


def test_the_built_plugin_is_complete_and_installed_with_the_package() -> None:
    meta = json.loads((BUILT / "package.json").read_text())
    assert meta["name"] == "@orbitledger/export-labels"
    assert (BUILT / meta["jupyterlab"]["_build"]["load"]).is_file()
    data_files = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"][
        "data-files"
    ]
    listed = {ROOT / f for pattern in sum(data_files.values(), []) for f in ROOT.glob(pattern)}
    assert listed == {p for p in BUILT.rglob("*") if p.is_file()}
    for target, sources in data_files.items():
        assert target.startswith("share/jupyter/labextensions/@orbitledger/export-labels")
        for pattern in sources:
            relative = Path(pattern).parent.relative_to(BUILT.relative_to(ROOT))
            assert Path(target) == Path(
                "share/jupyter/labextensions/@orbitledger/export-labels", relative
            )
