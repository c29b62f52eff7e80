"""Delta-v and propellant budget: the rocket equation, drag make-up, disposal, margins, lines.

A budget is a list of lines, each a delta-v with a basis (how it was computed). Computed lines
(orbit raise from the burn plan, station-keeping, disposal) get the margin policy's
percentage added; fixed allowances only when asked. Propellant is taken line by line with the
rocket equation from the mass left after the lines before it (Tsiolkovsky; any textbook, e.g.
Curtis 3rd ed., Sec. 6.1, Eq. 6.1), with g0 = 9.80665 m/s^2 exactly (3rd CGPM, 1901).

Caution: a budget is preliminary analysis with the stated models. Station-keeping and
disposal rest on a density model and an assumed solar activity, which are uncertain by a
factor of several; disposal compliance (e.g. a 5- or 25-year rule) is decided by the
licensing authority with its accepted tools, not by this estimate.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import asdict, dataclass, field
from types import MappingProxyType
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .atmosphere import density_kg_m3
from .constants import EARTH, G0_M_S2, SECONDS_PER_DAY, TROPICAL_YEAR_DAYS, Body
from .decay import decay_orbits
from .density import DensityProfile, exponential_profile
from .elements import Elements
from .errors import InputError
from .lifetime import LIFETIME_CAUTION, lifetime_years
from .transfers import hohmann_elliptic

__all__ = [
    "BUDGET_CAUTION",
    "BudgetItem",
    "BudgetLine",
    "DeltaVBudget",
    "DisposalPlan",
    "delta_v_budget",
    "disposal_perigee_lowering",
    "drag_makeup_dv_km_s_per_year",
    "propellant_mass_kg",
]

BUDGET_CAUTION = (
    "Preliminary analysis with the stated models: station-keeping and disposal depend on the "
    "density model and the assumed solar activity; disposal compliance is decided by the "
    "licensing authority with its accepted tools and licensed practice, not by this estimate."
)
_YEAR_S = TROPICAL_YEAR_DAYS * SECONDS_PER_DAY
_E_NODES = np.linspace(0.0, 2.0 * math.pi, 256, endpoint=False)


def propellant_mass_kg(dv_km_s: ArrayLike, isp_s: ArrayLike, initial_mass_kg: ArrayLike) -> Any:
    """Propellant, kg, to give ``initial_mass_kg`` a delta-v of ``dv_km_s`` with ``isp_s``.

    m_p = m0 (1 - exp(-dv / (Isp g0))), g0 = 9.80665 m/s^2 (``G0_M_S2``); the rocket equation
    (Tsiolkovsky; Curtis 3rd ed., Eq. 6.1). Broadcast. Refused: Isp or mass <= 0, dv < 0.
    """
    dv = np.asarray(dv_km_s, dtype=float)
    isp = np.asarray(isp_s, dtype=float)
    m0 = np.asarray(initial_mass_kg, dtype=float)
    if not np.all(np.isfinite(isp)) or np.any(isp <= 0.0):
        raise InputError("isp_s", isp_s, "must be a specific impulse > 0 s")
    if not np.all(np.isfinite(m0)) or np.any(m0 <= 0.0):
        raise InputError("initial_mass_kg", initial_mass_kg, "must be a mass > 0 kg")
    if not np.all(np.isfinite(dv)) or np.any(dv < 0.0):
        raise InputError("dv_km_s", dv_km_s, "must be a delta-v >= 0 km/s")
    mp = m0 * -np.expm1(-dv * 1000.0 / (isp * G0_M_S2))
    return float(mp) if mp.ndim == 0 else mp


def _mean_radius_km(i_deg: float, body: Body) -> float:
    """Ellipsoid radius at the orbit's mean sin^2(latitude) = sin^2(i)/2 (first order in f)."""
    return body.radius_km * (1.0 - body.flattening * math.sin(math.radians(i_deg)) ** 2 / 2.0)


