"""Eclipses by the Earth: umbra and penumbra, per-orbit budgets, beta angle, node local times.

Conical model (default; Montenbruck & Gill, *Satellite Orbits*, 2000, Sec. 3.4.2): seen from
the satellite, the Sun's disc has angular radius a = asin(R_sun / |s - r|) and the Earth's
b = asin(R_E / |r|), their centres c apart. Sunlit when c >= a + b, umbra when c <= b - a,
penumbra in between; the visible fraction of the Sun is 1 - A / (pi a^2), A the area of overlap
of the two discs (M&G Eq. 3.87 ... 3.89). Cylindrical model (option; Vallado 4th ed., Sec. 5.3,
Algorithm 34): in shadow when behind the Earth (r . s_hat < 0) within R_E of the Sun line.

The Earth is a sphere of the WGS-84 equatorial radius (oblateness moves a shadow boundary by
up to about 20 km along the track for a polar orbit, a few seconds of time); the Sun is
geometric (sun.py), its radius the IAU 2015 nominal one. Atmospheric refraction and
absorption near the limb are ignored.

Boundaries are found like station passes (``events``): the depth inside each cone is sampled
at P / 360 (about 16 s in low orbit) and refined by root finding to ``tolerance_s``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .constants import EARTH, SUN, Body
from .errors import InputError
from .events import positive_intervals
from .frames import gcrf_to_itrf
from .propagation import Trajectory
from .sun import sun_position_from_tt_km
from .timescales import utc_iso

__all__ = [
    "SHADOW_MODELS",
    "Eclipse",
    "EclipseSearch",
    "OrbitEclipse",
    "beta_angle_deg",
    "find_eclipses",
    "node_local_times_h",
    "shadow_state",
    "sunlit_fraction",
    "whole_orbits",
]

SHADOW_MODELS = ("conical", "cylindrical")
SUNLIT, PENUMBRA, UMBRA = 0, 1, 2


def _cone_angles(r: np.ndarray, s: np.ndarray, body: Body):
    to_sun = s - r
    d_sun = np.linalg.norm(to_sun, axis=-1)
    d_r = np.linalg.norm(r, axis=-1)
    a = np.arcsin(np.minimum(1.0, SUN.radius_km / d_sun))
    b = np.arcsin(np.minimum(1.0, body.radius_km / d_r))
    cos_c = -np.sum(r * to_sun, axis=-1) / (d_r * d_sun)
    c = np.arccos(np.clip(cos_c, -1.0, 1.0))
    return a, b, c


def _cylinder_depth(r: np.ndarray, s: np.ndarray, body: Body) -> np.ndarray:
    """km inside the shadow cylinder (> 0 in shadow); continuous at the terminator plane."""
    s_hat = s / np.linalg.norm(s, axis=-1, keepdims=True)
    along = np.sum(r * s_hat, axis=-1)
    perp = np.linalg.norm(r - along[..., None] * s_hat, axis=-1)
    d_r = np.linalg.norm(r, axis=-1)
    return body.radius_km - np.where(along < 0.0, perp, d_r)


def sunlit_fraction(
    r_km: ArrayLike, r_sun_km: ArrayLike, model: str = "conical", body: Body = EARTH
) -> np.ndarray:
    """Fraction of the Sun's disc visible from GCRF positions r_km (..., 3), 0 to 1.

    r_sun_km: geocentric Sun (..., 3). Conical: the disc-overlap area (M&G Sec. 3.4.2);
    cylindrical: 0 or 1.
    """
    r, s = np.asarray(r_km, dtype=float), np.asarray(r_sun_km, dtype=float)
    if model == "cylindrical":
        return np.where(_cylinder_depth(r, s, body) > 0.0, 0.0, 1.0)
    _check_model(model)
    a, b, c = _cone_angles(r, s, body)
    with np.errstate(invalid="ignore", divide="ignore"):
        x = (c**2 + a**2 - b**2) / (2.0 * c)
        y = np.sqrt(np.maximum(a**2 - x**2, 0.0))
        area = (
            a**2 * np.arccos(np.clip(x / a, -1, 1))
            + b**2 * np.arccos(np.clip((c - x) / b, -1, 1))
            - c * y
        )
    lit = 1.0 - area / (math.pi * a**2)
    lit = np.where(c >= a + b, 1.0, lit)
    lit = np.where(c <= b - a, 0.0, lit)
    lit = np.where(c <= a - b, 1.0 - (b / a) ** 2, lit)  # annular: Earth smaller than the Sun
    return np.clip(lit, 0.0, 1.0)


def shadow_state(
    r_km: ArrayLike, r_sun_km: ArrayLike, model: str = "conical", body: Body = EARTH
) -> np.ndarray:
    """0 sunlit, 1 penumbra, 2 umbra for GCRF positions (cylindrical: 0 or 2)."""
    r, s = np.asarray(r_km, dtype=float), np.asarray(r_sun_km, dtype=float)
    if model == "cylindrical":
        return np.where(_cylinder_depth(r, s, body) > 0.0, UMBRA, SUNLIT)
    _check_model(model)
    a, b, c = _cone_angles(r, s, body)
    return np.where(c <= b - a, UMBRA, np.where(c < a + b, PENUMBRA, SUNLIT))


def _check_model(model: str) -> None:
    if model not in SHADOW_MODELS:
        raise InputError("shadow_model", model, f"must be one of {', '.join(SHADOW_MODELS)}")


def beta_angle_deg(r_km: ArrayLike, v_km_s: ArrayLike, r_sun_km: ArrayLike) -> np.ndarray:
    """Beta angle, deg: elevation of the Sun above the orbit plane, positive on the side of
    the angular momentum h = r x v (Vallado 4th ed., Sec. 5.3; common practice)."""
    h = np.cross(np.asarray(r_km, dtype=float), np.asarray(v_km_s, dtype=float))
    h_hat = h / np.linalg.norm(h, axis=-1, keepdims=True)
    s = np.asarray(r_sun_km, dtype=float)
    s_hat = s / np.linalg.norm(s, axis=-1, keepdims=True)
    return np.degrees(np.arcsin(np.clip(np.sum(h_hat * s_hat, axis=-1), -1.0, 1.0)))


def node_local_times_h(traj: Trajectory, offset_s: ArrayLike) -> dict[str, np.ndarray]:
    """Local times of the ascending and descending nodes, h in [0, 24), at the offsets.

    ``ltan_h`` / ``ltdn_h``: local *mean* solar time at the node's ITRF longitude,
    UT1 + longitude / (15 deg/h) (UT1 is mean solar time at Greenwich; common practice).
    ``ltan_true_h``: local *apparent* solar time, 12 h + (RA of node - RA of Sun) / (15 deg/h),
    both in GCRF (the two differ by the equation of time, within 17 min). The node is that of
    the osculating plane (the mean plane for ``j2-mean``) on the GCRF equator.
    """
    t = np.asarray(offset_s, dtype=float)
    r, v = traj.gcrf(t)
    h = np.cross(r, v)
    node = np.stack([-h[..., 1], h[..., 0], np.zeros_like(h[..., 0])], axis=-1)
    ts = traj.times(t)
    node_itrf = gcrf_to_itrf(node, ts, xp_arcsec=traj.eop.xp_arcsec, yp_arcsec=traj.eop.yp_arcsec)
    lon_deg = np.degrees(np.arctan2(node_itrf[..., 1], node_itrf[..., 0]))
    ut1_h = (((ts.ut11 - 0.5) % 1.0 + ts.ut12 % 1.0) % 1.0) * 24.0
    ltan = (ut1_h + lon_deg / 15.0) % 24.0
    s = sun_position_from_tt_km(ts.tt1, ts.tt2)
    ra_node = np.arctan2(node[..., 1], node[..., 0])
    ra_sun = np.arctan2(s[..., 1], s[..., 0])
    ltan_true = (12.0 + np.degrees(ra_node - ra_sun) / 15.0) % 24.0
    return {"ltan_h": ltan, "ltdn_h": (ltan + 12.0) % 24.0, "ltan_true_h": ltan_true}


@dataclass(frozen=True)
class Eclipse:
    """One passage through the shadow, s after the window start (and UTC).

    entry_s / exit_s: shadow of any depth (penumbra entry and exit; the cylinder for the
    cylindrical model). umbra_entry_s / umbra_exit_s: total shadow, None if only partial.
    starts_in_shadow / ends_in_shadow: cut at the window's edge.
    """

    entry_s: float
    exit_s: float
    umbra_entry_s: float | None
    umbra_exit_s: float | None
    entry_utc: str
    exit_utc: str
    starts_in_shadow: bool
    ends_in_shadow: bool

    @property
    def duration_s(self) -> float:
        return self.exit_s - self.entry_s

    @property
    def umbra_duration_s(self) -> float:
        if self.umbra_entry_s is None or self.umbra_exit_s is None:
            return 0.0
        return self.umbra_exit_s - self.umbra_entry_s


@dataclass(frozen=True)
class OrbitEclipse:
    """Shadow budget of one orbit [start_s, end_s) of the window (orbits counted from its start).

    shadow_s / umbra_s: time in shadow of any depth / in umbra; fraction = shadow_s over the
    orbit period; longest_s: the longest single eclipse that began in this orbit.
    """

    orbit: int
    start_s: float
    end_s: float
    shadow_s: float
    umbra_s: float
    fraction: float
    umbra_fraction: float
    longest_s: float
    beta_deg: float


@dataclass(frozen=True, eq=False)
class EclipseSearch:
    model: str
    eclipses: tuple[Eclipse, ...]
    per_orbit: tuple[OrbitEclipse, ...]
    window_s: float
    search_step_s: float
    tolerance_s: float
    utc_tai_extrapolated: bool
    notes: tuple[str, ...]


def whole_orbits(search: EclipseSearch, period_s: float) -> tuple[OrbitEclipse, ...]:
    """The orbits of ``search.per_orbit`` that lie whole inside the window.

    A window rarely holds a whole number of orbits: its last entry is then a partial orbit,
    whose fraction (shadow over its own span) says little of an orbit's shadow budget. Means
    and maxima "per orbit" are taken over these; an empty tuple when the window is shorter
    than one period. ``period_s``: the period the orbits were counted with (the trajectory's).
    """
    return tuple(o for o in search.per_orbit if o.end_s - o.start_s >= 0.999 * period_s)


def find_eclipses(
    traj: Trajectory,
    duration_s: float,
    *,
    model: str = "conical",
    tolerance_s: float = 0.01,
) -> EclipseSearch:
    """Eclipses of ``traj`` in [0, duration_s] s after its start, with per-orbit budgets."""
    _check_model(model)
    if not (math.isfinite(duration_s) and duration_s > 0.0):
        raise InputError("window.duration_s", duration_s, "must be a positive number of seconds")
    duration_s = min(duration_s, traj.end_s)
    n = max(3, math.ceil(duration_s / (traj.period_s / 360.0)) + 1)
    t = np.linspace(0.0, duration_s, n)
    body = traj.body

    def depth(times: np.ndarray, ch: np.ndarray) -> np.ndarray:
        r, _ = traj.gcrf(times)
        ts = traj.times(times)
        s = sun_position_from_tt_km(ts.tt1, ts.tt2)
        return _depths(r, s, body, model, ch)

    r_grid, v_grid = traj.gcrf(t)
    ts_grid = traj.times(t)
    s_grid = sun_position_from_tt_km(ts_grid.tt1, ts_grid.tt2)
    channels = (0, 1) if model == "conical" else (0,)
    values = np.stack([_depths(r_grid, s_grid, body, model, np.full(n, c)) for c in channels])
    iv = positive_intervals(depth, t, values, tolerance_s)
    shadow = iv.channel == 0
    starts, ends = iv.start_s[shadow], iv.end_s[shadow]
    u_starts, u_ends = iv.start_s[~shadow], iv.end_s[~shadow]
    utc1, utc2 = _utc(traj, np.concatenate([starts, ends]))
    stamps = utc_iso(utc1, utc2, decimals=1)
    eclipses = []
    for j in range(starts.size):  # one step per eclipse, not per epoch
        inside = (u_starts >= starts[j] - tolerance_s) & (u_ends <= ends[j] + tolerance_s)
        ue = float(u_starts[inside].min()) if np.any(inside) else None
        ux = float(u_ends[inside].max()) if np.any(inside) else None
        if model == "cylindrical":
            ue, ux = float(starts[j]), float(ends[j])
        eclipses.append(
            Eclipse(
                float(starts[j]),
                float(ends[j]),
                ue,
                ux,
                str(stamps[j]),
                str(stamps[starts.size + j]),
                bool(iv.start_clipped[shadow][j]),
                bool(iv.end_clipped[shadow][j]),
            )
        )
    beta = beta_angle_deg(r_grid, v_grid, s_grid)
    per_orbit = _per_orbit(eclipses, traj.period_s, duration_s, t, beta)
    notes = (
        f"{model} shadow of a spherical Earth (R = {body.radius_km} km); geometric Sun from "
        "ERFA epv00; no atmospheric refraction",
    )
    return EclipseSearch(
        model,
        tuple(eclipses),
        per_orbit,
        float(duration_s),
        float(t[1] - t[0]),
        float(tolerance_s),
        traj.start.utc_tai_extrapolated,
        notes,
    )


def _depths(r, s, body, model, ch) -> np.ndarray:
    """Channel 0: depth inside the shadow of any depth; channel 1: inside the umbra (rad, or
    km for the cylinder); positive inside."""
    if model == "cylindrical":
        return _cylinder_depth(r, s, body)
    a, b, c = _cone_angles(r, s, body)
    return np.where(np.asarray(ch) == 0, (a + b) - c, (b - a) - c)


def _utc(traj: Trajectory, offsets: np.ndarray):
    ts = traj.times(offsets)
    return ts.utc1, ts.utc2


def _per_orbit(eclipses, period_s, duration_s, t, beta) -> tuple[OrbitEclipse, ...]:
    out = []
    n_orbits = max(1, math.ceil(duration_s / period_s - 1e-9))
    for k in range(n_orbits):  # one step per orbit
        lo, hi = k * period_s, min((k + 1) * period_s, duration_s)
        shadow = sum(max(0.0, min(e.exit_s, hi) - max(e.entry_s, lo)) for e in eclipses)
        umbra = sum(
            max(0.0, min(e.umbra_exit_s, hi) - max(e.umbra_entry_s, lo))
            for e in eclipses
            if e.umbra_entry_s is not None
        )
        began = [e.duration_s for e in eclipses if lo <= e.entry_s < hi]
        in_orbit = (t >= lo) & (t <= hi)
        span = hi - lo
        out.append(
            OrbitEclipse(
                k,
                lo,
                hi,
                shadow,
                umbra,
                shadow / span,
                umbra / span,
                max(began, default=0.0),
                float(np.mean(beta[in_orbit])),
            )
        )
    return tuple(out)
