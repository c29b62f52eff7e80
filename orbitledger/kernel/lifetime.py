"""Orbital lifetime: years until the perigee falls to a re-entry altitude under atmospheric drag.

Two methods, both with the drag of ``orbitledger.kernel.forces`` and a density profile
(``orbitledger.kernel.density``: the exponential atmosphere of ``orbitledger.kernel.atmosphere``
by default, tabulated every 1 km, or a ``DensityProfile`` the caller gives):

- "orbit-averaged" (default; any span): the Gauss equations for a and e under a tangential
  drag acceleration f_t = -(1/2) F rho v^2 / B, averaged over one revolution (the averaged
  drag rates of King-Hele, *Satellite Orbits in an Atmosphere: Theory and Applications*,
  Blackie 1987, by quadrature over 128 eccentric anomalies instead of the book's
  Bessel-function series), with King-Hele's atmospheric-rotation factor
  F = (1 - r_p w cos i / v_p)^2. They are integrated with the semi-major axis as the
  variable (``orbitledger.kernel.decay``: Dormand-Prince 5(4), rtol 1e-8) until the perigee
  height reaches the re-entry altitude; a circular orbit's lifetime is one quadrature of
  da / |da/dt| over the profile's 1-km cells. In a density that does not change with time the
  rates scale exactly as 1/B, so one integration (cached) serves every ballistic coefficient.
  Agreement with the former time integration (scipy RK45, rtol 1e-7; kept in
  ``lifetime_ode``): 1e-4 relative for eccentric orbits, 2e-4 for circular ones, where that
  integration is itself up to 1.5e-4 off the converged quadrature (tests). The height is
  above the ellipsoid radius at the orbit's mean sin^2(latitude), sin^2(i)/2:
  R = R_eq (1 - f sin^2(i) / 2). J2 and the Sun and Moon are left out: they move the perigee
  and the node but not, on average, a. The exponential model has no day-night or seasonal
  swing.
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

from .atmosphere import solar_activity_level
from .constants import EARTH, SECONDS_PER_DAY, TROPICAL_YEAR_DAYS, Body
from .decay import circular_decay, decay_orbits
from .density import DensityProfile, exponential_profile
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
_NUMERICAL_MAX_YEARS = 10.0


@dataclass(frozen=True, eq=False)
class LifetimeResult:
    """Years until re-entry, with the assumptions behind the number.

    years: time until the perigee (numerical: the height) reaches ``reentry_altitude_km``;
        ``math.inf`` if it did not within ``max_years`` (``reentered`` False).
    t_years, perigee_alt_km, apogee_alt_km: the decay history at the integrator's samples.
    assumptions: what the number rests on (density model, solar activity, B, altitude...).
    caution: the lifetime caution, to be shown beside the number.
    solar_activity: the exponential model's level, or the flux scenario of the profile used;
    flux_scenario: the scenario in words (both models).
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
    flux_scenario: str = ""

    @property
    def days(self) -> float:
        return self.years * TROPICAL_YEAR_DAYS


def _mean_radius_km(i_rad: float, body: Body) -> float:
    """Ellipsoid radius at the orbit's mean sin^2(latitude) = sin^2(i)/2 (first order in f)."""
    return body.radius_km * (1.0 - 0.5 * body.flattening * math.sin(i_rad) ** 2)


_CACHE: dict[tuple, tuple] = {}
_CACHE_MAX = 512
_HISTORY_POINTS = 400


def _unit_b_history(
    a_km: float,
    e: float,
    i_rad: float,
    profile: DensityProfile,
    radius: float,
    h_reentry: float,
    body: Body,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, bool, int]:
    """(a, e, tau, reentered, evaluations) of the decay with B = 1 kg/m^2 in a density that
    does not change with time: the time of any B is B tau (the rates scale as 1/B). Cached,
    so that one integration serves every ballistic coefficient."""
    key = (a_km, e, i_rad, profile.key, radius, h_reentry, body.mu_km3_s2,
           body.rotation_rate_rad_s)  # fmt: skip
    hit = _CACHE.get(key)
    if hit is not None:
        return hit
    common = dict(i_rad=i_rad, ballistic_coefficient_kg_m2=1.0, profile=profile,
                  radius_km=radius, reentry_altitude_km=h_reentry, body=body)  # fmt: skip
    if e == 0.0:
        a_h, tau = circular_decay(a_km, **common)  # type: ignore[arg-type]
        out = (a_h, np.zeros(a_h.size), tau, bool(np.isfinite(tau[-1])), 3 * a_h.size)
    else:
        run = decay_orbits(np.array([a_km]), np.array([e]), history=True,
                           **common)  # type: ignore[arg-type]  # fmt: skip
        a_h, e_h, tau = run.history[0]
        out = (a_h, e_h, tau, bool(np.isfinite(tau[-1])), run.evaluations)
    if len(_CACHE) >= _CACHE_MAX:
        _CACHE.clear()
    _CACHE[key] = out
    return out


def _thin(n: int) -> np.ndarray:
    """Indices of at most _HISTORY_POINTS samples of n, first and last kept."""
    if n <= _HISTORY_POINTS:
        return np.arange(n)
    return np.unique(np.linspace(0, n - 1, _HISTORY_POINTS).round().astype(int))


