"""Changes to a case's data by JSON path: ``{"orbit.e": 0.02, "stations[0].lat_deg": 51.0}``.

A path is written as in the file: dotted field names, list items as ``[k]`` or ``.k``. Setting
one field of an either-or pair (``a_km``/``altitude_km``, ``nu_deg``/``mean_anomaly_deg``,
``dv_rtn_km_s``/``transfer``) clears its partner, unless the same change sets both; setting a
field to None removes an optional value. The result is plain data, validated by the caller.
"""

from __future__ import annotations

import copy
import re
from collections.abc import Mapping
from typing import Any

from ..kernel.errors import InputError
from .errors import MISSING, CaseError
from .validation import format_path

__all__ = ["parse_path", "apply_changes", "plain_value", "check_input_path"]

_PARTNERS = {
    "a_km": "altitude_km",
    "altitude_km": "a_km",
    "nu_deg": "mean_anomaly_deg",
    "mean_anomaly_deg": "nu_deg",
    "dv_rtn_km_s": "transfer",
    "transfer": "dv_rtn_km_s",
}
_TOKEN = re.compile(r"([^.\[\]]+)|\[(\d+)\]")


def parse_path(path: str) -> list[str | int]:
    """``'stations[0].lat_deg'`` or ``'stations.0.lat_deg'`` -> ``['stations', 0, 'lat_deg']``."""
    if not isinstance(path, str) or not path.strip():
        raise CaseError(str(path), MISSING, "not a field path (write it like 'orbit.e')")
    tokens: list[str | int] = []
    position = 0
    text = path.strip()
    while position < len(text):
        if text[position] == "." and tokens:
            position += 1
        match = _TOKEN.match(text, position)
        if not match:
            raise CaseError(path, MISSING, "not a field path (write it like 'stations[0].lat_deg')")
        name, index = match.groups()
        tokens.append(int(index) if index is not None else int(name) if name.isdigit() else name)
        position = match.end()
    return tokens


def check_input_path(base: Any, path: str) -> Any:
    """The base case's value at ``path``; refuses a path not in the case or not a number.

    A path that is null in the base case is accepted when its either-or partner is set
    (``orbit.a_km`` in a case given by ``orbit.altitude_km``): changing it replaces the partner.
    """
    tokens = parse_path(path)
    node: Any = base.to_data()
    for depth, token in enumerate(tokens):
        last = depth == len(tokens) - 1
        if isinstance(node, list) and isinstance(token, int) and 0 <= token < len(node):
            node = node[token]
        elif isinstance(node, dict) and isinstance(token, str) and token in node:
            parent, node = node, node[token]
            if node is None and last and token in _PARTNERS:
                if parent.get(_PARTNERS[token]) is not None:
                    return None
            if node is None:
                raise InputError(path, None, "is not set in the base case: nothing to vary")
        else:
            known = ", ".join(sorted(node)) if isinstance(node, dict) else ""
            hint = f" (fields here: {known})" if known else ""
            raise InputError(path, MISSING, f"is not an input of the case{hint}")
    if isinstance(node, bool) or not isinstance(node, int | float):
        raise InputError(path, node, "is not a numeric input of the case")
    return node


def plain_value(value: Any) -> Any:
    """A value as JSON data: numpy scalars and arrays, tuples and models become plain types."""
    if hasattr(value, "model_dump"):
        return value.model_dump(mode="json", by_alias=True)
    if hasattr(value, "tolist") and callable(value.tolist):  # numpy scalar or array
        return value.tolist()
    if isinstance(value, Mapping):
        return {str(k): plain_value(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain_value(v) for v in value]
    return value


def apply_changes(data: dict, changes: Mapping[str, Any]) -> dict:
    """A deep copy of ``data`` with each path set to its value (see the module docstring)."""
    result = copy.deepcopy(data)
    parsed = {path: parse_path(path) for path in changes}
    explicit = {tuple(tokens) for tokens in parsed.values()}
    for path, tokens in parsed.items():
        container: Any = result
        for depth, token in enumerate(tokens[:-1]):
            container = _step(container, token, tokens[: depth + 1], path)
        last = tokens[-1]
        value = plain_value(changes[path])
        if isinstance(container, list):
            if not isinstance(last, int) or not 0 <= last < len(container):
                raise CaseError(
                    format_path(tokens), value, f"no such item: the list has {len(container)}"
                )
            container[last] = value
            continue
        if not isinstance(container, dict) or isinstance(last, int):
            raise CaseError(format_path(tokens), value, f"{format_path(tokens[:-1])} has no items")
        container[last] = value
        partner = _PARTNERS.get(last) if isinstance(last, str) else None
        if (
            partner
            and value is not None
            and container.get(partner) is not None
            and (*tokens[:-1], partner) not in explicit
        ):
            container[partner] = None
    return result


def _step(container: Any, token: str | int, so_far: list[str | int], path: str) -> Any:
    where = format_path(so_far)
    if isinstance(container, list):
        if not isinstance(token, int) or not 0 <= token < len(container):
            raise CaseError(where, MISSING, f"no such item: the list has {len(container)}")
        return container[token]
    if isinstance(container, dict) and isinstance(token, str):
        if token not in container:
            raise CaseError(where, MISSING, f"no such section or field (in the change '{path}')")
        if container[token] is None:
            raise CaseError(
                where,
                MISSING,
                f"not set in this case; set the whole section first, e.g. {{'{where}': {{...}}}}",
            )
        return container[token]
    raise CaseError(where, MISSING, "not a section or a list")
