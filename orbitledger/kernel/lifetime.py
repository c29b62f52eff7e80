"""Orbital lifetime: years until the perigee falls to a re-entry altitude under atmospheric drag.

Two methods, both with the drag model of ``orbitledger.kernel.forces`` and the density model
of ``orbitledger.kernel.atmosphere``:

- "orbit-averaged" (default; any span): the Gauss equations for a and e under a tangential
  drag acceleration f_t = -(1/2) F rho v^2 / B, averaged over one revolution,

      <da/dt> = -(1/2pi) int (F a^2 rho v^3 / (mu B)) (1 - e cos E) dE
      <de/dt> = -(1/2pi) int (F rho v (1 - e^2) / B) cos E dE

  (the averaged drag rates of King-Hele, *Satellite Orbits in an Atmosphere: Theory and
  Applications*, Blackie 1987, written with the eccentric anomaly E and integrated by
  quadrature instead of through the book's Bessel-function series), with r = a (1 - e cos E), v^2 = (mu/a)(1 + e cos E)/(1 - e cos E), the
  integrals by the trapezoidal rule over 128 values of E (spectrally accurate for a periodic
  integrand), and King-Hele's atmospheric-rotation factor
  F = (1 - r_p w cos i / v_p)^2 (King-Hele 1987; r_p, v_p at perigee). The pair
  (a, e) is integrated with scipy's RK45 until the perigee height reaches the re-entry
  altitude. The height is above the ellipsoid radius at the orbit's mean sin^2(latitude),
  sin^2(i)/2: R = R_eq (1 - f sin^2(i) / 2). J2 and the Sun and Moon are left out: they move
  the perigee and the node but not, on average, a; the density's day-night and seasonal
  swings are left out too (the exponential model has none).
- "numerical": Cowell propagation (``propagate_cowell``) with J2 and drag until the height
  falls through the re-entry altitude; exact for the model but about a second of computing
  per simulated day, so for spans of days to months.

Caution: lifetime predictions carry large uncertainty, chiefly from the solar activity over
the years ahead (a factor of several in density at 400-600 km between solar minimum and
maximum) and from the ballistic coefficient. Treat the result as preliminary analysis with
the stated models; it must not be the only basis of a disposal-compliance claim: defer to the
licensing authority's accepted tools and to licensed practice.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np
from scipy.integrate import solve_ivp

from .atmosphere import DENSITY_MODEL_NAME, density_kg_m3, solar_activity_level
from .constants import EARTH, SECONDS_PER_DAY, TROPICAL_YEAR_DAYS, Body
from .elements import Elements
from .errors import InputError

__all__ = ["LIFETIME_CAUTION", "LIFETIME_METHODS", "LifetimeResult", "lifetime_years"]

LIFETIME_CAUTION = (
    "Lifetime predictions carry large uncertainty, chiefly from future solar activity and the "
    "ballistic coefficient; this is preliminary analysis with the stated models and must not be "
    "the only basis of a disposal-compliance claim: defer to the licensing authority and "
    "licensed practice."
)
LIFETIME_METHODS = ("orbit-averaged", "numerical")
_YEAR_S = TROPICAL_YEAR_DAYS * SECONDS_PER_DAY
_E_NODES = np.linspace(0.0, 2.0 * math.pi, 128, endpoint=False)
_COS_E = np.cos(_E_NODES)
_NUMERICAL_MAX_YEARS = 10.0


@dataclass(frozen=True, eq=False)
class LifetimeResult:
    """Years until re-entry, with the assumptions behind the number.

    years: time until the perigee (numerical: the height) reaches ``reentry_altitude_km``;
        ``math.inf`` if it did not within ``max_years`` (``reentered`` False).
    t_years, perigee_alt_km, apogee_alt_km: the decay history at the integrator's samples.
    assumptions: what the number rests on (density model, solar activity, B, altitude...).
    caution: the lifetime caution, to be shown beside the number.
    """

    years: float
    reentered: bool
    method: str
    max_years: float
    reentry_altitude_km: float
    ballistic_coefficient_kg_m2: float
    solar_activity: str
    density_model: str
    t_years: np.ndarray
    perigee_alt_km: np.ndarray
    apogee_alt_km: np.ndarray
    nfev: int
    assumptions: MappingProxyType = field(default_factory=lambda: MappingProxyType({}))
    caution: str = LIFETIME_CAUTION

    @property
    def days(self) -> float:
        return self.years * TROPICAL_YEAR_DAYS


def _mean_radius_km(i_rad: float, body: Body) -> float:
    """Ellipsoid radius at the orbit's mean sin^2(latitude) = sin^2(i)/2 (first order in f)."""
    return body.radius_km * (1.0 - 0.5 * body.flattening * math.sin(i_rad) ** 2)


