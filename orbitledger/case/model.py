"""The validated case: every input of one orbit analysis, and what the kernel needs from it."""

from __future__ import annotations

import functools
from collections.abc import Mapping
from typing import Annotated, Any, Literal

import numpy as np
from pydantic import BeforeValidator, Field, ValidationError, model_serializer, model_validator

from ..kernel.constants import Body
from ..kernel.elements import Elements
from ..kernel.summary import orbit_cautions
from .canonical import canonical_json, fingerprint_of, pretty_json
from .changes import apply_changes
from .errors import MISSING, CaseError
from .fields import MAX_LIST_ITEMS, CaseModel, UtcText, rule
from .forms import check_orbit_paths, orbit_elements, orbit_in_form, orbit_state
from .json_limits import find_long_integer, long_integer_error
from .orbit import ApsidesOrbit, ClassicalOrbit, Orbit
from .plan import AtEpoch, Budget, Burn
from .sections import BodySection, EarthOrientation, ForceModel, Meta, Spacecraft, Station, Window
from .sites import unless_default
from .source import Source
from .targets import CoverageRegion, Sensor, Target, check_imaging
from .utc import utc_seconds_between, utc_to_jd
from .validation import case_error_from_validation, check_text_values

__all__ = ["Case", "SCHEMA_ID", "case_from_data", "case_json_schema"]

SCHEMA_ID = "orbitledger.case/1"
_SCHEMA_PREFIX = "orbitledger.case/"


def _check_schema_id(value: Any) -> Any:
    if value == SCHEMA_ID:
        return value
    if isinstance(value, str) and value.startswith(_SCHEMA_PREFIX):
        version = value[len(_SCHEMA_PREFIX) :]
        if version.isdigit() and int(version) > 1:
            raise ValueError(
                f"this file is format version {version}, written by a newer orbitledger; "
                f"this version reads {SCHEMA_ID}: upgrade orbitledger to open it"
            )
    raise ValueError(f'not an orbitledger case file: expected "schema": "{SCHEMA_ID}"')


