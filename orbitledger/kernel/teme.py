"""TEME (the frame of SGP4) <-> GCRF, with ERFA.

SGP4 returns positions and velocities in TEME, the "true equator, mean equinox" frame: its z
axis is the true (Celestial Intermediate) pole of date, its x axis the "uniform" equinox, so
that the Greenwich mean sidereal time of IAU 1982 rotates it into the pseudo Earth-fixed frame
(Vallado, Crawford, Hujsak & Kelso 2006, "Revisiting Spacetrack Report #3", AIAA 2006-6753,
Sec. "Coordinate frames" and Appendix C; Vallado 4th ed., Sec. 3.7.4).

TEME differs from the true-of-date frame (true equator, true equinox) only by a rotation about
the common z axis through the equation of the equinoxes, Eq_eq = GAST - GMST:

    r_TOD = R3(-Eq_eq) r_TEME,    r_TEME = R3(Eq_eq) NPB r_GCRF,

with NPB the frame-bias, precession and nutation matrix from GCRS to true-of-date (IAU
2006/2000A, ERFA ``pnm06a``) and Eq_eq of the same model (ERFA ``ee06a``). This is the route of
Vallado et al. 2006 through the true-of-date frame; their other route, TEME -> PEF with GMST82
and on to ITRF, agrees with it to the difference between GMST82 and the IAU 2006 mean sidereal
time (a few milliarcseconds, below 0.1 m at GEO distance) since GAST - Eq_eq = GMST in both.

GCRF is taken equal to GCRS (geocentric, ICRS axes; the celestial pole offsets dX, dY of IERS
Bulletin A, a few 0.1 mas, are not applied), as in ``frames``. Velocities rotate with the same
matrix: TEME is quasi-inertial, and the rotation's own rate (precession and nutation, about
1e-11 rad/s) changes a LEO velocity by less than 0.1 mm/s.

The matrix depends only on TT; evaluated on a grid of TT nodes 6 h apart and interpolated by
cubic spline for many epochs (``gridded.on_time_grid``), like the CIP in ``frames``: the
shortest nutation terms have periods of several days.
"""

from __future__ import annotations

import erfa
import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError
from .gridded import on_time_grid
from .timescales import EpochLike, TimeScales, time_scales

__all__ = ["gcrf_to_teme", "gcrf_to_teme_matrix", "teme_to_gcrf"]

_GRID_DAYS = 0.25  # interpolation node spacing, as for the CIP in frames.py


def _tt(epoch_utc: EpochLike) -> TimeScales:
    return epoch_utc if isinstance(epoch_utc, TimeScales) else time_scales(epoch_utc)


def _matrix_elements(tt1: np.ndarray, tt2: np.ndarray) -> tuple[np.ndarray, ...]:
    npb = erfa.pnm06a(tt1, tt2)  # GCRS -> true equator and equinox of date
    m = erfa.rz(erfa.ee06a(tt1, tt2), npb)  # then R3(Eq_eq): true equinox -> mean equinox
    return tuple(m[..., i, j] for i in range(3) for j in range(3))


def gcrf_to_teme_matrix(epoch_utc: EpochLike) -> np.ndarray:
    """Rotation matrices GCRF -> TEME, shape epochs.shape + (3, 3).

    Given UTC epochs (anything ``timescales.time_scales`` takes) or a ``TimeScales``; only TT is
    used (UT1 plays no part: TEME is not Earth-fixed). M = R3(Eq_eq) NPB (ERFA ``pnm06a``,
    ``ee06a``; Vallado et al. 2006, AIAA 2006-6753). For many epochs, interpolated from a 6 h
    grid (error near 1e-8 arcsec).
    """
    ts = _tt(epoch_utc)
    parts = on_time_grid(_matrix_elements, ts.tt1, ts.tt2, _GRID_DAYS)
    return np.stack(parts, axis=-1).reshape(*np.shape(parts[0]), 3, 3)


def _vectors(x: ArrayLike, name: str) -> np.ndarray:
    arr = np.asarray(x, dtype=float)
    if arr.shape[-1:] != (3,):
        raise InputError(name, arr.shape, "must have a last axis of length 3 (x, y, z)")
    return arr


def teme_to_gcrf(
    r_km: ArrayLike, v_km_s: ArrayLike | None, epoch_utc: EpochLike
) -> tuple[np.ndarray, np.ndarray | None]:
    """TEME position (km) and velocity (km/s), each (..., 3), to GCRF at ``epoch_utc``.

    ``v_km_s`` may be None (position only). The epochs' shape broadcasts against
    ``r_km[..., 0]``. r_GCRF = M^T r_TEME with M of ``gcrf_to_teme_matrix``; the same for v.
    """
    m = gcrf_to_teme_matrix(epoch_utc)
    r = np.einsum("...ji,...j->...i", m, _vectors(r_km, "r_km"))
    if v_km_s is None:
        return r, None
    return r, np.einsum("...ji,...j->...i", m, _vectors(v_km_s, "v_km_s"))


def gcrf_to_teme(
    r_km: ArrayLike, v_km_s: ArrayLike | None, epoch_utc: EpochLike
) -> tuple[np.ndarray, np.ndarray | None]:
    """GCRF position (km) and velocity (km/s) to TEME: the inverse of ``teme_to_gcrf``."""
    m = gcrf_to_teme_matrix(epoch_utc)
    r = np.einsum("...ij,...j->...i", m, _vectors(r_km, "r_km"))
    if v_km_s is None:
        return r, None
    return r, np.einsum("...ij,...j->...i", m, _vectors(v_km_s, "v_km_s"))
