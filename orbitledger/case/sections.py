"""Case sections other than the orbit and the burn plan: meta, body, spacecraft, stations,
analysis window, Earth orientation and force model.

Every section but meta is optional in a case file, with a default that means "not used" (or
the stated default setting), so files written before a section existed stay valid.
"""

from __future__ import annotations

import dataclasses
import re
from typing import Annotated, Literal

from pydantic import AfterValidator, Field, model_validator

from ..kernel.constants import BODIES, Body
from .atmosphere import FluxScenario
from .fields import (
    MAX_LIST_ITEMS,
    CaseModel,
    Latitude,
    Longitude,
    Mass,
    Name,
    NonNegative,
    UtcText,
    ranged,
    rule,
)
from .sites import DownlinkRate, TerrainPoint, check_downlink, check_terrain_mask, unless_default

__all__ = [
    "Meta",
    "BodySection",
    "Spacecraft",
    "Station",
    "Window",
    "EarthOrientation",
    "ForceModel",
    "BODY_CONSTANTS",
]

_RECORD_ID = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$")


def _record_id(text: str) -> str:
    if not _RECORD_ID.match(text):
        raise ValueError(
            "must be 1-64 letters, digits, '.', '_' or '-', starting with a letter or digit"
        )
    return text


class Meta(CaseModel):
    """What the case is and which decision it supports."""

    title: Name
    record_id: Annotated[str, AfterValidator(_record_id)]
    """The id that numbers the revisions of this case's records (e.g. KES2-ORB-001)."""
    author: str = ""
    description: str = ""
    decision: str = ""
    """The decision this case supports."""
    rationale: str = ""
    alternatives: list[str] = Field(default_factory=list, max_length=MAX_LIST_ITEMS)


# The constants of a Body that a case may override, each with its source.
BODY_CONSTANTS = (
    "mu_km3_s2",
    "radius_km",
    "flattening",
    "j2",
    "j3",
    "j4",
    "rotation_rate_rad_s",
)


class BodySection(CaseModel):
    """The central body: a known body with its cited constants, optionally overridden."""

    name: Literal["Earth", "Moon", "Mars", "Sun"] = "Earth"
    mu_km3_s2: ranged(0.0, 1e12, "km^3/s^2", low_open=True) | None = None
    radius_km: ranged(0.0, 1e6, "km", low_open=True) | None = None
    flattening: Annotated[float, Field(ge=0.0, lt=1.0)] | None = None
    j2: ranged(-1.0, 1.0, "") | None = None
    j3: ranged(-1.0, 1.0, "") | None = None
    j4: ranged(-1.0, 1.0, "") | None = None
    rotation_rate_rad_s: ranged(-1e-2, 1e-2, "rad/s") | None = None
    sources: dict[str, Name] = Field(default_factory=dict)
    """The publication of each overridden constant, e.g. {"j2": "JGM-3 (Tapley et al. 1996)"}."""

    @model_validator(mode="after")
    def _every_override_cited(self) -> BodySection:
        for key in self.sources:
            if key not in BODY_CONSTANTS:
                raise rule(
                    f"sources.{key}",
                    self.sources[key],
                    f"not a constant of the body; one of {', '.join(BODY_CONSTANTS)}",
                )
            if getattr(self, key) is None:
                raise rule(f"sources.{key}", self.sources[key], f"{key} is not overridden here")
        for key in BODY_CONSTANTS:
            if getattr(self, key) is not None and key not in self.sources:
                raise rule(
                    key,
                    getattr(self, key),
                    f'an overridden constant needs its source: add "sources": {{"{key}": "..."}}',
                )
        return self

    def constants(self) -> Body:
        """The kernel Body: the named body's cited constants with this section's overrides."""
        base = BODIES[self.name.lower()]
        overrides = {k: getattr(self, k) for k in BODY_CONSTANTS if getattr(self, k) is not None}
        if not overrides:
            return base
        return dataclasses.replace(base, **overrides, sources={**base.sources, **self.sources})


class Spacecraft(CaseModel):
    """The spacecraft's mass and drag properties, and its propulsion if it has any."""

    name: str = ""
    mass_kg: Mass
    """Wet mass at the epoch (propellant included), kg."""
    drag_area_m2: ranged(0.0, 1e4, "m^2", low_open=True)
    """Mean cross-section area facing the flow, m^2."""
    drag_coefficient: ranged(0.0, 10.0, "", low_open=True)
    """Drag coefficient C_D (dimensionless; about 2.2 for a compact satellite, common practice)."""
    isp_s: ranged(0.0, 1e5, "s", low_open=True) | None = None
    """Specific impulse of the propulsion, s (omit when the spacecraft has none)."""
    propellant_mass_kg: ranged(0.0, 1e6, "kg") | None = None
    """Propellant on board at the epoch, kg (part of mass_kg)."""

    @model_validator(mode="after")
    def _propellant_within_mass(self) -> Spacecraft:
        if self.propellant_mass_kg is not None and self.propellant_mass_kg >= self.mass_kg:
            raise rule(
                "propellant_mass_kg",
                self.propellant_mass_kg,
                f"must be less than mass_kg ({self.mass_kg!r}), the wet mass that includes it",
            )
        return self