def _averaged_rates(
    b_kg_m2: float,
    cos_i: float,
    radius_km: float,
    density: Callable[[np.ndarray], np.ndarray],
    body: Body,
) -> Callable[[float, np.ndarray], np.ndarray]:
    mu, w = body.mu_km3_s2, body.rotation_rate_rad_s

    def rates(_t: float, y: np.ndarray) -> np.ndarray:
        # A trial step of the integrator may overshoot below the surface near the end: clamp
        # so that the rates stay finite and the step is rejected for its error instead.
        a, e = max(y[0], radius_km), min(max(y[1], 0.0), 0.999)
        one_minus = 1.0 - e * _COS_E
        r = a * one_minus
        v = np.sqrt(mu / a * (1.0 + e * _COS_E) / one_minus)
        rho = density(r - radius_km)
        v_p = math.sqrt(mu / a * (1.0 + e) / (1.0 - e))
        rotation = (1.0 - a * (1.0 - e) * w * cos_i / v_p) ** 2
        k = 1e3 * rotation / b_kg_m2  # rho [kg/m^3] / B [kg/m^2] -> 1/m; 1e3 -> km/s^2
        da = -k * a * a / mu * np.mean(rho * v**3 * one_minus)
        de = -k * (1.0 - e * e) * np.mean(rho * v * _COS_E) if e > 0.0 else 0.0
        return np.array([da, de])

    return rates


def _orbit_averaged(
    a_km: float,
    e: float,
    i_rad: float,
    b: float,
    level: str,
    h_reentry: float,
    max_years: float,
    body: Body,
) -> tuple[float, bool, np.ndarray, float, int]:
    radius = _mean_radius_km(i_rad, body)

    def density(h: np.ndarray) -> np.ndarray:
        return density_kg_m3(h, level)

    def perigee_down(_t: float, y: np.ndarray) -> float:
        return y[0] * (1.0 - max(y[1], 0.0)) - radius - h_reentry

    perigee_down.terminal = True  # type: ignore[attr-defined]
    perigee_down.direction = -1.0  # type: ignore[attr-defined]
    sol = solve_ivp(
        _averaged_rates(b, math.cos(i_rad), radius, density, body),
        (0.0, max_years * _YEAR_S),
        [a_km, e],
        method="RK45",
        rtol=1e-7,
        atol=[1e-4, 1e-8],  # 0.1 m in a, 1e-8 in e: lifetimes stable to 1e-5 relative
        events=perigee_down,
    )
    reentered = bool(sol.status == 1)
    t_end = float(sol.t_events[0][0]) if reentered else float(sol.t[-1])
    y = sol.y
    t = sol.t
    if reentered:
        t = np.append(t, t_end)
        y = np.concatenate((y, sol.y_events[0][0][:, None]), axis=1)
    ecc = np.clip(y[1], 0.0, None)
    history = (t / _YEAR_S, y[0] * (1.0 - ecc) - radius, y[0] * (1.0 + ecc) - radius)
    return t_end / _YEAR_S, reentered, np.array(history), radius, int(sol.nfev)


def _numerical(
    elements: Elements,
    b: float,
    level: str,
    h_reentry: float,
    max_years: float,
    body: Body,
    progress: Callable[[float], None] | None,
) -> tuple[float, bool, np.ndarray, float, int]:
    from . import elements_to_state, state_to_elements  # the two-body kernel
    from .cowell import propagate_cowell
    from .forces import ForceModel

    r0, v0 = elements_to_state(elements, body.mu_km3_s2)
    span_s = max_years * _YEAR_S
    t_s = np.linspace(0.0, span_s, max(2, int(span_s / 3600.0) + 1))  # hourly samples
    model = ForceModel(
        zonal_degree=2, ballistic_coefficient_kg_m2=b, solar_activity=level, body=body
    )
    result = propagate_cowell(
        r0,
        v0,
        t_s,
        force_model=model,
        rtol=1e-9,
        reentry_altitude_km=h_reentry,
        dense_output=False,
        progress=progress,
    )
    osc = state_to_elements(result.r_km, result.v_km_s, body.mu_km3_s2)
    a = np.asarray(osc.a_km)
    ecc = np.asarray(osc.e)
    radius = _mean_radius_km(math.radians(float(np.asarray(elements.i_deg))), body)
    history = np.array([result.t_s / _YEAR_S, a * (1 - ecc) - radius, a * (1 + ecc) - radius])
    end_s = result.decay_time_s if result.decay_time_s is not None else result.t_end_s
    return float(end_s) / _YEAR_S, result.decayed, history, radius, int(result.nfev)


