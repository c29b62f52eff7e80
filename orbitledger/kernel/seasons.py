"""The mission-long environment: beta angle, eclipse seasons and the node's local time over
years, from J2 mean elements and the Sun's position.

Model. The orbit is the J2 mean-element ellipse of ``j2.propagate_j2_mean``: a, e and i fixed,
RAAN, argument of perigee and mean anomaly at their secular J2 rates (Vallado 4th ed.,
Eq. 9-41). The Sun is ERFA's (``sun.py``), so its apparent motion (about 0.9856 deg/day, the
equation of centre and the obliquity) comes with it. Left out: the decay of a under drag, the
lunisolar drift of the inclination (about 0.03 deg/yr for a sun-synchronous orbit, which moves
its LTAN by tens of minutes over years), tesseral resonances. Good for power and thermal
seasons, not for a day-precise eclipse prediction years ahead.

Per day (every ``step_days``). The day's ellipse (its RAAN and argument of perigee at the
day's sample time, held over the orbit) is sampled at ``samples_per_orbit`` equal steps of
mean anomaly, each 1 / samples_per_orbit of the nodal period (one revolution relative to the
plane, where the shadow sits), with the Sun held at its position at that time (it moves
0.07 deg in a low orbit's period). The depth inside the shadow (``eclipses``: conical
penumbra boundary, or the cylinder) is interpolated linearly between samples to place the
shadow's entry and exit; the orbit's shadow time and its longest continuous shadow follow. The
beta angle is the Sun's elevation above the mean orbit plane; the local mean solar time of the
ascending node is UT1 + (node's ITRF longitude) / 15 deg/h, as ``eclipses.node_local_times_h``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from .anomalies import mean_to_true_anomaly, true_to_mean_anomaly
from .constants import EARTH, Body
from .earth_orientation import time_scales_with_table
from .eclipses import _check_model, _depths
from .elements import Elements
from .errors import InputError
from .frames import gcrf_to_itrf
from .j2 import j2_secular_rates_rad_s
from .propagation import EarthOrientation
from .sun import sun_position_from_tt_km
from .timescales import EpochLike, TimeScales, time_scales, utc_iso

__all__ = ["SeasonSeries", "eclipse_seasons", "mission_seasons"]

_DAY_S = 86_400.0
_CHUNK_SAMPLES = 1_300_000  # samples (days x samples per orbit) computed at once


@dataclass(frozen=True, eq=False)
class SeasonSeries:
    """Day-by-day beta angle, shadow and node local time over a mission.

    offset_s: the days' sample times, s after ``start``; day_utc: their UTC dates; beta_deg;
    shadow_fraction: fraction of the orbit in shadow (penumbra or umbra; the cylinder for the
    cylindrical model); max_shadow_s: the longest continuous shadow of that orbit, s;
    raan_deg: mean RAAN (GCRF); ltan_h, ltdn_h: local mean solar time of the nodes, h;
    ltan_true_h: local apparent solar time of the ascending node, h; period_s: the orbit's
    nodal period (the sampled revolution); model: the shadow model; notes: model statements.
    """

    start: TimeScales
    offset_s: np.ndarray
    day_utc: tuple[str, ...]
    beta_deg: np.ndarray
    shadow_fraction: np.ndarray
    max_shadow_s: np.ndarray
    raan_deg: np.ndarray
    ltan_h: np.ndarray
    ltdn_h: np.ndarray
    ltan_true_h: np.ndarray
    period_s: float
    model: str
    notes: tuple[str, ...]
    beta_star_deg: float = float("nan")
    """asin(R / a): above this |beta| a circular orbit of the mean radius sees no shadow."""

    @property
    def eclipse_days(self) -> int:
        return int(np.count_nonzero(self.shadow_fraction > 0.0))

    def ltan_drift_h_per_year(self) -> float:
        """Least-squares slope of the (unwrapped) LTAN over the series, h per 365.25 days."""
        if self.offset_s.size < 2:
            return 0.0
        unwrapped = np.unwrap(self.ltan_h * (2.0 * math.pi / 24.0)) * (24.0 / (2.0 * math.pi))
        slope = np.polyfit(self.offset_s / _DAY_S, unwrapped, 1)[0]
        return float(slope * 365.25)


def _shadow_runs(depth: np.ndarray, dt: float) -> tuple[np.ndarray, np.ndarray]:
    """Total and longest continuous time (s) with depth > 0, per row of ``depth`` (days,
    samples): each row one closed orbit. Crossings of depth 0 are placed by linear
    interpolation between samples; each row is read from its most sunlit sample, so no run
    wraps past the row's end."""
    days, n = depth.shape
    first = np.argmin(depth, axis=1)
    g = np.take_along_axis(depth, (first[:, None] + np.arange(n + 1)[None, :]) % n, axis=1)
    inside = g > 0.0
    row, k = np.nonzero(inside[:, 1:] != inside[:, :-1])
    g0, g1 = g[row, k], g[row, k + 1]
    cross = k + g0 / (g0 - g1)  # sample index of each crossing, linear
    entry = ~inside[row, k]  # entries and exits alternate in each row, an entry first
    runs = (cross[~entry] - cross[entry]) * dt
    runs_row = row[entry]
    total = np.bincount(runs_row, weights=runs, minlength=days)
    longest = np.zeros(days)
    np.maximum.at(longest, runs_row, runs)
    whole = np.all(depth > 0.0, axis=1)  # never sunlit: the whole orbit
    total[whole] = longest[whole] = n * dt
    return total, longest


