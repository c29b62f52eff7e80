"""Ground stations as sites are: a terrain mask by azimuth, a shortest useful pass, and the
data a downlink brings home per pass and per day.

**Terrain mask.** A table of (azimuth, elevation) points, interpolated linearly in azimuth and
closed around the horizon (the last point joins the first through north); the mask at an
azimuth is the higher of the station's elevation mask and the table's value (common practice
for horizon masks from a site survey). A pass is then an interval during which the geometric
elevation exceeds the mask at the satellite's current azimuth.

**Search.** ``site_passes`` first finds the passes above the lowest mask anywhere around the
station (``passes.station_passes``: root-found to ``tolerance_s``), which contain every pass
above the terrain mask. Within each, the elevation margin over the terrain mask is sampled
every ``sample_s`` (1 s) and its sign changes are refined by Chandrupatla's root finder, as
``events`` does; the maximum elevation of each resulting pass is refined by bounded
minimisation. A terrain feature crossed in less than ``sample_s`` may be missed (its effect on
contact time is below ``sample_s``).

**Shortest pass.** Passes shorter than ``min_pass_duration_s`` are dropped (and counted); a pass
cut at the window's edge is kept whatever its length, as its full length is not known.

**Downlink.** Steps of (rate, lowest elevation): at each instant of a pass the rate is that of
the highest step whose elevation is reached (and the mask is cleared); a step without an
elevation applies over the whole pass. Steps are listed with rising elevation and rising rate,
so the volume is sum_k (R_k - R_{k-1}) T_k, T_k the time above step k's elevation within the
pass, from samples at most ``sample_s`` apart with crossings placed by linear interpolation
(error of order (sample_s)^2 times the elevation's curvature: under a millisecond per crossing).
Volumes per UTC day count each pass on the day of its AOS, as the pass counts do; the network
total adds the stations' volumes (overlapping contacts count at each station: an upper bound
when the spacecraft has one transmitter).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError
from .events import refine_crossings
from .passes import (
    ANY_STATION,
    Pass,
    PassSearch,
    Station,
    _azimuth_deg,
    _daily_statistics,
    _elevation_deg,
    _views,
    build_passes,
    culminations,
    station_passes,
)
from .propagation import Trajectory

__all__ = [
    "DailyVolume",
    "DownlinkStep",
    "Site",
    "SitePassSearch",
    "TerrainMask",
    "pass_data_volume_mbit",
    "site_passes",
]


@dataclass(frozen=True)
class TerrainMask:
    """Horizon mask: elevations (deg) at azimuths (deg from north through east)."""

    az_deg: tuple[float, ...]
    el_deg: tuple[float, ...]

    def __post_init__(self) -> None:
        az = np.asarray(self.az_deg, dtype=float) % 360.0
        el = np.asarray(self.el_deg, dtype=float)
        if az.ndim != 1 or az.size == 0 or az.shape != el.shape:
            raise InputError("terrain_mask", az.size, "needs one elevation per azimuth")
        if not (np.all(np.isfinite(el)) and np.all((el >= -5.0) & (el <= 90.0))):
            raise InputError("terrain_mask.el_deg", self.el_deg, "must be in [-5, 90] deg")
        order = np.argsort(az, kind="stable")
        if np.any(np.diff(az[order]) == 0.0):
            raise InputError("terrain_mask.az_deg", self.az_deg, "an azimuth is listed twice")
        object.__setattr__(self, "az_deg", tuple(float(x) for x in az[order]))
        object.__setattr__(self, "el_deg", tuple(float(x) for x in el[order]))

    def elevation_deg(self, az_deg: ArrayLike) -> np.ndarray:
        """The mask's elevation at azimuths (deg), linear between points, closed through north."""
        az = np.asarray(self.az_deg)
        el = np.asarray(self.el_deg)
        x = np.concatenate([[az[-1] - 360.0], az, [az[0] + 360.0]])
        y = np.concatenate([[el[-1]], el, [el[0]]])
        return np.interp(np.asarray(az_deg, dtype=float) % 360.0, x, y)


@dataclass(frozen=True)
class DownlinkStep:
    """A downlink rate (Mbit/s, 1e6 bit/s) and the lowest elevation (deg) it works at; None:
    at any elevation above the mask."""

    rate_mbps: float
    min_elevation_deg: float | None = None


