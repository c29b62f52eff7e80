"""Impulsive burns in the local RTN frame, burn timing (epoch, apsis, node) and burn plans.

RTN axes (Vallado 4th ed., Sec. 3.3.3, the "RSW" satellite coordinate system; CCSDS calls it
RTN): R radial, along r; N normal, along the angular momentum h = r x v; T = N x R, the
transverse (along-track) direction, equal to the velocity direction on a circular orbit. A
burn is instantaneous: the position is kept, the velocity changes by dv.

Timing: "the next" apsis or node is the first one strictly after the time of the previous
burn (of the plan's start for the first), found from the mean anomaly (two-body, Kepler's
equation); the orbit is then carried there with ``propagate_two_body``. For a circular orbit
(e = 0) the periapsis is the ascending node by the element convention of
``orbitledger.kernel.elements``; an equatorial orbit has no nodes (refused).

Sized transfers of a plan: "circular" to a radius r_c: at the burn point the velocity is made
horizontal with the speed of the ellipse whose other apsis is r_c (vis-viva), then, half a
transfer period later at that apsis, horizontal with the circular speed (two steps: a
Hohmann transfer from wherever the burn is, Vallado 4th ed., Sec. 6.3.1); if the burn point
is already at r_c the one circularising burn is made. "inclination" to i: the horizontal
velocity turns about r, keeping its size and the radial velocity, to the nearest plane with
that inclination (Vallado 4th ed., Sec. 6.4.1; at a node the turn equals the change of i);
refused where no plane through r has that inclination.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike

from .anomalies import true_to_mean_anomaly
from .constants import EARTH
from .elements import Elements, state_to_elements
from .errors import InputError
from .twobody import propagate_two_body

__all__ = [
    "BurnSpec",
    "BurnStep",
    "apply_burn_plan",
    "apply_impulse",
    "inertial_to_rtn",
    "rtn_basis",
    "rtn_to_inertial",
    "time_to_next_s",
]

BurnPoint = Literal["epoch", "periapsis", "apoapsis", "ascending", "descending"]
_EVENTS = ("periapsis", "apoapsis", "ascending", "descending")


def rtn_basis(r_km: ArrayLike, v_km_s: ArrayLike) -> np.ndarray:
    """Unit vectors R, T, N as the rows of a (..., 3, 3) array (Vallado 4th ed., Sec. 3.3.3)."""
    r = np.asarray(r_km, dtype=float)
    v = np.asarray(v_km_s, dtype=float)
    h = np.cross(r, v)
    hn = np.linalg.norm(h, axis=-1, keepdims=True)
    if np.any(hn == 0.0):
        raise InputError("v_km_s", "parallel to r_km", "the RTN frame needs r x v != 0")
    rhat = r / np.linalg.norm(r, axis=-1, keepdims=True)
    nhat = h / hn
    that = np.cross(nhat, rhat)
    return np.stack([rhat, that, nhat], axis=-2)


def rtn_to_inertial(dv_rtn_km_s: ArrayLike, r_km: ArrayLike, v_km_s: ArrayLike) -> np.ndarray:
    """A vector given in RTN components at the state (r, v), in the inertial frame (..., 3)."""
    basis = rtn_basis(r_km, v_km_s)
    return np.einsum("...i,...ij->...j", np.asarray(dv_rtn_km_s, dtype=float), basis)


def inertial_to_rtn(dv_km_s: ArrayLike, r_km: ArrayLike, v_km_s: ArrayLike) -> np.ndarray:
    """An inertial vector's RTN components at the state (r, v), (..., 3)."""
    basis = rtn_basis(r_km, v_km_s)
    return np.einsum("...ij,...j->...i", basis, np.asarray(dv_km_s, dtype=float))


def apply_impulse(
    r_km: ArrayLike, v_km_s: ArrayLike, dv_rtn_km_s: ArrayLike
) -> tuple[np.ndarray, np.ndarray]:
    """The state just after an impulse dv (RTN components, km/s) at (r, v): (r, v + dv)."""
    r = np.asarray(r_km, dtype=float)
    v = np.asarray(v_km_s, dtype=float)
    return r.copy(), v + rtn_to_inertial(dv_rtn_km_s, r, v)