def _positions_km(
    a: float, e: float, inc: float, raan: np.ndarray, argp: np.ndarray, nu: Any
) -> np.ndarray:
    """GCRF positions (..., 3) on the ellipse: r (cos nu P + sin nu Q), with P and Q the
    perifocal axes of ROT3(-RAAN) ROT1(-i) ROT3(-argp) (Vallado 4th ed., Algorithm 10). Only
    positions: a third of the work of ``elements_to_state``, which also builds velocities."""
    r = a * (1.0 - e * e) / (1.0 + e * np.cos(nu))
    x, y = r * np.cos(nu), r * np.sin(nu)
    co, so, cw, sw = np.cos(raan), np.sin(raan), np.cos(argp), np.sin(argp)
    ci, si = math.cos(inc), math.sin(inc)
    p = (co * cw - so * sw * ci, so * cw + co * sw * ci, sw * si)
    q = (-co * sw - so * cw * ci, -so * sw + co * cw * ci, cw * si)
    return np.stack([x * p[k] + y * q[k] for k in range(3)], axis=-1)


def _times(start: TimeScales, offsets: np.ndarray, eop: EarthOrientation) -> TimeScales:
    if eop.table is not None:
        return time_scales_with_table(start, offsets, eop.table)
    return time_scales(start, offset_s=offsets, dut1_s=eop.dut1_s)


