"""Which fields each form section shows, read from the validated case and its pydantic models.

The case model is the one validator (style.md): this module only decides what to show. A
section lists the fields present in the case's JSON (``model_dump(mode="json")``); choices
(a ``Literal``) become dropdowns with the model's own options, booleans checkboxes, 3-vectors
three inputs, everything else a number or a text. Tooltips are the models' field docstrings.
"""

from __future__ import annotations

import types
import typing
from collections.abc import Iterator
from dataclasses import dataclass
from typing import Any

from pydantic import BaseModel

__all__ = ["FieldSpec", "SECTIONS", "field_specs", "model_field"]


@dataclass(frozen=True)
class FieldSpec:
    """One field to show: its dotted path, kind (number/text/choice/bool/vector) and options."""

    path: str
    kind: str
    value: Any
    options: tuple[Any, ...] = ()
    optional: bool = False
    help: str = ""


# (section key, title, [(case path of a sub-section or field, keys to leave out)])
SECTIONS: tuple[tuple[str, str, tuple[str, ...]], ...] = (
    ("orbit", "Orbit", ("orbit",)),
    ("epoch", "Epoch and body", ("epoch_utc", "body.name", "earth_orientation")),
    ("spacecraft", "Spacecraft", ("spacecraft",)),
    (
        "window",
        "Analysis window and model",
        ("window", "force_model.propagator", "force_model.drag", "force_model.solar_activity"),
    ),
    (
        "budget",
        "Delta-v budget",
        ("budget.mission_years", "budget.margin_percent", "budget.station_keeping"),
    ),
)

# Keys never shown as a plain field: the orbit form (its own switch), the lists (tables).
_SKIP = {"orbit.form"}


def _unwrap(annotation: Any) -> Any:
    """``X | None`` -> ``X``; ``Annotated[X, ...]`` -> ``X``."""
    while True:
        origin = typing.get_origin(annotation)
        if origin is typing.Annotated:
            annotation = typing.get_args(annotation)[0]
        elif origin in (typing.Union, types.UnionType):
            args = [a for a in typing.get_args(annotation) if a is not type(None)]
            if len(args) != 1:
                return annotation
            annotation = args[0]
        else:
            return annotation


def model_field(model: type[BaseModel] | BaseModel, path: str) -> tuple[Any, str] | None:
    """(annotation, docstring) of the field at dotted ``path`` under ``model``; None if unknown.

    For a union of models (the orbit forms) the current instance's type is used, so pass the
    instance when there is one.
    """
    current: Any = model
    annotation: Any = None
    doc = ""
    for part in path.split("."):
        cls = current if isinstance(current, type) else type(current)
        if (
            not (isinstance(cls, type) and issubclass(cls, BaseModel))
            or part not in cls.model_fields
        ):
            return None
        info = cls.model_fields[part]
        annotation, doc = _unwrap(info.annotation), info.description or ""
        instance_value = None if isinstance(current, type) else getattr(current, part, None)
        current = instance_value if isinstance(instance_value, BaseModel) else annotation
    return annotation, doc


def _get(data: Any, path: str) -> Any:
    for part in path.split("."):
        if not isinstance(data, dict) or part not in data:
            return _ABSENT
        data = data[part]
    return data


_ABSENT = object()


def _spec(case: BaseModel, path: str, value: Any) -> FieldSpec | None:
    found = model_field(case, path)
    annotation, doc = found if found is not None else (None, "")
    optional = value is None
    if typing.get_origin(annotation) is typing.Literal:
        return FieldSpec(path, "choice", value, tuple(typing.get_args(annotation)), help=doc)
    if annotation is bool or isinstance(value, bool):
        return FieldSpec(path, "bool", value, help=doc)
    if isinstance(value, list):
        if len(value) == 3 and all(isinstance(x, int | float) for x in value):
            return FieldSpec(path, "vector", value, help=doc)
        return None  # other lists have their own tables
    if isinstance(value, dict):
        return None
    if annotation is str or isinstance(value, str):
        return FieldSpec(path, "text", value, optional=optional, help=doc)
    if annotation in (float, int) or isinstance(value, int | float) or value is None:
        return FieldSpec(path, "number", value, optional=optional, help=doc)
    return None


def field_specs(case: BaseModel, section: str) -> list[FieldSpec]:
    """The fields of form section ``section`` (a key of :data:`SECTIONS`) for ``case``."""
    data = case.model_dump(mode="json")
    entries = next(paths for key, _title, paths in SECTIONS if key == section)
    out: list[FieldSpec] = []
    for path in entries:
        value = _get(data, path)
        if value is _ABSENT:
            continue
        for sub_path, sub_value in _flatten(path, value, orbit=(path == "orbit")):
            if sub_path in _SKIP:
                continue
            spec = _spec(case, sub_path, sub_value)
            if spec is not None:
                out.append(spec)
    return out


def _flatten(path: str, value: Any, orbit: bool) -> Iterator[tuple[str, Any]]:
    if isinstance(value, dict):
        for key, sub in value.items():
            # An orbit's unused alternatives (a_km XOR altitude_km, nu_deg XOR mean anomaly)
            # are null: show only the ones in use.
            if orbit and sub is None:
                continue
            if isinstance(sub, dict):
                continue
            yield f"{path}.{key}", sub
    elif value is not None:
        yield path, value
