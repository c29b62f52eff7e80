"""A satellite's state over an analysis window, whichever propagator produced it.

``Trajectory`` is what the geometry (ground track, passes, eclipses, ephemeris) consumes: a
start epoch, a function from elapsed SI seconds to GCRF states, the orbit period that sets
the event-search steps, and the Earth orientation used to go to ITRF. ``trajectory`` builds
one for the propagators a case may name: ``"two-body"``, ``"j2-mean"`` (analytic, see j2.py)
and ``"numerical"`` (Cowell, see cowell.py; integrated once over the window, then read from
the integrator's dense output).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .constants import EARTH, Body
from .earth_orientation import EopTable, eop_at, time_scales_with_table
from .elements import Elements, elements_to_state
from .errors import InputError
from .frames import gcrf_to_itrf_state
from .j2 import (
    j2_secular_rates_rad_s,
    mean_semi_major_axis_km,
    propagate_j2_mean,
)
from .timescales import EpochLike, TimeScales, time_scales
from .twobody import propagate_two_body

__all__ = ["PROPAGATORS", "EarthOrientation", "Trajectory", "trajectory"]

PROPAGATORS = ("two-body", "j2-mean", "numerical")

StateFunction = Callable[[np.ndarray], tuple[np.ndarray, np.ndarray]]


@dataclass(frozen=True)
class EarthOrientation:
    """UT1 - UTC (s) and the pole coordinates (arcsec), IERS Bulletin A values.

    With a ``table`` (``earth_orientation.EopTable``) the values are looked up epoch by epoch
    and the three numbers are those at the window's start, for statements and summaries.
    """

    dut1_s: float = 0.0
    xp_arcsec: float = 0.0
    yp_arcsec: float = 0.0
    table: EopTable | None = None

    def pole_arcsec(self, ts: TimeScales) -> tuple[Any, Any]:
        """x_p, y_p (arcsec) at the epochs of ``ts``: per epoch from the table, else constant."""
        if self.table is None:
            return self.xp_arcsec, self.yp_arcsec
        _, xp, yp, _ = eop_at(self.table, ts.utc1, ts.utc2)
        return xp, yp


@dataclass(frozen=True, eq=False)
class Trajectory:
    """GCRF state as a function of elapsed time after ``start`` (a single-epoch TimeScales).

    state_at(offset_s) -> (r_km, v_km_s), each offset_s.shape + (3,), for offsets in
    [0, end_s]. period_s: the orbit's (anomalistic) period. ``notes``: model statements for the
    record (e.g. the decay time of a numerical run).
    """

    start: TimeScales
    state_at: StateFunction
    period_s: float
    propagator: str
    eop: EarthOrientation = field(default_factory=EarthOrientation)
    body: Body = EARTH
    end_s: float = math.inf
    notes: tuple[str, ...] = ()

    def times(self, offset_s: ArrayLike) -> TimeScales:
        """UTC/TAI/TT/UT1 of the epochs ``offset_s`` SI seconds after the start."""
        if self.eop.table is not None:
            return time_scales_with_table(self.start, offset_s, self.eop.table)
        return time_scales(self.start, offset_s=offset_s, dut1_s=self.eop.dut1_s)

    def gcrf(self, offset_s: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
        t = np.asarray(offset_s, dtype=float)
        if np.any(t < -1e-9) or np.any(t > self.end_s + 1e-9):
            raise InputError(
                "offset_s", offset_s, f"outside the trajectory's [0, {self.end_s:g}] s"
            )
        return self.state_at(t)

    def itrf(self, offset_s: ArrayLike, *, velocity: bool = False) -> tuple[np.ndarray, Any]:
        """ITRF position (and velocity if asked), km and km/s, at the offsets."""
        t = np.asarray(offset_s, dtype=float)
        r, v = self.gcrf(t)
        ts = self.times(t)
        xp, yp = self.eop.pole_arcsec(ts)
        return gcrf_to_itrf_state(r, v if velocity else None, ts, xp_arcsec=xp, yp_arcsec=yp)


def _seconds_between(later: TimeScales, earlier: TimeScales) -> float:
    return float(later.seconds_since(earlier))


def trajectory(
    propagator: str,
    elements: Elements,
    epoch_utc: EpochLike,
    *,
    start_utc: EpochLike | None = None,
    duration_s: float = 86_400.0,
    body: Body = EARTH,
    eop: EarthOrientation | None = None,
    force_model: Any = None,
    cowell_options: Mapping[str, Any] | None = None,
    progress: Callable[[float], None] | None = None,
) -> Trajectory:
    """The trajectory over [start, start + duration_s] of an orbit given at ``epoch_utc``.

    propagator: ``"two-body"`` (Kepler), ``"j2-mean"`` (``j2.propagate_j2_mean``) or
    ``"numerical"`` (``cowell.propagate_cowell`` with ``force_model``, a ``forces.ForceModel``,
    and ``cowell_options`` such as rtol / atol_km; integrated once from the epoch to the window's
    end, then read from its dense output; ``progress`` gets the fraction done). The window
    start defaults to the epoch. Elliptic orbits only (a_km > 0, e < 1).
    """
    if propagator not in PROPAGATORS:
        raise InputError(
            "force_model.propagator", propagator, f"must be one of {', '.join(PROPAGATORS)}"
        )
    if not (math.isfinite(duration_s) and duration_s > 0.0):
        raise InputError("window.duration_s", duration_s, "must be a positive number of seconds")
    a, e = float(np.asarray(elements.a_km)), float(np.asarray(elements.e))
    if not (a > 0.0 and 0.0 <= e < 1.0):
        raise InputError("orbit.e", e, "time-window analyses need a closed (elliptic) orbit")
    eop = eop or EarthOrientation()
    epoch = time_scales(epoch_utc, dut1_s=eop.dut1_s)
    start = (
        epoch
        if start_utc is None
        else time_scales(start_utc, dut1_s=eop.dut1_s, field="window.start_utc")
    )
    offset0 = _seconds_between(start, epoch)
    n = math.sqrt(body.mu_km3_s2 / a**3)
    if propagator == "two-body":
        r0, v0 = elements_to_state(elements, body.mu_km3_s2)

        def state_at(t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
            return propagate_two_body(r0, v0, offset0 + np.asarray(t, dtype=float), body.mu_km3_s2)

        return Trajectory(start, state_at, 2 * math.pi / n, propagator, eop, body)
    if propagator == "j2-mean":
        a_mean = mean_semi_major_axis_km(elements, body)
        mean = replace(elements, a_km=a_mean)
        i_rad = math.radians(float(np.asarray(elements.i_deg)))
        m_rate = float(j2_secular_rates_rad_s(a_mean, e, i_rad, body)[2])

        def state_at(t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
            return propagate_j2_mean(mean, offset0 + t, body)

        notes = (
            "J2 secular drift of RAAN, argument of perigee and mean anomaly; short-period terms "
            f"omitted; mean semi-major axis {a_mean:.3f} km from the osculating {a:.3f} km",
        )
        return Trajectory(start, state_at, 2 * math.pi / m_rate, propagator, eop, body, notes=notes)
    return _numerical(
        elements,
        epoch,
        start,
        offset0,
        duration_s,
        body,
        eop,
        force_model,
        cowell_options,
        progress,
    )


def _numerical(
    elements, epoch, start, offset0, duration_s, body, eop, force_model, options, progress
):
    from .cowell import propagate_cowell
    from .forces import ForceModel

    if offset0 < 0.0:
        raise InputError(
            "window.start_utc",
            None,
            "must not precede the case epoch with the numerical propagator",
        )
    r0, v0 = elements_to_state(elements, body.mu_km3_s2)
    model = force_model if force_model is not None else ForceModel(zonal_degree=2, body=body)
    run = propagate_cowell(
        r0,
        v0,
        np.array([offset0 + duration_s]),
        force_model=model,
        epoch_jd_tt=(float(epoch.tt1), float(epoch.tt2)),
        progress=progress,
        **dict(options or {}),
    )
    end_s = run.t_end_s - offset0
    notes = [
        f"Cowell (DOP853) propagation: {model.description}; rtol {run.rtol:g}, atol {run.atol_km:g} km"
    ]
    if run.decayed:
        notes.append(
            f"re-entry ({run.reentry_altitude_km:g} km) at {run.decay_time_s:.0f} s after the epoch"
        )
        if end_s <= 0.0:
            raise InputError("window.start_utc", None, "the orbit decays before the window starts")
    elif not run.success:
        raise InputError("force_model", model.description, f"integration failed: {run.message}")

    def state_at(t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        return run.state_at(offset0 + np.asarray(t, dtype=float))

    period = 2 * math.pi / math.sqrt(body.mu_km3_s2 / float(np.asarray(elements.a_km)) ** 3)
    return Trajectory(
        start, state_at, period, "numerical", eop, body, end_s=end_s, notes=tuple(notes)
    )