def mission_seasons(
    elements: Elements,
    epoch_utc: EpochLike,
    duration_days: float,
    *,
    start_utc: EpochLike | None = None,
    step_days: float = 1.0,
    body: Body = EARTH,
    eop: EarthOrientation | None = None,
    model: str = "conical",
    samples_per_orbit: int = 720,
) -> SeasonSeries:
    """Beta angle, eclipse statistics and node local times, one orbit every ``step_days``.

    Given J2 *mean* elements at ``epoch_utc`` (a closed orbit of the Earth), the span in days
    from ``start_utc`` (default the epoch), the step (days, in [0.01, 30]), the body, the Earth
    orientation (UT1 for the local times), the shadow model and the samples per orbit (>= 90).
    Returns a ``SeasonSeries``; see the module docstring for the model and its limits.
    """
    _check_model(model)
    a, e = float(np.asarray(elements.a_km)), float(np.asarray(elements.e))
    if not (a > 0.0 and 0.0 <= e < 1.0):
        raise InputError("orbit.e", e, "seasons need a closed (elliptic) orbit")
    if not (math.isfinite(duration_days) and 0.0 < duration_days <= 36_600.0):
        raise InputError(
            "duration_days", duration_days, "must be more than 0 and at most 100 years"
        )
    if not (math.isfinite(step_days) and 0.01 <= step_days <= 30.0):
        raise InputError("step_days", step_days, "must be in [0.01, 30] days")
    if not (isinstance(samples_per_orbit, int) and samples_per_orbit >= 90):
        raise InputError("samples_per_orbit", samples_per_orbit, "must be an integer >= 90")
    eop = eop or EarthOrientation()
    epoch = time_scales(epoch_utc, dut1_s=eop.dut1_s)
    start = epoch if start_utc is None else time_scales(start_utc, dut1_s=eop.dut1_s)
    offset0 = float(start.seconds_since(epoch))
    rates = j2_secular_rates_rad_s(a, e, math.radians(float(np.asarray(elements.i_deg))), body)
    raan_rate, argp_rate, m_rate = (float(x) for x in rates)
    # One revolution in argument of latitude (the nodal period): the shadow sits fixed in the
    # plane over an orbit, so this closes the sampled loop (the anomalistic period leaves a gap
    # of (dargp/dt) P, 0.2 deg in low orbit).
    period = 2.0 * math.pi / (m_rate + argp_rate)
    days = np.arange(0.0, duration_days + 1e-9, step_days) * _DAY_S
    n = samples_per_orbit
    dt = period / n
    # Each day's orbit: the ellipse of that day (RAAN and argument of perigee of the day's
    # sample time, held), gone round once in mean anomaly over the nodal period.
    ts = _times(start, days, eop)
    sun = sun_position_from_tt_km(ts.tt1, ts.tt2)
    m0 = true_to_mean_anomaly(math.radians(float(np.asarray(elements.nu_deg))), e)
    shadow_s, longest_s = np.zeros(days.size), np.zeros(days.size)
    # In chunks of days, so that a long mission at a fine step keeps its memory bounded
    # (about 30 MB per array of a chunk at 720 samples per orbit).
    chunk = max(1, _CHUNK_SAMPLES // n)
    for lo in range(0, days.size, chunk):
        hi = min(days.size, lo + chunk)
        t_day = offset0 + days[lo:hi, None]
        mean_anomaly = m0 + m_rate * t_day + (2.0 * math.pi / n) * np.arange(n)[None, :]
        r = _positions_km(
            a,
            e,
            math.radians(float(np.asarray(elements.i_deg))),
            math.radians(float(np.asarray(elements.raan_deg))) + raan_rate * t_day,
            math.radians(float(np.asarray(elements.argp_deg))) + argp_rate * t_day,
            mean_to_true_anomaly(mean_anomaly, e),
        )
        depth = _depths(r, sun[lo:hi, None, :], body, model, 0)
        shadow_s[lo:hi], longest_s[lo:hi] = _shadow_runs(depth, dt)
    raan = (float(np.asarray(elements.raan_deg)) + np.degrees(raan_rate * (offset0 + days))) % 360.0
    # The normal of the mean plane (not r x v, which carries the plane's own turning).
    inc, node_rad = math.radians(float(np.asarray(elements.i_deg))), np.radians(raan)
    h_hat = np.stack(
        [
            math.sin(inc) * np.sin(node_rad),
            -math.sin(inc) * np.cos(node_rad),
            math.cos(inc) + 0.0 * raan,
        ],
        axis=-1,
    )
    s_hat = sun / np.linalg.norm(sun, axis=-1, keepdims=True)
    beta = np.degrees(np.arcsin(np.clip(np.sum(h_hat * s_hat, axis=-1), -1.0, 1.0)))
    node = np.stack([np.cos(np.radians(raan)), np.sin(np.radians(raan)), 0.0 * raan], axis=-1)
    xp, yp = eop.pole_arcsec(ts)
    node_itrf = gcrf_to_itrf(node, ts, xp_arcsec=xp, yp_arcsec=yp)
    lon_deg = np.degrees(np.arctan2(node_itrf[..., 1], node_itrf[..., 0]))
    ut1_h = (((ts.ut11 - 0.5) % 1.0 + ts.ut12 % 1.0) % 1.0) * 24.0
    ltan = (ut1_h + lon_deg / 15.0) % 24.0
    ra_sun = np.degrees(np.arctan2(sun[:, 1], sun[:, 0]))
    ltan_true = (12.0 + (raan - ra_sun) / 15.0) % 24.0
    stamps = utc_iso(ts.utc1, ts.utc2, 0)
    notes = (
        f"J2 mean elements (a {a:.3f} km, e {e:.5f}, i {float(np.asarray(elements.i_deg)):.4f} "
        "deg fixed; RAAN, argument of perigee and mean anomaly at the secular J2 rates); no drag "
        "decay, no lunisolar drift of the inclination",
        f"{model} shadow, one orbit every {step_days:g} day{'' if step_days == 1 else 's'} sampled at {n} points, crossings "
        "interpolated; Sun from ERFA epv00 (geometric)",
    )
    return SeasonSeries(
        start=start,
        offset_s=days,
        day_utc=tuple(str(x)[:10] for x in np.atleast_1d(stamps)),
        beta_deg=beta,
        shadow_fraction=shadow_s / period,
        max_shadow_s=longest_s,
        raan_deg=raan,
        ltan_h=ltan,
        ltdn_h=(ltan + 12.0) % 24.0,
        ltan_true_h=ltan_true,
        period_s=period,
        model=model,
        notes=notes,
        beta_star_deg=math.degrees(math.asin(min(1.0, body.radius_km / a))),
    )


def eclipse_seasons(series: SeasonSeries) -> list[dict[str, Any]]:
    """Runs of consecutive days with shadow: first and last day, days, longest shadow (s)."""
    inside = series.shadow_fraction > 0.0
    out: list[dict[str, Any]] = []
    k = 0
    while k < inside.size:
        if not inside[k]:
            k += 1
            continue
        j = k
        while j + 1 < inside.size and inside[j + 1]:
            j += 1
        out.append(
            {
                "first_utc": series.day_utc[k],
                "last_utc": series.day_utc[j],
                "first_offset_s": float(series.offset_s[k]),
                "last_offset_s": float(series.offset_s[j]),
                "samples": j - k + 1,
                "max_shadow_s": float(np.max(series.max_shadow_s[k : j + 1])),
                "cut_at_start": k == 0,
                "cut_at_end": j == inside.size - 1,
            }
        )
        k = j + 1
    return out