def time_to_next_s(
    r_km: ArrayLike, v_km_s: ArrayLike, event: str, mu_km3_s2: float = EARTH.mu_km3_s2
) -> float:
    """Seconds from the state (r, v) to the next periapsis, apoapsis, ascending or descending
    node, strictly after now (an event at this very instant is one period away).

    Two-body timing from the mean anomaly: dt = ((M_event - M_now) mod 2 pi) / n. Refused:
    an apoapsis or a node that a hyperbolic orbit never reaches, a node of an equatorial orbit.
    """
    if event not in _EVENTS:
        raise InputError("at", event, f"must be one of {', '.join(_EVENTS)}")
    el = state_to_elements(r_km, v_km_s, mu_km3_s2)
    a, e = float(np.asarray(el.a_km)), float(np.asarray(el.e))
    nu = math.radians(float(np.asarray(el.nu_deg)))
    if event in ("ascending", "descending"):
        if float(np.asarray(el.i_deg)) in (0.0, 180.0):
            raise InputError("at.node", event, "an equatorial orbit has no nodes")
        u_target = 0.0 if event == "ascending" else math.pi
        nu_target = u_target - math.radians(float(np.asarray(el.argp_deg)))
    else:
        nu_target = 0.0 if event == "periapsis" else math.pi
    if e >= 1.0:
        m_now = float(true_to_mean_anomaly(nu if nu <= math.pi else nu - 2 * math.pi, e))
        nu_t = math.remainder(nu_target, 2 * math.pi)
        if event == "apoapsis" or abs(nu_t) >= math.acos(-1.0 / e):
            raise InputError("at", event, "a hyperbolic orbit never reaches this point")
        m_target = float(true_to_mean_anomaly(nu_t, e))
        n = math.sqrt(mu_km3_s2 / (-a) ** 3)
        if m_target <= m_now:
            raise InputError("at", event, "the hyperbolic orbit has already passed this point")
        return (m_target - m_now) / n
    m_now = float(true_to_mean_anomaly(nu, e))
    m_target = float(true_to_mean_anomaly(nu_target, e))
    n = math.sqrt(mu_km3_s2 / a**3)
    dm = (m_target - m_now) % (2 * math.pi)
    if dm < 1e-12:
        dm = 2 * math.pi
    return dm / n


@dataclass(frozen=True)
class BurnSpec:
    """One burn of a plan, kernel-side: where, and either an RTN impulse or a sized transfer.

    at: "epoch" (then ``t_s``, seconds after the plan's start), "periapsis", "apoapsis",
    "ascending" or "descending" (the next one after the previous burn). Exactly one of
    ``dv_rtn_km_s``, ``circular_radius_km``, ``i_deg``.
    """

    name: str
    at: BurnPoint
    t_s: float | None = None
    dv_rtn_km_s: tuple[float, float, float] | None = None
    circular_radius_km: float | None = None
    i_deg: float | None = None


@dataclass(frozen=True)
class BurnStep:
    """One impulse as flown: time after the plan's start, state before and after, dv."""

    name: str
    t_s: float
    r_km: np.ndarray
    v_before_km_s: np.ndarray
    v_after_km_s: np.ndarray
    dv_km_s: np.ndarray
    dv_rtn_km_s: np.ndarray
    dv_magnitude_km_s: float
    elements_after: Elements


def _horizontal(r: np.ndarray, v: np.ndarray, speed: float) -> np.ndarray:
    """Velocity of the given speed along T at (r, v): flight-path angle zero, same plane."""
    return speed * rtn_basis(r, v)[1]


def _turned_to_inclination(r: np.ndarray, v: np.ndarray, i_deg: float, field: str) -> np.ndarray:
    basis = rtn_basis(r, v)
    rhat, that, nhat = basis
    # New normal n' = cos(b) N + sin(b) T (perpendicular to r); n'_z = cos(i).
    amp = math.hypot(nhat[2], that[2])
    target = math.cos(math.radians(i_deg))
    if abs(target) > amp + 1e-15:
        raise InputError(
            field, i_deg, "no plane through the burn point has this inclination; burn at a node"
        )
    phi = math.atan2(that[2], nhat[2])
    delta = math.acos(max(-1.0, min(1.0, target / amp)))
    b = min((phi + delta, phi - delta), key=lambda x: abs(math.remainder(x, 2 * math.pi)))
    n_new = math.cos(b) * nhat + math.sin(b) * that
    t_new = np.cross(n_new, rhat)
    return float(v @ rhat) * rhat + float(v @ that) * t_new


