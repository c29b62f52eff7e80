"""TEME (the frame of SGP4) <-> GCRF, with ERFA.

SGP4 returns positions and velocities in TEME, "true equator, mean equinox": its z axis is the
true (celestial intermediate) pole of date, and its x axis is turned from the Earth-fixed x axis
by the Greenwich mean sidereal time of IAU 1982, GMST82(UT1). Vallado, Crawford, Hujsak &
Kelso 2006, "Revisiting Spacetrack Report #3", AIAA 2006-6753, Sec. "Coordinate frames" and
Appendix C, recommend going through the pseudo Earth-fixed frame:

    r_PEF = R3(GMST82) r_TEME,

and on to the celestial frame. PEF is the terrestrial intermediate frame TIRS up to the TIO
locator s' (below 0.1 mas for decades), and TIRS -> GCRS is C^T R3(-ERA) (IERS Conventions
2010, Ch. 5, Eq. 5.1; ERFA ``xys06a``, ``c2ixys``, ``era00``), so

    r_TEME = R3(ERA - GMST82) C r_GCRS.

Polar motion drops out (TEME -> ITRF -> GCRF applies W and then W^T), and UT1 nearly does too:
ERA and GMST82 both follow UT1, and their difference changes by 1e-10 rad per second of dUT1.
GMST82 is ERFA ``gmst82`` (Aoki et al. 1982), the angle SGP4 itself uses (``gstime``), so
this is the faithful route. The other route, through the true-of-date frame with the IAU
2006/2000A equation of the equinoxes (r_TEME = R3(Eq_eq) NPB r_GCRS; ERFA ``pnm06a``,
``ee06a``), differs from it by GMST82 - GMST06: 2 mas in 2004 (0.1 m at LEO), growing away
from that year to about 50 mas (3 m) by 2030; tests/test_teme.py measures it.

GCRF is taken equal to GCRS (geocentric, ICRS axes; the celestial pole offsets dX, dY of IERS
Bulletin A, a few 0.1 mas, are not applied), as in ``frames``. Velocities rotate with the same
matrix: TEME is quasi-inertial, and the rotation's own rate (precession, nutation and the drift
of ERA - GMST82, about 1e-11 rad/s) changes a LEO velocity by less than 0.1 mm/s.

C depends on TT only; for many epochs it is evaluated on a grid of TT nodes 6 h apart and
interpolated by cubic spline (``gridded.on_time_grid``), as in ``frames``.
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


def _cip_xys(ts: TimeScales) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    return on_time_grid(erfa.xys06a, ts.tt1, ts.tt2, _GRID_DAYS)  # type: ignore[return-value]


def gcrf_to_teme_matrix(epoch_utc: EpochLike, *, dut1_s: float = 0.0) -> np.ndarray:
    """Rotation matrices GCRF -> TEME, shape epochs.shape + (3, 3).

    Given UTC epochs (anything ``timescales.time_scales`` takes) or a ``TimeScales`` (whose
    dUT1 is used), and dUT1 = UT1 - UTC in s (it changes the result by 1e-10 rad per second).
    M = R3(ERA - GMST82) C (Vallado et al. 2006, AIAA 2006-6753; ERFA ``c2ixys``, ``era00``,
    ``gmst82``); see the module docstring.
    """
    ts = epoch_utc if isinstance(epoch_utc, TimeScales) else time_scales(epoch_utc, dut1_s=dut1_s)
    c2i = erfa.c2ixys(*_cip_xys(ts))
    angle = erfa.era00(ts.ut11, ts.ut12) - erfa.gmst82(ts.ut11, ts.ut12)
    return erfa.rz(angle, c2i)


def _vectors(x: ArrayLike, name: str) -> np.ndarray:
    arr = np.asarray(x, dtype=float)
    if arr.shape[-1:] != (3,):
        raise InputError(name, arr.shape, "must have a last axis of length 3 (x, y, z)")
    return arr


def teme_to_gcrf(
    r_km: ArrayLike, v_km_s: ArrayLike | None, epoch_utc: EpochLike, *, dut1_s: float = 0.0
) -> tuple[np.ndarray, np.ndarray | None]:
    """TEME position (km) and velocity (km/s), each (..., 3), to GCRF at ``epoch_utc``.

    ``v_km_s`` may be None (position only). The epochs' shape broadcasts against
    ``r_km[..., 0]``. r_GCRF = M^T r_TEME with M of ``gcrf_to_teme_matrix``; the same for v.
    """
    m = gcrf_to_teme_matrix(epoch_utc, dut1_s=dut1_s)
    r = np.einsum("...ji,...j->...i", m, _vectors(r_km, "r_km"))
    if v_km_s is None:
        return r, None
    return r, np.einsum("...ji,...j->...i", m, _vectors(v_km_s, "v_km_s"))


def gcrf_to_teme(
    r_km: ArrayLike, v_km_s: ArrayLike | None, epoch_utc: EpochLike, *, dut1_s: float = 0.0
) -> tuple[np.ndarray, np.ndarray | None]:
    """GCRF position (km) and velocity (km/s) to TEME: the inverse of ``teme_to_gcrf``."""
    m = gcrf_to_teme_matrix(epoch_utc, dut1_s=dut1_s)
    r = np.einsum("...ij,...j->...i", m, _vectors(r_km, "r_km"))
    if v_km_s is None:
        return r, None
    return r, np.einsum("...ij,...j->...i", m, _vectors(v_km_s, "v_km_s"))
