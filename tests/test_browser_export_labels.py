"""The export menu names our record exporters readably, in JupyterLab and Notebook 7.

Both front ends build *File -> Save and Export Notebook As* from the server's
``/api/nbconvert`` list, labelling each item with the entry-point name, first letter
capitalised (``Orbitrecord``): the label code of ``@jupyterlab/notebook-extension`` in
JupyterLab 4, read from its source. Our plugin (labextension/src/index.js) renames the two
items after the exporters' ``export_from_notebook``, the "friendly name" nbconvert defines for
front ends (nbconvert/exporters/exporter.py); the other formats keep JupyterLab's labels.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from orbitledger.reporting.exporter import OrbitRecordExporter, OrbitRecordPDFExporter

pytestmark = [pytest.mark.browser, pytest.mark.slow]

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def _export_items(page, shot: Path) -> list[str]:
    """The labels of the export submenu; ``shot`` gets a screenshot with the menu open."""
    page.locator(".lm-MenuBar-itemLabel", has_text="File").first.click()
    page.locator(".lm-Menu-itemLabel", has_text="Save and Export Notebook As").first.hover()
    submenu = page.locator("#jp-mainmenu-file-notebookexport")
    submenu.locator(".lm-Menu-itemLabel").first.wait_for(timeout=30_000)
    labels = submenu.locator(".lm-Menu-itemLabel").all_inner_texts()
    shot.write_bytes(page.screenshot())
    page.keyboard.press("Escape")
    page.keyboard.press("Escape")
    return [label.strip() for label in labels]


@pytest.mark.parametrize("app", ["lab", "notebook"])
def test_the_export_menu_names_the_records_readably(app: str, tmp_path: Path) -> None:
    from test_browser_lab import CHROMIUM, Server, _artefact, _launch

    if not Path(CHROMIUM).exists():
        pytest.skip("chromium is not installed (CI installs Debian's chromium)")
    sync_api = pytest.importorskip("playwright.sync_api")
    root = tmp_path / "study"
    root.mkdir()
    shutil.copy(EXAMPLES / "kestrel2-orbit-study.ipynb", root / "study.ipynb")
    (tmp_path / "home").mkdir()
    server = Server(app, root, tmp_path / "home")
    path = "lab/tree/study.ipynb" if app == "lab" else "notebooks/study.ipynb"
    try:
        with sync_api.sync_playwright() as p:
            browser = _launch(p, tmp_path)
            page = browser.pages[0] if browser.pages else browser.new_page()
            try:
                page.goto(server.url(path))
                page.locator(".jp-Notebook").first.wait_for(timeout=60_000)
                shot = tmp_path / f"{app}-export-menu.png"
                labels = _export_items(page, shot)
                if "Orbitrecord" in labels:  # the formats arrived after the first look
                    labels = _export_items(page, shot)
                _artefact(tmp_path, shot.name, shot.read_bytes())
            finally:
                browser.close()
    finally:
        server.stop()
    assert OrbitRecordExporter.export_from_notebook in labels
    assert OrbitRecordPDFExporter.export_from_notebook in labels
    assert not {"Orbitrecord", "Orbitrecord_pdf"} & set(labels)
    # JupyterLab's own formats keep their labels (its getFormatLabels table).
    assert {"HTML", "PDF"} <= set(labels)
