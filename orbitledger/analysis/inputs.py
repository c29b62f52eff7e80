"""From a validated case to the kernel's arguments: the one place that translates.

Every face (the command line, the editor, the records, the trade studies) asks here for the
trajectory, the stations, the force model or the ballistic coefficient of a case, so that a
case means the same computation everywhere.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

from ..kernel.errors import InputError
from ..kernel.forces import ForceModel as KernelForceModel
from ..kernel.forces import ballistic_coefficient_kg_m2 as _ballistic_coefficient
from ..kernel.passes import Station as KernelStation
from ..kernel.propagation import EarthOrientation as KernelEarthOrientation
from ..kernel.propagation import Trajectory, trajectory

__all__ = [
    "ballistic_coefficient_kg_m2",
    "case_earth_orientation",
    "case_force_model",
    "case_stations",
    "case_trajectory",
]


def case_earth_orientation(case: Any) -> KernelEarthOrientation:
    """The stated values, or the IERS table looked up per epoch (``earth_orientation``)."""
    from .earth_orientation import eop_for_case

    return eop_for_case(case)


def case_stations(case: Any) -> tuple[KernelStation, ...]:
    return tuple(
        KernelStation(s.name, s.lat_deg, s.lon_deg, s.height_km, s.elevation_mask_deg)
        for s in case.stations
    )


def ballistic_coefficient_kg_m2(case: Any, *, field: str = "spacecraft") -> float:
    """m / (Cd A) in kg/m^2 from the spacecraft section; refuses a case without one."""
    sc = case.spacecraft
    if sc is None:
        raise InputError(
            field, None, "this analysis needs the spacecraft's mass, drag area and drag coefficient"
        )
    m, area, cd = float(sc.mass_kg), float(sc.drag_area_m2), float(sc.drag_coefficient)
    product = cd * area
    b = m / product if product > 0.0 else math.inf  # Python floats: no numpy warning
    if not (math.isfinite(b) and b > 0.0):  # each factor is in range, their ratio is not
        path, value = (
            ("spacecraft.mass_kg", m)
            if b == 0.0
            else ("spacecraft.drag_coefficient", cd)
            if cd < area
            else ("spacecraft.drag_area_m2", area)
        )
        raise InputError(
            path,
            value,
            f"gives a ballistic coefficient m / (Cd A) = {b:g} kg/m^2 (mass_kg {m:g}, "
            f"drag_area_m2 {area:g}, drag_coefficient {cd:g}): drag cannot be computed",
        )
    return float(_ballistic_coefficient(m, area, cd))


def case_force_model(case: Any) -> KernelForceModel:
    """The kernel force model of a numerical case (drag only when the case asks for it)."""
    fm = case.force_model
    density = None  # the exponential model is evaluated directly (untabulated), as before
    if fm.drag and fm.density_model != "exponential":
        from .flux_scenario import case_density_profile

        density = case_density_profile(case)
    return KernelForceModel(
        zonal_degree=fm.zonal_degree,
        ballistic_coefficient_kg_m2=(
            ballistic_coefficient_kg_m2(case, field="force_model.drag") if fm.drag else None
        ),
        solar_activity=fm.solar_activity,
        third_bodies=tuple(fm.third_body),
        body=case.body_constants(),
        density=density,
    )


def case_trajectory(
    case: Any,
    *,
    duration_s: float | None = None,
    progress: Callable[[float], None] | None = None,
) -> Trajectory:
    """The case's trajectory over its analysis window, by its ``force_model.propagator``.

    ``duration_s`` overrides the window length (the start stays the window's start).
    """
    fm = case.force_model
    if fm.propagator == "sgp4":  # the sgp4 package sits outside the kernel, in exchange
        from ..exchange.tle import case_tle_trajectory

        return case_tle_trajectory(case, duration_s=duration_s, eop=case_earth_orientation(case))
    numerical = fm.propagator == "numerical"
    if numerical:
        from .estimates import check_estimate, numerical_estimate

        check_estimate(numerical_estimate(case, duration_s))
    return trajectory(
        fm.propagator,
        case.elements(),
        case.epoch_utc,
        start_utc=case.window.start_utc,
        duration_s=case.window.duration_s if duration_s is None else duration_s,
        body=case.body_constants(),
        eop=case_earth_orientation(case),
        force_model=case_force_model(case) if numerical else None,
        cowell_options={"rtol": fm.rtol, "atol_km": fm.atol_km} if numerical else None,
        progress=progress,
    )
