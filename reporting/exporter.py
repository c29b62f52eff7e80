"""The nbconvert exporter of calculation records: ``jupyter nbconvert --to orbitrecord``.

Registered through the ``nbconvert.exporters`` entry point, so nbconvert and JupyterLab's
"Save and Export Notebook As" menu offer it. Given a notebook alone (from nbconvert or
JupyterLab) it runs the study from a clean kernel in the notebook's folder to collect the
record, like ``orbitledger build`` but without a ledger: the record says "unrecorded".
``orbitledger build`` passes the record it assembled in ``resources["orbitledger_record"]``.

Safety: the Jinja environment autoescapes every value; markdown is rendered with raw HTML
disabled and the result cleaned with bleach; HTML outputs are cleaned with bleach; JavaScript
outputs are dropped; SVG is shown through ``<img>`` (where scripts never run).
"""

from __future__ import annotations

import copy
from pathlib import Path
from typing import Any

from nbconvert.exporters import HTMLExporter
from traitlets import default

from orbitledger.study import SNAPSHOT_MIME

from .figure_items import drawable_item
from .filters import _b64, json_for_script, safe_markdown, sanitize_html
from .record_text import show_controls
from .run import FIGURE_MIME
from .safe_bokeh import safe_item
from .templating import record_context

__all__ = [
    "OrbitRecordExporter",
    "OrbitRecordPDFExporter",
    "TEMPLATES_DIR",
    "safe_markdown",
    "sanitize_html",
]

TEMPLATES_DIR = Path(__file__).resolve().parent.parent / "templates"
if not (TEMPLATES_DIR / "orbitrecord").is_dir():  # installed as a wheel: package data
    import orbitledger.templates as _templates

    TEMPLATES_DIR = Path(_templates.__file__).resolve().parent

RESULT_MIME = "application/vnd.orbitledger.result+json"
WIDGET_MIME = "application/vnd.jupyter.widget-view+json"
NOTE_MIME = "application/vnd.orbitledger.note+json"  # our own placeholder for a dropped output

_DROP_MIMES = ("application/vnd.bokehjs_load.v0+json", "application/vnd.bokehjs_exec.v0+json")


def prepare_outputs(nb: Any) -> Any:
    """A copy of ``nb`` fit for the record: figures numbered, live-only outputs removed."""
    nb = copy.deepcopy(nb)
    number = 0
    for cell in nb.cells:
        cell.source = show_controls(cell.source)  # bidi controls shown, never applied
        if cell.cell_type != "code":
            continue
        kept = []
        for output in cell.get("outputs", []):
            if output.get("output_type") == "execute_result":
                output["output_type"] = "display_data"  # one rendering path for both
                output.pop("execution_count", None)
            data = output.get("data", {})
            if FIGURE_MIME in data:
                number += 1
                fig = dict(data[FIGURE_MIME])
                fig["item"] = drawable_item(safe_item(fig["item"], fig.get("name", "")))
                output["data"] = {FIGURE_MIME: fig}
                output.setdefault("metadata", {})["orbitledger_figure_number"] = number
            elif RESULT_MIME in data:
                output["data"] = {RESULT_MIME: data[RESULT_MIME]}
            elif "application/javascript" in data and len(set(data) - {"text/plain"}) == 1:
                output["data"] = {NOTE_MIME: "a JavaScript output is not carried into the record"}
            elif SNAPSHOT_MIME in data:  # a widget with its static snapshot: the record's table
                output["data"] = {SNAPSHOT_MIME: data[SNAPSHOT_MIME]}
            elif WIDGET_MIME in data:
                output["data"] = {
                    NOTE_MIME: "an interactive widget: live in the notebook, not part of the record"
                }
            elif any(m in data for m in _DROP_MIMES):
                continue  # BokehJS loader or live view: the record embeds its own copy
            elif output.get("output_type") in ("display_data", "execute_result") and not data:
                continue
            kept.append(output)
        cell["outputs"] = kept
    return nb


