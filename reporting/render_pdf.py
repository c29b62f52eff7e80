"""Print a record to PDF with Chromium driven by playwright, then attach its data with pypdf.

The browser is a system Chromium or Chrome when present (``chromium``, ``chromium-browser``,
``google-chrome``), else playwright's own if it was installed (``playwright install chromium``).
It starts with a fresh profile and no background networking; ``--no-sandbox`` is added only
when running as root (containers, CI), where Chromium refuses to start otherwise, and the log
says so. Printing waits until every figure has rendered (the record sets
``document.body.dataset.figures = "ready"``). Every page's footer carries the record id,
the revision and the page number. The PDF then gets its metadata (title, record id, revision)
and attachments: ``record.json``, ``notebook.ipynb`` (executed), each case file and
``pages.json`` (the digest of each printed page, ``verify_pdf.page_digests``).
"""

from __future__ import annotations

import io
import logging
import os
import queue
import shutil
import tempfile
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from html import escape
from pathlib import Path
from typing import Any

from .record import canonical_dumps

__all__ = [
    "BrowserMissing",
    "PdfPrinter",
    "chromium",
    "find_browser",
    "print_record_pdf",
]

log = logging.getLogger("orbitledger.reporting")

_FLAGS = [
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]
# Printed width of the A4 page inside the @page margins (210 mm - 2 x 15 mm) at 96 px/inch,
# less the figure frame's padding and border; the height a figure may take on one page
# (297 mm - 16 mm - 18 mm of margins, less room for its caption).
_PRINT_WIDTH_PX = int(180 / 25.4 * 96) - 20
_PRINT_HEIGHT_PX = int((297 - 16 - 18 - 30) / 25.4 * 96)


class BrowserMissing(Exception):
    """No Chromium to print with; the message says how to get one."""


def find_browser() -> str | None:
    """Path of a system Chromium/Chrome, or of playwright's own Chromium, or None."""
    for name in ("chromium", "chromium-browser", "google-chrome", "google-chrome-stable"):
        found = shutil.which(name)
        if found:
            return found
    try:
        from playwright.sync_api import sync_playwright

        with sync_playwright() as pw:
            path = pw.chromium.executable_path
    except Exception:  # playwright without its browser raises various errors
        return None
    return path if path and os.path.exists(path) else None


_HOW_TO_GET = (
    "no Chromium found to print the PDF (the HTML record was written): install one, e.g. "
    "'apt-get install chromium' (Debian/Ubuntu) or 'python -m playwright install chromium'"
)


@contextmanager
def chromium() -> Iterator[Any]:
    """A headless Chromium (a playwright ``BrowserContext``, fresh profile), closed afterwards."""
    from playwright.sync_api import sync_playwright

    executable = find_browser()
    if executable is None:
        raise BrowserMissing(_HOW_TO_GET)
    args = list(_FLAGS)
    if hasattr(os, "geteuid") and os.geteuid() == 0:
        args.append("--no-sandbox")
        log.info("running as root: Chromium started with --no-sandbox")
    # A fresh --user-data-dir: playwright takes it as the persistent context's folder.
    with tempfile.TemporaryDirectory(prefix="orbitledger-chromium-") as profile:
        with sync_playwright() as pw:
            context = pw.chromium.launch_persistent_context(
                profile,
                executable_path=executable,
                args=args,
                headless=True,
                viewport={"width": 1100, "height": 1400},
            )
            try:
                yield context
            finally:
                context.close()


def wait_for_figures(page: Any, timeout_ms: float = 60_000) -> None:
    """Block until the record says every figure drew; raise if one failed."""
    page.wait_for_function("document.body && document.body.dataset.figures", timeout=timeout_ms)
    state = page.evaluate("document.body.dataset.figures")
    if state != "ready":
        raise RuntimeError(f"a figure did not render: {state}")


def _footer(record: dict[str, Any]) -> str:
    rev = record.get("revision")
    label = escape(
        f"{record['record_id']} rev {rev if rev is not None else 'unrecorded'} · "
        f"{record.get('status', '')} when printed"  # signatures added later: on the cover
    )
    title = escape(record.get("title", ""))[:90]
    return (
        "<div style='font-size:7.5pt;color:#5b6470;width:100%;margin:0 15mm;display:flex;"
        "justify-content:space-between;font-family:DejaVu Sans,Arial,sans-serif'>"
        f"<span>{label}</span><span>{title}</span>"
        "<span>page <span class='pageNumber'></span> of <span class='totalPages'></span></span></div>"
    )