def apply_burn_plan(
    r0_km: ArrayLike,
    v0_km_s: ArrayLike,
    burns: Sequence[BurnSpec],
    mu_km3_s2: float = EARTH.mu_km3_s2,
) -> tuple[BurnStep, ...]:
    """Fly a burn plan from the state (r0, v0) at t = 0: each burn in order, two-body between.

    Returns one ``BurnStep`` per impulse (a "circular" transfer gives two, named
    "<name> (1 of 2)" and "(2 of 2)"), each with the elements just after it. Refused: an
    epoch burn before the previous burn (field ``burns[k].at.epoch_utc``), a timing that
    does not exist for the orbit, an unreachable inclination.
    """
    r = np.asarray(r0_km, dtype=float).copy()
    v = np.asarray(v0_km_s, dtype=float).copy()
    t = 0.0
    steps: list[BurnStep] = []

    def coast(dt: float) -> None:
        nonlocal r, v, t
        if dt > 0.0:
            r_new, v_new = propagate_two_body(r, v, np.array([dt]), mu_km3_s2=mu_km3_s2)
            r, v = (
                np.asarray(r_new, dtype=float).reshape(3),
                np.asarray(v_new, dtype=float).reshape(3),
            )
        t += dt

    def fire(name: str, v_new: np.ndarray) -> None:
        nonlocal v
        dv = v_new - v
        steps.append(
            BurnStep(
                name=name,
                t_s=t,
                r_km=r.copy(),
                v_before_km_s=v.copy(),
                v_after_km_s=v_new.copy(),
                dv_km_s=dv,
                dv_rtn_km_s=inertial_to_rtn(dv, r, v),
                dv_magnitude_km_s=float(np.linalg.norm(dv)),
                elements_after=state_to_elements(r, v_new, mu_km3_s2),
            )
        )
        v = v_new

    for k, burn in enumerate(burns):
        given = [x is not None for x in (burn.dv_rtn_km_s, burn.circular_radius_km, burn.i_deg)]
        if sum(given) != 1:
            raise InputError(
                f"burns[{k}]", burn.name, "give exactly one of an RTN dv or a transfer"
            )
        if burn.at == "epoch":
            if burn.t_s is None or not math.isfinite(burn.t_s) or burn.t_s < t:
                raise InputError(
                    f"burns[{k}].at.epoch_utc",
                    burn.t_s,
                    "is before the previous burn (or the case epoch)",
                )
            coast(float(burn.t_s) - t)
        else:
            coast(time_to_next_s(r, v, burn.at, mu_km3_s2))
        if burn.dv_rtn_km_s is not None:
            fire(burn.name, v + rtn_to_inertial(burn.dv_rtn_km_s, r, v))
        elif burn.i_deg is not None:
            fire(
                burn.name,
                _turned_to_inclination(r, v, float(burn.i_deg), f"burns[{k}].transfer.i_deg"),
            )
        else:
            rc = float(burn.circular_radius_km)  # type: ignore[arg-type]
            rn = float(np.linalg.norm(r))
            if abs(rn - rc) < 1e-9 * rc:
                fire(burn.name, _horizontal(r, v, math.sqrt(mu_km3_s2 / rc)))
                continue
            fire(
                f"{burn.name} (1 of 2)",
                _horizontal(r, v, math.sqrt(2 * mu_km3_s2 * rc / (rn * (rn + rc)))),
            )
            coast(math.pi * math.sqrt((0.5 * (rn + rc)) ** 3 / mu_km3_s2))
            fire(f"{burn.name} (2 of 2)", _horizontal(r, v, math.sqrt(mu_km3_s2 / rc)))
    return tuple(steps)
