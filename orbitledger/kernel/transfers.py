"""Impulsive transfers between orbits about one body: Hohmann, bi-elliptic, plane changes, phasing.

Every function takes radii in km (broadcast over arrays) and the body's gravity parameter, and
returns a small immutable result (a ``NamedTuple``): fields by attribute (``res.dv1_km_s``),
by unpacking (``dv1_km_s, dv2_km_s, dv_total_km_s, tof_s = hohmann(...)``), by position and by
name (``res["tof_s"]``, ``dict(res)``). Delta-v values are magnitudes (>= 0); a transfer to a
lower orbit burns against the velocity. Radii are checked against the central body: a radius
at or below the body's equatorial radius is refused (``InputError``).

Sources: Vallado, *Fundamentals of Astrodynamics and Applications*, 4th ed. (2013), Sec. 6.3
(Hohmann and bi-elliptic, Algorithms 36-37), Sec. 6.4 (plane changes, Eqs. 6-23 to 6-27, and
the minimum-delta-v split of a combined change), Sec. 6.6 (phasing); Curtis, *Orbital Mechanics
for Engineering Students*, 3rd ed. (2014), Secs. 6.2-6.7.
"""

from __future__ import annotations

import math
from typing import Any, NamedTuple, TypeVar

import numpy as np
from numpy.typing import ArrayLike

from .constants import BODIES, EARTH
from .errors import InputError

__all__ = [
    "HohmannTransfer",
    "BiellipticTransfer",
    "CombinedPlaneChange",
    "PhasingManoeuvre",
    "hohmann",
    "hohmann_elliptic",
    "bielliptic",
    "plane_change_dv_km_s",
    "combined_plane_change",
    "phasing",
]

_MU_EARTH = EARTH.mu_km3_s2


_Result = TypeVar("_Result", bound=type)


def _by_name(cls: _Result) -> _Result:
    """Let a NamedTuple result be read by field name too: ``res["tof_s"]``, ``res.keys()``."""

    def __getitem__(self: tuple, key: Any) -> Any:
        if isinstance(key, str):
            try:
                return getattr(self, key)
            except AttributeError:
                raise KeyError(key) from None
        return tuple.__getitem__(self, key)

    def keys(self: tuple) -> tuple[str, ...]:
        return self._fields  # type: ignore[attr-defined]

    cls.__getitem__ = __getitem__  # type: ignore[attr-defined, index]
    cls.keys = keys  # type: ignore[attr-defined]
    return cls


@_by_name
class HohmannTransfer(NamedTuple):
    """Two tangential burns and the half-ellipse between them (magnitudes, km/s; s)."""

    dv1_km_s: Any
    dv2_km_s: Any
    dv_total_km_s: Any
    tof_s: Any


@_by_name
class BiellipticTransfer(NamedTuple):
    """Three tangential burns through the intermediate apoapsis rb (magnitudes, km/s; s)."""

    dv1_km_s: Any
    dv2_km_s: Any
    dv3_km_s: Any
    dv_total_km_s: Any
    tof_s: Any


@_by_name
class CombinedPlaneChange(NamedTuple):
    """A Hohmann transfer with the inclination change split between its two burns."""

    dv1_km_s: Any
    dv2_km_s: Any
    dv_total_km_s: Any
    tof_s: Any
    di1_deg: Any
    di2_deg: Any


@_by_name
class PhasingManoeuvre(NamedTuple):
    """Leave a circular orbit into a phasing ellipse and return to it after k revolutions."""

    dv1_km_s: Any
    dv2_km_s: Any
    dv_total_km_s: Any
    tof_s: Any
    a_phasing_km: Any
    phase_angle_deg: Any


def _out(x: np.ndarray) -> Any:
    """A 0-d result as a numpy scalar, an array otherwise."""
    return x[()] if isinstance(x, np.ndarray) and x.ndim == 0 else x


def _min_radius_km(mu_km3_s2: float, min_radius_km: float | None) -> float:
    """The radius below which an orbit is refused: the body with this mu, else 0."""
    if min_radius_km is not None:
        return float(min_radius_km)
    for body in BODIES.values():
        if math.isclose(float(mu_km3_s2), body.mu_km3_s2, rel_tol=1e-9):
            return body.radius_km
    return 0.0


