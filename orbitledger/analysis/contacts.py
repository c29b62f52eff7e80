"""A case's stations as sites (terrain mask, shortest pass, downlink) and their passes.

The one translation of the station fields into ``kernel.sites``: the results panel, the
records and the ``passes`` verb all search passes through ``case_site_passes``.
"""

from __future__ import annotations

from typing import Any

from ..kernel.sites import DownlinkStep, Site, SitePassSearch, TerrainMask, site_passes
from .inputs import case_stations
from .result import Result

__all__ = ["case_site_passes", "case_sites", "has_downlink", "volume_results"]

_DAY_S = 86_400.0


def case_sites(case: Any) -> tuple[Site, ...]:
    """The kernel ``Site`` of every station of the case."""
    out = []
    for station, kernel_station in zip(case.stations, case_stations(case), strict=True):
        mask = station.terrain_mask
        terrain = (
            TerrainMask(tuple(p.az_deg for p in mask), tuple(p.el_deg for p in mask))
            if mask
            else None
        )
        out.append(
            Site(
                kernel_station,
                terrain,
                station.min_pass_duration_s,
                tuple(DownlinkStep(d.rate_mbps, d.min_elevation_deg) for d in station.downlink),
            )
        )
    return tuple(out)


def has_downlink(case: Any) -> bool:
    return any(s.downlink for s in case.stations)


def case_site_passes(case: Any, traj: Any, duration_s: float | None = None) -> SitePassSearch:
    """Passes over the case's stations as sites, over its window (or ``duration_s``)."""
    duration = case.window.duration_s if duration_s is None else duration_s
    return site_passes(traj, case_sites(case), duration, step_s=case.window.step_s)


def volume_results(case: Any, found: SitePassSearch) -> list[Result]:
    """Data volume per day (network and per station) and dropped short passes, as results."""
    rows = []
    days = found.search.window_s / _DAY_S
    if any(s.min_pass_duration_s > 0.0 for s in case.stations):
        rows.append(
            Result(
                "passes_below_min_duration",
                float(found.dropped_short),
                "",
                "Passes dropped as shorter than their station's min_pass_duration_s",
                "contacts",
                abs_tol=0.0,
            )
        )
    if not has_downlink(case):
        return rows
    total = sum(found.volumes_mbit)
    rows.append(
        Result(
            "data_volume_mbit_per_day",
            total / days,
            "Mbit/day",
            "Data volume per day, all stations (overlapping contacts counted at each station)",
            "contacts",
            rel_tol=1e-4,
            abs_tol=1.0,
        )
    )
    passes = [v for p, v in zip(found.search.passes, found.volumes_mbit, strict=True) if v > 0.0]
    if passes:
        rows.append(
            Result(
                "data_volume_mean_pass_mbit",
                sum(passes) / len(passes),
                "Mbit",
                "Mean data volume of a pass over a station with a downlink",
                "contacts",
                rel_tol=1e-4,
                abs_tol=1.0,
            )
        )
    return rows


def site_rows(stations: list[dict[str, Any]]) -> list[dict[str, str]]:
    """The record's rows on the stations' sites (terrain mask, shortest pass, downlink), from
    the case's station data; none when no station has them."""
    rows = []
    for s in stations:
        parts = []
        mask = s.get("terrain_mask") or []
        if mask:
            points = ", ".join(f"{p['az_deg']:g}/{p['el_deg']:g}" for p in mask)
            parts.append(
                f"terrain mask az/el deg {points} (linear in azimuth, closed through north; "
                f"never below {s.get('elevation_mask_deg', 5.0):g} deg)"
            )
        if s.get("min_pass_duration_s"):
            parts.append(f"passes shorter than {s['min_pass_duration_s']:g} s not counted")
        rates = s.get("downlink") or []
        if rates:
            steps = ", ".join(
                f"{r['rate_mbps']:g} Mbit/s"
                + (
                    ""
                    if r.get("min_elevation_deg") is None
                    else f" above {r['min_elevation_deg']:g} deg"
                )
                for r in rates
            )
            parts.append(f"downlink {steps}; volume per UTC day counts passes on their AOS day")
        if parts:
            rows.append({"topic": f"Station {s['name']}", "value": "; ".join(parts)})
    return rows
