"""Coverage of a region: which points of a latitude/longitude grid a sensor reaches, and when.

The region is a box [lat_min, lat_max] x [lon_min, lon_max] (deg) sampled every ``step_deg``
in both directions (edges included). Each grid point is a target (``targets``: the sensor's
reach, the satellite above the horizon, the Sun high enough) and its first access within the
window is found on the same sampling as for targets (an overhead access spans at least six
samples); accesses shorter than a step are caught by the peak check of ``events`` and refined
by bounded maximisation. A point counts as covered from the first sample inside an access (or
the refined peak of a short one): the first access time is good to one sampling step (about
14 s for a 30 deg off-nadir limit at 500 km), which is what a fraction covered per day needs.

Work is the number of grid points times the number of time samples: it is estimated first
(``coverage_work``) and a run over ``MAX_COVERAGE_SAMPLES`` is refused with both numbers, so a
fine grid over a long window fails at once instead of exhausting memory or time. Points are
processed in chunks that keep each array under about ``_CHUNK_ELEMENTS`` numbers.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .errors import InputError
from .events import _peak_candidates, refine_maxima
from .propagation import Trajectory
from .targets import (
    _CHUNK_ELEMENTS,
    MAX_ACCESS_SAMPLES,
    Sensor,
    _Geometry,
    reach_central_angle_deg,
    sampled_margins,
    target_search_step_s,
)

__all__ = [
    "MAX_COVERAGE_POINTS",
    "MAX_COVERAGE_SAMPLES",
    "Coverage",
    "coverage_grid",
    "coverage_work",
    "region_coverage",
]

MAX_COVERAGE_POINTS = 100_000
"""Grid points of one region (a 1 deg grid of the whole Earth has 65 341)."""
MAX_COVERAGE_SAMPLES = MAX_ACCESS_SAMPLES
"""Grid points times time samples: about 2 minutes of work here; more is refused."""


@dataclass(frozen=True, eq=False)
class Coverage:
    """Coverage of a grid: points, their first access (s after the window start, NaN if never)
    and the number of accesses; ``fraction_by_day`` is the fraction covered within 1, 2, ...
    days (the last entry: within the whole window)."""

    lat_deg: np.ndarray
    lon_deg: np.ndarray
    first_access_s: np.ndarray
    access_count: np.ndarray
    window_s: float
    step_deg: float
    search_step_s: float
    fraction_by_day: tuple[float, ...]

    @property
    def fraction_covered(self) -> float:
        return float(np.mean(np.isfinite(self.first_access_s)))


def coverage_grid(
    lat_min_deg: float, lat_max_deg: float, lon_min_deg: float, lon_max_deg: float, step_deg: float
) -> tuple[np.ndarray, np.ndarray]:
    """Latitudes and longitudes (deg, flat arrays; longitudes in [-180, 180)) of the grid
    points of the box, edges included. The box runs east from lon_min_deg to lon_max_deg
    (past 180 deg for a box across the antimeridian, e.g. 170 to 190); a span of 360 deg is
    the whole circle, its east edge the west edge again (counted once)."""
    if not (math.isfinite(step_deg) and 0.0 < step_deg <= 90.0):
        raise InputError("coverage.step_deg", step_deg, "must be in (0, 90] deg")
    if not (-90.0 <= lat_min_deg <= lat_max_deg <= 90.0):
        raise InputError(
            "coverage.lat_max_deg", lat_max_deg, f"must be in [lat_min_deg ({lat_min_deg:g}), 90]"
        )
    span = lon_max_deg - lon_min_deg
    if not (0.0 <= span <= 360.0):
        raise InputError(
            "coverage.lon_max_deg", lon_max_deg, "must be from lon_min_deg to 360 deg east of it"
        )
    n_lat = int(math.floor((lat_max_deg - lat_min_deg) / step_deg + 1e-9)) + 1
    n_lon = int(math.floor(span / step_deg + 1e-9)) + 1
    if span == 360.0 and abs((n_lon - 1) * step_deg - 360.0) < 1e-9:
        n_lon -= 1
    if n_lat * n_lon > MAX_COVERAGE_POINTS:
        raise InputError(
            "coverage.step_deg",
            step_deg,
            f"gives {n_lat * n_lon:,} grid points; at most {MAX_COVERAGE_POINTS:,}: "
            "use a coarser step or a smaller region",
        )
    lat = lat_min_deg + step_deg * np.arange(n_lat)
    lon = lon_min_deg + step_deg * np.arange(n_lon)
    lon = (lon + 180.0) % 360.0 - 180.0
    grid_lat, grid_lon = np.meshgrid(lat, lon, indexing="ij")
    return grid_lat.ravel(), grid_lon.ravel()


def _near_runs(geo: _Geometry, r: np.ndarray, sensor: Sensor, n_points: int) -> list[np.ndarray]:
    """Runs of consecutive sample indices where the satellite is within reach of some grid
    point (sub-satellite central angle below the reach at the highest altitude plus 3 deg),
    widened by two samples each side; elsewhere every margin is negative and is not computed."""
    r_max = float(np.max(np.linalg.norm(r, axis=-1)))
    reach = reach_central_angle_deg(sensor, geo.radius_km, r_max) + 3.0
    r_hat = r / np.linalg.norm(r, axis=-1, keepdims=True)
    s_hat = geo.sites / np.linalg.norm(geo.sites, axis=-1, keepdims=True)
    best = np.full(r.shape[0], -1.0)
    step = max(1, _CHUNK_ELEMENTS // max(r.shape[0], 1))
    for lo in range(0, n_points, step):
        np.maximum(best, np.max(s_hat[lo : lo + step] @ r_hat.T, axis=0), out=best)
    near = best > math.cos(math.radians(min(reach, 180.0)))
    for _ in range(2):
        near[1:] |= near[:-1].copy()
        near[:-1] |= near[1:].copy()
    edges = np.flatnonzero(np.diff(np.concatenate([[0], near.astype(np.int8), [0]])))
    return [np.arange(a, b) for a, b in zip(edges[::2], edges[1::2], strict=True)]


def coverage_work(n_points: int, duration_s: float, step_s: float) -> int:
    """Grid points times time samples of a coverage run."""
    return int(n_points) * (math.ceil(duration_s / step_s) + 1)


def region_coverage(
    traj: Trajectory,
    lat_deg: np.ndarray,
    lon_deg: np.ndarray,
    sensor: Sensor,
    duration_s: float,
    *,
    step_deg: float = math.nan,
    tolerance_s: float = 1.0,
) -> Coverage:
    """First access and number of accesses of every grid point in [0, duration_s] s.

    Given the trajectory, grid points (deg, flat arrays, e.g. from ``coverage_grid``), the
    sensor, the window length (s) and the root tolerance (s). Refuses a run whose work
    (``coverage_work``) exceeds ``MAX_COVERAGE_SAMPLES``, naming both numbers.
    """
    if not (math.isfinite(duration_s) and duration_s > 0.0):
        raise InputError("duration_s", duration_s, "must be a positive number of seconds")
    duration_s = min(duration_s, traj.end_s)
    lat, lon = np.asarray(lat_deg, dtype=float).ravel(), np.asarray(lon_deg, dtype=float).ravel()
    a_km = float(np.linalg.norm(traj.gcrf(0.0)[0]))
    step = target_search_step_s(traj.period_s, sensor, traj.body.radius_km, a_km)
    work = coverage_work(lat.size, duration_s, step)
    if work > MAX_COVERAGE_SAMPLES:
        raise InputError(
            "coverage",
            f"{lat.size:,} points x {duration_s / 86400.0:g} days",
            f"needs {work:,} point-samples (step {step:.1f} s); at most "
            f"{MAX_COVERAGE_SAMPLES:,}: use a coarser grid, a smaller region or fewer days",
        )
    geo = _Geometry(traj, lat, lon, np.zeros_like(lat), sensor)
    n = max(2, math.ceil(duration_s / step) + 1)
    t = np.linspace(0.0, duration_s, n)
    first = np.full(lat.size, math.nan)
    count = np.zeros(lat.size, dtype=int)
    samples = geo.sample(t)
    peaks: list[tuple[np.ndarray, np.ndarray]] = []
    for run in _near_runs(geo, samples[0], sensor, lat.size):
        r_run, sun_run, t_run = samples[0][run], samples[1][run], t[run]
        size = max(1, _CHUNK_ELEMENTS // run.size)
        for lo in range(0, lat.size, size):
            channels = np.arange(lo, min(lo + size, lat.size))
            values = sampled_margins(geo, t_run, channels, (r_run, sun_run))
            above = values > 0.0
            count[channels] += np.count_nonzero(above[:, 1:] & ~above[:, :-1], axis=1)
            count[channels] += above[:, 0]
            seen = above.any(axis=1) & ~np.isfinite(first[channels])
            first[channels[seen]] = t_run[np.argmax(above[seen], axis=1)]
            p_ch, p_k = _peak_candidates(values)
            peaks.append((channels[p_ch], run[p_k]))
    # Accesses shorter than the sampling: refine the sampled peaks near zero, all at once.
    p_ch = np.concatenate([p for p, _ in peaks])
    p_k = np.concatenate([k for _, k in peaks])
    if p_k.size:
        p_k = np.clip(p_k, 1, n - 2)
        t_max, f_max = refine_maxima(geo.margin, t[p_k - 1], t[p_k], t[p_k + 1], p_ch, tolerance_s)
        hit = f_max > 0.0
        np.add.at(count, p_ch[hit], 1)
        found = np.full(lat.size, math.inf)
        np.minimum.at(found, p_ch[hit], t_max[hit])
        first = np.fmin(first, np.where(np.isfinite(found), found, math.nan))
    days = max(1, math.ceil(duration_s / 86_400.0 - 1e-9))
    limits = [min(86_400.0 * d, duration_s) for d in range(1, days + 1)]
    by_day = tuple(float(np.mean(np.nan_to_num(first, nan=math.inf) <= x)) for x in limits)
    return Coverage(lat, lon, first, count, float(duration_s), float(step_deg), float(t[1]), by_day)