class Case(CaseModel):
    """One case: the inputs of an orbit analysis, validated. Frozen: changes make a new Case."""

    schema_id: Annotated[Literal["orbitledger.case/1"], BeforeValidator(_check_schema_id)] = Field(
        alias="schema"
    )
    meta: Meta
    epoch_utc: UtcText
    """The epoch of the orbit, UTC (ISO 8601)."""
    body: BodySection = Field(default_factory=BodySection)
    orbit: Orbit
    spacecraft: Spacecraft | None = None
    stations: list[Station] = Field(default_factory=list, max_length=MAX_LIST_ITEMS)
    targets: list[Target] = unless_default([], max_length=MAX_LIST_ITEMS)
    sensor: Sensor | None = Field(None, exclude_if=lambda v: v is None)
    coverage: CoverageRegion | None = Field(None, exclude_if=lambda v: v is None)
    window: Window = Field(default_factory=Window)
    earth_orientation: EarthOrientation = Field(default_factory=EarthOrientation)
    force_model: ForceModel = Field(default_factory=ForceModel)
    burns: list[Burn] = Field(default_factory=list, max_length=MAX_LIST_ITEMS)
    budget: Budget | None = None
    source: Source | None = None
    criteria: list[str] = Field(default_factory=list)
    """Pass/fail conditions on this case's results, e.g. "propellant_margin_kg >= 0" or
    "lifetime_years <= budget.disposal.lifetime_limit_years"; the record lists each first."""

    @model_serializer(mode="wrap")
    def _criteria_only_when_stated(self, handler: Any) -> Any:
        # A case that states no criteria keeps the JSON (and the fingerprint) it had before
        # cases could state them, so records built earlier still verify.
        data = handler(self)
        if isinstance(data, dict) and not self.criteria:
            data.pop("criteria", None)
        return data

    @model_validator(mode="after")
    def _cross_section_rules(self) -> Case:
        radius_km = self.body.constants().radius_km
        orbit = self.orbit
        if isinstance(orbit, ClassicalOrbit) and orbit.altitude_km is not None:
            if orbit.altitude_km <= -radius_km:
                raise rule(
                    "orbit.altitude_km", orbit.altitude_km, "puts a at or below the body's centre"
                )
        if isinstance(orbit, ApsidesOrbit) and orbit.periapsis_alt_km <= -radius_km:
            raise rule(
                "orbit.periapsis_alt_km",
                orbit.periapsis_alt_km,
                "puts periapsis at or below the body's centre",
            )
        names: dict[str, int] = {}
        for k, station in enumerate(self.stations):
            if station.name in names:
                raise rule(
                    f"stations[{k}].name",
                    station.name,
                    f"the same name as stations[{names[station.name]}]; station names are unique",
                )
            names[station.name] = k
        check_imaging(self)
        previous: tuple[int, str] | None = None
        for k, burn in enumerate(self.burns):
            if isinstance(burn.at, AtEpoch):
                when = burn.at.epoch_utc
                if utc_seconds_between(self.epoch_utc, when) < 0.0:
                    raise rule(
                        f"burns[{k}].at.epoch_utc", when, f"before the case epoch {self.epoch_utc}"
                    )
                if previous and utc_seconds_between(previous[1], when) < 0.0:
                    raise rule(
                        f"burns[{k}].at.epoch_utc",
                        when,
                        f"before burns[{previous[0]}] ({previous[1]}); burns are listed in time order",
                    )
                previous = (k, when)
        drag_users = [("force_model.drag", self.force_model.drag)]
        if self.budget is not None:
            drag_users.append(("budget.station_keeping", self.budget.station_keeping))
            if self.budget.disposal is not None:
                drag_users.append(("budget.disposal", MISSING))
        for path, used in drag_users:
            if used and self.spacecraft is None:
                raise rule(
                    path,
                    used,
                    "needs the drag model: add the spacecraft section (mass_kg, drag_area_m2, drag_coefficient)",
                )
        if self.force_model.propagator == "sgp4" and (
            self.source is None or self.source.kind != "tle"
        ):
            raise rule(
                "force_model.propagator",
                "sgp4",
                "SGP4 needs the TLE it propagates: a source of kind 'tle'",
            )
        if self.criteria:
            from .criterion import stated_criteria

            try:
                stated_criteria(self.to_data())
            except CaseError as err:
                raise rule(err.field, err.value, err.reason) from None
        return self

    # --- what the kernel needs ---------------------------------------------------------

    def body_constants(self) -> Body:
        """The central body for the kernel: its cited constants, with the case's overrides."""
        return self.body.constants()

    def elements(self) -> Elements:
        """Osculating classical elements (kernel ``Elements``, floats) at the epoch, any form."""
        return orbit_elements(self.orbit, self.body_constants())

    def state(self) -> tuple[np.ndarray, np.ndarray]:
        """GCRF position (km) and velocity (km/s) at the epoch, each shape (3,)."""
        return orbit_state(self.orbit, self.body_constants())

    def epoch_jd_utc(self) -> tuple[float, float]:
        """The epoch as a two-part Julian date in UTC (ERFA convention)."""
        return utc_to_jd(self.epoch_utc)

    @property
    def window_start_utc(self) -> str:
        """Start of the analysis window (UTC): ``window.start_utc``, or the epoch when unset."""
        return self.window.start_utc or self.epoch_utc

    # --- new cases from this one -------------------------------------------------------

    def with_orbit_form(self, form: str) -> Case:
        """The same case with its orbit expressed in another form (classical, apsides, cartesian)."""
        data = self.to_data()
        data["orbit"] = orbit_in_form(self.orbit, form, self.body_constants())
        return case_from_data(data)

    def with_changes(self, changes: Mapping[str, Any]) -> Case:
        """A new validated case with each JSON path set to its value; this case is unchanged.

        Paths as in the file: ``{"orbit.e": 0.02, "stations[0].lat_deg": 51.0}`` (or
        ``stations.0.lat_deg``). Raises CaseError naming the path for a refused change.
        """
        check_orbit_paths(self.orbit, dict(changes))
        return case_from_data(apply_changes(self.to_data(), changes))

    # --- JSON ---------------------------------------------------------------------------

    def to_data(self) -> dict:
        """The case as plain JSON data, every default filled in."""
        return self.model_dump(mode="json", by_alias=True)

    def canonical_json(self) -> str:
        """Canonical JSON (sorted keys, compact, floats by repr, defaults filled in)."""
        return canonical_json(self.to_data())

    @functools.cached_property
    def fingerprint(self) -> str:
        """SHA-256 hex digest of the canonical JSON: the case's identity in records."""
        return fingerprint_of(self.canonical_json())

    def to_json(self) -> str:
        """The case file's text: indented, keys in model order, unset optional values left out."""
        return pretty_json(self.model_dump(mode="json", by_alias=True, exclude_none=True))

    # --- cautions ----------------------------------------------------------------------

    def warnings(self) -> list[str]:
        """Accepted but worth saying: periapsis inside the body, a window before the epoch..."""
        notes = [str(note) for note in orbit_cautions(self.elements(), self.body_constants())]
        start = self.window.start_utc
        if start is not None and utc_seconds_between(self.epoch_utc, start) < 0.0:
            seconds = -utc_seconds_between(self.epoch_utc, start)
            notes.append(
                f"window.start_utc {start} is {seconds:.0f} s before the epoch: "
                "the analysis propagates backwards from the epoch"
            )
        if self.body.name != "Earth" and (self.stations or self.source is not None):
            notes.append(
                f"stations and TLE/OPM sources are Earth-fixed; the central body is {self.body.name}"
            )
        if self.force_model.propagator != "numerical":
            unused = [
                name
                for name, used in (
                    ("drag", self.force_model.drag),
                    ("third_body", bool(self.force_model.third_body)),
                )
                if used
            ]
            if unused:
                notes.append(
                    f"force_model.{' and '.join(unused)} set, but only the numerical propagator "
                    f"uses them (propagator is {self.force_model.propagator!r})"
                )
        return notes


def case_from_data(data: Any, *, file: str | None = None) -> Case:
    """Validate JSON data into a Case; any refusal is one CaseError naming the JSON path."""
    if not isinstance(data, dict):
        raise CaseError(
            "(top level)", type(data).__name__, "a case file is a JSON object", file=file
        )
    check_text_values(data, file)
    if "schema" in data:  # the format version decides how to read the rest: check it first
        try:
            _check_schema_id(data["schema"])
        except ValueError as err:
            raise CaseError("schema", data["schema"], str(err), file=file) from None
    try:
        case = Case.model_validate(data)
    except ValidationError as err:
        raise case_error_from_validation(err, Case, file) from None
    except (OverflowError, RecursionError) as err:
        raise CaseError("(top level)", "", f"cannot be read: {err}", file=file) from None
    long_integer = find_long_integer(data)  # in a field without a range (an angle)
    if long_integer:
        raise long_integer_error(long_integer, file)
    return case


def case_json_schema() -> dict:
    """The JSON Schema (draft 2020-12) of a case file, generated from the models.

    It carries the types, ranges and required fields; rules that tie fields together (one of
    a_km/altitude_km, hyperbolic a < 0, unique station names...) are checked by the models.
    """
    schema = Case.model_json_schema(by_alias=True)
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        **schema,
        "title": f"orbitledger case file ({SCHEMA_ID})",
    }
