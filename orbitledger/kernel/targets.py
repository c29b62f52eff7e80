"""Ground-target access: when a sensor on the satellite can see a target, and how often.

A target is *accessible* while three conditions hold at once:

1. the sensor reaches it: the off-nadir angle eta (between the geocentric nadir -r and the line
   of sight from the satellite to the target) is at most the sensor's limit, or, for a sensor
   given by its swath width w, the Earth central angle lambda between the sub-satellite
   direction and the target is at most w / (2 R) (the swath edge on a spherical Earth of the
   body's equatorial radius R);
2. the satellite is above the target's horizon (geometric elevation above the WGS-84 tangent
   plane greater than zero, no refraction);
3. the Sun is at least ``min_sun_elevation_deg`` above the target's horizon (geocentric Sun
   direction: the parallax of the Earth's radius, 0.0025 deg, is neglected; no refraction).

The margin of each condition is an angle in degrees; an access is an interval where the
smallest margin is positive, found and refined like station passes (``events``). The best
moment of an access is the smallest off-nadir angle within it (the closest approach).

Spherical-Earth relations (Wertz et al., "Space Mission Engineering: The New SMAD" (2011),
the Earth geometry viewed from space): sin rho = R / r, sin eta = sin rho cos eps,
lambda = 90 deg - eta - eps, and tan eta = sin rho sin lambda / (1 - sin rho cos lambda).
They convert a swath width into an off-nadir angle for a stated altitude
(``swath_off_nadir_deg``); the search itself works with the vectors above.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from .errors import InputError
from .events import positive_intervals, refine_maxima
from .frames import gcrf_to_itrf, itrf_from_geodetic
from .propagation import Trajectory
from .sun import sun_position_from_tt_km
from .timescales import utc_iso
from .viewing import central_angle_deg, off_nadir_deg, swath_off_nadir_deg

__all__ = [
    "Access",
    "Sensor",
    "Target",
    "TargetAccessSearch",
    "central_angle_deg",
    "off_nadir_deg",
    "reach_central_angle_deg",
    "swath_off_nadir_deg",
    "target_access",
    "target_search_step_s",
]


@dataclass(frozen=True)
class Target:
    """A ground target: geodetic latitude/longitude (deg) and height (km) on WGS-84."""

    name: str
    lat_deg: float
    lon_deg: float
    height_km: float = 0.0

    def __post_init__(self) -> None:
        where = f"targets[{self.name!r}]"
        if not (math.isfinite(self.lat_deg) and -90.0 <= self.lat_deg <= 90.0):
            raise InputError(f"{where}.lat_deg", self.lat_deg, "must be in [-90, 90] deg")
        if not math.isfinite(self.lon_deg):
            raise InputError(f"{where}.lon_deg", self.lon_deg, "must be a finite longitude, deg")
        if not (math.isfinite(self.height_km) and -1.0 <= self.height_km <= 10.0):
            raise InputError(f"{where}.height_km", self.height_km, "must be in [-1, 10] km")


@dataclass(frozen=True)
class Sensor:
    """The sensor's reach: an off-nadir limit (deg) or a swath width (km), not both; and the
    lowest Sun elevation at the target (deg; None: no lighting condition)."""

    off_nadir_max_deg: float | None = None
    swath_km: float | None = None
    min_sun_elevation_deg: float | None = None

    def __post_init__(self) -> None:
        if (self.off_nadir_max_deg is None) == (self.swath_km is None):
            raise InputError("sensor", None, "give one of off_nadir_max_deg or swath_km")
        if self.off_nadir_max_deg is not None and not (0.0 < self.off_nadir_max_deg < 90.0):
            raise InputError(
                "sensor.off_nadir_max_deg", self.off_nadir_max_deg, "must be in (0, 90) deg"
            )
        if self.swath_km is not None and not (0.0 < self.swath_km <= 20_000.0):
            raise InputError("sensor.swath_km", self.swath_km, "must be in (0, 20000] km")
        sun = self.min_sun_elevation_deg
        if sun is not None and not (-90.0 <= sun <= 90.0):
            raise InputError("sensor.min_sun_elevation_deg", sun, "must be in [-90, 90] deg")


@dataclass(frozen=True)
class Access:
    """One access to a target; times in s after the window start and as UTC.

    best: the moment of the smallest off-nadir angle; ground_distance_km: the central angle
    to the target at that moment times R (the closest approach along the ground).
    """

    target: str
    start_s: float
    best_s: float
    end_s: float
    start_utc: str
    best_utc: str
    end_utc: str
    min_off_nadir_deg: float
    ground_distance_km: float
    elevation_deg: float
    sun_elevation_deg: float
    starts_open: bool = False
    ends_open: bool = False

    @property
    def duration_s(self) -> float:
        return self.end_s - self.start_s


@dataclass(frozen=True, eq=False)
class TargetAccessSearch:
    """Every access over the window, sorted by start, with revisit statistics per target.

    mean_gap_s: mean time between consecutive accesses (end to next start; NaN with fewer than
    two); max_gap_s: the longest time without access, the window's edges included.
    """

    accesses: tuple[Access, ...]
    targets: tuple[Target, ...]
    sensor: Sensor
    mean_gap_s: dict[str, float]
    max_gap_s: dict[str, float]
    window_s: float
    search_step_s: float
    tolerance_s: float
    utc_tai_extrapolated: bool
    notes: tuple[str, ...] = field(default_factory=tuple)


def target_search_step_s(period_s: float, sensor: Sensor, radius_km: float, a_km: float) -> float:
    """Sampling step, s: an overhead access spans at least six samples.

    An overhead access lasts about P * 2 lambda_max / 360 deg (the ground track crosses the
    reach circle through its centre); a sixth of that, and never more than P / 60.
    """
    lam = max(reach_central_angle_deg(sensor, radius_km, a_km), 0.05)
    return min(period_s / 60.0, period_s * 2.0 * lam / 360.0 / 6.0)


def reach_central_angle_deg(sensor: Sensor, radius_km: float, r_km: float) -> float:
    """Earth central angle (deg) of the edge of the sensor's reach from distance ``r_km``:
    w / (2 R) for a swath; for an off-nadir limit eta, lambda = 90 deg - eta - eps with
    cos eps = sin eta / sin rho, sin rho = R / r (the horizon, lambda_0 = acos(R / r), when
    eta reaches beyond it). Spherical Earth (The New SMAD, Earth geometry viewed from space)."""
    if sensor.swath_km is not None:
        return math.degrees(sensor.swath_km / (2.0 * radius_km))
    sin_rho = min(radius_km / r_km, 1.0)
    eta = min(math.radians(sensor.off_nadir_max_deg or 0.0), math.asin(sin_rho))
    cos_eps = min(math.sin(eta) / sin_rho, 1.0)
    return 90.0 - math.degrees(eta) - math.degrees(math.acos(cos_eps))


_COORDS = ("lat_deg", "lon_deg", "height_km")
MAX_ACCESS_SAMPLES = 2_000_000_000
"""Targets (or grid points) times time samples of one search: about two minutes of work here;
more is refused with both numbers."""
_CHUNK_ELEMENTS = 2_000_000


class _Geometry:
    """Satellite, Sun and target geometry for channels (one target each)."""

    def __init__(
        self, traj: Trajectory, lat_deg: np.ndarray, lon_deg: np.ndarray, h_km: np.ndarray,
        sensor: Sensor,
    ) -> None:  # fmt: skip
        self.traj, self.sensor = traj, sensor
        self.sites = np.asarray(itrf_from_geodetic(lat_deg, lon_deg, h_km)).reshape(-1, 3)
        phi, lam = np.radians(lat_deg), np.radians(lon_deg)
        # The geodetic vertical (Vallado 4th ed., Sec. 3.4, as in ``frames.TopocentricView``).
        up = [np.cos(phi) * np.cos(lam), np.cos(phi) * np.sin(lam), np.sin(phi)]
        self.up = np.stack(up, axis=-1).reshape(-1, 3)
        self.radius_km = traj.body.radius_km

    @classmethod
    def of_targets(cls, traj: Trajectory, targets: Sequence[Target], sensor: Sensor) -> _Geometry:
        lat, lon, h = (np.array([getattr(t, k) for t in targets]) for k in _COORDS)
        return cls(traj, lat, lon, h, sensor)

    def sample(self, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """ITRF satellite positions (km) and unit Sun directions at the offsets t."""
        r, _ = self.traj.itrf(t)
        ts = self.traj.times(t)
        # The pole offset (< 1 arcsec) is left out of the Sun's direction: far below 0.01 deg.
        sun = gcrf_to_itrf(sun_position_from_tt_km(ts.tt1, ts.tt2), ts)
        return r, sun / np.linalg.norm(sun, axis=-1, keepdims=True)

    def parts(self, r: np.ndarray, sun: np.ndarray, ch: np.ndarray) -> dict[str, np.ndarray]:
        site, up = self.sites[ch], self.up[ch]
        d = r - site
        el = np.degrees(np.arcsin(np.clip(np.sum(d * up, -1) / np.linalg.norm(d, axis=-1), -1, 1)))
        sun_el = np.degrees(np.arcsin(np.clip(np.sum(sun * up, -1), -1.0, 1.0)))
        return {
            "off_nadir": off_nadir_deg(r, site),
            "central": central_angle_deg(r, site),
            "el": el,
            "sun_el": sun_el,
        }

    def margin_of(self, p: dict[str, np.ndarray]) -> np.ndarray:
        s = self.sensor
        reach = (
            s.off_nadir_max_deg - p["off_nadir"]
            if s.off_nadir_max_deg is not None
            else math.degrees(s.swath_km / (2.0 * self.radius_km)) - p["central"]  # type: ignore[operator]
        )
        m = np.minimum(reach, p["el"])
        if s.min_sun_elevation_deg is not None:
            m = np.minimum(m, p["sun_el"] - s.min_sun_elevation_deg)
        return m

    def margin(self, t: np.ndarray, ch: np.ndarray) -> np.ndarray:
        r, sun = self.sample(t)
        return self.margin_of(self.parts(r, sun, ch))

    def closeness(self, t: np.ndarray, ch: np.ndarray) -> np.ndarray:
        r, sun = self.sample(t)
        return -self.parts(r, sun, ch)["off_nadir"]


def _check(duration_s: float, tolerance_s: float, targets: Sequence[Target]) -> None:
    if not (math.isfinite(duration_s) and duration_s > 0.0):
        raise InputError("window.duration_s", duration_s, "must be a positive number of seconds")
    if not (0.0 < tolerance_s <= 1.0):
        raise InputError("tolerance_s", tolerance_s, "must be in (0, 1] s")
    if not targets:
        raise InputError("targets", [], "needs at least one target")


def sampled_margins(
    geo: _Geometry,
    t: np.ndarray,
    channels: np.ndarray,
    samples: tuple[np.ndarray, np.ndarray] | None = None,
) -> np.ndarray:
    """Margins (channels, len(t)), deg: the satellite and the Sun sampled once (or given as
    ``samples`` from ``geo.sample(t)``), every channel at once through dot products."""
    r, sun = geo.sample(t) if samples is None else samples
    s = geo.sensor
    site, up = geo.sites[channels], geo.up[channels]
    r2 = np.sum(r * r, axis=-1)[None, :]
    r_site = site @ r.T  # (channels, samples)
    site2 = np.sum(site * site, axis=-1)[:, None]
    rn = np.sqrt(r2)
    d = np.sqrt(np.maximum(r2 - 2.0 * r_site + site2, 1e-12))
    # Sines and cosines instead of angles: the same signs, the same roots, no arc functions;
    # each margin divided by the derivative at its limit reads close to radians near zero.
    if s.off_nadir_max_deg is not None:
        limit = math.radians(s.off_nadir_max_deg)
        cos_angle = (r2 - r_site) / (rn * d)
    else:
        limit = s.swath_km / (2.0 * geo.radius_km)  # type: ignore[operator]
        cos_angle = r_site / (rn * np.sqrt(site2))
    m = (cos_angle - math.cos(limit)) / math.sin(limit)
    np.minimum(m, (up @ r.T - np.sum(site * up, -1)[:, None]) / d, out=m)
    if s.min_sun_elevation_deg is not None:
        low = math.radians(s.min_sun_elevation_deg)
        np.minimum(m, (up @ sun.T - math.sin(low)) / max(math.cos(low), 1e-3), out=m)
    return np.degrees(m, out=m)


def target_access(
    traj: Trajectory,
    targets: Sequence[Target],
    sensor: Sensor,
    duration_s: float,
    *,
    tolerance_s: float = 0.01,
) -> TargetAccessSearch:
    """Accesses of ``sensor`` on ``traj`` to ``targets`` in [0, duration_s] s after its start.

    Returns a ``TargetAccessSearch``; times refined to ``tolerance_s`` (s, at most 1). All
    targets are sampled together (step ``target_search_step_s``) and refined together.
    """
    _check(duration_s, tolerance_s, targets)
    duration_s = min(duration_s, traj.end_s)
    geo = _Geometry.of_targets(traj, targets, sensor)
    a_km = float(np.linalg.norm(traj.gcrf(0.0)[0]))
    step = target_search_step_s(traj.period_s, sensor, geo.radius_km, a_km)
    n = max(2, math.ceil(duration_s / step) + 1)
    if len(targets) * n > MAX_ACCESS_SAMPLES:
        raise InputError(
            "targets",
            f"{len(targets):,} targets x {duration_s / 86_400.0:g} days",
            f"needs {len(targets) * n:,} target-samples (step {step:.1f} s); at most "
            f"{MAX_ACCESS_SAMPLES:,}: use fewer targets or fewer days",
        )
    t = np.linspace(0.0, duration_s, n)
    samples = geo.sample(t)
    size = max(1, _CHUNK_ELEMENTS // n)  # targets per chunk: arrays of about 2e6 numbers
    parts = []
    for lo in range(0, len(targets), size):
        channels = np.arange(lo, min(lo + size, len(targets)))

        def margin(x: np.ndarray, ch: np.ndarray, _c: np.ndarray = channels) -> np.ndarray:
            return geo.margin(x, _c[ch])

        found = positive_intervals(
            margin, t, sampled_margins(geo, t, channels, samples), tolerance_s
        )
        parts.append((channels[found.channel], found))
    iv_channel = np.concatenate([c for c, _ in parts])
    left = np.concatenate([f.start_s for _, f in parts])
    right = np.concatenate([f.end_s for _, f in parts])
    start_clipped = np.concatenate([f.start_clipped for _, f in parts])
    end_clipped = np.concatenate([f.end_clipped for _, f in parts])
    mid = 0.5 * (left + right)
    best, _ = refine_maxima(geo.closeness, left, mid, right, iv_channel, tolerance_s)
    best = np.clip(best, left, right)
    r, sun = geo.sample(best)
    where = geo.parts(r, sun, iv_channel)
    stamps = utc_iso(*_utc(traj, np.concatenate([left, best, right])), decimals=1)
    m = left.size
    accesses = [
        Access(
            target=targets[int(iv_channel[j])].name,
            start_s=float(left[j]),
            best_s=float(best[j]),
            end_s=float(right[j]),
            start_utc=str(stamps[j]),
            best_utc=str(stamps[m + j]),
            end_utc=str(stamps[2 * m + j]),
            min_off_nadir_deg=float(where["off_nadir"][j]),
            ground_distance_km=float(math.radians(where["central"][j]) * geo.radius_km),
            elevation_deg=float(where["el"][j]),
            sun_elevation_deg=float(where["sun_el"][j]),
            starts_open=bool(start_clipped[j]),
            ends_open=bool(end_clipped[j]),
        )
        for j in range(m)
    ]
    accesses.sort(key=lambda a: (a.start_s, a.target))
    mean_gap, max_gap = revisit_gaps(targets, accesses, duration_s)
    return TargetAccessSearch(
        accesses=tuple(accesses),
        targets=tuple(targets),
        sensor=sensor,
        mean_gap_s=mean_gap,
        max_gap_s=max_gap,
        window_s=float(duration_s),
        search_step_s=float(t[1] - t[0]),
        tolerance_s=float(tolerance_s),
        utc_tai_extrapolated=traj.start.utc_tai_extrapolated,
        notes=(
            "geometric line of sight, no refraction; off-nadir from the geocentric nadir; "
            "WGS-84 target coordinates; swath edge on a sphere of the equatorial radius",
        ),
    )


def revisit_gaps(
    targets: Sequence[Target], accesses: Sequence[Access], duration_s: float
) -> tuple[dict[str, float], dict[str, float]]:
    """Per target: mean gap between consecutive accesses (NaN with fewer than two) and the
    longest time without access in [0, duration_s] (the edges included), s."""
    mean_gap, max_gap = {}, {}
    for target in targets:
        own = sorted((a.start_s, a.end_s) for a in accesses if a.target == target.name)
        inner = [b[0] - a[1] for a, b in zip(own, own[1:], strict=False)]
        edges = [own[0][0], duration_s - own[-1][1]] if own else [duration_s]
        mean_gap[target.name] = float(np.mean(inner)) if inner else math.nan
        max_gap[target.name] = float(max(inner + edges))
    return mean_gap, max_gap


def _utc(traj: Trajectory, offsets: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    ts = traj.times(offsets)
    return ts.utc1, ts.utc2
