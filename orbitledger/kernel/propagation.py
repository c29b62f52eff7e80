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
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .constants import EARTH, Body
from .errors import InputError
from .frames import gcrf_to_itrf_state
from .timescales import TimeScales, time_scales

__all__ = ["PROPAGATORS", "EarthOrientation", "Trajectory"]

PROPAGATORS = ("two-body", "j2-mean", "numerical")

StateFunction = Callable[[np.ndarray], tuple[np.ndarray, np.ndarray]]


@dataclass(frozen=True)
class EarthOrientation:
    """UT1 - UTC (s) and the pole coordinates (arcsec), IERS Bulletin A values."""

    dut1_s: float = 0.0
    xp_arcsec: float = 0.0
    yp_arcsec: float = 0.0


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
        return gcrf_to_itrf_state(
            r,
            v if velocity else None,
            self.times(t),
            xp_arcsec=self.eop.xp_arcsec,
            yp_arcsec=self.eop.yp_arcsec,
        )
