"""The limits applied while case-file JSON is parsed: nesting depth and integer length.

Both are checked before any number is converted or any structure is walked recursively, so a
hostile file is refused with one line instead of a RecursionError or Python's int-to-string
ValueError (limits in :mod:`orbitledger.limits`, stated in docs/case-file.md).
"""

from __future__ import annotations

import re
import sys
from typing import Any

from ..limits import MAX_INTEGER_DIGITS, MAX_JSON_DEPTH
from .errors import MISSING, CaseError

__all__ = ["LongInteger", "check_depth", "parse_int", "find_long_integer", "long_integer_error"]

# A JSON string (possibly unterminated: the parser reports that later) or a bracket.
_STRUCTURE = re.compile(r'"(?:[^"\\]|\\.)*"?|[\[\]{}]')


def check_depth(text: str, file: str | None) -> None:
    """Refuse nesting deeper than ``MAX_JSON_DEPTH``, scanning the text before it is parsed."""
    depth = 0
    for match in _STRUCTURE.finditer(text):
        token = match.group()
        if token in "[{":
            depth += 1
            if depth > MAX_JSON_DEPTH:
                start = match.start()
                raise CaseError(
                    "",
                    MISSING,
                    f"nested more than {MAX_JSON_DEPTH} deep (a case file nests about 5 deep)",
                    file=file,
                    line=text.count("\n", 0, start) + 1,
                    column=start - (text.rfind("\n", 0, start) + 1) + 1,
                )
        elif token in "]}":
            depth -= 1


class LongInteger(float):
    """An integer literal of more than ``MAX_INTEGER_DIGITS`` digits, never converted.

    As a number it is the largest finite double of its sign, beyond every case field's range,
    so validation refuses it naming the field and the allowed range; it shows as its first
    digits and its length. A field without a range (an angle) is refused after validation
    (:func:`find_long_integer`).
    """

    text: str

    def __new__(cls, text: str) -> LongInteger:
        value = -sys.float_info.max if text.startswith("-") else sys.float_info.max
        number = super().__new__(cls, value)
        number.text = text
        return number

    def __getnewargs__(self) -> tuple[str]:  # pickles as its text (errors cross processes)
        return (self.text,)

    def __repr__(self) -> str:
        sign, digits = ("-", self.text[1:]) if self.text.startswith("-") else ("", self.text)
        return f"{sign}{digits[:12]}... ({len(digits)} digits)"

    __str__ = __repr__


def parse_int(text: str) -> int | LongInteger:
    """``json.loads``'s ``parse_int``: an int, or a LongInteger above the stated length."""
    return int(text) if len(text.lstrip("-")) <= MAX_INTEGER_DIGITS else LongInteger(text)


def find_long_integer(data: Any, path: str = "") -> tuple[str, LongInteger] | None:
    """The JSON path and value of the first LongInteger in parsed data, or None."""
    if isinstance(data, LongInteger):
        return path, data
    if isinstance(data, dict):
        children = data.items()
    elif isinstance(data, list):
        children = enumerate(data)
    else:
        return None
    for key, value in children:
        inner = f"{path}[{key}]" if isinstance(key, int) else f"{path}.{key}" if path else key
        found = find_long_integer(value, inner)
        if found:
            return found
    return None


def long_integer_error(found: tuple[str, LongInteger], file: str | None) -> CaseError:
    path, value = found
    return CaseError(
        path or "(top level)",
        value,
        f"no case field takes an integer of more than {MAX_INTEGER_DIGITS} digits",
        file=file,
    )