def lifetime_years(
    elements: Elements,
    *,
    ballistic_coefficient_kg_m2: float,
    solar_activity: str = "moderate",
    reentry_altitude_km: float = 120.0,
    method: str = "orbit-averaged",
    max_years: float | None = None,
    body: Body = EARTH,
    progress: Callable[[float], None] | None = None,
) -> LifetimeResult:
    """Orbital lifetime under drag: years until the perigee reaches ``reentry_altitude_km``.

    Given osculating (treated as mean) ``elements`` (a_km, e, i_deg used; the numerical
    method uses all six), the ballistic coefficient m / (Cd A) in kg/m^2, the solar-activity
    level ("low", "moderate", "high"; see ``orbitledger.kernel.atmosphere``), the re-entry
    altitude (km above the ellipsoid; 120 km by default, the usual entry interface, common
    practice), ``method`` ("orbit-averaged" or "numerical"), and the longest span searched
    (``max_years``: default 200 for orbit-averaged; numerical runs are limited to 10 years and
    default to 2). ``progress`` (numerical only) is called with the fraction done once per
    simulated day. Returns a ``LifetimeResult`` with the assumptions and the caution beside
    the number; ``years`` is ``math.inf`` if the orbit outlives ``max_years``. Method and
    sources: module docstring. The orbit-averaged method takes a few milliseconds to tens of
    milliseconds per case, so it can be called in a loop (e.g. to search a disposal perigee).
    """
    if method not in LIFETIME_METHODS:
        raise InputError("method", method, f"must be one of {', '.join(LIFETIME_METHODS)}")
    b = float(ballistic_coefficient_kg_m2)
    if not (math.isfinite(b) and b > 0.0):
        raise InputError("ballistic_coefficient_kg_m2", ballistic_coefficient_kg_m2, "must be > 0")
    level = solar_activity_level(solar_activity)
    if max_years is None:
        max_years = 200.0 if method == "orbit-averaged" else 2.0
    if not (math.isfinite(max_years) and max_years > 0.0):
        raise InputError("max_years", max_years, "must be a positive number of years")
    if method == "numerical" and max_years > _NUMERICAL_MAX_YEARS:
        raise InputError(
            "max_years",
            max_years,
            f"the numerical method is limited to "
            f"{_NUMERICAL_MAX_YEARS:g} years (about a second per simulated day); use orbit-averaged",
        )
    if not math.isfinite(reentry_altitude_km) or reentry_altitude_km < 0.0:
        raise InputError("reentry_altitude_km", reentry_altitude_km, "must be >= 0 km")
    a_km, e = float(np.asarray(elements.a_km)), float(np.asarray(elements.e))
    i_rad = math.radians(float(np.asarray(elements.i_deg)))
    if not (a_km > 0.0 and 0.0 <= e < 1.0):
        raise InputError("elements", (a_km, e), "lifetime needs an elliptic orbit (a > 0, e < 1)")
    perigee_alt = a_km * (1.0 - e) - _mean_radius_km(i_rad, body)
    if perigee_alt <= reentry_altitude_km:
        raise InputError(
            "elements",
            (a_km, e),
            f"perigee height {perigee_alt:.1f} km is already at or below "
            f"the re-entry altitude {reentry_altitude_km:g} km",
        )
    if method == "orbit-averaged":
        years, reentered, history, radius, nfev = _orbit_averaged(
            a_km, e, i_rad, b, level.name, reentry_altitude_km, max_years, body
        )
        force_terms = "drag only, orbit-averaged Gauss equations for a and e (King-Hele 1987)"
    else:
        years, reentered, history, radius, nfev = _numerical(
            elements, b, level.name, reentry_altitude_km, max_years, body, progress
        )
        force_terms = "point mass, J2 and drag, Cowell propagation with DOP853 (rtol 1e-9)"
    assumptions = {
        "method": method,
        "forces": force_terms,
        "density_model": DENSITY_MODEL_NAME,
        "solar_activity": f"{level.name}: {level.meaning}, held constant over the lifetime",
        "ballistic_coefficient_kg_m2": f"{b:.6g} (m / (Cd A), constant)",
        "reentry_altitude_km": f"{reentry_altitude_km:g} (perigee height above the ellipsoid)",
        "reference_radius_km": f"{radius:.3f} (ellipsoid radius at mean sin^2 latitude)",
        "atmosphere": "co-rotating with the Earth",
        "elements": (
            "taken as mean elements"
            if method == "orbit-averaged"
            else "osculating at the epoch (J2 short-period terms move the height by up to ~20 km)"
        ),
        "max_years": f"{max_years:g}",
    }
    return LifetimeResult(
        years=years if reentered else math.inf,
        reentered=reentered,
        method=method,
        max_years=float(max_years),
        reentry_altitude_km=float(reentry_altitude_km),
        ballistic_coefficient_kg_m2=b,
        solar_activity=level.name,
        density_model=DENSITY_MODEL_NAME,
        t_years=history[0],
        perigee_alt_km=history[1],
        apogee_alt_km=history[2],
        nfev=nfev,
        assumptions=MappingProxyType(assumptions),
    )
