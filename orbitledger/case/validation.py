"""From raw text to checked data, and from pydantic's errors to one plain-words CaseError.

pydantic reports a location such as ``('orbit', 'classical', 'ecc')``; the user wrote
``orbit.ecc``. The location is walked against the models to drop the tags of discriminated
unions and to find the model an unknown field was met in, whose field names give the
nearest-name suggestion.
"""

from __future__ import annotations

import difflib
import json
import math
import re
import types
import typing
from typing import Any, Union

from pydantic import BaseModel, ValidationError

from .errors import MISSING, CaseError
from .json_limits import check_depth, parse_int

__all__ = ["read_json_text", "case_error_from_validation", "format_path", "check_text_values"]

# Names a user may reach for, and the field each means (common practice in the trade).
_SYNONYMS = {
    "eccentricity": "e",
    "ecc": "e",
    "sma": "a_km",
    "a": "a_km",
    "semi_major_axis": "a_km",
    "inclination": "i_deg",
    "inc": "i_deg",
    "i": "i_deg",
    "raan": "raan_deg",
    "node": "raan_deg",
    "argp": "argp_deg",
    "aop": "argp_deg",
    "true_anomaly": "nu_deg",
    "nu": "nu_deg",
    "ta": "nu_deg",
    "mean_anomaly": "mean_anomaly_deg",
    "ma": "mean_anomaly_deg",
    "altitude": "altitude_km",
    "alt": "altitude_km",
    "mass": "mass_kg",
    "isp": "isp_s",
    "cd": "drag_coefficient",
    "area": "drag_area_m2",
    "epoch": "epoch_utc",
    "lat": "lat_deg",
    "lon": "lon_deg",
    "latitude": "lat_deg",
    "longitude": "lon_deg",
}


class _DuplicateKeys(dict):
    duplicate: str = ""


def _pairs_hook(pairs: list[tuple[str, Any]]) -> dict:
    data = _DuplicateKeys()
    for key, value in pairs:
        if key in data and not data.duplicate:
            data.duplicate = key
        data[key] = value
    return data if data.duplicate else dict(data)


def _find_duplicate(data: Any, path: str = "") -> tuple[str, str] | None:
    if isinstance(data, _DuplicateKeys):
        return path, data.duplicate
    children = (
        data.items()
        if isinstance(data, dict)
        else enumerate(data)
        if isinstance(data, list)
        else ()
    )
    for key, value in children:
        found = _find_duplicate(value, _join(path, key))
        if found:
            return found
    return None


def _join(path: str, key: str | int) -> str:
    if isinstance(key, int):
        return f"{path}[{key}]"
    return f"{path}.{key}" if path else str(key)


_TOKENS = re.compile(r'"(?:[^"\\]|\\.)*"|(-?Infinity|NaN)')


def _bare_constant_places(text: str) -> list[tuple[int, int]]:
    """Line and column (1-based) of each bare NaN/Infinity outside a string, in order."""
    places = []
    for match in _TOKENS.finditer(text):
        if match.group(1):
            start = match.start(1)
            line = text.count("\n", 0, start) + 1
            places.append((line, start - (text.rfind("\n", 0, start) + 1) + 1))
    return places


def _non_finite(data: Any, path: str = "") -> list[tuple[str, float]]:
    """Every NaN or infinite number in the data, with its path, in document order."""
    if isinstance(data, float):
        return [] if math.isfinite(data) else [(path, data)]
    children = (
        data.items()
        if isinstance(data, dict)
        else enumerate(data)
        if isinstance(data, list)
        else ()
    )
    return [found for key, value in children for found in _non_finite(value, _join(path, key))]


