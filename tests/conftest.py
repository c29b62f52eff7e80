"""Fixtures shared by several test files.

``jupyter_editor``: the JupyterLab / Notebook 7 start-up the browser tests share (server on a
free port, headless Chromium, the notebook opened and run until the case editor shows its first
figure), with a screenshot of the page kept as an artefact when the test fails.
"""

from __future__ import annotations

import contextlib
import logging
from pathlib import Path

import pytest
from _pg import pg_url  # noqa: F401  (the PostgreSQL ledger tests' fixture, shared)

log = logging.getLogger(__name__)


@pytest.fixture
def jupyter_editor(tmp_path: Path):
    """A context manager ``open(app, path, root)`` yielding ``(page, editor, server)``.

    ``app`` is "lab" or "notebook", ``path`` the notebook's URL path under the server, ``root``
    the study folder the server serves. Skips when Chromium or playwright is missing.
    """
    return jupyter_editor_opener(tmp_path)


@pytest.fixture
def jupyter_page(tmp_path: Path):
    """A context manager ``open(app, path, root)`` yielding ``(page, server)`` once the
    notebook at ``path`` is on the page (nothing run). Skips when Chromium or playwright is
    missing."""
    return jupyter_page_opener(tmp_path)


def jupyter_page_opener(tmp_path: Path):
    """The ``jupyter_page`` fixture's context manager; ``tmp_path`` holds the server's home and
    artefacts (a screenshot of the page when the body fails)."""
    from test_browser_lab import CHROMIUM, Server, _artefact, _launch

    if not Path(CHROMIUM).exists():
        pytest.skip("chromium is not installed (CI installs Debian's chromium)")
    sync_api = pytest.importorskip("playwright.sync_api")

    @contextlib.contextmanager
    def open_page(app: str, path: str, root: Path):
        (tmp_path / "home").mkdir(exist_ok=True)
        server = Server(app, root, tmp_path / "home")
        try:
            with sync_api.sync_playwright() as p:
                browser = _launch(p, tmp_path)
                page = browser.pages[0] if browser.pages else browser.new_page()
                try:
                    page.goto(server.url(path))
                    page.locator(".jp-Notebook").first.wait_for(timeout=60_000)
                    yield page, server
                except Exception:
                    _artefact(tmp_path, f"{app}-failure.png", page.screenshot(full_page=True))
                    raise
                finally:
                    browser.close()
        finally:
            server.stop()

    return open_page


def jupyter_editor_opener(tmp_path: Path):
    """The ``jupyter_editor`` fixture's context manager, for a script outside pytest too
    (benchmarks/bench_editor_frames.py); ``tmp_path`` holds the server's home and artefacts."""
    from test_browser_lab import _accept_kernel_dialog, _run_all

    open_page = jupyter_page_opener(tmp_path)
    sync_api = pytest.importorskip("playwright.sync_api")

    @contextlib.contextmanager
    def open_editor(app: str, path: str, root: Path):
        with open_page(app, path, root) as (page, server):
            idle = page.locator(".jp-Notebook-ExecutionIndicator[data-status='idle']")
            idle.first.wait_for(state="attached", timeout=60_000)
            editor = page.locator(".ol-editor").first
            for attempt in range(3):  # a Run All sent while the session connects is lost
                _accept_kernel_dialog(page)
                _run_all(page)
                _accept_kernel_dialog(page)
                try:
                    editor.wait_for(timeout=60_000)
                    break
                except sync_api.TimeoutError:
                    log.warning("no editor after Run All (attempt %d)", attempt + 1)
            else:
                raise AssertionError("the editor did not appear after three Run All")
            editor.locator(".ol-figure canvas").first.wait_for(timeout=60_000)
            yield page, editor, server

    return open_editor
