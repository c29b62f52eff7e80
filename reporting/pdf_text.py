"""A PDF record's text layer against the text its record says the page shows.

The record keeps the text of its page as runs (``record_text``); on paper the runs of kinds
``t`` (text), ``p`` (paper only), ``m`` (list numbers) and ``h`` (table heads) appear in that
order, page after page, with the footer of each page added, table heads repeated at the top of
a page a table runs onto, and whatever a figure draws as text at its place (``f``). pypdf's
text of each page (``page.extract_text()``) is compared with that stream on the key of
``record_text.normalise_for_paper`` (line breaks fall differently on paper). The first
difference is named with its page and section, both texts shown around it.
"""

from __future__ import annotations

import bisect
import re
import unicodedata
from dataclasses import dataclass, field
from typing import Any

__all__ = ["PaperStream", "compare_pages", "keyed", "paper_stream"]

_PAPER_KINDS = "tpmh"
_PAGE_NUMBER = re.compile(r"page\d+of\d+")
_ANCHOR = 24  # characters of the record's text found again after a figure's own text


def keyed(text: str) -> tuple[str, list[int]]:
    """(comparison key of ``text``, index in ``text`` of each key character)."""
    key: list[str] = []
    where: list[int] = []
    for i, ch in enumerate(text):
        if ch.isspace() or ch in "\u00ad\u200b\u200c\u200d\u2060\ufeff":
            continue
        for k in unicodedata.normalize("NFKC", ch).casefold():
            if not k.isspace():
                key.append(k)
                where.append(i)
    return "".join(key), where


@dataclass
class PaperStream:
    """What the record says its paper shows: the key, with where sections and figures sit."""

    key: str = ""
    raw: str = ""  # the runs' text joined by spaces: for showing a difference
    where: list[int] = field(default_factory=list)  # key index -> raw index
    starts: list[int] = field(default_factory=list)  # key index where each section starts
    titles: list[str] = field(default_factory=list)
    slots: list[int] = field(default_factory=list)  # key indexes of figures
    heads: list[tuple[int, str]] = field(default_factory=list)  # (key index, key of a head)

    def section_at(self, pos: int) -> str:
        i = bisect.bisect_right(self.starts, pos) - 1
        return self.titles[max(i, 0)] if self.titles else "?"


def paper_stream(sections: list[dict[str, Any]]) -> PaperStream:
    stream = PaperStream()
    keys: list[str] = []
    raw_parts: list[str] = []
    offset = 0
    for section in sections:
        runs = [(k, t) for k, t in section.get("runs", []) if k in _PAPER_KINDS + "f"]
        if not runs:
            continue
        stream.starts.append(len("".join(keys)))
        stream.titles.append(str(section.get("title") or section.get("id")))
        for kind, text in runs:
            at = len("".join(keys)) if kind in "fh" else 0
            if kind == "f":
                stream.slots.append(at)
                continue
            k, where = keyed(text)
            if kind == "h" and k:
                stream.heads.append((at, k))
            keys.append(k)
            stream.where += [offset + w for w in where]
            raw_parts.append(text)
            offset += len(text) + 1
    stream.key = "".join(keys)
    stream.raw = " ".join(raw_parts)
    return stream


def _show(raw: str, where: list[int], pos: int) -> str:
    if not where:
        return ""
    i = where[min(pos, len(where) - 1)] if pos < len(where) else len(raw)
    text = raw[max(0, i - 30) : i + 40].replace("\n", " ")
    return " ".join(text.split())


def _without_footer(key: str, where: list[int], footer: list[str]) -> tuple[str, list[int]]:
    """The page's key with the last occurrence of each footer part and "page N of M" cut out."""
    for part in footer:
        k, _ = keyed(part)
        at = key.rfind(k) if k else -1
        if at >= 0:
            key, where = key[:at] + key[at + len(k) :], where[:at] + where[at + len(k) :]
    numbers = list(_PAGE_NUMBER.finditer(key))
    if numbers:
        at, end = numbers[-1].span()
        key, where = key[:at] + key[end:], where[:at] + where[end:]
    return key, where


def compare_pages(stream: PaperStream, pages: list[str], footers: list[list[str]]) -> str | None:
    """The first difference between ``pages`` (pypdf text) and ``stream``, or None.

    Text the record does not have is accepted only on a page that holds a figure (what the
    figure draws as text, which the browser may paint after the page's other text).
    """
    pos = 0
    size = len(stream.key)
    absorbed: tuple[int, str, int] | None = (
        None  # (page, text, pos): a page end taken as figure text
    )

    def fail(n: int, text: str, where: list[int], j: int) -> str:
        if absorbed is not None and absorbed[0] == n - 1 and absorbed[2] == pos:
            n, shown = absorbed[0], absorbed[1]  # the difference was where that page ended
        else:
            shown = _show(text, where, j)
        return (
            f"page {n} ({stream.section_at(pos)}): the PDF shows '{shown}', the record says "
            f"'{_show(stream.raw, stream.where, pos)}'"
        )

    for n, (text, footer) in enumerate(zip(pages, footers, strict=True), start=1):
        key, where = _without_footer(*keyed(text), footer)
        page_start, j, extra = pos, 0, None
        for at, head in stream.heads:
            if at < pos and key.startswith(head) and not stream.key.startswith(head, pos):
                j = len(head)  # a table head printed again at the top of the page
                break
        while j < len(key):
            if pos < size and key[j] == stream.key[pos]:
                j, pos = j + 1, pos + 1
                continue
            if extra is None:
                extra = j
            anchor = stream.key[pos : pos + _ANCHOR]
            found = key.find(anchor, j) if anchor else -1
            if found < 0:
                if _holds_figure(stream, page_start, pos):
                    absorbed = (n, _show(text, where, j), pos)
                    break
                return fail(n, text, where, j)
            j = found
        if extra is not None and not _holds_figure(stream, page_start, pos):
            return fail(n, text, where, extra)
    if pos < size:
        return (
            f"text missing from the PDF ({stream.section_at(pos)}): the record says "
            f"'{_show(stream.raw, stream.where, pos)}'"
        )
    return None


def _holds_figure(stream: PaperStream, start: int, end: int) -> bool:
    return any(start <= s <= end for s in stream.slots)
