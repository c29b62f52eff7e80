"""The compute kernel: pure functions over numpy arrays (km, km/s, s, radians).

No I/O, no Jupyter, no plotting; nothing here imports the case model, figures, widgets or
reporting. Every public function states its units, its valid range and its published source.
"""

# Constants, elements, errors
from .constants import (
    AU_KM,
    BODIES,
    EARTH,
    G0_M_S2,
    MARS,
    MOON,
    SIDEREAL_DAY_S,
    SUN,
    TROPICAL_YEAR_DAYS,
    Body,
)
from .errors import InputError
from .elements import Elements, elements_to_state, state_to_elements

# Two-body motion
from .anomalies import (
    eccentric_to_mean_anomaly,
    eccentric_to_true_anomaly,
    hyperbolic_to_mean_anomaly,
    hyperbolic_to_true_anomaly,
    mean_to_eccentric_anomaly,
    mean_to_hyperbolic_anomaly,
    mean_to_true_anomaly,
    parabolic_mean_to_true,
    parabolic_to_true_anomaly,
    parabolic_true_to_mean,
    true_to_eccentric_anomaly,
    true_to_hyperbolic_anomaly,
    true_to_mean_anomaly,
    true_to_parabolic_anomaly,
)
from .kepler import solve_kepler
from .twobody import propagate_two_body
from .summary import orbit_cautions, orbit_summary

# Time scales, frames, the Sun
from .timescales import TimeScales, parse_utc, time_scales, utc_iso
from .frames import (
    TopocentricView,
    gcrf_to_itrf,
    gcrf_to_itrf_state,
    geodetic_from_itrf,
    itrf_from_geodetic,
    itrf_to_gcrf,
    itrf_to_gcrf_state,
    topocentric_view,
)
from .teme import gcrf_to_teme, gcrf_to_teme_matrix, teme_to_gcrf
from .sun import sun_position_gcrf_km

# Perturbations and propagation
from .j2 import j2_secular_rates, propagate_j2_mean, sun_synchronous_inclination_deg
from .atmosphere import SOLAR_ACTIVITY_LEVELS, SolarActivityLevel, density_kg_m3
from .forces import ForceModel, acceleration_km_s2, ballistic_coefficient_kg_m2
from .cowell import CowellResult, propagate_cowell
from .propagation import EarthOrientation, Trajectory, trajectory
from .lifetime import LIFETIME_CAUTION, LifetimeResult, lifetime_years

# Geometry over a window
from .groundtrack import GroundTrack, ground_track
from .passes import Pass, PassSearch, Station, station_passes
from .eclipses import (
    Eclipse,
    EclipseSearch,
    beta_angle_deg,
    find_eclipses,
    node_local_times_h,
    shadow_state,
    sunlit_fraction,
    whole_orbits,
)

# Orbit design and manoeuvres
from .design import (
    CRITICAL_INCLINATION_DEG,
    frozen_orbit,
    geosynchronous_radius_km,
    ltan_drift_h_per_day,
    molniya_orbit,
    repeat_ground_track_sma_km,
    repeat_ground_track_solutions,
    sun_synchronous_altitude_km,
    sun_synchronous_repeat,
)
from .transfers import (
    bielliptic,
    combined_plane_change,
    hohmann,
    hohmann_elliptic,
    phasing,
    plane_change_dv_km_s,
)
from .burns import BurnSpec, apply_burn_plan, apply_impulse, rtn_basis, time_to_next_s
from .lambert import lambert, solve_lambert
from .planets import planet_state
from .porkchop import planetary_porkchop, rendezvous_porkchop, transfer_grid
from .budget import (
    BudgetItem,
    delta_v_budget,
    disposal_perigee_lowering,
    drag_makeup_dv_km_s_per_year,
    propellant_mass_kg,
)