def drag_makeup_dv_km_s_per_year(
    elements: Elements,
    ballistic_coefficient_kg_m2: float,
    solar_activity: str = "moderate",
    body: Body = EARTH,
    rotating_atmosphere: bool = True,
    density: DensityProfile | None = None,
) -> float:
    """Delta-v per year, km/s, that replaces what drag takes from the orbit (station-keeping).

    The along-track drag deceleration (1/2) rho v^2 F / B, averaged over one revolution in the
    eccentric anomaly (dt proportional to (1 - e cos E) dE; 256 nodes, trapezoidal) and
    multiplied by a tropical year. For a circular orbit without atmospheric rotation this is
    the make-up per revolution pi rho a V / B of Larson & Wertz, *Space Mission Analysis and
    Design*, 3rd ed. (1999), Ch. 6, orbit maintenance, times the revolutions per year. F is
    King-Hele's atmospheric-rotation factor (1 - r w cos i / v)^2 (*Satellite Orbits in an
    Atmosphere*, 1987); density from ``orbitledger.kernel.atmosphere`` at the given solar
    activity, or the ``density`` profile (a time-varying one at its start: pass
    ``profile.mean_over(0, years)`` for a mission mean), heights above the ellipsoid at the
    mean latitude.
    """
    a = float(np.asarray(elements.a_km))
    e = float(np.asarray(elements.e))
    i_deg = float(np.asarray(elements.i_deg))
    if not (a > 0.0 and 0.0 <= e < 1.0):
        raise InputError("elements", (a, e), "station-keeping needs an elliptic orbit")
    b = float(ballistic_coefficient_kg_m2)
    if not (math.isfinite(b) and b > 0.0):
        raise InputError("ballistic_coefficient_kg_m2", ballistic_coefficient_kg_m2, "must be > 0")
    cos_e = np.cos(_E_NODES)
    r = a * (1.0 - e * cos_e)
    v = np.sqrt(body.mu_km3_s2 / a * (1.0 + e * cos_e) / (1.0 - e * cos_e))  # km/s
    h = r - _mean_radius_km(i_deg, body)
    rho = density_kg_m3(h, solar_activity) if density is None else density.density_kg_m3(h)
    factor = 1.0
    if rotating_atmosphere:
        factor = (1.0 - r * body.rotation_rate_rad_s * math.cos(math.radians(i_deg)) / v) ** 2
    decel_m_s2 = 0.5 * rho * (v * 1000.0) ** 2 * factor / b
    mean_decel = float(np.mean(decel_m_s2 * (1.0 - e * cos_e)))
    return mean_decel * _YEAR_S / 1000.0


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
    size shared by the batch and 20-km time cells (the times change by about 1e-6 relative
    from the 5-km cells of ``lifetime_years``). ``rough``: the first round's look, each
    orbit with its own steps, the step tolerance on q loosened to 0.5 km and 40-km time
    cells (lifetimes to about 1e-3 relative, enough to place the root within ~0.3 km)."""
    loose = {"q_atol_km": 0.5, "cell_km": 40.0} if rough else {"cell_km": 20.0,
                                                                 "shared_step": True}
    run = decay_orbits(
        0.5 * (r_a + r_ps), (r_a - r_ps) / (r_a + r_ps), i_rad=i_rad,
        ballistic_coefficient_kg_m2=b, profile=profile, radius_km=radius,
        reentry_altitude_km=h_re, body=body, t_stop_s=stop_years * _YEAR_S, **loose,
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
    radius = _mean_radius_km(i_deg, body)
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


@dataclass(frozen=True)
class BudgetItem:
    """One line's input: a delta-v (km/s), whether the margin applies, and its basis."""

    name: str
    dv_km_s: float
    margin: bool = True
    basis: str = ""


@dataclass(frozen=True)
class BudgetLine:
    """One computed line: delta-v before and with margin, propellant, mass before and after."""

    name: str
    dv_km_s: float
    margin_km_s: float
    dv_with_margin_km_s: float
    propellant_kg: float
    mass_before_kg: float
    mass_after_kg: float
    cumulative_dv_km_s: float
    cumulative_propellant_kg: float
    basis: str


@dataclass(frozen=True)
class DeltaVBudget:
    """The budget: lines in order, totals, and whether the propellant on board suffices."""

    lines: tuple[BudgetLine, ...]
    margin_percent: float
    isp_s: float
    initial_mass_kg: float
    total_dv_km_s: float
    total_propellant_kg: float
    final_mass_kg: float
    propellant_available_kg: float | None
    sufficient: bool | None
    caution: str = BUDGET_CAUTION

    def as_dict(self) -> dict[str, Any]:
        """Plain JSON-ready form (lists and floats)."""
        out = asdict(self)
        out["lines"] = [asdict(line) for line in self.lines]
        return out


def delta_v_budget(
    items: Sequence[BudgetItem],
    *,
    isp_s: float,
    initial_mass_kg: float,
    margin_percent: float = 0.0,
    propellant_available_kg: float | None = None,
) -> DeltaVBudget:
    """Lines -> budget: margin, propellant per line by the rocket equation, cumulative mass.

    Given the lines in flight order, Isp (s), the wet mass at the first line (kg), the margin
    policy (a percentage added to every line whose ``margin`` is true) and, optionally, the
    propellant on board (then ``sufficient`` says whether it covers the total).
    """
    pct = float(margin_percent)
    if not (math.isfinite(pct) and pct >= 0.0):
        raise InputError("margin_percent", margin_percent, "must be a percentage >= 0")
    mass = float(initial_mass_kg)
    propellant_mass_kg(0.0, isp_s, mass)  # validates Isp and mass
    lines: list[BudgetLine] = []
    cum_dv = cum_mp = 0.0
    for item in items:
        dv = float(item.dv_km_s)
        if not (math.isfinite(dv) and dv >= 0.0):
            raise InputError(f"budget.{item.name}.dv_km_s", item.dv_km_s, "must be >= 0 km/s")
        margin = dv * pct / 100.0 if item.margin else 0.0
        total = dv + margin
        mp = float(propellant_mass_kg(total, isp_s, mass))
        cum_dv += total
        cum_mp += mp
        lines.append(
            BudgetLine(
                item.name, dv, margin, total, mp, mass, mass - mp, cum_dv, cum_mp, item.basis
            )
        )
        mass -= mp
    available = None if propellant_available_kg is None else float(propellant_available_kg)
    if available is not None and not (math.isfinite(available) and available >= 0.0):
        raise InputError("propellant_mass_kg", propellant_available_kg, "must be >= 0 kg")
    return DeltaVBudget(
        lines=tuple(lines),
        margin_percent=pct,
        isp_s=float(isp_s),
        initial_mass_kg=float(initial_mass_kg),
        total_dv_km_s=cum_dv,
        total_propellant_kg=cum_mp,
        final_mass_kg=mass,
        propellant_available_kg=available,
        sufficient=None if available is None else cum_mp <= available,
    )
