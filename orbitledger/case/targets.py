"""Ground targets, the sensor that images them and the region whose coverage is wanted
(computed by ``kernel.targets`` and ``kernel.coverage``; results in ``analysis.imaging``).

All three are optional and left out of the canonical form when unset, so the fingerprints of
cases written before them do not change. Targets and a region need the sensor.
"""

from __future__ import annotations

from typing import Annotated, Any

from pydantic import Field, model_validator

from .fields import CaseModel, Latitude, Longitude, Name, ranged, rule

__all__ = ["CoverageRegion", "Sensor", "Target", "check_imaging"]


class Target(CaseModel):
    """A ground target on the WGS-84 ellipsoid."""

    name: Name
    lat_deg: Latitude
    """Geodetic latitude, deg in [-90, 90]."""
    lon_deg: Longitude
    """Longitude, deg east, normalised to (-180, 180]."""
    height_km: Annotated[float, Field(ge=-1.0, le=10.0)] = 0.0
    """Height above the ellipsoid, km (a value in metres would be out of range)."""


class Sensor(CaseModel):
    """What the imaging sensor reaches: an off-nadir limit or a swath width (one of them), and
    the lowest Sun elevation at the target for a useful image."""

    off_nadir_max_deg: ranged(0.0, 89.0, "deg", low_open=True) | None = None
    """Largest off-nadir angle (from the geocentric nadir to the target), deg."""
    swath_km: ranged(0.0, 10_000.0, "km", low_open=True) | None = None
    """Swath width on the ground, km: targets within half of it of the sub-satellite point."""
    min_sun_elevation_deg: Annotated[float, Field(ge=-90.0, le=90.0)] | None = None
    """Lowest Sun elevation at the target, deg (null: no lighting condition)."""

    @model_validator(mode="after")
    def _one_reach(self) -> Sensor:
        if self.off_nadir_max_deg is None and self.swath_km is None:
            raise rule("off_nadir_max_deg", None, "give off_nadir_max_deg or swath_km")
        if self.off_nadir_max_deg is not None and self.swath_km is not None:
            raise rule("swath_km", self.swath_km, "give off_nadir_max_deg or swath_km, not both")
        return self


class CoverageRegion(CaseModel):
    """A latitude/longitude box sampled on a grid: the fraction of its points the sensor
    reaches within each day of the window."""

    lat_min_deg: Latitude
    lat_max_deg: Latitude
    lon_min_deg: Annotated[float, Field(ge=-180.0, le=180.0)]
    """West edge, deg east in [-180, 180]."""
    lon_max_deg: Annotated[float, Field(ge=-180.0, le=540.0)]
    """East edge, deg east, at least lon_min_deg and at most 360 deg east of it: a box across
    180 deg runs past 180 (170 to 190); -180 to 180 is the whole Earth."""
    step_deg: ranged(0.0, 10.0, "deg", low_open=True) = 1.0
    """Grid step in latitude and longitude, deg (edges included)."""

    @model_validator(mode="after")
    def _ordered(self) -> CoverageRegion:
        if self.lat_max_deg < self.lat_min_deg:
            raise rule(
                "lat_max_deg",
                self.lat_max_deg,
                f"must not be below lat_min_deg ({self.lat_min_deg!r})",
            )
        if not (self.lon_min_deg <= self.lon_max_deg <= self.lon_min_deg + 360.0):
            raise rule(
                "lon_max_deg",
                self.lon_max_deg,
                f"must be from lon_min_deg ({self.lon_min_deg!r}) to 360 deg east of it "
                "(a box across 180 deg runs past 180)",
            )
        return self


def check_imaging(case: Any) -> None:
    """Cross-section rules: unique target names; targets and a region need a sensor."""
    names: dict[str, int] = {}
    for k, target in enumerate(case.targets):
        if target.name in names:
            raise rule(
                f"targets[{k}].name",
                target.name,
                f"the same name as targets[{names[target.name]}]; target names are unique",
            )
        names[target.name] = k
    if case.sensor is None:
        if case.targets:
            raise rule("sensor", None, "targets need a sensor (off_nadir_max_deg or swath_km)")
        if case.coverage is not None:
            raise rule(
                "sensor", None, "a coverage region needs a sensor (off_nadir_max_deg or swath_km)"
            )