class Station(CaseModel):
    """A ground station on the body's reference ellipsoid (WGS-84 for the Earth)."""

    name: Name
    lat_deg: Latitude
    """Geodetic latitude, deg in [-90, 90]."""
    lon_deg: Longitude
    """Longitude, deg east, normalised to (-180, 180]."""
    height_km: Annotated[float, Field(ge=-1.0, le=10.0)] = 0.0
    """Height above the ellipsoid, km (a value in metres would be out of range)."""
    elevation_mask_deg: Annotated[float, Field(ge=-5.0, le=90.0)] = 5.0
    """Lowest elevation at which the station can work the spacecraft, deg."""
    terrain_mask: list[TerrainPoint] = unless_default([], max_length=3600)
    """Horizon by azimuth (linear between points, closed through north); raises the mask."""
    min_pass_duration_s: NonNegative = unless_default(0.0)
    """Passes shorter than this are not counted, s (0: all passes)."""
    downlink: list[DownlinkRate] = unless_default([], max_length=20)
    """Downlink rates by elevation: data volume per pass and per day."""

    @model_validator(mode="after")
    def _site_tables(self) -> Station:
        check_terrain_mask(self.terrain_mask)
        check_downlink(self.downlink)
        return self


class Window(CaseModel):
    """The analysis window: where time-series computations start, how long, what step."""

    start_utc: UtcText | None = None
    """Start of the window (UTC); null means the case epoch."""
    duration_s: ranged(0.0, 3.2e9, "s (about 100 years)", low_open=True) = 86400.0
    step_s: ranged(1e-3, 3.2e9, "s") = 10.0

    @model_validator(mode="after")
    def _step_within_duration(self) -> Window:
        if self.step_s > self.duration_s:
            raise rule("step_s", self.step_s, f"must not exceed duration_s ({self.duration_s!r})")
        return self


_EOP_BOUND = Field(ge=-1.0, le=1.0)


class EarthOrientation(CaseModel):
    """Earth orientation parameters (IERS values), used when converting between GCRF and ITRF.

    ``source: "values"`` (the default) uses the three numbers below over the whole window;
    zeros are the stated default, good to about 1 s of UT1 and 0.5" of pole. ``source: "iers"``
    looks the values up epoch by epoch in the IERS table shipped by ``astropy-iers-data``, or
    in the finals2000A-format ``file`` named; the three numbers are then left out.
    """

    dut1_s: Annotated[float, _EOP_BOUND] = 0.0
    """UT1 - UTC, s (kept within 0.9 s by leap seconds, IERS)."""
    xp_arcsec: Annotated[float, _EOP_BOUND] = 0.0
    """Polar motion x_p, arcsec."""
    yp_arcsec: Annotated[float, _EOP_BOUND] = 0.0
    """Polar motion y_p, arcsec."""
    # New fields are left out of the canonical form at their defaults, so the fingerprints of
    # cases written before them do not change.
    source: Literal["values", "iers"] = Field("values", exclude_if=lambda v: v == "values")
    """Where the values come from: "values" (the three numbers above) or "iers" (the table)."""
    file: Annotated[str, Field(min_length=1, max_length=4096)] | None = Field(
        None, exclude_if=lambda v: v is None
    )
    """With source "iers": an IERS finals2000A-format file to read instead of the packaged
    table (a relative path is taken from the current folder)."""

    @model_validator(mode="after")
    def _one_source(self) -> EarthOrientation:
        if self.source == "values":
            if self.file is not None:
                raise rule("file", self.file, 'a table file needs "source": "iers"')
            return self
        for name in ("dut1_s", "xp_arcsec", "yp_arcsec"):
            if getattr(self, name) != 0.0:
                raise rule(
                    name,
                    getattr(self, name),
                    'is looked up in the IERS table with "source": "iers"; leave it out',
                )
        return self


class ForceModel(CaseModel):
    """Which propagator the analyses use, and the settings of the numerical one."""

    propagator: Literal["two-body", "j2-mean", "numerical", "sgp4"] = "two-body"
    zonal_degree: Annotated[int, Field(ge=2, le=4)] = 2
    """Numerical: highest zonal harmonic, 2, 3 or 4 (J2..J4)."""
    drag: bool = False
    """Numerical: atmospheric drag (needs the spacecraft's mass, area and drag coefficient)."""
    solar_activity: Literal["low", "moderate", "high"] = "moderate"
    """Level of solar activity for the atmosphere model (when no flux_scenario is given)."""
    density_model: Literal["nrlmsis", "exponential"] = Field(
        "nrlmsis", exclude_if=lambda v: v == "nrlmsis"
    )
    """Density for lifetime, disposal and drag: NRLMSIS 2.1 (default) or the fast exponential."""
    flux_scenario: FluxScenario | None = Field(None, exclude_if=lambda v: v is None)
    """NRLMSIS: the F10.7/F10.7a/Ap scenario (default: constant at solar_activity's level)."""
    third_body: list[Literal["sun", "moon"]] = Field(default_factory=list)
    """Numerical: third-body attraction of the Sun and/or the Moon."""
    rtol: Annotated[float, Field(ge=1e-14, le=1e-3)] = 1e-10
    """Numerical integrator relative tolerance."""
    atol_km: ranged(0.0, 10.0, "km", low_open=True) = 1e-6
    """Numerical integrator absolute tolerance on position, km."""

    @model_validator(mode="after")
    def _flux_needs_nrlmsis(self) -> ForceModel:
        if self.density_model == "exponential" and self.flux_scenario is not None:
            raise rule(
                "flux_scenario",
                self.flux_scenario.kind,
                'is used by the "nrlmsis" density model; the exponential one takes '
                "solar_activity only",
            )
        return self

    @model_validator(mode="after")
    def _no_repeated_body(self) -> ForceModel:
        seen: set[str] = set()
        for k, name in enumerate(self.third_body):
            if name in seen:
                raise rule(f"third_body[{k}]", name, "listed twice")
            seen.add(name)
        return self
