"""Disposal by perigee lowering: the one burn at apogee that brings the drag lifetime under a limit.

The lifetime is ``orbitledger.kernel.lifetime``'s orbit-averaged one (King-Hele, *Satellite
Orbits in an Atmosphere*, 1987; the decay kernel ``orbitledger.kernel.decay``); the perigee
height is searched with batches of candidate perigees integrated at once: a rough batch spread
over the whole range places the root, an accurate comb around it closes the bracket to 0.1 km
(``_perigee_search``). The burn is the first burn of ``hohmann_elliptic`` from apogee.

Caution: compliance with a disposal rule is decided by the licensing authority with its
accepted tools; this is a preliminary estimate with the stated models.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from .constants import EARTH, SECONDS_PER_DAY, TROPICAL_YEAR_DAYS, Body
from .decay import _Q_ATOL_KM, decay_orbits
from .density import DensityProfile, exponential_profile
from .elements import Elements
from .errors import InputError
from .lifetime import LIFETIME_CAUTION, _mean_radius_km, lifetime_years
from .transfers import hohmann_elliptic

__all__ = ["DisposalPlan", "disposal_perigee_lowering"]

_YEAR_S = TROPICAL_YEAR_DAYS * SECONDS_PER_DAY


@dataclass(frozen=True)
class DisposalPlan:
    """The perigee-lowering burn (at apogee) that brings the lifetime under a limit."""

    dv_km_s: float
    perigee_altitude_km: float
    apogee_altitude_km: float
    lifetime_before_years: float
    lifetime_after_years: float
    lifetime_limit_years: float
    assumptions: MappingProxyType = field(default_factory=lambda: MappingProxyType({}))
    caution: str = LIFETIME_CAUTION


def _batch_lifetimes(
    r_a: float,
    r_ps: np.ndarray,
    i_rad: float,
    b: float,
    profile: DensityProfile,
    radius: float,
    h_re: float,
    stop_years: float,
    body: Body,
    rough: bool = False,
) -> np.ndarray:
    """Lifetimes (years; inf beyond ``stop_years``) of orbits of apogee radius r_a and the
    perigee radii r_ps, all integrated at once (``orbitledger.kernel.decay``) with one step
    size shared by the batch and 20-km time cells (the times differ by at most about 1e-5
    relative from ``lifetime_years``, with its own steps and 5-km cells). ``rough``: the first round's look, each
    orbit with its own steps, the step tolerance on q loosened to 0.1 km and 40-km time
    cells (lifetimes to about 1e-3 relative, enough to place the root within ~0.3 km)."""
    run = decay_orbits(
        0.5 * (r_a + r_ps), (r_a - r_ps) / (r_a + r_ps), i_rad=i_rad,
        ballistic_coefficient_kg_m2=b, profile=profile, radius_km=radius,
        reentry_altitude_km=h_re, body=body, t_stop_s=stop_years * _YEAR_S,
        q_atol_km=0.1 if rough else _Q_ATOL_KM, cell_km=40.0 if rough else 20.0,
        shared_step=not rough,
    )  # fmt: skip
    return np.where(run.reentered, run.t_end_s / _YEAR_S, math.inf)


def _root_estimate(h: np.ndarray, t: np.ndarray, limit: float) -> float | None:
    """Where ln T(h) crosses ln(limit): a cubic through the four evaluated points nearest
    the crossing (fewer when fewer are finite), or None without a crossing."""
    ok = np.isfinite(t) & (t > 0.0)
    h, log_t = h[ok], np.log(t[ok])
    order = np.argsort(h)
    h, log_t = h[order], log_t[order] - math.log(limit)
    k = int(np.searchsorted(log_t, 0.0))  # log_t increases with h
    if k == 0 or k == h.size:
        return None
    pick = slice(max(0, k - 2), min(h.size, k + 2))
    coef = np.polyfit(h[pick] - h[k - 1], log_t[pick], h[pick].size - 1)
    roots = np.roots(coef) + h[k - 1]
    real = roots[np.isreal(roots)].real
    inside = real[(real >= h[k - 1]) & (real <= h[k])]
    if inside.size:
        return float(inside[0])
    w = -log_t[k - 1] / (log_t[k] - log_t[k - 1])
    return float(h[k - 1] + w * (h[k] - h[k - 1]))


# The later rounds' perigees around the root estimate, in units of the tolerance.
_COMB = 0.9 * np.arange(-10.0, 11.0)
# Perigees of the rough first round, spread over the search interval (0: the former first
# round, 8 perigees at full accuracy).
_ROUGH_POINTS = 12


def _perigee_search(
    life, lo: float, hi: float, t_hi: float, limit: float, tol_km: float = 0.1, rough=None
) -> tuple[float, float]:
    """The highest perigee radius with lifetime <= limit, within ``tol_km`` of the root.

    ``life(r_ps)`` gives the lifetimes of a batch of perigee radii; ``rough(r_ps)`` the same
    roughly (loose tolerances, a cheaper batch). Round one tries ``_ROUGH_POINTS`` perigees
    spread over [lo, hi] with ``rough`` (or, without it, 8 with ``life``); each later round
    tries a comb of 21 perigees 0.9 tol apart with ``life``, centred on the root of a cubic
    through the four evaluated ln T nearest the crossing (ln T is smooth in the perigee
    height, nearly linear over a scale height). Round one's estimate falls within about
    0.3 km of the root on the decay curves of low orbits, well inside the comb, so the
    second round closes the bracket: one rough batch and one accurate one. A batch costs
    about the same for 3 or 21 perigees (the integration's steps are done for all at once).
    Only accurate lifetimes move the bracket [lo, hi]; rough ones only place the comb.
    """
    seen_h, seen_t = [hi], [t_hi]
    t_lo = 0.0
    if rough is not None and _ROUGH_POINTS:
        spread = np.linspace(lo, hi, _ROUGH_POINTS + 2)[1:-1]
        seen_h.extend(spread.tolist())
        seen_t.extend(rough(spread).tolist())
        guess = _root_estimate(np.array(seen_h), np.array(seen_t), limit)
        if guess is None or not lo < guess < hi:
            guess = 0.5 * (lo + hi)
        candidates = np.unique(np.clip(guess + _COMB * tol_km, lo + 1e-4, hi - 1e-4))
    else:
        candidates = np.linspace(lo, hi, 10)[1:-1]
    for _ in range(12):
        t = life(candidates)
        seen_h.extend(candidates.tolist())
        seen_t.extend(t.tolist())
        below, above = candidates[t <= limit], candidates[t > limit]
        if below.size and below.max() > lo:
            lo, t_lo = float(below.max()), float(t[candidates == below.max()][0])
        if above.size and above.min() < hi:
            hi = float(above.min())
        if hi - lo <= tol_km:
            break
        guess = _root_estimate(np.array(seen_h), np.array(seen_t), limit)
        if guess is None or not lo < guess < hi:
            guess = 0.5 * (lo + hi)
        offsets = _COMB * tol_km
        candidates = np.unique(np.clip(guess + offsets, lo + 1e-4, hi - 1e-4))
    return lo, t_lo


def disposal_perigee_lowering(
    elements: Elements,
    lifetime_limit_years: float,
    ballistic_coefficient_kg_m2: float,
    solar_activity: str = "moderate",
    reentry_altitude_km: float = 120.0,
    body: Body = EARTH,
    density: DensityProfile | None = None,
) -> DisposalPlan:
    """Lower the perigee (one burn at apogee) until the drag lifetime is under the limit.

    Given the end-of-mission mean ``elements``, the limit in years (> 0), the ballistic
    coefficient (kg/m^2), the solar-activity level (or a ``density`` profile,
    ``orbitledger.kernel.density``) and the re-entry altitude. The lifetime is that of
    ``orbitledger.kernel.lifetime.lifetime_years`` (orbit-averaged); the perigee height is
    searched with batches of candidate perigees integrated at once
    (``orbitledger.kernel.decay``, each stopped at three times the limit) until the highest
    perigee that meets the limit is known to 0.1 km (the lifetime grows with perigee height at
    fixed apogee), and the burn is the first burn of ``hohmann_elliptic`` from apogee. No
    burn when the orbit already decays within the limit. Caution: compliance with a disposal
    rule is decided by the licensing authority; this is a preliminary estimate with the stated
    models.
    """
    limit = float(lifetime_limit_years)
    if not (math.isfinite(limit) and limit > 0.0):
        raise InputError("lifetime_limit_years", lifetime_limit_years, "must be > 0 years")
    profile = exponential_profile(solar_activity) if density is None else density
    a = float(np.asarray(elements.a_km))
    e = float(np.asarray(elements.e))
    i_deg = float(np.asarray(elements.i_deg))
    radius = _mean_radius_km(math.radians(i_deg), body)
    r_a, r_p = a * (1.0 + e), a * (1.0 - e)
    b = float(ballistic_coefficient_kg_m2)
    h_re = float(reentry_altitude_km)
    before = lifetime_years(
        elements, ballistic_coefficient_kg_m2=b, solar_activity=solar_activity,
        reentry_altitude_km=h_re, max_years=max(10.0 * limit, 50.0), body=body, density=density,
    ).years  # fmt: skip
    assumptions = {
        "lifetime_model": "orbitledger.kernel.lifetime, orbit-averaged drag (King-Hele 1987)",
        "density_model": profile.model,
        "solar_activity": profile.scenario,
        "ballistic_coefficient_kg_m2": f"{b:.6g}",
        "reentry_altitude_km": f"{h_re:g}",
        "burn": "one retrograde burn at apogee lowering the perigee; apogee unchanged",
        "search": "batches of candidate perigees integrated at once, to 0.1 km",
    }
    if before <= limit:
        return DisposalPlan(
            0.0, r_p - radius, r_a - radius, before, before, limit, MappingProxyType(assumptions)
        )
    i_rad = math.radians(i_deg)

    def life(r_ps: np.ndarray, rough: bool = False) -> np.ndarray:
        return _batch_lifetimes(r_a, r_ps, i_rad, b, profile, radius, h_re, 3.0 * limit, body,
                                rough=rough)  # fmt: skip

    lo = radius + h_re + 1.0  # decays at once
    rp_new, after = _perigee_search(
        life, lo, r_p, before, limit, rough=lambda r_ps: life(r_ps, rough=True)
    )
    if rp_new == lo:
        after = float(life(np.array([lo]))[0])
    dv = float(hohmann_elliptic(r_a, r_p, rp_new, r_a, body.mu_km3_s2, min_radius_km=0.0).dv1_km_s)
    return DisposalPlan(
        dv, rp_new - radius, r_a - radius, before, after, limit, MappingProxyType(assumptions)
    )
