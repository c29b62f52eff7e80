"""Station passes: AOS, maximum elevation, LOS and azimuths, refined by root finding.

A *pass* is one interval during which the satellite's geometric elevation (no refraction)
above the station's WGS-84 tangent plane exceeds the station's elevation mask. AOS and LOS are
the roots of elevation - mask, the maximum elevation the maximum of elevation within the pass;
each is refined to ``tolerance_s`` (default 0.01 s, well inside the required 1 s) by
vectorised root finding and bounded minimisation (see ``events``). A pass already in progress
at the window's start, or still in progress at its end, is cut at the window edge and flagged.

Search step. Elevation is sampled for all stations at once on a grid of step
min(window step, P / 60), P the orbit period. An overhead pass at the horizon lasts
P * 2 lambda_0 / 360 deg, lambda_0 = acos(R / r) the Earth central angle of the horizon
(Wertz & Larson, SMAD 3rd ed., Sec. 5.1, Eq. 5-17 with zero elevation), about P / 8 at
500 km: P / 60 puts at least seven samples in it. Shorter, grazing passes that fall between
two samples are caught by the peak check of ``events`` and refined like the others. A step
coarser than P / 60 is refused politely: a ``PassSearchStepWarning`` says so and the search
uses P / 60.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from .errors import InputError
from .events import positive_intervals, refine_maxima
from .frames import TopocentricView
from .propagation import Trajectory
from .timescales import time_scales, utc_iso

__all__ = [
    "Pass",
    "PassSearch",
    "PassSearchStepWarning",
    "Station",
    "pass_search_step_s",
    "station_passes",
]


class PassSearchStepWarning(UserWarning):
    """The requested step could miss passes; a finer one was used."""


@dataclass(frozen=True)
class Station:
    """A ground station: geodetic latitude/longitude (deg), height (km), elevation mask (deg)."""

    name: str
    lat_deg: float
    lon_deg: float
    height_km: float = 0.0
    elevation_mask_deg: float = 5.0

    def __post_init__(self) -> None:
        where = f"stations[{self.name!r}]"
        if not (math.isfinite(self.lat_deg) and -90.0 <= self.lat_deg <= 90.0):
            raise InputError(f"{where}.lat_deg", self.lat_deg, "must be in [-90, 90] deg")
        if not math.isfinite(self.lon_deg):
            raise InputError(f"{where}.lon_deg", self.lon_deg, "must be a finite longitude, deg")
        if not (math.isfinite(self.elevation_mask_deg) and -5.0 <= self.elevation_mask_deg <= 90.0):
            raise InputError(
                f"{where}.elevation_mask_deg", self.elevation_mask_deg, "must be in [-5, 90] deg"
            )
        if not (math.isfinite(self.height_km) and -1.0 <= self.height_km <= 10.0):
            raise InputError(f"{where}.height_km", self.height_km, "must be in [-1, 10] km")


@dataclass(frozen=True)
class Pass:
    """One pass of the satellite over a station; times in s after the window start and UTC."""

    station: str
    aos_s: float
    tmax_s: float
    los_s: float
    max_elevation_deg: float
    aos_azimuth_deg: float
    los_azimuth_deg: float
    aos_utc: str
    tmax_utc: str
    los_utc: str
    starts_in_view: bool = False
    ends_in_view: bool = False

    @property
    def duration_s(self) -> float:
        return self.los_s - self.aos_s


@dataclass(frozen=True)
class DailyContact:
    """Contact statistics of one station (or ``"any station"``) on one UTC day of the window.

    For ``"any station"``, ``passes`` adds every station's passes (a pass seen by two stations
    at once counts twice) while ``contact_min`` is the time in contact with at least one
    station (overlapping passes counted once), and ``longest_gap_min`` the longest time with
    none.
    """

    station: str
    day_utc: str
    passes: int
    contact_min: float
    longest_gap_min: float


@dataclass(frozen=True, eq=False)
class PassSearch:
    """All passes over the window, sorted by AOS, with daily statistics.

    longest_gap_s: per station (and ``"any station"``), the longest interval of the window
    without contact. short_passes_found: passes shorter than the sampling that the peak check
    found. utc_tai_extrapolated: see ``timescales``.
    """

    passes: tuple[Pass, ...]
    stations: tuple[Station, ...]
    daily: tuple[DailyContact, ...]
    longest_gap_s: Mapping[str, float]
    window_s: float
    search_step_s: float
    tolerance_s: float
    short_passes_found: int
    utc_tai_extrapolated: bool
    notes: tuple[str, ...] = field(default_factory=tuple)


ANY_STATION = "any station"


def pass_search_step_s(period_s: float) -> float:
    """Largest sampling step of the pass search, s: P / 60 (see the module docstring)."""
    return period_s / 60.0


def _views(stations: Sequence[Station]):
    views = [TopocentricView(s.lat_deg, s.lon_deg, s.height_km) for s in stations]
    sites = np.array([v.site_itrf_km for v in views])
    enu = np.array([v.enu for v in views])
    masks = np.array([s.elevation_mask_deg for s in stations])
    return sites, enu, masks


def _elevation_deg(r_itrf: np.ndarray, site: np.ndarray, enu: np.ndarray) -> np.ndarray:
    d = r_itrf - site
    east, north, up = (np.sum(d * enu[..., k, :], axis=-1) for k in range(3))
    return np.degrees(np.arctan2(up, np.hypot(east, north)))


def _azimuth_deg(r_itrf: np.ndarray, site: np.ndarray, enu: np.ndarray) -> np.ndarray:
    d = r_itrf - site
    east, north = (np.sum(d * enu[..., k, :], axis=-1) for k in range(2))
    return np.degrees(np.arctan2(east, north)) % 360.0


def station_passes(
    traj: Trajectory,
    stations: Sequence[Station],
    duration_s: float,
    *,
    step_s: float | None = None,
    tolerance_s: float = 0.01,
) -> PassSearch:
    """Passes of ``traj`` over ``stations`` in [0, duration_s] s after the trajectory's start.

    Given the trajectory (its ``period_s`` sets the largest search step), stations, the window
    length, an optional requested sampling step (s) and the refinement tolerance (s, at most
    1). Returns a ``PassSearch``. All stations are sampled and refined together.
    """
    if not (math.isfinite(duration_s) and duration_s > 0.0):
        raise InputError("window.duration_s", duration_s, "must be a positive number of seconds")
    if not (0.0 < tolerance_s <= 1.0):
        raise InputError("tolerance_s", tolerance_s, "must be in (0, 1] s")
    if step_s is not None and not (math.isfinite(step_s) and step_s > 0.0):
        raise InputError("window.step_s", step_s, "must be a positive number of seconds")
    if not stations:
        raise InputError("stations", [], "needs at least one station")
    duration_s = min(duration_s, traj.end_s)
    step_max = pass_search_step_s(traj.period_s)
    step = step_max if step_s is None else step_s
    if step > step_max:
        warnings.warn(
            f"window.step_s = {step:g} s is too coarse to resolve passes (orbit period "
            f"{traj.period_s:.0f} s): searching at {step_max:.1f} s and refining by root finding",
            PassSearchStepWarning,
            stacklevel=2,
        )
        step = step_max
    n = max(2, math.ceil(duration_s / step) + 1)
    t = np.linspace(0.0, duration_s, n)
    sites, enu, masks = _views(stations)
    r_grid, _ = traj.itrf(t)
    values = np.stack(
        [_elevation_deg(r_grid, sites[k], enu[k]) - masks[k] for k in range(len(stations))]
    )

    def margin(times: np.ndarray, ch: np.ndarray) -> np.ndarray:
        r, _ = traj.itrf(times)
        return _elevation_deg(r, sites[ch], enu[ch]) - masks[ch]

    iv = positive_intervals(margin, t, values, tolerance_s)
    # Maximum elevation: bracket (AOS, best interior sample or midpoint, LOS).
    mid = 0.5 * (iv.start_s + iv.end_s)
    for j in range(iv.start_s.size):  # one step per pass, not per epoch
        k0, k1 = np.searchsorted(t, [iv.start_s[j], iv.end_s[j]])
        inner = values[iv.channel[j], k0:k1]
        if inner.size:
            mid[j] = t[k0 + int(np.argmax(inner))]
    left, right = iv.start_s, iv.end_s
    t_max, e_max = culminations(margin, left, mid, right, iv.channel, tolerance_s)

    def azimuth(times: np.ndarray, ch: np.ndarray) -> np.ndarray:
        r, _ = traj.itrf(times)
        return _azimuth_deg(r, sites[ch], enu[ch])

    passes = build_passes(
        traj, [s.name for s in stations], iv.channel, left, t_max, right,
        e_max + masks[iv.channel], azimuth, iv.start_clipped, iv.end_clipped,
    )  # fmt: skip
    passes.sort(key=lambda p: (p.aos_s, p.station))
    daily, gaps = _daily_statistics(traj, stations, passes, duration_s)
    return PassSearch(
        passes=tuple(passes),
        stations=tuple(stations),
        daily=daily,
        longest_gap_s=gaps,
        window_s=float(duration_s),
        search_step_s=float(t[1] - t[0]),
        tolerance_s=float(tolerance_s),
        short_passes_found=int(np.sum(iv.from_peak)),
        utc_tai_extrapolated=traj.start.utc_tai_extrapolated,
        notes=("geometric elevation, no refraction; WGS-84 station coordinates",),
    )


def culminations(
    f, rise_s: np.ndarray, mid_s: np.ndarray, set_s: np.ndarray, ch: np.ndarray, tol: float
) -> tuple[np.ndarray, np.ndarray]:
    """Time (s) and value of the maximum of ``f(t, ch)`` in each pass [rise_s, set_s]: refined
    by bounded minimisation (``events.refine_maxima``) from ``mid_s`` where (rise, mid, set) is
    a bracket (mid inside, f(mid) at least f at both ends and above one: scipy's
    ``find_minimum`` needs one strict), else the higher end (a pass cut at the window edge)."""
    f_rise, f_mid, f_set = (f(x, ch) for x in (rise_s, mid_s, set_s))
    inner = (rise_s < mid_s) & (mid_s < set_s) & (f_mid >= f_rise) & (f_mid >= f_set)
    inner &= (f_mid > f_rise) | (f_mid > f_set)
    t_max = np.where(f_rise >= f_set, rise_s, set_s)
    e_max = np.maximum(f_rise, f_set)
    tm, em = refine_maxima(f, rise_s[inner], mid_s[inner], set_s[inner], ch[inner], tol)
    t_max[inner], e_max[inner] = tm, em
    return t_max, e_max


def build_passes(
    traj: Trajectory,
    names: Sequence[str],
    ch: np.ndarray,
    aos_s: np.ndarray,
    tmax_s: np.ndarray,
    los_s: np.ndarray,
    max_elevation_deg: np.ndarray,
    azimuth_deg,
    starts_in_view: Sequence[bool],
    ends_in_view: Sequence[bool],
) -> list[Pass]:
    """``Pass`` records from each pass's rise (AOS), culmination and set (LOS), in s after the
    trajectory's start, seen from station ``names[ch[j]]``: the azimuths at AOS and LOS from
    ``azimuth_deg(times, ch)`` (one call for every edge), UTC stamps to 0.1 s (one call)."""
    m = len(aos_s)
    az = azimuth_deg(np.concatenate([aos_s, los_s]), np.concatenate([ch, ch]))
    utc1, utc2 = _utc(traj, np.concatenate([aos_s, tmax_s, los_s]))
    stamps = utc_iso(utc1, utc2, decimals=1)
    return [
        Pass(
            station=names[int(ch[j])],
            aos_s=float(aos_s[j]),
            tmax_s=float(tmax_s[j]),
            los_s=float(los_s[j]),
            max_elevation_deg=float(max_elevation_deg[j]),
            aos_azimuth_deg=float(az[j]),
            los_azimuth_deg=float(az[m + j]),
            aos_utc=str(stamps[j]),
            tmax_utc=str(stamps[m + j]),
            los_utc=str(stamps[2 * m + j]),
            starts_in_view=bool(starts_in_view[j]),
            ends_in_view=bool(ends_in_view[j]),
        )
        for j in range(m)
    ]


def _utc(traj: Trajectory, offsets: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    ts = traj.times(offsets)
    return ts.utc1, ts.utc2


def _merged(intervals: list[tuple[float, float]]) -> list[tuple[float, float]]:
    out: list[tuple[float, float]] = []
    for a, b in sorted(intervals):
        if out and a <= out[-1][1]:
            out[-1] = (out[-1][0], max(out[-1][1], b))
        else:
            out.append((a, b))
    return out


def _gaps(contacts: list[tuple[float, float]], lo: float, hi: float) -> list[tuple[float, float]]:
    gaps, cursor = [], lo
    for a, b in contacts:
        if a > cursor:
            gaps.append((cursor, min(a, hi)))
        cursor = max(cursor, b)
    if cursor < hi:
        gaps.append((cursor, hi))
    return [(a, b) for a, b in gaps if b > a]


def _overlap(intervals: list[tuple[float, float]], lo: float, hi: float) -> list[float]:
    return [min(b, hi) - max(a, lo) for a, b in intervals if min(b, hi) > max(a, lo)]


def _daily_statistics(traj, stations, passes, duration_s):
    """Per UTC day of the window: passes (counted on their AOS day), contact minutes and the
    longest gap without contact, for each station and for the network."""
    first = str(utc_iso(traj.start.utc1, traj.start.utc2, 0))[:10]
    last = str(utc_iso(*_utc(traj, np.array(duration_s)), 0))[:10]
    days = np.arange(np.datetime64(first), np.datetime64(last) + 1).astype(str)
    bounds = traj.times(0.0)  # day boundaries as offsets from the start (SI seconds, via TAI)
    edges = time_scales([f"{d}T00:00:00Z" for d in days] + [_next_day(days[-1])])
    edge_s = np.clip(edges.seconds_since(bounds), 0.0, duration_s)
    per_station = {
        s.name: _merged([(p.aos_s, p.los_s) for p in passes if p.station == s.name])
        for s in stations
    }
    per_station[ANY_STATION] = _merged([iv for ivs in per_station.values() for iv in ivs])
    daily, longest = [], {}
    for name, contacts in per_station.items():
        all_gaps = _gaps(contacts, 0.0, duration_s)
        longest[name] = max((b - a for a, b in all_gaps), default=0.0)
        aos = [p.aos_s for p in passes if name in (p.station, ANY_STATION) or name == ANY_STATION]
        for d, lo, hi in zip(days, edge_s[:-1], edge_s[1:], strict=True):
            if hi <= lo:
                continue
            count = sum(1 for a in aos if lo <= a < hi)
            contact = sum(_overlap(contacts, lo, hi))
            gap = max(_overlap(all_gaps, lo, hi), default=0.0)
            daily.append(DailyContact(name, str(d), count, contact / 60.0, gap / 60.0))
    return tuple(daily), longest


def _next_day(day: str) -> str:
    return f"{np.datetime64(day) + 1}T00:00:00Z"
