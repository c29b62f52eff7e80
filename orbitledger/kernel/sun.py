"""The Sun's geocentric position from ERFA's Earth ephemeris (``epv00``).

ERFA ``epv00`` (SOFA ``iauEpv00``) gives the Earth's heliocentric position from a simplified
VSOP2000 solution (Moisson & Bretagnon 2001, Celest. Mech. Dyn. Astron. 80, 205); against
JPL DE405 over 1900-2100 its error is 3.7 km rms, 11.2 km at most (ERFA epv00, Note 4). The
geocentric Sun is its negative, with axes of the BCRS (the ICRS), which are the GCRF axes.

This is the *geometric* position at the epoch: light time (8.3 min) and the annual aberration
(at most 20.5 arcsec, i.e. 0.006 deg) are not applied. For shadow geometry around the Earth
the difference moves an umbra boundary by well under a second of time. TDB is taken equal to
TT (|TDB - TT| < 2 ms, during which the Earth moves 60 m).
"""

from __future__ import annotations

import erfa
import numpy as np

from .constants import AU_KM
from .gridded import on_time_grid
from .timescales import EpochLike, TimeScales, time_scales

__all__ = ["sun_position_gcrf_km", "sun_position_from_tt_km"]

# Node spacing of the interpolation for many epochs: the fastest term in the Earth's
# heliocentric motion is the monthly wobble about the Earth-Moon barycentre (4 670 km,
# 27.3 d), whose cubic-spline error at 6 h nodes is about 0.1 m (see gridded.py).
_GRID_DAYS = 0.25


def _earth_heliocentric_km(tt1: np.ndarray, tt2: np.ndarray) -> np.ndarray:
    pvh, _ = erfa.epv00(tt1, tt2)
    return np.asarray(pvh["p"]) * AU_KM


def sun_position_from_tt_km(tt1: np.ndarray, tt2: np.ndarray) -> np.ndarray:
    """Geocentric Sun position, km (..., 3), GCRF axes, at TT two-part Julian dates."""
    return -np.asarray(on_time_grid(_earth_heliocentric_km, tt1, tt2, _GRID_DAYS))


def sun_position_gcrf_km(epoch_utc: EpochLike) -> np.ndarray:
    """Geocentric position of the Sun, km, GCRF axes, at one or many UTC epochs.

    Given an ISO 8601 string, datetime, array of them, UTC JD pair or ``TimeScales``.
    Returns (3,) for one epoch, (..., 3) for many. Geometric (no light time, no aberration);
    ERFA epv00 (SOFA), error below 12 km (1e-7 rad) over 1900-2100.
    """
    ts = epoch_utc if isinstance(epoch_utc, TimeScales) else time_scales(epoch_utc)
    return sun_position_from_tt_km(ts.tt1, ts.tt2)