def _radius(name: str, value: ArrayLike, floor_km: float) -> np.ndarray:
    r = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(r)) or np.any(r <= floor_km):
        raise InputError(
            name, value, f"must be a finite radius above the central body ({floor_km:.3f} km)"
        )
    return r


def _mu(mu_km3_s2: float) -> float:
    mu = float(mu_km3_s2)
    if not math.isfinite(mu) or mu <= 0.0:
        raise InputError("mu_km3_s2", mu_km3_s2, "must be a finite gravity parameter > 0")
    return mu


def _apsis_speed(mu: float, r: np.ndarray, r_other: np.ndarray) -> np.ndarray:
    """Speed at the apsis r of an ellipse whose other apsis is r_other (vis-viva)."""
    return np.sqrt(2.0 * mu * r_other / (r * (r + r_other)))


def hohmann(
    r1_km: ArrayLike,
    r2_km: ArrayLike,
    mu_km3_s2: float = _MU_EARTH,
    *,
    min_radius_km: float | None = None,
) -> HohmannTransfer:
    """Hohmann transfer between coplanar circular orbits of radii r1 and r2, km (broadcast).

    Returns ``HohmannTransfer(dv1_km_s, dv2_km_s, dv_total_km_s, tof_s)``: the burn
    magnitudes at departure and arrival, their sum, and the half period of the transfer
    ellipse. ``min_radius_km`` defaults to the radius of the body whose mu is given (0 for an
    unknown mu). Vallado 4th ed., Sec. 6.3.1, Algorithm 36; Curtis 3rd ed., Sec. 6.2.
    """
    mu = _mu(mu_km3_s2)
    floor = _min_radius_km(mu, min_radius_km)
    r1 = _radius("r1_km", r1_km, floor)
    r2 = _radius("r2_km", r2_km, floor)
    return hohmann_elliptic(r1, r1, r2, r2, mu, min_radius_km=floor)


def hohmann_elliptic(
    r_depart_km: ArrayLike,
    r1_other_apsis_km: ArrayLike,
    r_arrive_km: ArrayLike,
    r2_other_apsis_km: ArrayLike,
    mu_km3_s2: float = _MU_EARTH,
    *,
    min_radius_km: float | None = None,
) -> HohmannTransfer:
    """Hohmann transfer between coplanar, coaxial elliptic orbits, apsis to opposite apsis.

    Given: the initial orbit by the apsis radius where the first burn is made
    (``r_depart_km``) and its other apsis radius; the final orbit by the apsis radius where
    the second burn is made (``r_arrive_km``, 180 deg from departure) and its other apsis
    radius; km, broadcast. A circular orbit has both radii equal. The transfer ellipse has its
    apsides at r_depart and r_arrive. Returns ``HohmannTransfer`` (magnitudes, km/s; s).
    Vallado 4th ed., Sec. 6.3.1 (Hohmann between ellipses); Curtis 3rd ed., Sec. 6.3.
    """
    mu = _mu(mu_km3_s2)
    floor = _min_radius_km(mu, min_radius_km)
    rd = _radius("r_depart_km", r_depart_km, floor)
    rd_o = _radius("r1_other_apsis_km", r1_other_apsis_km, floor)
    ra = _radius("r_arrive_km", r_arrive_km, floor)
    ra_o = _radius("r2_other_apsis_km", r2_other_apsis_km, floor)
    dv1 = np.abs(_apsis_speed(mu, rd, ra) - _apsis_speed(mu, rd, rd_o))
    dv2 = np.abs(_apsis_speed(mu, ra, ra_o) - _apsis_speed(mu, ra, rd))
    a_t = 0.5 * (rd + ra)
    tof = math.pi * np.sqrt(a_t**3 / mu)
    return HohmannTransfer(_out(dv1), _out(dv2), _out(dv1 + dv2), _out(tof))


