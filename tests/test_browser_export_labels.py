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
    """The labels of the export submenu; ``shot`` gets a screenshot with the menu open. The
    submenu stays empty (and does not open) until the front end has the server's formats, so
    the menu is opened again until it shows them."""
    from playwright.sync_api import TimeoutError as PlaywrightTimeout

    submenu = page.locator("#jp-mainmenu-file-notebookexport")
    for _attempt in range(6):
        page.locator(".lm-MenuBar-itemLabel", has_text="File").first.click()
        page.locator(".lm-Menu-itemLabel", has_text="Save and Export Notebook As").first.hover()
        try:
            submenu.locator(".lm-Menu-itemLabel").first.wait_for(timeout=10_000)
            break
        except PlaywrightTimeout:
            page.keyboard.press("Escape")
            page.keyboard.press("Escape")
    else:
        raise AssertionError("the export submenu did not open in six tries")
    labels = submenu.locator(".lm-Menu-itemLabel").all_inner_texts()
    shot.write_bytes(page.screenshot())
    page.keyboard.press("Escape")
    page.keyboard.press("Escape")
    return [label.strip() for label in labels]


@pytest.mark.parametrize("app", ["lab", "notebook"])
def test_the_export_menu_names_the_records_readably(app: str, tmp_path: Path, jupyter_page) -> None:
    from test_browser_lab import _artefact

    root = tmp_path / "study"
    root.mkdir()
    shutil.copy(EXAMPLES / "kestrel2-orbit-study.ipynb", root / "study.ipynb")
    path = "lab/tree/study.ipynb" if app == "lab" else "notebooks/study.ipynb"
    with jupyter_page(app, path, root) as (page, _server):
        # The kernel is up: the front end has loaded every plugin and asked for the formats.
        idle = page.locator(".jp-Notebook-ExecutionIndicator[data-status='idle']")
        idle.first.wait_for(state="attached", timeout=60_000)
        shot = tmp_path / f"{app}-export-menu.png"
        labels = _export_items(page, shot)
        if "Orbitrecord" in labels:  # the formats arrived after the first look
            labels = _export_items(page, shot)
        _artefact(tmp_path, shot.name, shot.read_bytes())
    assert OrbitRecordExporter.export_from_notebook in labels
    assert OrbitRecordPDFExporter.export_from_notebook in labels
    assert not {"Orbitrecord", "Orbitrecord_pdf"} & set(labels)
    # JupyterLab's own formats keep their labels (its getFormatLabels table).
    assert {"HTML", "PDF"} <= set(labels)
