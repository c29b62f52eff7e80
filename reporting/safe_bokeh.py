"""Bokeh figures fit for a record: no code of the study runs, no raw HTML reaches the page.

A record runs BokehJS and its own script only (its Content-Security-Policy allows exactly
those two, by hash). A Bokeh figure item (``bokeh.embed.json_item``) can carry more:

- models that run JavaScript written by the study: ``CustomJS`` and its kin (``CustomJSHover``,
  ``CustomJSTickFormatter``, ``CustomJSFilter``, ...), ``HTMLTemplateFormatter`` (its template
  is compiled to a function), ``OpenURL`` (navigates away). ``safe_item`` refuses these with
  ``UnsafeFigure``: a record does not run study code, and a figure silently changed would not be
  the figure the study showed. The message names the figure and the model. The one exception
  is orbitledger's own figure code, matched exactly: the scripts the figures package declares
  (``orbitledger.figures.own_scripts``; the inertial view's ``PROJECT_JS``).
- markup that BokehJS puts into the page as HTML: the text of a ``Div`` (unless
  ``render_as_text``) or ``Paragraph``, a ``HoverTool``'s tooltips given as one HTML string, a
  ``Tooltip``'s string content. ``safe_item`` cleans each with the record's HTML cleaner
  (``exporter.sanitize_html``: no scripts, event handlers or unsafe URLs), so
  ``<img src=x onerror=alert(1)>`` becomes ``<img src="x">``, which the policy forbids loading.

``problems(item)`` lists what ``safe_item`` would refuse or change; ``verify`` reports any
drawn figure that has one (the build never writes such a figure).
"""

from __future__ import annotations

import copy
from typing import Any

__all__ = ["UnsafeFigure", "problems", "safe_item"]

_CODE_MODELS = {
    "HTMLTemplateFormatter": "an HTML template formatter (its template runs as code)",
    "OpenURL": "an OpenURL callback (navigates away from the record)",
}


class UnsafeFigure(ValueError):
    """A figure carries code a record must not run; the message names figure and model."""


def _own_code() -> frozenset[str]:
    """The JavaScript of orbitledger's own figures, as they declare it
    (``orbitledger.figures.own_scripts``): part of this software, the same in every record, not
    code written by a study."""
    from orbitledger.figures.own_scripts import declared_scripts

    return frozenset(declared_scripts().values())


def _code_reason(name: str, node: dict[str, Any] | None = None) -> str | None:
    if name == "CustomJS" and node is not None:
        code = (node.get("attributes") or {}).get("code")
        if isinstance(code, str) and code in _own_code():
            return None
    if name.startswith("CustomJS"):
        return f"{name} (JavaScript written by the study)"
    reason = _CODE_MODELS.get(name)
    return f"{name}: {reason}" if reason else None


def _html_fields(node: dict[str, Any]) -> list[str]:
    """Attributes of a model that BokehJS writes into the page as HTML."""
    name = node.get("name", "")
    attrs = node.get("attributes") or {}
    if name == "Div" and not attrs.get("render_as_text", False):
        return ["text"]
    if name == "Paragraph" and not attrs.get("disable_math", False):
        return ["text"]
    if name == "HoverTool" and isinstance(attrs.get("tooltips"), str):
        return ["tooltips"]
    if name == "Tooltip" and isinstance(attrs.get("content"), str):
        return ["content"]
    return []


def _models(node: Any):
    if isinstance(node, dict):
        if node.get("type") == "object" and "name" in node:
            yield node
        for value in node.values():
            yield from _models(value)
    elif isinstance(node, list | tuple):  # tuples: an item not yet through JSON (map entries)
        for value in node:
            yield from _models(value)


def _clean(text: str) -> str:
    from .filters import sanitize_html

    return str(sanitize_html(text))


def problems(item: dict[str, Any]) -> list[str]:
    """What in ``item`` a record must not carry: code models, markup not yet cleaned."""
    found = []
    for node in _models(item):
        reason = _code_reason(str(node["name"]), node)
        if reason:
            found.append(reason)
        for key in _html_fields(node):
            value = node["attributes"].get(key)
            if isinstance(value, str) and _clean(value) != value:
                found.append(f"{node['name']}.{key} holds raw HTML ({value[:60]!r})")
    return list(dict.fromkeys(found))


def safe_item(item: dict[str, Any], name: str = "") -> dict[str, Any]:
    """A copy of ``item`` with its markup cleaned; ``UnsafeFigure`` if it carries code."""
    for node in _models(item):
        reason = _code_reason(str(node["name"]), node)
        if reason:
            raise UnsafeFigure(
                f"figure {name!r} carries code, which a record does not run: {reason}; "
                "show the figure without it (a record's figures are static views with Bokeh's "
                "own tools)"
            )
    item = copy.deepcopy(item)
    for node in _models(item):
        for key in _html_fields(node):
            value = node["attributes"].get(key)
            if isinstance(value, str):
                node["attributes"][key] = _clean(value)
    return item