def bielliptic(
    r1_km: ArrayLike,
    r2_km: ArrayLike,
    rb_km: ArrayLike,
    mu_km3_s2: float = _MU_EARTH,
    *,
    min_radius_km: float | None = None,
) -> BiellipticTransfer:
    """Bi-elliptic transfer between coplanar circular orbits r1 -> rb (apoapsis) -> r2, km.

    The intermediate radius rb must be at least the larger of r1 and r2 (``InputError``
    otherwise). Returns ``BiellipticTransfer(dv1_km_s, dv2_km_s, dv3_km_s, dv_total_km_s,
    tof_s)`` (magnitudes; the time is the two half-ellipses). It beats the Hohmann transfer
    for every rb when r2/r1 > 15.58, and for a large enough rb when r2/r1 > 11.94.
    Vallado 4th ed., Sec. 6.3.2, Algorithm 37; Curtis 3rd ed., Sec. 6.3.
    """
    mu = _mu(mu_km3_s2)
    floor = _min_radius_km(mu, min_radius_km)
    r1 = _radius("r1_km", r1_km, floor)
    r2 = _radius("r2_km", r2_km, floor)
    rb = _radius("rb_km", rb_km, floor)
    if np.any(rb < np.maximum(r1, r2)):
        raise InputError(
            "rb_km", rb_km, "the intermediate radius must be at least the larger orbit radius"
        )
    dv1 = np.abs(_apsis_speed(mu, r1, rb) - np.sqrt(mu / r1))
    dv2 = np.abs(_apsis_speed(mu, rb, r2) - _apsis_speed(mu, rb, r1))
    dv3 = np.abs(np.sqrt(mu / r2) - _apsis_speed(mu, r2, rb))
    tof = math.pi * (np.sqrt((0.5 * (r1 + rb)) ** 3 / mu) + np.sqrt((0.5 * (r2 + rb)) ** 3 / mu))
    return BiellipticTransfer(_out(dv1), _out(dv2), _out(dv3), _out(dv1 + dv2 + dv3), _out(tof))


def plane_change_dv_km_s(v_km_s: ArrayLike, di_deg: ArrayLike, fpa_deg: ArrayLike = 0.0) -> Any:
    """Delta-v, km/s, of a pure plane change by di at speed v and flight-path angle fpa.

    Only the horizontal velocity turns: dv = 2 v cos(fpa) sin(di / 2). Made at a node for an
    inclination-only change. Vallado 4th ed., Sec. 6.4.1, Eq. 6-23 (elliptic form, Eq. 6-24).
    """
    v = np.asarray(v_km_s, dtype=float)
    if not np.all(np.isfinite(v)) or np.any(v < 0.0):
        raise InputError("v_km_s", v_km_s, "must be a finite speed >= 0 km/s")
    di = np.radians(np.asarray(di_deg, dtype=float))
    fpa = np.radians(np.asarray(fpa_deg, dtype=float))
    return _out(2.0 * v * np.cos(fpa) * np.abs(np.sin(0.5 * di)))


def _burn_dv(v_a: np.ndarray, v_b: np.ndarray, di: np.ndarray) -> np.ndarray:
    """One burn that changes speed v_a -> v_b and turns the plane by di (law of cosines)."""
    return np.sqrt(np.maximum(v_a**2 + v_b**2 - 2.0 * v_a * v_b * np.cos(di), 0.0))


