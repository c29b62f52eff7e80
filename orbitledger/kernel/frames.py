"""GCRF <-> ITRF, WGS-84 geodetic coordinates and topocentric azimuth/elevation/range (ERFA).

The celestial-to-terrestrial rotation is the IAU 2006/2000A, CIO-based one of the IERS
Conventions (2010), IERS Technical Note 36, Ch. 5, Eq. 5.1:

    r_ITRS = W R3(theta) C r_GCRS,

with C the GCRS-to-CIRS matrix built from the CIP coordinates X, Y and the CIO locator s
(ERFA ``xys06a``, ``c2ixys``), theta the Earth rotation angle (ERFA ``era00``, Eq. 5.15) and W
the polar-motion matrix (ERFA ``pom00`` with the TIO locator s' of ``sp00``). The celestial
pole offsets dX, dY of IERS Bulletin A (a few 0.1 mas, about 1 cm at 10 000 km) are not
applied; GCRF is taken equal to GCRS (geocentric, axes of the ICRS).

For many epochs X, Y and s are evaluated on a grid of TT nodes 6 h apart and interpolated by
cubic spline: their shortest nutation periods are several days (the largest short one, 0.2
arcsec at 13.7 d), so the interpolation error stays near 1e-8 arcsec.

Velocities include the Earth-rotation term omega x r, omega = d(ERA)/dt in UT1 seconds
(IERS Conventions 2010, Eq. 5.15) with the length-of-day excess neglected (< 3e-8 relative);
the slow change of C and W (precession, < 0.1 mm/s) is neglected as well.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import erfa
import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError
from .gridded import on_time_grid
from .timescales import EpochLike, TimeScales, time_scales

__all__ = [
    "EARTH_ROTATION_RATE_RAD_S",
    "TopocentricView",
    "celestial_to_terrestrial_matrix",
    "earth_rotation_angle_rad",
    "gcrf_to_itrf",
    "gcrf_to_itrf_state",
    "geodetic_from_itrf",
    "gmst_rad",
    "itrf_from_geodetic",
    "itrf_to_gcrf",
    "itrf_to_gcrf_state",
    "topocentric_view",
]

# d(ERA)/dt = 2 pi x 1.00273781191135448 rev per UT1 day (IERS Conventions 2010, Eq. 5.15).
EARTH_ROTATION_RATE_RAD_S = 2.0 * math.pi * 1.00273781191135448 / 86_400.0

_GRID_DAYS = 0.25  # X, Y, s interpolation node spacing (see the module docstring)


def _scales(epoch_utc: EpochLike, dut1_s: float) -> TimeScales:
    if isinstance(epoch_utc, TimeScales):
        return epoch_utc
    return time_scales(epoch_utc, dut1_s=dut1_s)


def _cip_xys(ts: TimeScales) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """CIP X, Y and CIO locator s, rad (ERFA xys06a), on a 6 h grid for many epochs."""
    return on_time_grid(erfa.xys06a, ts.tt1, ts.tt2, _GRID_DAYS)  # type: ignore[return-value]


def _pole_offsets_rad(xp_arcsec: Any, yp_arcsec: Any) -> tuple[Any, Any]:
    """Pole offsets (arcsec, a number or one per epoch) in rad."""
    for name, value in (("xp_arcsec", xp_arcsec), ("yp_arcsec", yp_arcsec)):
        if not np.all(np.isfinite(value)) or np.any(np.abs(value) > 2.0):
            raise InputError(
                f"earth_orientation.{name}", value, "must be a pole offset within 2 arcsec"
            )
    return np.asarray(xp_arcsec) * erfa.DAS2R, np.asarray(yp_arcsec) * erfa.DAS2R


def _pole_matrix(ts: TimeScales, xp_arcsec: ArrayLike, yp_arcsec: ArrayLike) -> np.ndarray:
    xp, yp = _pole_offsets_rad(xp_arcsec, yp_arcsec)
    return erfa.pom00(xp, yp, erfa.sp00(ts.tt1, ts.tt2))


def earth_rotation_angle_rad(ts: TimeScales) -> np.ndarray:
    """Earth rotation angle, rad in [0, 2 pi) (IERS Conventions 2010, Eq. 5.15; ERFA era00)."""
    return erfa.era00(ts.ut11, ts.ut12)


def gmst_rad(ts: TimeScales) -> np.ndarray:
    """Greenwich mean sidereal time, rad, consistent with IAU 2006 precession (ERFA gmst06)."""
    return erfa.gmst06(ts.ut11, ts.ut12, ts.tt1, ts.tt2)


def _parts(ts: TimeScales, xp_arcsec: ArrayLike, yp_arcsec: ArrayLike):
    c2i = erfa.c2ixys(*_cip_xys(ts))
    era = earth_rotation_angle_rad(ts)
    pom = _pole_matrix(ts, xp_arcsec, yp_arcsec)
    return c2i, np.asarray(era), pom


def _rotation_parts(ts: TimeScales, xp_arcsec: ArrayLike, yp_arcsec: ArrayLike):
    """C (GCRS to CIRS), the angle of the rotation about the CIP and the polar-motion matrix
    W, or None for W when the pole offsets are zero.

    ERFA ``pom00`` makes W = R1(-yp) R2(-xp) R3(s'); with xp = yp = 0 that is R3(s'), and
    R3(s') R3(ERA) = R3(ERA + s') (rotations about one axis add), so the TIO locator s' joins
    the Earth rotation angle and no matrix per epoch is built: the same transformation
    (IERS Conventions 2010, Eq. 5.1), to rounding.
    """
    xp, yp = _pole_offsets_rad(xp_arcsec, yp_arcsec)
    if np.any(xp != 0.0) or np.any(yp != 0.0):
        return _parts(ts, xp_arcsec, yp_arcsec)
    c2i = erfa.c2ixys(*_cip_xys(ts))
    angle = np.asarray(earth_rotation_angle_rad(ts)) + erfa.sp00(ts.tt1, ts.tt2)
    return c2i, np.asarray(angle), None


def _apply_pole(pom: np.ndarray | None, v: np.ndarray) -> np.ndarray:
    return v if pom is None else _matvec(pom, v)


def _undo_pole(pom: np.ndarray | None, v: np.ndarray) -> np.ndarray:
    return v if pom is None else _tmatvec(pom, v)


def celestial_to_terrestrial_matrix(
    ts: TimeScales, xp_arcsec: ArrayLike = 0.0, yp_arcsec: ArrayLike = 0.0
) -> np.ndarray:
    """GCRS-to-ITRS rotation matrices, shape ts.shape + (3, 3) (ERFA c2tcio; IERS TN36 Eq. 5.1)."""
    c2i, era, pom = _parts(ts, xp_arcsec, yp_arcsec)
    return erfa.c2tcio(c2i, era, pom)


def _rz_apply(angle: np.ndarray, v: np.ndarray) -> np.ndarray:
    """R3(angle) v (a frame rotation about z) for vectors (..., 3)."""
    c, s = np.cos(angle), np.sin(angle)
    x, y, z = v[..., 0], v[..., 1], v[..., 2]
    return np.stack([c * x + s * y, -s * x + c * y, z + 0.0 * c], axis=-1)


def _matvec(m: np.ndarray, v: np.ndarray) -> np.ndarray:
    return np.einsum("...ij,...j->...i", m, v)


def _tmatvec(m: np.ndarray, v: np.ndarray) -> np.ndarray:
    return np.einsum("...ji,...j->...i", m, v)


def _omega_cross(r: np.ndarray) -> np.ndarray:
    w = EARTH_ROTATION_RATE_RAD_S
    return np.stack([-w * r[..., 1], w * r[..., 0], 0.0 * r[..., 2]], axis=-1)


def _vectors(r_km: ArrayLike, name: str) -> np.ndarray:
    r = np.asarray(r_km, dtype=float)
    if r.shape[-1:] != (3,):
        raise InputError(name, r.shape, "must have a last axis of length 3 (x, y, z)")
    return r


def gcrf_to_itrf_state(
    r_km: ArrayLike,
    v_km_s: ArrayLike | None,
    epoch_utc: EpochLike,
    *,
    dut1_s: float = 0.0,
    xp_arcsec: ArrayLike = 0.0,
    yp_arcsec: ArrayLike = 0.0,
) -> tuple[np.ndarray, np.ndarray | None]:
    """GCRF position (and velocity) to ITRF: r_km (..., 3), v_km_s (..., 3) or None.

    ``epoch_utc`` is anything ``timescales.parse_utc`` takes, or a ``TimeScales`` (whose own
    dUT1 is then used); its shape broadcasts against r_km[..., 0], as do the pole coordinates
    (arcsec: one pair, or one per epoch). Velocity in the rotating frame:
    v_ITRF = W [R3(theta) C v - omega x (R3(theta) C r)].
    """
    r = _vectors(r_km, "r_km")
    c2i, era, pom = _rotation_parts(_scales(epoch_utc, dut1_s), xp_arcsec, yp_arcsec)
    r_tirs = _rz_apply(era, _matvec(c2i, r))
    r_out = _apply_pole(pom, r_tirs)
    if v_km_s is None:
        return r_out, None
    v = _vectors(v_km_s, "v_km_s")
    # omega x r commutes with R3(s') (both about the z axis), so folding s' into the angle
    # leaves the velocity term as it is.
    v_tirs = _rz_apply(era, _matvec(c2i, v)) - _omega_cross(r_tirs)
    return r_out, _apply_pole(pom, v_tirs)


def itrf_to_gcrf_state(
    r_km: ArrayLike,
    v_km_s: ArrayLike | None,
    epoch_utc: EpochLike,
    *,
    dut1_s: float = 0.0,
    xp_arcsec: ArrayLike = 0.0,
    yp_arcsec: ArrayLike = 0.0,
) -> tuple[np.ndarray, np.ndarray | None]:
    """ITRF position (and velocity) to GCRF, the inverse of ``gcrf_to_itrf_state``.

    v_GCRF = C^T R3(-theta) [W^T v + omega x (W^T r)] (Vallado 4th ed., Sec. 3.7.1, Eq. 3-68
    in its CIO form; IERS Conventions 2010, Ch. 5).
    """
    r = _vectors(r_km, "r_km")
    c2i, era, pom = _rotation_parts(_scales(epoch_utc, dut1_s), xp_arcsec, yp_arcsec)
    r_tirs = _undo_pole(pom, r)
    r_out = _tmatvec(c2i, _rz_apply(-era, r_tirs))
    if v_km_s is None:
        return r_out, None
    v = _vectors(v_km_s, "v_km_s")
    v_tirs = _undo_pole(pom, v) + _omega_cross(r_tirs)
    return r_out, _tmatvec(c2i, _rz_apply(-era, v_tirs))


def gcrf_to_itrf(
    r_km: ArrayLike,
    epoch_utc: EpochLike,
    *,
    dut1_s: float = 0.0,
    xp_arcsec: ArrayLike = 0.0,
    yp_arcsec: ArrayLike = 0.0,
) -> np.ndarray:
    """GCRF position, km (..., 3), to ITRF at ``epoch_utc`` (ISO string, datetime or many).

    dut1_s: UT1 - UTC, s; xp_arcsec, yp_arcsec: pole coordinates (IERS Bulletin A), arcsec.
    IAU 2006/2000A, CIO based (IERS Conventions 2010, Ch. 5; ERFA xys06a, era00, pom00).
    """
    r, _ = gcrf_to_itrf_state(
        r_km, None, epoch_utc, dut1_s=dut1_s, xp_arcsec=xp_arcsec, yp_arcsec=yp_arcsec
    )
    return r


def itrf_to_gcrf(
    r_km: ArrayLike,
    epoch_utc: EpochLike,
    *,
    dut1_s: float = 0.0,
    xp_arcsec: ArrayLike = 0.0,
    yp_arcsec: ArrayLike = 0.0,
) -> np.ndarray:
    """ITRF position, km (..., 3), to GCRF at ``epoch_utc``; the inverse of ``gcrf_to_itrf``."""
    r, _ = itrf_to_gcrf_state(
        r_km, None, epoch_utc, dut1_s=dut1_s, xp_arcsec=xp_arcsec, yp_arcsec=yp_arcsec
    )
    return r


def geodetic_from_itrf(r_km: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """WGS-84 geodetic latitude (deg), longitude (deg, (-180, 180]) and height (km) of ITRF
    positions (..., 3) km. ERFA gc2gd with the WGS-84 ellipsoid (NIMA TR8350.2, Table 3.1)."""
    r = _vectors(r_km, "r_km") * 1000.0
    lon, lat, h = erfa.gc2gd(erfa.WGS84, r)
    return np.degrees(lat), np.degrees(lon), np.asarray(h) / 1000.0


def itrf_from_geodetic(lat_deg: ArrayLike, lon_deg: ArrayLike, height_km: ArrayLike) -> np.ndarray:
    """ITRF position, km (..., 3), of WGS-84 geodetic coordinates (ERFA gd2gc)."""
    lat = np.asarray(lat_deg, dtype=float)
    if np.any(np.abs(lat) > 90.0) or not np.all(np.isfinite(lat)):
        raise InputError("lat_deg", lat_deg, "must be a latitude in [-90, 90] deg")
    xyz = erfa.gd2gc(erfa.WGS84, np.radians(lon_deg), np.radians(lat), np.asarray(height_km) * 1e3)
    return np.asarray(xyz) / 1000.0


@dataclass(frozen=True)
class TopocentricView:
    """Azimuth, elevation, range and range rate of targets seen from one WGS-84 site.

    Given the site's geodetic latitude and longitude (deg) and height (km). Azimuth from north
    through east, deg in [0, 360); elevation above the ellipsoid's tangent plane (geodetic),
    deg, without refraction; range km; range rate km/s (positive receding). East-north-up axes
    (Vallado 4th ed., Sec. 3.4, the SEZ frame reordered).
    """

    lat_deg: float
    lon_deg: float
    height_km: float
    site_itrf_km: np.ndarray = field(init=False, repr=False)
    enu: np.ndarray = field(init=False, repr=False)

    def __post_init__(self) -> None:
        object.__setattr__(
            self, "site_itrf_km", itrf_from_geodetic(self.lat_deg, self.lon_deg, self.height_km)
        )
        phi, lam = math.radians(self.lat_deg), math.radians(self.lon_deg)
        enu = np.array(
            [
                [-math.sin(lam), math.cos(lam), 0.0],
                [-math.sin(phi) * math.cos(lam), -math.sin(phi) * math.sin(lam), math.cos(phi)],
                [math.cos(phi) * math.cos(lam), math.cos(phi) * math.sin(lam), math.sin(phi)],
            ]
        )
        object.__setattr__(self, "enu", enu)

    def local(self, r_itrf_km: np.ndarray) -> np.ndarray:
        """East, north, up components (..., 3), km, of the line of sight."""
        return (np.asarray(r_itrf_km) - self.site_itrf_km) @ self.enu.T

    def elevation_deg(self, r_itrf_km: np.ndarray) -> np.ndarray:
        enu = self.local(r_itrf_km)
        return np.degrees(np.arctan2(enu[..., 2], np.hypot(enu[..., 0], enu[..., 1])))

    def view(
        self, r_itrf_km: np.ndarray, v_itrf_km_s: np.ndarray | None = None
    ) -> dict[str, np.ndarray]:
        """Mapping with az_deg, el_deg, range_km and, given ITRF velocities, range_rate_km_s."""
        enu = self.local(r_itrf_km)
        rng = np.linalg.norm(enu, axis=-1)
        out = {
            "az_deg": np.degrees(np.arctan2(enu[..., 0], enu[..., 1])) % 360.0,
            "el_deg": np.degrees(np.arctan2(enu[..., 2], np.hypot(enu[..., 0], enu[..., 1]))),
            "range_km": rng,
        }
        if v_itrf_km_s is not None:
            los = np.asarray(r_itrf_km) - self.site_itrf_km
            out["range_rate_km_s"] = np.sum(los * np.asarray(v_itrf_km_s), axis=-1) / rng
        return out


def topocentric_view(
    r_itrf_km: ArrayLike,
    lat_deg: float,
    lon_deg: float,
    height_km: float,
    v_itrf_km_s: ArrayLike | None = None,
) -> dict[str, Any]:
    """Azimuth, elevation, range (and range rate) of ITRF targets from a WGS-84 site.

    See ``TopocentricView``; a function form for one-off use.
    """
    site = TopocentricView(lat_deg, lon_deg, height_km)
    return site.view(
        _vectors(r_itrf_km, "r_itrf_km"), None if v_itrf_km_s is None else np.asarray(v_itrf_km_s)
    )
