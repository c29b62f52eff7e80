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
    "ranged",
    "Length",
    "PositiveLength",
    "Speed",
    "DeltaV",
    "Mass",
    "MAX_LIST_ITEMS",
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


def _number(x: float) -> str:
    return f"{x:g}"


def ranged(low: float, high: float, unit: str, *, low_open: bool = False) -> Any:
    """A float within its physical range, [low, high] (``low_open``: (low, high]).

    A value outside is refused naming the bound and the range ("must be <= 1e+06 (the allowed
    range is (0, 1e+06] kg)"): numbers that large are not orbits (a 1e308 altitude, a 1e300 kg
    spacecraft) and would overflow the kernel. The range is written into the JSON Schema too.
    """
    shown = f"{'(' if low_open else '['}{_number(low)}, {_number(high)}]" + (
        f" {unit}" if unit else ""
    )

    def check(value: float) -> float:
        if value < low or (low_open and value == low):
            sign = ">" if low_open else ">="
            raise ValueError(f"must be {sign} {_number(low)} (the allowed range is {shown})")
        if value > high:
            raise ValueError(f"must be <= {_number(high)} (the allowed range is {shown})")
        return value

    bounds = {"exclusiveMinimum" if low_open else "minimum": low, "maximum": high}
    return Annotated[float, AfterValidator(check), Field(json_schema_extra=bounds)]


# Physical ranges (docs/case-file.md, "Input limits"). Lengths reach beyond Pluto's orbit
# (5.9e9 km) for a heliocentric case; speeds beyond solar escape at the Sun's surface
# (617.6 km/s, NASA Sun fact sheet).
MAX_LENGTH_KM = 1e10
MAX_LIST_ITEMS = 1000
"""Stations, burns, allowances: more than any study keeps in one case."""
Length = ranged(-MAX_LENGTH_KM, MAX_LENGTH_KM, "km")
PositiveLength = ranged(0.0, MAX_LENGTH_KM, "km", low_open=True)
Speed = ranged(-1e3, 1e3, "km/s")
DeltaV = ranged(-100.0, 100.0, "km/s")
Mass = ranged(0.0, 1e6, "kg", low_open=True)
"""A spacecraft's mass: up to 1000 t (the International Space Station is about 420 t, NASA)."""

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


_BIDI_CONTROLS = frozenset(
    "\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069"
)


def _non_blank(text: str) -> str:
    if not text.strip():
        raise ValueError("must not be empty")
    bad = next((ch for ch in text if _BIDI_CONTROLS.intersection(ch) or not ch.isprintable()), None)
    if bad is not None:  # a newline, an ANSI escape (ESC) or a bidi override (UAX #9)
        raise ValueError(
            f"must be one line of plain text: U+{ord(bad):04X} (a control or bidi character) "
            "would change how the name is shown in a terminal or a record"
        )
    return text


Name = Annotated[str, Field(max_length=200), AfterValidator(_non_blank)]
"""A name shown in records: one line of non-blank text of at most 200 characters, without
control characters (newlines, ANSI escapes) or Unicode bidi controls."""