def _orbit_averaged(
    a_km: float,
    e: float,
    i_rad: float,
    b: float,
    profile: DensityProfile,
    h_reentry: float,
    max_years: float,
    body: Body,
) -> tuple[float, bool, np.ndarray, float, int]:
    radius = _mean_radius_km(i_rad, body)
    span_s = max_years * _YEAR_S
    if profile.time_varying:
        run = decay_orbits(
            np.array([a_km]), np.array([e]), i_rad=i_rad, ballistic_coefficient_kg_m2=b,
            profile=profile, radius_km=radius, reentry_altitude_km=h_reentry, body=body,
            t_stop_s=span_s, history=True,
        )  # fmt: skip
        a_h, e_h, t_s = run.history[0]
        reentered, evaluations = bool(run.reentered[0]), run.evaluations
    else:
        a_h, e_h, tau, reentered, evaluations = _unit_b_history(
            a_km, e, i_rad, profile, radius, h_reentry, body
        )
        t_s = tau * b
        if t_s[-1] > span_s:  # outlives the span: cut the history at its end
            reentered = False
            k = int(np.searchsorted(t_s, span_s))
            w = (span_s - t_s[k - 1]) / (t_s[k] - t_s[k - 1]) if np.isfinite(t_s[k]) else 0.0
            a_h = np.append(a_h[:k], a_h[k - 1] + w * (a_h[k] - a_h[k - 1]))
            e_h = np.append(e_h[:k], e_h[k - 1] + w * (e_h[k] - e_h[k - 1]))
            t_s = np.append(t_s[:k], span_s)
    keep = _thin(t_s.size)
    a_h, e_h, t_s = a_h[keep], np.clip(e_h[keep], 0.0, None), t_s[keep]
    history = np.array([t_s / _YEAR_S, a_h * (1.0 - e_h) - radius, a_h * (1.0 + e_h) - radius])
    end_years = float(t_s[-1]) / _YEAR_S
    return end_years, reentered, history, radius, int(evaluations)


def _numerical(
    elements: Elements,
    b: float,
    profile: DensityProfile,
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
    model = ForceModel(zonal_degree=2, ballistic_coefficient_kg_m2=b, body=body, density=profile)
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
    density: DensityProfile | None = None,
) -> LifetimeResult:
    """Orbital lifetime under drag: years until the perigee reaches ``reentry_altitude_km``.

    Given osculating (treated as mean) ``elements`` (a_km, e, i_deg used; the numerical
    method uses all six), the ballistic coefficient m / (Cd A) in kg/m^2, the solar-activity
    level ("low", "moderate", "high"; see ``orbitledger.kernel.atmosphere``), the re-entry
    altitude (km above the ellipsoid; 120 km by default, the usual entry interface, common
    practice), ``method`` ("orbit-averaged" or "numerical"), and the longest span searched
    (``max_years``: default 200 for orbit-averaged; numerical runs are limited to 10 years and
    default to 2). ``progress`` (numerical only) is called with the fraction done once per
    simulated day. ``density``: a ``DensityProfile`` (its time origin at the epoch of
    ``elements``) used instead of the
    exponential model at ``solar_activity``. Returns a ``LifetimeResult`` with the assumptions
    and the caution beside the number; ``years`` is ``math.inf`` if the orbit outlives
    ``max_years``. Method and sources: module docstring. The orbit-averaged method takes about
    a millisecond for a circular orbit and a few for an eccentric one.
    """
    if method not in LIFETIME_METHODS:
        raise InputError("method", method, f"must be one of {', '.join(LIFETIME_METHODS)}")
    b = float(ballistic_coefficient_kg_m2)
    if not (math.isfinite(b) and b > 0.0):
        raise InputError("ballistic_coefficient_kg_m2", ballistic_coefficient_kg_m2, "must be > 0")
    level = solar_activity_level(solar_activity)
    profile = exponential_profile(level) if density is None else density
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
            a_km, e, i_rad, b, profile, reentry_altitude_km, max_years, body
        )
        force_terms = (
            "drag only, orbit-averaged Gauss equations for a and e (King-Hele 1987), "
            "integrated over the semi-major axis"
        )
    else:
        years, reentered, history, radius, nfev = _numerical(
            elements, b, profile, reentry_altitude_km, max_years, body, progress
        )
        force_terms = "point mass, J2 and drag, Cowell propagation with DOP853 (rtol 1e-9)"
    assumptions = {
        "method": method,
        "forces": force_terms,
        "density_model": profile.model,
        "solar_activity": (
            f"{level.name}: {level.meaning}, held constant over the lifetime"
            if density is None
            else profile.scenario
        ),
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
    if density is not None and profile.notes:
        assumptions["density_notes"] = "; ".join(f"{k}: {v}" for k, v in profile.notes.items())
    return LifetimeResult(
        years=years if reentered else math.inf,
        reentered=reentered,
        method=method,
        max_years=float(max_years),
        reentry_altitude_km=float(reentry_altitude_km),
        ballistic_coefficient_kg_m2=b,
        solar_activity=level.name if density is None else profile.scenario,
        density_model=profile.model,
        t_years=history[0],
        perigee_alt_km=history[1],
        apogee_alt_km=history[2],
        nfev=nfev,
        assumptions=MappingProxyType(assumptions),
        flux_scenario=profile.scenario,
    )
