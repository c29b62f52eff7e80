"""What a record's page shows a reader: its text, section by section, and what else it carries.

``read_page(html)`` parses an HTML record with the standard library's ``html.parser`` (no
browser, no script run) into a ``Page``:

- ``sections``: the text a reader sees, one entry per section of the page (the cover, each
  numbered chapter, the toolbar, the footer; ``page`` for text outside them), each a list of
  *runs* ``[kind, text]`` with white space collapsed. Kinds: ``t`` text on screen and paper,
  ``s`` on screen only (the toolbar, the code of each cell, the page title), ``p`` on paper
  only (the code appendix), ``m`` a list number the browser draws (``1.``), ``h`` a table
  head (printed again at the top of each page a table runs onto), ``f`` a figure drawn by
  BokehJS (no fixed text);
- the script and style elements, event-handler attributes, elements that load or frame other
  content, comments, and the Content-Security-Policy the page declares.

The build stores the sections in the record (``record_page.seal``); ``verify`` reads the page
again and compares (``verify_page``), and compares a PDF's text layer with the same runs
(``verify_pdf``). ``normalise_for_paper`` is the comparison key for a PDF's text: Unicode
NFKC (ligatures such as "ﬁ" back to "fi"), case folded (the cover prints some labels in
capitals), all white space removed (line breaks fall differently on paper).
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass, field
from html.parser import HTMLParser
from typing import Any

__all__ = [
    "BIDI_CONTROLS",
    "Page",
    "PRINT_HIDDEN_CLASSES",
    "normalise_for_paper",
    "read_page",
    "section_text",
    "show_controls",
]

# Classes whose elements the record's stylesheet hides on paper (templates/orbitrecord/record.css).
PRINT_HIDDEN_CLASSES = frozenset({"screen-only", "toolbar", "code-input"})
_PRINT_ONLY_CLASS = "print-only"
_SECTION_TAGS = frozenset({"header", "section", "footer", "nav", "aside"})
_VOID = frozenset(
    {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "param",
     "source", "track", "wbr"}
)  # fmt: skip
_INLINE = frozenset(
    {"a", "abbr", "b", "bdi", "bdo", "cite", "code", "del", "dfn", "em", "i", "ins", "kbd",
     "mark", "q", "s", "samp", "small", "span", "strong", "sub", "sup", "time", "u", "var"}
)  # fmt: skip
# Elements that load, frame or submit other content: a record has none of them.
FOREIGN_ELEMENTS = frozenset(
    {"iframe", "frame", "frameset", "object", "embed", "applet", "base", "form", "link",
     "portal", "fencedframe", "audio", "video", "source", "track", "svg", "math"}
)  # fmt: skip

# Unicode bidirectional controls (Unicode Standard Annex #9, "Explicit Directional
# Formatting"): text carrying them can display in another order than it reads, so a record
# shows each one as a visible mark instead.
BIDI_CONTROLS = frozenset(
    "\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069\u200e\u200f\u061c"
)
_BIDI = re.compile("[" + "".join(sorted(BIDI_CONTROLS)) + "]")
_SPACE = re.compile(r"\s+")
_INVISIBLE = re.compile("[\u00ad\u200b\u200c\u200d\u2060\ufeff]")


def show_controls(text: str) -> str:
    """``text`` with every bidirectional control written as a visible ``[U+202E]``."""
    return _BIDI.sub(lambda m: f"[U+{ord(m.group()):04X}]", text)


def normalise_for_paper(text: str) -> str:
    """The comparison key of text on paper: NFKC, case folded, no white space (module doc)."""
    text = unicodedata.normalize("NFKC", text).casefold()
    return _INVISIBLE.sub("", _SPACE.sub("", text))


@dataclass
class ScriptBlock:
    attrs: dict[str, str]
    text: str

    @property
    def executable(self) -> bool:
        kind = (self.attrs.get("type") or "").strip().lower()
        return kind in ("", "text/javascript", "application/javascript", "module")


@dataclass
class Page:
    sections: list[dict[str, Any]] = field(default_factory=list)
    scripts: list[ScriptBlock] = field(default_factory=list)
    styles: list[str] = field(default_factory=list)
    handlers: list[str] = field(default_factory=list)  # "button onclick"
    foreign: list[str] = field(default_factory=list)  # "iframe"
    comments: list[str] = field(default_factory=list)
    policies: list[str] = field(default_factory=list)  # Content-Security-Policy values

    def section(self, sid: str) -> dict[str, Any] | None:
        return next((s for s in self.sections if s["id"] == sid), None)


def section_text(section: dict[str, Any], kinds: str = "tshp") -> str:
    """The text of a section's runs of the given kinds, joined with single spaces."""
    return " ".join(text for kind, text in section["runs"] if kind in kinds and text)