class OrbitRecordExporter(HTMLExporter):
    """HTML calculation record (templates ``orbitrecord``), offline and self-contained."""

    export_from_notebook = "Orbit calculation record"

    @default("template_name")
    def _template_name_default(self) -> str:
        return "orbitrecord"

    @default("extra_template_basedirs")
    def _extra_template_basedirs_default(self) -> list[str]:
        return [str(TEMPLATES_DIR)]

    @default("file_extension")
    def _file_extension_default(self) -> str:
        return ".html"

    @default("template_file")
    def _template_file_default(self) -> str:
        return "index.html.j2"

    @property
    def default_config(self) -> Any:
        config = super().default_config
        config.NbConvertBase.display_data_priority = [
            FIGURE_MIME,
            RESULT_MIME,
            SNAPSHOT_MIME,
            "text/html",
            "text/markdown",
            "image/svg+xml",
            "image/png",
            "image/jpeg",
            "text/latex",
            "text/plain",
        ]
        config.HighlightMagicsPreprocessor.enabled = True
        config.CSSHTMLHeaderPreprocessor.enabled = False
        return config

    def _create_environment(self) -> Any:
        env = super()._create_environment()
        env.autoescape = True
        # Every plain value shows its bidi controls as marks (Markup from our filters did so).
        env.finalize = lambda v: show_controls(v) if type(v) is str else v
        return env

    def default_filters(self) -> Any:
        yield from super().default_filters()
        yield ("markdown2html", lambda text: safe_markdown(text))
        yield ("safe_markdown", safe_markdown)
        yield ("sanitize_html", sanitize_html)
        yield ("json_for_script", json_for_script)
        yield ("b64", _b64)

    def from_notebook_node(
        self, nb: Any, resources: dict[str, Any] | None = None, **kw: Any
    ) -> Any:
        resources = dict(resources or {})
        record = resources.get("orbitledger_record")
        if record is None:
            nb, record = self._run_study(nb, resources)
        from .record_page import seal

        prepared = prepare_outputs(nb)
        resources["orbitledger"] = record_context(record, prepared)
        body, resources = self._render(prepared, resources, **kw)
        return seal(body, record), resources

    def _render(self, nb: Any, resources: dict[str, Any], **kw: Any) -> Any:
        """HTMLExporter's rendering without its BeautifulSoup pass over the page.

        That pass only adds alt texts and tab stops to JupyterLab's cell classes (our template
        writes its own alt texts and has none of those classes), yet it re-parses and
        re-serialises the whole document, 1 MB of inlined BokehJS included.
        """
        from nbconvert.exporters.templateexporter import TemplateExporter
        from nbconvert.filters.highlight import Highlight2HTML
        from nbconvert.filters.widgetsdatatypefilter import WidgetsDataTypeFilter

        langinfo = nb.metadata.get("language_info", {})
        lexer = langinfo.get("pygments_lexer", langinfo.get("name", None))
        self.register_filter("highlight_code", Highlight2HTML(pygments_lexer=lexer, parent=self))
        resources = self._init_resources(resources)
        self.register_filter(
            "filter_data_type",
            WidgetsDataTypeFilter(
                notebook_metadata=self._nb_metadata, parent=self, resources=resources
            ),
        )
        return TemplateExporter.from_notebook_node(self, nb, resources, **kw)

    def _run_study(self, nb: Any, resources: dict[str, Any]) -> tuple[Any, dict[str, Any]]:
        """No record given (nbconvert, JupyterLab): run the study headless, no ledger."""
        from .assembly import assemble_record
        from .run import execute_study

        meta = resources.get("metadata", {})
        folder = Path(meta.get("path") or ".").resolve()
        name = meta.get("name") or "study"
        executed, manifest = execute_study(nb, folder, name=f"{name}.ipynb", progress=False)
        record = assemble_record(folder / f"{name}.ipynb", executed, manifest)
        return executed, record


class OrbitRecordPDFExporter(OrbitRecordExporter):
    """The same record printed to PDF by Chromium (``jupyter nbconvert --to orbitrecord_pdf``)."""

    export_from_notebook = "Orbit calculation record (PDF)"
    output_mimetype = "application/pdf"

    @default("file_extension")
    def _file_extension_default(self) -> str:
        return ".pdf"

    def from_notebook_node(
        self, nb: Any, resources: dict[str, Any] | None = None, **kw: Any
    ) -> Any:
        import nbformat

        from .assembly import archived_notebook
        from .render_pdf import print_record_pdf

        resources = dict(resources or {})
        record = resources.get("orbitledger_record")
        if record is None:
            nb, record = self._run_study(nb, resources)
            resources["orbitledger_record"] = record
        html, resources = super().from_notebook_node(nb, resources, **kw)
        notebook = nbformat.writes(archived_notebook(nb)).encode("utf-8")
        resources["output_extension"] = ".pdf"
        return print_record_pdf(html, record, notebook), resources