@dataclass(frozen=True)
class Site:
    """A station with its terrain mask, shortest useful pass (s) and downlink steps."""

    station: Station
    terrain: TerrainMask | None = None
    min_pass_duration_s: float = 0.0
    downlink: tuple[DownlinkStep, ...] = ()

    def __post_init__(self) -> None:
        where = f"stations[{self.station.name!r}]"
        if not (math.isfinite(self.min_pass_duration_s) and self.min_pass_duration_s >= 0.0):
            raise InputError(
                f"{where}.min_pass_duration_s", self.min_pass_duration_s, "must be >= 0 s"
            )
        last_el, last_rate = -math.inf, 0.0
        for k, step in enumerate(self.downlink):
            el = -math.inf if step.min_elevation_deg is None else step.min_elevation_deg
            if not (math.isfinite(step.rate_mbps) and step.rate_mbps > 0.0):
                raise InputError(f"{where}.downlink[{k}].rate_mbps", step.rate_mbps, "must be > 0")
            if k and not (el > last_el and step.rate_mbps > last_rate):
                raise InputError(
                    f"{where}.downlink[{k}]",
                    step.rate_mbps,
                    "steps are listed with rising elevation and rising rate",
                )
            last_el, last_rate = el, step.rate_mbps

    def mask_deg(self, az_deg: ArrayLike) -> np.ndarray:
        """The elevation mask (deg) at azimuths: the station's mask, raised by the terrain."""
        floor = self.station.elevation_mask_deg
        if self.terrain is None:
            return np.full(np.shape(az_deg), floor, dtype=float)
        return np.maximum(floor, self.terrain.elevation_deg(az_deg))

    @property
    def lowest_mask_deg(self) -> float:
        floor = self.station.elevation_mask_deg
        return floor if self.terrain is None else max(floor, min(self.terrain.el_deg))


@dataclass(frozen=True)
class DailyVolume:
    """Data brought down by one station (or ``"any station"``) on one UTC day, Mbit."""

    station: str
    day_utc: str
    passes: int
    volume_mbit: float


@dataclass(frozen=True, eq=False)
class SitePassSearch:
    """Passes above the sites' masks (``search``), the data volume of each (Mbit, aligned
    with ``search.passes``), volumes per UTC day, and how many short passes were dropped."""

    search: PassSearch
    volumes_mbit: tuple[float, ...]
    daily_volume: tuple[DailyVolume, ...]
    dropped_short: int
    sample_s: float
    notes: tuple[str, ...]


def _grid(lo: np.ndarray, hi: np.ndarray, sample_s: float) -> tuple[np.ndarray, np.ndarray]:
    """Sample times from lo[j] to hi[j] (both included) at most sample_s apart; pass index."""
    n = np.maximum(2, np.ceil((hi - lo) / sample_s).astype(int) + 1)
    owner = np.repeat(np.arange(lo.size), n)
    start = np.repeat(np.cumsum(n) - n, n)
    frac = (np.arange(owner.size) - start) / np.repeat(n - 1, n)
    return lo[owner] + frac * (hi - lo)[owner], owner


