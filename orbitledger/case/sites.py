"""The parts of a station that describe the site as it is: its terrain mask by azimuth and its
downlink rates (used by ``Station`` in ``sections``; computed by ``kernel.sites``)."""

from __future__ import annotations

from typing import Annotated, Any

from pydantic import Field

from .fields import CaseModel, Positive, normalise_angle_deg, rule

__all__ = ["DownlinkRate", "TerrainPoint", "check_downlink", "check_terrain_mask", "unless_default"]

MaskElevation = Annotated[float, Field(ge=-5.0, le=90.0)]


def unless_default(default: Any, **kwargs: Any) -> Any:
    """A field left out of the canonical form while it holds ``default`` (fields added after
    the first release: the fingerprints of older cases do not change)."""
    if isinstance(default, list):
        return Field(default_factory=list, exclude_if=lambda v: not v, **kwargs)
    return Field(default, exclude_if=lambda v: v == default, **kwargs)


class TerrainPoint(CaseModel):
    """One point of a terrain mask: the horizon's elevation at an azimuth."""

    az_deg: Annotated[float, Field(ge=0.0, lt=360.0)]
    """Azimuth from north through east, deg in [0, 360)."""
    el_deg: MaskElevation
    """Elevation of the horizon (terrain, buildings) at that azimuth, deg in [-5, 90]."""


class DownlinkRate(CaseModel):
    """A downlink rate and the lowest elevation at which the link closes at that rate."""

    rate_mbps: Positive
    """Data rate, Mbit/s (1e6 bit/s), of user data."""
    min_elevation_deg: MaskElevation | None = None
    """Lowest elevation for this rate, deg; null: at any elevation above the mask."""


def check_terrain_mask(points: list[TerrainPoint]) -> None:
    seen: dict[float, int] = {}
    for k, point in enumerate(points):
        az = normalise_angle_deg(point.az_deg)
        if az in seen:
            raise rule(
                f"terrain_mask[{k}].az_deg",
                point.az_deg,
                f"the same azimuth as terrain_mask[{seen[az]}]",
            )
        seen[az] = k


def check_downlink(rates: list[DownlinkRate]) -> None:
    for k in range(1, len(rates)):
        low, high = rates[k - 1], rates[k]
        if high.min_elevation_deg is None or (
            low.min_elevation_deg is not None and high.min_elevation_deg <= low.min_elevation_deg
        ):
            raise rule(
                f"downlink[{k}].min_elevation_deg",
                high.min_elevation_deg,
                "list rates with rising min_elevation_deg (only the first may be null)",
            )
        if high.rate_mbps <= low.rate_mbps:
            raise rule(
                f"downlink[{k}].rate_mbps",
                high.rate_mbps,
                f"must exceed downlink[{k - 1}].rate_mbps: a higher elevation gives a higher rate",
            )