class _Reader(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.page = Page()
        self.stack: list[tuple[str, dict[str, str]]] = []
        self.lists: list[list[int]] = []  # counters of open <ol> elements
        self.current: dict[str, Any] | None = None
        self.raw: tuple[str, dict[str, str], list[str]] | None = None  # open script/style
        self.in_head = False
        self.in_title = False
        self.title: list[str] = []

    # -- sections -------------------------------------------------------------------------
    def _section_for(self, tag: str, attrs: dict[str, str]) -> None:
        if self.current is not None and self.current["depth"] <= len(self.stack):
            return  # already inside a section: sections do not nest
        classes = attrs.get("class", "").split()
        if tag in _SECTION_TAGS or "toolbar" in classes:
            sid = attrs.get("id") or (tag if tag in _SECTION_TAGS else classes[0])
            self.current = {"id": sid, "title": "", "runs": [], "depth": len(self.stack) + 1}
            self.page.sections.append(self.current)

    def _target(self) -> dict[str, Any]:
        if self.current is None:
            if not self.page.sections or self.page.sections[-1]["id"] != "page":
                self.page.sections.append({"id": "page", "title": "", "runs": [], "depth": 0})
            return self.page.sections[-1]
        return self.current

    def _kind(self) -> str:
        classes = {c for _, a in self.stack for c in a.get("class", "").split()}
        if classes & PRINT_HIDDEN_CLASSES:
            return "s"
        if _PRINT_ONLY_CLASS in classes:
            return "p"
        if any(t == "thead" for t, _ in self.stack):
            return "h"
        return "t"

    def _emit(self, kind: str, text: str) -> None:
        runs = self._target()["runs"]
        if runs and runs[-1][0] == kind:
            runs[-1][1] += text
        else:
            runs.append([kind, text])

    # -- parser callbacks -----------------------------------------------------------------
    def handle_starttag(self, tag: str, attr_list: list[tuple[str, str | None]]) -> None:
        attrs = {k.lower(): (v or "") for k, v in attr_list}
        for name in attrs:
            if name.startswith("on"):
                self.page.handlers.append(f"<{tag}> {name}")
        if tag in FOREIGN_ELEMENTS:
            self.page.foreign.append(tag)
        if tag == "meta" and attrs.get("http-equiv", "").lower() == "content-security-policy":
            self.page.policies.append(attrs.get("content", ""))
        if tag == "meta" and attrs.get("http-equiv", "").lower() == "refresh":
            self.page.foreign.append("meta refresh")
        if tag in ("script", "style"):
            self.raw = (tag, attrs, [])
            return
        if tag == "head":
            self.in_head = True
        if tag == "title":
            self.in_title = True
        if tag in _VOID:
            if tag == "br" and not self.in_head:
                self._emit(self._kind(), " ")
            return
        self._section_for(tag, attrs)
        nearest = next((t for t, _ in reversed(self.stack) if t in ("ol", "ul")), "")
        self.stack.append((tag, attrs))
        if self.in_head:
            return
        if tag not in _INLINE:
            self._emit(self._kind(), " ")
        if tag == "ol":
            self.lists.append([int(attrs["start"]) if attrs.get("start", "").isdigit() else 1])
        elif tag == "li" and nearest == "ol" and self.lists:
            number = self.lists[-1][0]
            self.lists[-1][0] += 1
            if self._kind() != "s":  # a list the paper does not show has no numbers there
                self._emit("m", f" {number}. ")
        if "figure-host" in attrs.get("class", "").split():
            self._emit("f", "")
            self._emit(self._kind(), " ")

    def handle_startendtag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.handle_starttag(tag, attrs)
        if tag not in _VOID and tag not in ("script", "style"):
            self.handle_endtag(tag)

    def handle_endtag(self, tag: str) -> None:
        if self.raw is not None and tag == self.raw[0]:
            kind, attrs, parts = self.raw
            text = "".join(parts)
            if kind == "script":
                self.page.scripts.append(ScriptBlock(attrs, text))
            else:
                self.page.styles.append(text)
            self.raw = None
            return
        if tag == "head":
            self.in_head = False
        if tag == "title":
            self.in_title = False
        if not any(t == tag for t, _ in self.stack):
            return  # a stray end tag: nothing to close
        while self.stack:
            open_tag, _ = self.stack.pop()
            if open_tag == "ol" and self.lists:
                self.lists.pop()
            if open_tag not in _INLINE and not self.in_head:
                self._emit(self._kind(), " ")
            if open_tag == "h2" and self.current is not None and not self.current["title"]:
                self.current["title"] = _SPACE.sub(" ", self.current.get("heading", "")).strip()
            if self.current is not None and len(self.stack) < self.current["depth"]:
                self.current = None
            if open_tag == tag:
                break

    def handle_data(self, data: str) -> None:
        if self.raw is not None:
            self.raw[2].append(data)
            return
        if self.in_title:
            self.title.append(data)
            return
        if self.in_head:
            return
        if self.current is not None and not self.current["title"]:
            if any(t == "h2" for t, _ in self.stack):
                self.current["heading"] = self.current.get("heading", "") + data
        self._emit(self._kind(), data)

    def handle_comment(self, data: str) -> None:
        self.page.comments.append(data)


def read_page(html: str) -> Page:
    """The ``Page`` of an HTML record (module doc): sections of runs, scripts, styles, ..."""
    reader = _Reader()
    reader.feed(html)
    reader.close()
    if reader.raw is not None:  # an unclosed script or style runs to the end of the file
        kind, attrs, parts = reader.raw
        if kind == "script":
            reader.page.scripts.append(ScriptBlock(attrs, "".join(parts)))
    page = reader.page
    title = _SPACE.sub(" ", "".join(reader.title)).strip()
    page.sections.insert(0, {"id": "title", "title": "Page title", "runs": [["s", title]]})
    for s in page.sections:
        s.pop("heading", None)
        s["title"] = s["title"] or s["id"]
        s.pop("depth", None)
        runs = []
        for kind, text in s["runs"]:
            text = _SPACE.sub(" ", text).strip()
            if text or kind == "f":
                if runs and runs[-1][0] == kind and kind != "f":
                    runs[-1][1] += " " + text
                else:
                    runs.append([kind, text])
        s["runs"] = runs
    page.sections = [s for s in page.sections if s["runs"] or s["id"] != "page"]
    return page