def combined_plane_change(
    r1_km: ArrayLike,
    r2_km: ArrayLike,
    di_deg: ArrayLike,
    mu_km3_s2: float = _MU_EARTH,
    *,
    min_radius_km: float | None = None,
) -> CombinedPlaneChange:
    """Hohmann transfer r1 -> r2 (circular, km) with an inclination change di, optimally split.

    Each burn changes speed and plane together (law of cosines, Vallado 4th ed., Eq. 6-27);
    the share s of di made at the first burn minimises dv1 + dv2. Vallado 4th ed., Sec. 6.4.3
    (minimum combined plane change, solved there by iteration on s): here the first-order
    condition d(dv1 + dv2)/d(di1) = v1 vt1 sin(di1)/dv1 - vt2 v2 sin(di2)/dv2 = 0 is solved by
    vectorised bisection on di1 in [0, di] (60 halvings: the split to 1e-18 of di). The
    objective is convex in di1, so the root is the minimum. Returns ``CombinedPlaneChange``
    (magnitudes km/s, tof_s, the split di1_deg at departure and di2_deg at arrival).
    """
    mu = _mu(mu_km3_s2)
    floor = _min_radius_km(mu, min_radius_km)
    r1 = _radius("r1_km", r1_km, floor)
    r2 = _radius("r2_km", r2_km, floor)
    di_in = np.asarray(di_deg, dtype=float)
    if not np.all(np.isfinite(di_in)) or np.any(np.abs(di_in) > 180.0):
        raise InputError("di_deg", di_deg, "must be a finite angle with |di| <= 180 deg")
    di = np.radians(np.abs(di_in))
    v1 = np.sqrt(mu / r1)
    v2 = np.sqrt(mu / r2)
    vt1 = _apsis_speed(mu, r1, r2)
    vt2 = _apsis_speed(mu, r2, r1)
    shape = np.broadcast_shapes(r1.shape, r2.shape, di.shape)
    lo = np.zeros(shape)
    hi = np.broadcast_to(di, shape).copy()

    def slope(di1: np.ndarray) -> np.ndarray:
        di2 = di - di1
        d1 = _burn_dv(v1, vt1, di1)
        d2 = _burn_dv(vt2, v2, di2)
        with np.errstate(invalid="ignore", divide="ignore"):
            g1 = np.where(d1 > 0.0, v1 * vt1 * np.sin(di1) / d1, 0.0)
            g2 = np.where(d2 > 0.0, vt2 * v2 * np.sin(di2) / d2, 0.0)
        return g1 - g2

    for _ in range(60):
        mid = 0.5 * (lo + hi)
        up = slope(mid) > 0.0
        hi = np.where(up, mid, hi)
        lo = np.where(up, lo, mid)
    di1 = 0.5 * (lo + hi)
    di2 = di - di1
    dv1 = _burn_dv(v1, vt1, di1)
    dv2 = _burn_dv(vt2, v2, di2)
    tof = np.broadcast_to(math.pi * np.sqrt((0.5 * (r1 + r2)) ** 3 / mu), shape)
    sign = np.where(di_in < 0.0, -1.0, 1.0)
    return CombinedPlaneChange(
        _out(dv1),
        _out(dv2),
        _out(dv1 + dv2),
        _out(np.array(tof)),
        _out(sign * np.degrees(di1)),
        _out(sign * np.degrees(di2)),
    )


def phasing(
    r_km: ArrayLike,
    along_track_offset_km: ArrayLike,
    revolutions: int = 1,
    mu_km3_s2: float = _MU_EARTH,
    *,
    min_radius_km: float | None = None,
) -> PhasingManoeuvre:
    """Co-orbital phasing on a circular orbit of radius r: close an along-track offset.

    ``along_track_offset_km`` is the arc length by which the target leads the chaser
    (positive: target ahead; negative: behind); the phase angle is offset / r. The chaser
    burns along-track into a phasing ellipse with period T_ph = (2 pi k - theta) / (k n), flies
    k revolutions and burns back at the same point, meeting the target (Vallado 4th ed.,
    Sec. 6.6.1, Eqs. 6-38 to 6-40, co-orbital phasing; Curtis 3rd ed., Sec. 6.4). A target
    ahead needs a lower, faster ellipse. Refused when the phasing ellipse would dip below
    the body. Returns ``PhasingManoeuvre`` (magnitudes km/s, tof_s = k T_ph, a_phasing_km,
    phase_angle_deg).
    """
    mu = _mu(mu_km3_s2)
    floor = _min_radius_km(mu, min_radius_km)
    r = _radius("r_km", r_km, floor)
    k = int(revolutions)
    if k != revolutions or k < 1:
        raise InputError("revolutions", revolutions, "must be a whole number >= 1")
    offset = np.asarray(along_track_offset_km, dtype=float)
    if not np.all(np.isfinite(offset)):
        raise InputError("along_track_offset_km", along_track_offset_km, "must be finite")
    theta = offset / r
    n = np.sqrt(mu / r**3)
    t_ph = (2.0 * math.pi * k - theta) / (k * n)
    if np.any(t_ph <= 0.0):
        raise InputError(
            "along_track_offset_km", along_track_offset_km, "offset too large for these revolutions"
        )
    a_ph = np.cbrt(mu * (t_ph / (2.0 * math.pi)) ** 2)
    r_other = 2.0 * a_ph - r
    if np.any(r_other <= floor):
        raise InputError(
            "along_track_offset_km",
            along_track_offset_km,
            f"the phasing ellipse would dip below the central body ({floor:.3f} km); "
            "use more revolutions",
        )
    dv = np.abs(_apsis_speed(mu, r, r_other) - np.sqrt(mu / r))
    return PhasingManoeuvre(
        _out(dv),
        _out(dv),
        _out(2.0 * dv),
        _out(k * t_ph),
        _out(a_ph),
        _out(np.degrees(theta)),
    )