def read_json_text(text: str | bytes, file: str | None = None) -> Any:
    """Parse JSON text; malformed JSON, a duplicate key or bad UTF-8 raise CaseError with the place."""
    if isinstance(text, bytes):
        try:
            text = text.decode("utf-8-sig")
        except UnicodeDecodeError as err:
            raise CaseError(
                "",
                MISSING,
                f"not UTF-8 text (byte {err.start}): a case file is UTF-8 JSON",
                file=file,
            ) from None
    check_depth(text, file)
    try:
        data = json.loads(text, object_pairs_hook=_pairs_hook, parse_int=parse_int)
    except json.JSONDecodeError as err:
        raise CaseError(
            "",
            MISSING,
            f"malformed JSON: {err.msg[:1].lower()}{err.msg[1:]}",
            file=file,
            line=err.lineno,
            column=err.colno,
        ) from None
    except RecursionError:
        raise CaseError("", MISSING, "malformed JSON: nested too deeply", file=file) from None
    non_finite = _non_finite(data)
    if non_finite:  # not JSON at all (RFC 8259 has no NaN or infinity): name where it is
        path, value = non_finite[0]
        places = _bare_constant_places(text)
        line, column = places[0] if len(places) == len(non_finite) else (None, None)
        raise CaseError(
            path or "(top level)",
            value,
            "must be a finite number (NaN and infinity are refused)",
            file=file,
            line=line,
            column=column,
        )
    found = _find_duplicate(data)
    if found:
        path, key = found
        raise CaseError(
            _join(path, key), MISSING, "the key appears twice in one object; keep one", file=file
        )
    return data


def check_text_values(data: Any, file: str | None = None, path: str = "") -> None:
    """Refuse strings that cannot be written as UTF-8 (lone surrogates from ``\\ud800`` escapes)."""
    if isinstance(data, str):
        try:
            data.encode("utf-8")
        except UnicodeEncodeError:
            raise CaseError(
                path or "(top level)", data, "text with an unpaired surrogate escape", file=file
            ) from None
    elif isinstance(data, dict):
        for key, value in data.items():
            check_text_values(key, file, path)
            check_text_values(value, file, _join(path, key))
    elif isinstance(data, list):
        for k, value in enumerate(data):
            check_text_values(value, file, _join(path, k))


# --- walking a pydantic location against the models -------------------------------------


def _strip(annotation: Any) -> Any:
    """Drop Annotated wrappers and a ``None`` member of an optional."""
    while True:
        origin = typing.get_origin(annotation)
        if origin is typing.Annotated:
            annotation = typing.get_args(annotation)[0]
        elif origin in (Union, types.UnionType):
            members = [a for a in typing.get_args(annotation) if a is not type(None)]
            if len(members) != 1:
                return annotation
            annotation = members[0]
        else:
            return annotation


def _union_members(annotation: Any) -> dict[str, type[BaseModel]] | None:
    """Tag -> model for a discriminated union of models, or None if not one."""
    if typing.get_origin(annotation) not in (Union, types.UnionType):
        return None
    tags: dict[str, type[BaseModel]] = {}
    for member in typing.get_args(annotation):
        if member is type(None):
            continue
        tag = None
        if typing.get_origin(member) is typing.Annotated:
            base, *meta = typing.get_args(member)
            tag = next((m.tag for m in meta if type(m).__name__ == "Tag"), None)
            member = base
        if not (isinstance(member, type) and issubclass(member, BaseModel)):
            return None
        if tag is None:
            for name in ("form", "kind"):
                info = member.model_fields.get(name)
                if info is not None and typing.get_origin(info.annotation) is typing.Literal:
                    tag = typing.get_args(info.annotation)[0]
        if tag is not None:
            tags[str(tag)] = member
    return tags


def _field_by_key(model: type[BaseModel], key: str):
    for name, info in model.model_fields.items():
        if (info.alias or name) == key:
            return info
    return None


def _known_keys(model: type[BaseModel]) -> list[str]:
    return [info.alias or name for name, info in model.model_fields.items()]


def _walk(root: type[BaseModel], loc: tuple) -> tuple[str, Any, Any]:
    """(JSON path, annotation at the parent of the last element, annotation at the last)."""
    path = ""
    current: Any = root
    parent: Any = None
    for item in loc:
        current = _strip(current)
        members = _union_members(current)
        if members is not None and isinstance(item, str) and item in members:
            current = members[item]
            continue
        parent = current
        path = _join(path, item)
        origin = typing.get_origin(current)
        if isinstance(current, type) and issubclass(current, BaseModel) and isinstance(item, str):
            info = _field_by_key(current, item)
            current = info.annotation if info else None
        elif origin is list and isinstance(item, int):
            current = typing.get_args(current)[0]
        elif origin is dict:
            current = typing.get_args(current)[1]
        else:
            current = None
    return path, _strip(parent) if parent is not None else None, current


