"""Render a record to HTML with the ``orbitrecord`` templates (see ``exporter``)."""

from __future__ import annotations

from typing import Any

__all__ = ["render_html"]


def render_html(executed_nb: Any, record: dict[str, Any]) -> str:
    """The HTML record of ``record`` with the executed notebook's narrative, outputs and figures.

    Self-contained: CSS, the record JSON and one BokehJS are inlined; nothing is fetched.
    """
    from .exporter import OrbitRecordExporter

    exporter = OrbitRecordExporter()
    resources = {"orbitledger_record": record, "metadata": {"name": record["notebook"]["name"]}}
    body, _ = exporter.from_notebook_node(executed_nb, resources=resources)
    return body
