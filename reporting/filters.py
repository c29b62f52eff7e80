"""The record templates' filters: user HTML and markdown cleaned, JSON safe in a script block.

Imported by the exporter (which registers them with Jinja), the record context, the page seal
and the Bokeh checks; it imports none of them, so the reporting modules import one way.
"""

from __future__ import annotations

import base64
import json
import re
from typing import Any

import bleach
import mistune
from markupsafe import Markup

from .record_text import show_controls

__all__ = ["format_value", "json_for_script", "safe_markdown", "sanitize_html"]

# Tags and attributes kept from user HTML (tables from pandas, simple text markup).
_TAGS = sorted(
    set(bleach.sanitizer.ALLOWED_TAGS)
    | {"p", "div", "span", "br", "hr", "pre", "code", "h1", "h2", "h3", "h4", "h5", "h6"}
    | {"table", "thead", "tbody", "tfoot", "tr", "th", "td", "caption", "colgroup", "col"}
    | {"sub", "sup", "dl", "dt", "dd", "del", "img"}
)
_ATTRS = {
    "*": ["class", "title"],
    "a": ["href", "title"],
    "th": ["colspan", "rowspan", "align"],
    "td": ["colspan", "rowspan", "align"],
    "img": ["src", "alt", "width", "height"],
    "abbr": ["title"],
}
_PROTOCOLS = ["http", "https", "mailto", "data"]

_markdown = mistune.create_markdown(escape=True, plugins=["table", "strikethrough"])


def _img_src_ok(tag: str, name: str, value: str) -> bool:
    """Attribute filter: ``data:`` only as an image source of a raster type, never a link."""
    if tag == "img" and name == "src":
        return value.startswith(("data:image/png", "data:image/jpeg", "data:image/gif"))
    if value.strip().lower().startswith("data:"):
        return False
    return name in _ATTRS.get(tag, []) or name in _ATTRS["*"]


_cleaner = bleach.sanitizer.Cleaner(
    tags=_TAGS,
    attributes=_img_src_ok,
    protocols=_PROTOCOLS,
    strip=True,
    strip_comments=True,
)


_SCRIPT_OR_STYLE = re.compile(r"<(script|style)\b.*?</\1\s*>", re.IGNORECASE | re.DOTALL)


def sanitize_html(text: str) -> Markup:
    """User HTML with scripts, event handlers, styles and unsafe URLs removed."""
    return Markup(_cleaner.clean(_SCRIPT_OR_STYLE.sub("", show_controls(str(text)))))


def safe_markdown(text: str) -> Markup:
    """Markdown to HTML with raw HTML shown as text, then cleaned (links: http/https/mailto)."""
    return Markup(_cleaner.clean(_markdown(show_controls(str(text)))))


def json_for_script(value: Any) -> Markup:
    """JSON safe inside ``<script type="application/json">``: ``<``, ``>``, ``&`` as escapes."""
    text = value if isinstance(value, str) else json.dumps(value, ensure_ascii=False)
    text = text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
    return Markup(text.replace("\u2028", "\\u2028").replace("\u2029", "\\u2029"))


def _b64(text: str) -> str:
    return base64.b64encode(text.encode("utf-8")).decode("ascii")


def format_value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return f"{value:.10g}"
    if value is None:
        return "null"
    if isinstance(value, list | dict):
        return json.dumps(value, ensure_ascii=False)
    return str(value)
