"""Field types shared by the case sections: finite numbers, normalised angles, UTC epochs.

Every section model derives from :class:`CaseModel`: frozen, unknown fields refused, strict
types (a JSON string is never read as a number, 1 is never read as true), NaN and infinity
refused everywhere. A rule that ties several fields together raises :func:`rule`, which
names the exact field it is about so the error carries the full JSON path.
"""

from __future__ import annotations

from typing import Annotated, Any

from pydantic import AfterValidator, BaseModel, ConfigDict, Field
from pydantic_core import PydanticCustomError

from .utc import normalise_utc

__all__ = [
    "CaseModel",
    "rule",
    "Finite",
    "Positive",
    "NonNegative",
    "Angle",
    "Inclination",
    "Latitude",
    "Longitude",
    "Vector3",
    "UtcText",
    "Name",
    "normalise_angle_deg",
]


class CaseModel(BaseModel):
    """Base of every case section: frozen, extra fields forbidden, strict, finite numbers."""

    model_config = ConfigDict(
        frozen=True,
        extra="forbid",
        strict=True,
        allow_inf_nan=False,
        validate_default=False,
        use_attribute_docstrings=True,
    )


def rule(field: str, value: Any, reason: str) -> PydanticCustomError:
    """An error for a cross-field rule, naming ``field`` relative to the model that raises it."""
    return PydanticCustomError(
        "case_rule", "{reason}", {"reason": reason, "field": field, "value": value}
    )


def normalise_angle_deg(value: float) -> float:
    """An angle in degrees brought into [0, 360); a value in range is kept as it is.

    Python's float ``%`` is fmod (exact) plus 360 for a negative value: the result is the
    double nearest the true angle.
    """
    if 0.0 <= value < 360.0:
        return value + 0.0
    wrapped = value % 360.0
    return 0.0 if wrapped >= 360.0 else wrapped + 0.0  # + 0.0 turns -0.0 into 0.0


def _normalise_longitude_deg(value: float) -> float:
    """A longitude in degrees brought into (-180, 180] (a value in range is kept as it is)."""
    if -180.0 < value <= 180.0:
        return value + 0.0
    wrapped = 180.0 - ((180.0 - value) % 360.0)
    return wrapped + 360.0 if wrapped <= -180.0 else wrapped + 0.0


Finite = float
Positive = Annotated[float, Field(gt=0.0)]
NonNegative = Annotated[float, Field(ge=0.0)]
Angle = Annotated[float, AfterValidator(normalise_angle_deg)]
"""An angle in degrees, any finite value, normalised to [0, 360)."""
Inclination = Annotated[float, Field(ge=0.0, le=180.0)]
Latitude = Annotated[float, Field(ge=-90.0, le=90.0)]
Longitude = Annotated[float, AfterValidator(_normalise_longitude_deg)]
"""A longitude in degrees, any finite value, normalised to (-180, 180]."""
Vector3 = Annotated[list[float], Field(min_length=3, max_length=3)]
UtcText = Annotated[str, AfterValidator(normalise_utc)]
"""A UTC instant, ISO 8601 (``2027-03-21T10:30:00Z``), normalised; leap seconds allowed."""


def _non_blank(text: str) -> str:
    if not text.strip():
        raise ValueError("must not be empty")
    return text


Name = Annotated[str, Field(max_length=200), AfterValidator(_non_blank)]
"""A name shown in records: non-blank text of at most 200 characters."""