def _suggestion(key: str, model: Any) -> str:
    if not (isinstance(model, type) and issubclass(model, BaseModel)):
        return "unknown field"
    known = _known_keys(model)
    lowered = key.lower().strip()
    guess = None
    if lowered in known:
        guess = lowered
    elif _SYNONYMS.get(lowered) in known:
        guess = _SYNONYMS[lowered]
    else:
        starts = [k for k in known if k.startswith(lowered + "_")]
        if len(starts) == 1:
            guess = starts[0]
        else:
            close = difflib.get_close_matches(lowered, known, n=1, cutoff=0.5)
            guess = close[0] if close else None
    if guess:
        return f"unknown field; did you mean '{guess}'?"
    return f"unknown field; known fields: {', '.join(known)}"


def _plain_reason(error: dict, current: Any) -> str:
    kind = error["type"]
    ctx = error.get("ctx") or {}
    simple = {
        "missing": "required field is missing",
        "float_type": "must be a number",
        "float_parsing": "must be a number",
        "int_type": "must be a whole number",
        "int_from_float": "must be a whole number",
        "string_type": "must be text (a JSON string)",
        "bool_type": "must be true or false",
        "list_type": "must be a list (a JSON array)",
        "dict_type": "must be an object",
        "model_type": "must be an object",
        "model_attributes_type": "must be an object",
        "finite_number": "must be a finite number (NaN and infinity are refused)",
    }
    if kind in simple:
        return simple[kind]
    if kind in ("greater_than", "greater_than_equal", "less_than", "less_than_equal"):
        sign = {"greater_than": ">", "greater_than_equal": ">=", "less_than": "<"}.get(kind, "<=")
        bound = next(iter(ctx.values()))
        return f"must be {sign} {bound!r}"
    if kind in ("too_short", "too_long"):
        if ctx.get("field_type") == "String":
            return "must not be empty" if kind == "too_short" else "is too long"
        low, high = ctx.get("min_length"), ctx.get("max_length")
        count = low if low is not None else high
        actual = ctx.get("actual_length")
        if kind == "too_long" and low is None:
            return f"must have at most {high} items (has {actual})"
        return (
            f"must have {count} items (has {actual})"
            if low == high or high is None
            else error["msg"]
        )
    if kind == "literal_error":
        return f"must be one of {ctx.get('expected')}"
    if kind == "value_error":
        return str(error["msg"]).removeprefix("Value error, ")
    message = str(error["msg"])
    return message[:1].lower() + message[1:]


def _one_error(error: dict, root: type[BaseModel], file: str | None) -> CaseError:
    loc = tuple(error["loc"])
    path, parent, current = _walk(root, loc)
    kind = error["type"]
    ctx = error.get("ctx") or {}
    value = error.get("input", MISSING)
    if kind == "case_rule":
        return CaseError(_join_rel(path, ctx["field"]), ctx["value"], ctx["reason"], file=file)
    if kind == "extra_forbidden":
        return CaseError(path, MISSING, _suggestion(str(loc[-1]), parent), file=file)
    if kind in ("union_tag_invalid", "union_tag_not_found"):
        members = _union_members(current) if current is not None else None
        tag_name = str(ctx.get("discriminator", "'form'")).strip("'")
        expected = ", ".join(sorted(members or ())) or ctx.get("expected_tags", "")
        tag_path = _join(path, tag_name)
        if kind == "union_tag_not_found":
            if not isinstance(value, dict):
                return CaseError(path, value, "must be an object", file=file)
            return CaseError(
                tag_path, MISSING, f"required field is missing (one of {expected})", file=file
            )
        return CaseError(tag_path, ctx.get("tag"), f"must be one of {expected}", file=file)
    if kind == "missing":
        value = MISSING
    return CaseError(path or "(top level)", value, _plain_reason(error, current), file=file)


def _join_rel(path: str, relative: str) -> str:
    if not path:
        return relative
    return f"{path}{relative}" if relative.startswith("[") else f"{path}.{relative}"


def case_error_from_validation(
    err: ValidationError, root: type[BaseModel], file: str | None = None
) -> CaseError:
    """One CaseError for pydantic's errors: an unknown field first (it explains a missing one)."""
    errors = err.errors(include_url=False)
    errors.sort(key=lambda e: e["type"] != "extra_forbidden")  # stable: file order otherwise
    converted = [_one_error(e, root, file) for e in errors]
    first = converted[0]
    return CaseError(first.field, first.value, first.reason, file=file, others=tuple(converted[1:]))


def format_path(tokens: list[str | int]) -> str:
    """``['stations', 1, 'lat_deg']`` -> ``'stations[1].lat_deg'``."""
    path = ""
    for token in tokens:
        path = _join(path, token)
    return path
