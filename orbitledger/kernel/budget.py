"""Delta-v and propellant budget: the rocket equation, drag make-up, disposal, margins, lines.

A budget is a list of lines, each a delta-v with a basis (how it was computed; the disposal
line from ``orbitledger.kernel.disposal``, re-exported here). Computed lines
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
from dataclasses import asdict, dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .atmosphere import density_kg_m3
from .constants import EARTH, G0_M_S2, SECONDS_PER_DAY, TROPICAL_YEAR_DAYS, Body
from .density import DensityProfile
from .disposal import DisposalPlan, disposal_perigee_lowering
from .elements import Elements
from .errors import InputError

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
    factor: float | np.ndarray = 1.0
    if rotating_atmosphere:
        factor = (1.0 - r * body.rotation_rate_rad_s * math.cos(math.radians(i_deg)) / v) ** 2
    decel_m_s2 = 0.5 * rho * (v * 1000.0) ** 2 * factor / b
    mean_decel = float(np.mean(decel_m_s2 * (1.0 - e * cos_e)))
    return mean_decel * _YEAR_S / 1000.0


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
