"""The canonical JSON of a case and its fingerprint; the pretty form written to case files.

Canonical form: the validated case with every default filled in, as JSON with the keys of
every object sorted, no white space between tokens, non-ASCII characters written as UTF-8
(not escaped), each float written with Python's ``repr`` (the shortest text that reads back
to the same double, so 540 in a float field is ``540.0`` and 1e-10 is ``1e-10``), integers
kept as integers, ``-0.0`` written as ``0.0``. The fingerprint is the SHA-256 hex digest of
its UTF-8 bytes. This is Python's ``json.dumps(data, sort_keys=True, separators=(",", ":"),
ensure_ascii=False)``, which writes floats with ``float.__repr__``.
"""

from __future__ import annotations

import hashlib
import json
from typing import Any

__all__ = ["canonical_json", "fingerprint_of", "pretty_json", "plain_data"]


def plain_data(data: Any) -> Any:
    """A copy of JSON-like data with ``-0.0`` turned into ``0.0`` (one spelling of zero)."""
    if isinstance(data, float):
        return data + 0.0
    if isinstance(data, dict):
        return {key: plain_data(value) for key, value in data.items()}
    if isinstance(data, (list, tuple)):
        return [plain_data(value) for value in data]
    return data


def canonical_json(data: Any) -> str:
    """The canonical JSON text of JSON-like ``data`` (see the module docstring)."""
    return json.dumps(
        plain_data(data),
        sort_keys=True,
        separators=(",", ":"),
        ensure_ascii=False,
        allow_nan=False,
    )


def fingerprint_of(canonical_text: str) -> str:
    """SHA-256 hex digest of the UTF-8 bytes of a canonical JSON text."""
    return hashlib.sha256(canonical_text.encode("utf-8")).hexdigest()


def pretty_json(data: Any) -> str:
    """JSON for people: two-space indent, keys in model order, lists of numbers on one line."""
    return _pretty(plain_data(data), 0) + "\n"


def _scalar(value: Any) -> str:
    return json.dumps(value, ensure_ascii=False, allow_nan=False)


def _pretty(value: Any, depth: int) -> str:
    pad, inner = "  " * depth, "  " * (depth + 1)
    if isinstance(value, dict):
        if not value:
            return "{}"
        items = [
            f"{inner}{_scalar(key)}: {_pretty(item, depth + 1)}" for key, item in value.items()
        ]
        return "{\n" + ",\n".join(items) + "\n" + pad + "}"
    if isinstance(value, list):
        if not value:
            return "[]"
        if all(isinstance(item, (int, float, bool)) or item is None for item in value):
            return "[" + ", ".join(_scalar(item) for item in value) + "]"
        items = [f"{inner}{_pretty(item, depth + 1)}" for item in value]
        return "[\n" + ",\n".join(items) + "\n" + pad + "]"
    return _scalar(value)