class _Geometry:
    """Elevation and azimuth of the trajectory seen from the sites (vectorised over channels)."""

    def __init__(self, traj: Trajectory, sites: Sequence[Site]) -> None:
        self.traj, self.sites = traj, sites
        self.xyz, self.enu, _ = _views([s.station for s in sites])

    def el_az(self, t: np.ndarray, ch: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        r, _ = self.traj.itrf(t)
        return (
            _elevation_deg(r, self.xyz[ch], self.enu[ch]),
            _azimuth_deg(r, self.xyz[ch], self.enu[ch]),
        )

    def mask(self, az: np.ndarray, ch: np.ndarray) -> np.ndarray:
        out = np.empty(az.shape)
        for k, site in enumerate(self.sites):
            here = ch == k
            out[here] = site.mask_deg(az[here])
        return out

    def margin(self, t: np.ndarray, ch: np.ndarray) -> np.ndarray:
        el, az = self.el_az(t, ch)
        return el - self.mask(az, ch)

    def elevation(self, t: np.ndarray, ch: np.ndarray) -> np.ndarray:
        return self.el_az(t, ch)[0]


def _under_terrain(geo: _Geometry, candidates: list[Pass], index: dict[str, int], tol: float,
                   sample_s: float) -> list[tuple[int, float, float, bool, bool]]:  # fmt: skip
    """(channel, start, end, starts clipped, ends clipped) of the intervals above the terrain
    mask inside the candidate passes."""
    if not candidates:
        return []
    lo = np.array([p.aos_s for p in candidates])
    hi = np.array([p.los_s for p in candidates])
    ch_pass = np.array([index[p.station] for p in candidates])
    t, owner = _grid(lo, hi, sample_s)
    g = geo.margin(t, ch_pass[owner])
    above = g > 0.0
    same = owner[1:] == owner[:-1]
    k = np.flatnonzero(same & (above[1:] != above[:-1]))
    rising = above[k + 1]
    ch_k = ch_pass[owner[k]]
    roots = refine_crossings(geo.margin, t[k], t[k + 1], ch_k, rising, tol)
    out = []
    bounds = np.searchsorted(owner, np.arange(lo.size + 1))
    edge_bounds = np.searchsorted(owner[k], np.arange(lo.size + 1))
    for j, p in enumerate(candidates):
        sel = np.arange(bounds[j], bounds[j + 1])
        edges = [(roots[m], bool(rising[m])) for m in range(edge_bounds[j], edge_bounds[j + 1])]
        open_at = None
        if above[sel[0]]:
            open_at = (lo[j], p.starts_in_view)
        for when, up in edges:
            if up:
                open_at = (when, False)
            elif open_at is not None:
                out.append((int(ch_pass[j]), open_at[0], when, open_at[1], False))
                open_at = None
        if open_at is not None and above[sel[-1]]:
            out.append((int(ch_pass[j]), open_at[0], hi[j], open_at[1], p.ends_in_view))
    return out


def _passes_from(geo: _Geometry, rows, tol: float, sample_s: float) -> list[Pass]:
    """Pass records (maximum elevation refined, azimuths, UTC) of intervals (see above)."""
    if not rows:
        return []
    ch = np.array([r[0] for r in rows])
    lo = np.array([r[1] for r in rows])
    hi = np.array([r[2] for r in rows])
    t, owner = _grid(lo, hi, sample_s)
    el = geo.elevation(t, ch[owner])
    bounds = np.searchsorted(owner, np.arange(lo.size + 1))
    best = np.array(
        [t[a + np.argmax(el[a:b])] for a, b in zip(bounds[:-1], bounds[1:], strict=True)]
    )
    t_max, e_max = culminations(geo.elevation, lo, best, hi, ch, tol)
    return build_passes(
        geo.traj, [s.station.name for s in geo.sites], ch, lo, t_max, hi, e_max,
        lambda times, c: geo.el_az(times, c)[1],
        [r[3] for r in rows], [r[4] for r in rows],
    )  # fmt: skip


def _time_above(g: np.ndarray, dt: np.ndarray) -> float:
    """Time (s) where samples g (spacing dt) are >= 0, crossings by linear interpolation."""
    a, b = g[:-1], g[1:]
    both = (a >= 0.0) & (b >= 0.0)
    one = (a >= 0.0) != (b >= 0.0)
    pos = np.where(a >= 0.0, a, b)
    frac = np.where(one, pos / np.where(one, np.abs(a) + np.abs(b), 1.0), 0.0)
    return float(np.sum(dt * (both + frac)))


def _volumes(geo: _Geometry, ks: list[int], passes: list[Pass], sample_s: float) -> list[tuple[float, tuple[float, ...]]]:  # fmt: skip
    """Data volume (Mbit) and time above each step's elevation (s) of passes, all sampled at
    once (one frame rotation for every pass)."""
    out: list[tuple[float, tuple[float, ...]]] = [(0.0, ())] * len(passes)
    todo = [j for j, k in enumerate(ks) if geo.sites[k].downlink]
    if not todo:
        return out
    lo = np.array([passes[j].aos_s for j in todo])
    hi = np.array([passes[j].los_s for j in todo])
    ch_pass = np.array([ks[j] for j in todo])
    t, owner = _grid(lo, hi, sample_s)
    el, az = geo.el_az(t, ch_pass[owner])
    mask = geo.mask(az, ch_pass[owner])
    bounds = np.searchsorted(owner, np.arange(lo.size + 1))
    for m, j in enumerate(todo):
        a, b = bounds[m], bounds[m + 1]
        dt = np.diff(t[a:b])
        times, volume, previous = [], 0.0, 0.0
        for step in geo.sites[ks[j]].downlink:
            if step.min_elevation_deg is None:
                above = passes[j].duration_s
            else:
                g = el[a:b] - np.maximum(mask[a:b], step.min_elevation_deg)
                above = _time_above(g, dt)
            times.append(above)
            volume += (step.rate_mbps - previous) * above
            previous = step.rate_mbps
        out[j] = (volume, tuple(times))
    return out


def pass_data_volume_mbit(
    traj: Trajectory, site: Site, p: Pass, sample_s: float = 1.0
) -> tuple[float, tuple[float, ...]]:
    """Data volume (Mbit) of pass ``p`` over ``site`` and the time (s) above each downlink
    step's elevation (see the module docstring)."""
    return _volumes(_Geometry(traj, [site]), [0], [p], sample_s)[0]


def site_passes(
    traj: Trajectory,
    sites: Sequence[Site],
    duration_s: float,
    *,
    step_s: float | None = None,
    tolerance_s: float = 0.01,
    sample_s: float = 1.0,
) -> SitePassSearch:
    """Passes of ``traj`` over ``sites`` in [0, duration_s] s, above each site's terrain mask,
    at least its shortest useful pass long, with the data volume of each (see the module
    docstring). ``step_s`` and ``tolerance_s`` as for ``passes.station_passes``; ``sample_s``
    (s, in (0, 10]) the sampling within passes for the terrain mask and the data volume."""
    if not sites:
        raise InputError("stations", [], "needs at least one station")
    if not (math.isfinite(sample_s) and 0.0 < sample_s <= 10.0):
        raise InputError("sample_s", sample_s, "must be in (0, 10] s")
    stations = [s.station for s in sites]
    lowest = [replace(s.station, elevation_mask_deg=s.lowest_mask_deg) for s in sites]
    wide = station_passes(traj, lowest, duration_s, step_s=step_s, tolerance_s=tolerance_s)
    duration_s = wide.window_s
    geo = _Geometry(traj, sites)
    index = {s.station.name: k for k, s in enumerate(sites)}
    plain = [p for p in wide.passes if sites[index[p.station]].terrain is None]
    masked = [p for p in wide.passes if sites[index[p.station]].terrain is not None]
    rows = _under_terrain(geo, masked, index, tolerance_s, sample_s)
    found = plain + _passes_from(geo, rows, tolerance_s, sample_s)
    kept = [
        p for p in found
        if p.duration_s >= sites[index[p.station]].min_pass_duration_s
        or p.starts_in_view or p.ends_in_view
    ]  # fmt: skip
    kept.sort(key=lambda p: (p.aos_s, p.station))
    daily, gaps = _daily_statistics(traj, stations, kept, duration_s)
    volumes = [v for v, _ in _volumes(geo, [index[p.station] for p in kept], kept, sample_s)]
    notes = list(wide.notes)
    if any(s.terrain is not None for s in sites):
        notes.append(f"terrain masks linear in azimuth, sampled every {sample_s:g} s in passes")
    if any(s.downlink for s in sites):
        notes.append("data volume per UTC day counts each pass on its AOS day; the network "
                     "total adds the stations (overlapping contacts count at each)")  # fmt: skip
    search = replace(wide, passes=tuple(kept), stations=tuple(stations), daily=daily,
                     longest_gap_s=gaps, notes=tuple(notes))  # fmt: skip
    return SitePassSearch(
        search,
        tuple(volumes),
        _daily_volumes(
            kept,
            volumes,
            [d for d in daily if d.station in {x.station.name for x in sites if x.downlink}],
        ),
        len(found) - len(kept),
        float(sample_s),
        tuple(notes),
    )


def _daily_volumes(passes: list[Pass], volumes: list[float], days) -> tuple[DailyVolume, ...]:
    out = []
    by_day: dict[str, float] = {}
    count: dict[str, int] = {}
    for d in days:
        mine = [v for p, v in zip(passes, volumes, strict=True)
                if p.station == d.station and p.aos_utc[:10] == d.day_utc]  # fmt: skip
        out.append(DailyVolume(d.station, d.day_utc, len(mine), float(sum(mine))))
        by_day[d.day_utc] = by_day.get(d.day_utc, 0.0) + float(sum(mine))
        count[d.day_utc] = count.get(d.day_utc, 0) + len(mine)
    out += [DailyVolume(ANY_STATION, day, count[day], v) for day, v in by_day.items()]
    return tuple(out)
