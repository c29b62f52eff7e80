"""Reading kernel results and plain inputs alike: attributes, mapping keys, or tuples."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from ..kernel.errors import InputError

_MISSING = object()


def get(obj: Any, *names: str, default: Any = _MISSING, field: str = "input") -> Any:
    """The first of ``names`` found on ``obj`` as an attribute or a mapping key."""
    for name in names:
        if isinstance(obj, Mapping) and name in obj:
            return obj[name]
        if not isinstance(obj, Mapping) and hasattr(obj, name):
            return getattr(obj, name)
    if default is not _MISSING:
        return default
    raise InputError(field, type(obj).__name__, f"needs one of: {', '.join(names)}")


def as_list(items: Any, is_single) -> list:
    """``items`` as a list of entries; a single entry (``is_single(items)``) becomes ``[items]``."""
    if items is None:
        return []
    if is_single(items):
        return [items]
    if isinstance(items, Sequence) or hasattr(items, "__iter__"):
        return list(items)
    return [items]


def labels_for(labels: Sequence[str] | None, count: int, default: str) -> list[str]:
    """One label per series: the given ones (checked for count) or ``default 1..n``."""
    if labels is None:
        return [default] if count == 1 else [f"{default} {k + 1}" for k in range(count)]
    labels = [str(x) for x in labels]
    if len(labels) != count:
        raise InputError("labels", labels, f"needs one label per series ({count})")
    return labels
