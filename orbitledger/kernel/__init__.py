"""The compute kernel: pure functions over numpy arrays (km, km/s, s, radians).

No I/O, no Jupyter, no plotting; nothing here imports the case model, figures, widgets or
reporting. Every public function states its units, its valid range and its published source.

The public names below are importable from ``orbitledger.kernel``; each module is imported on
the first use of one of its names (PEP 562), so that importing one part of the kernel (say
``orbitledger.kernel.constants`` for a case file) does not import all of it and SciPy with it:
the command line starts in a fraction of a second. Add a new public name to ``_PUBLIC`` under
its module, not as an import statement.
"""

from __future__ import annotations

import importlib
from typing import Any

# module -> its public names, in the order of the kernel's parts
_PUBLIC: dict[str, tuple[str, ...]] = {
    # Constants, elements, errors
    "constants": (
        "AU_KM",
        "BODIES",
        "EARTH",
        "G0_M_S2",
        "MARS",
        "MOON",
        "SIDEREAL_DAY_S",
        "SUN",
        "TROPICAL_YEAR_DAYS",
        "Body",
    ),
    "errors": ("InputError",),
    "elements": ("Elements", "elements_to_state", "state_to_elements"),
    # Two-body motion
    "anomalies": (
        "eccentric_to_mean_anomaly",
        "eccentric_to_true_anomaly",
        "hyperbolic_to_mean_anomaly",
        "hyperbolic_to_true_anomaly",
        "mean_to_eccentric_anomaly",
        "mean_to_hyperbolic_anomaly",
        "mean_to_true_anomaly",
        "parabolic_mean_to_true",
        "parabolic_to_true_anomaly",
        "parabolic_true_to_mean",
        "true_to_eccentric_anomaly",
        "true_to_hyperbolic_anomaly",
        "true_to_mean_anomaly",
        "true_to_parabolic_anomaly",
    ),
    "kepler": ("solve_kepler",),
    "twobody": ("propagate_two_body",),
    "summary": ("orbit_cautions", "orbit_summary"),
    # Time scales, frames, the Sun
    "timescales": ("TimeScales", "parse_utc", "time_scales", "utc_iso"),
    "frames": (
        "TopocentricView",
        "gcrf_to_itrf",
        "gcrf_to_itrf_state",
        "geodetic_from_itrf",
        "itrf_from_geodetic",
        "itrf_to_gcrf",
        "itrf_to_gcrf_state",
        "topocentric_view",
    ),
    "teme": ("gcrf_to_teme", "gcrf_to_teme_matrix", "teme_to_gcrf"),
    "sun": ("sun_position_gcrf_km",),
    # Perturbations and propagation
    "j2": ("j2_secular_rates", "propagate_j2_mean", "sun_synchronous_inclination_deg"),
    "atmosphere": ("SOLAR_ACTIVITY_LEVELS", "SolarActivityLevel", "density_kg_m3"),
    "flux": ("FLUX_LEVELS", "FluxHistory", "level_flux", "solar_cycle_flux", "table_flux"),
    "nrlmsis": ("nrlmsis_density_kg_m3", "nrlmsis_profile"),
    "forces": ("ForceModel", "acceleration_km_s2", "ballistic_coefficient_kg_m2"),
    "cowell": ("CowellResult", "propagate_cowell"),
    "propagation": ("EarthOrientation", "Trajectory", "trajectory"),
    "lifetime": ("LIFETIME_CAUTION", "LifetimeResult", "lifetime_years"),
    # Geometry over a window
    "groundtrack": ("GroundTrack", "ground_track"),
    "passes": ("Pass", "PassSearch", "Station", "station_passes"),
    "targets": (
        "Access",
        "Sensor",
        "Target",
        "TargetAccessSearch",
        "reach_central_angle_deg",
        "target_access",
    ),
    "viewing": ("central_angle_deg", "off_nadir_deg", "swath_off_nadir_deg"),
    "coverage": ("Coverage", "coverage_grid", "coverage_work", "region_coverage"),
    "eclipses": (
        "Eclipse",
        "EclipseSearch",
        "beta_angle_deg",
        "find_eclipses",
        "node_local_times_h",
        "shadow_state",
        "sunlit_fraction",
        "whole_orbits",
    ),
    "seasons": ("SeasonSeries", "eclipse_seasons", "mission_seasons"),
    # Orbit design and manoeuvres
    "design": (
        "CRITICAL_INCLINATION_DEG",
        "frozen_orbit",
        "geosynchronous_radius_km",
        "ltan_drift_h_per_day",
        "molniya_orbit",
        "repeat_ground_track_sma_km",
        "repeat_ground_track_solutions",
        "sun_synchronous_altitude_km",
        "sun_synchronous_repeat",
    ),
    "transfers": (
        "bielliptic",
        "combined_plane_change",
        "hohmann",
        "hohmann_elliptic",
        "phasing",
        "plane_change_dv_km_s",
    ),
    "burns": ("BurnSpec", "apply_burn_plan", "apply_impulse", "rtn_basis", "time_to_next_s"),
    "lambert": ("lambert", "solve_lambert"),
    "planets": ("planet_state",),
    "porkchop": ("planetary_porkchop", "rendezvous_porkchop", "transfer_grid"),
    "budget": (
        "BudgetItem",
        "delta_v_budget",
        "disposal_perigee_lowering",
        "drag_makeup_dv_km_s_per_year",
        "propellant_mass_kg",
    ),
}

_MODULE_OF = {name: module for module, names in _PUBLIC.items() for name in names}
__all__ = sorted(_MODULE_OF)

# ``lambert`` names both a module and its main function; the function is the public name, so it
# is bound now (the module is light), before an import of the submodule could take the name.
from .lambert import lambert  # noqa: E402


def __getattr__(name: str) -> Any:
    module = _MODULE_OF.get(name)
    if module is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(f".{module}", __name__), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