def _print_page(browser: Any, html: str, record: dict[str, Any]) -> bytes:
    with tempfile.TemporaryDirectory(prefix="orbitledger-print-") as tmp:
        page_file = Path(tmp) / "record.html"
        page_file.write_text(html, encoding="utf-8")
        page = browser.new_page()
        page.add_init_script("window.orbitledgerPrintMode = true;")
        page.route(
            "**/*",
            lambda route: (
                route.continue_() if route.request.url.startswith("file:") else route.abort()
            ),
        )
        page.emulate_media(media="print")  # before loading: the figures draw once, for print
        page.goto(page_file.as_uri(), wait_until="load")
        wait_for_figures(page)
        page.evaluate(f"window.orbitledgerPrepareForPrint({_PRINT_WIDTH_PX}, {_PRINT_HEIGHT_PX})")
        pdf = page.pdf(
            format="A4",
            print_background=True,
            display_header_footer=True,
            header_template="<div></div>",
            footer_template=_footer(record),
            margin={"top": "16mm", "bottom": "18mm", "left": "15mm", "right": "15mm"},
            prefer_css_page_size=True,
        )
        page.close()
        return pdf


_WAIT_FOR_JOB_S = 3 * 3600.0


class PdfPrinter:
    """A Chromium started ahead of time in a worker thread, printing one record when asked.

    ``orbitledger build`` starts it before the study runs, so that launching the browser
    overlaps the notebook's run, and closing it overlaps the ledger's commit. The thread also
    keeps playwright's sync API away from any running asyncio loop (a notebook kernel, the
    Jupyter server), where playwright refuses to run.
    """

    def __init__(self) -> None:
        self._jobs: queue.Queue[Any] = queue.Queue()
        self._results: queue.Queue[Any] = queue.Queue()
        self._thread = threading.Thread(target=self._run, name="orbitledger-pdf", daemon=False)
        self._thread.start()

    def _run(self) -> None:
        try:
            context = chromium()
            browser = context.__enter__()
        except BaseException as err:  # no browser, or it failed to start: say so when asked
            if self._next_job() is not None:
                self._results.put(("error", err))
            return
        try:
            job = self._next_job()
            if job is not None:
                try:
                    self._results.put(("pdf", _print_page(browser, *job)))
                except BaseException as err:  # handed to the caller's thread
                    self._results.put(("error", err))
        finally:
            context.__exit__(None, None, None)  # the caller has its PDF already

    def _next_job(self) -> Any:
        try:  # a caller that died without cancel() must not keep the process alive forever
            return self._jobs.get(timeout=_WAIT_FOR_JOB_S)
        except queue.Empty:
            return None

    def print(self, html: str, record: dict[str, Any], notebook: bytes) -> bytes:
        """PDF bytes of the record ``html`` with its attachments; ``BrowserMissing`` if none."""
        self._jobs.put((html, record))
        kind, value = self._results.get()
        if kind == "error":
            raise value
        return attach(value, record, notebook)

    def cancel(self) -> None:
        """Close the browser without printing (the build stopped before its PDF)."""
        self._jobs.put(None)


def attach(pdf: bytes, record: dict[str, Any], notebook: bytes) -> bytes:
    """The PDF with metadata and attachments: record JSON, executed notebook, case files."""
    from pypdf import PdfWriter

    from .verify_pdf import PAGES_ATTACHMENT, info_entries, page_digests

    # Chromium's PDFs make pypdf warn about the trailer's object count: harmless, not for users.
    logging.getLogger("pypdf").setLevel(logging.ERROR)

    # An incremental update: Chromium's PDF stays as printed, the additions follow it.
    writer = PdfWriter(io.BytesIO(pdf), incremental=True)
    writer.add_metadata(info_entries(record))
    writer.add_attachment("record.json", canonical_dumps(record).encode("utf-8"))
    writer.add_attachment("notebook.ipynb", notebook)
    for case in record.get("inputs", []):
        writer.add_attachment(
            "case-" + case["name"].replace("/", "_"), case["canonical"].encode("utf-8")
        )
    writer.add_attachment(PAGES_ATTACHMENT, page_digests(pdf))  # verify_pdf: pages as printed
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()


def print_record_pdf(html: str, record: dict[str, Any], notebook: bytes) -> bytes:
    """PDF bytes of the record ``html``; raises ``BrowserMissing`` when no Chromium is found."""
    return PdfPrinter().print(html, record, notebook)
