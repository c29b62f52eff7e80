"""Constants of the kernel against the published standards they cite."""

import math

from orbitledger.kernel import EARTH, SIDEREAL_DAY_S, SUN


def test_wgs84_defining_parameters():
    # NIMA TR8350.2, 3rd ed. (2000), Table 3.1: a = 6378137.0 m, 1/f = 298.257223563,
    # GM = 3986004.418e8 m^3/s^2, omega = 7292115e-11 rad/s (values from memory).
    assert EARTH.radius_km * 1000.0 == 6378137.0
    assert abs(1.0 / EARTH.flattening - 298.257223563) < 1e-9
    assert abs(EARTH.mu_km3_s2 * 1e9 - 3.986004418e14) < 1.0  # 1 m^3/s^2
    assert abs(EARTH.rotation_rate_rad_s - 7.292115e-5) < 1e-15


def test_wgs84_derived_polar_radius():
    # NIMA TR8350.2, Table 3.3: semi-minor axis b = 6356752.3142 m (from memory); 1 mm.
    assert abs(EARTH.polar_radius_km * 1000.0 - 6356752.3142) < 1e-3


def test_j2_from_egm96_normalised_c20():
    # EGM96 (Lemoine et al. 1998): normalised C20 = -4.84165371736e-4 (from memory);
    # J2 = -sqrt(5) C20 = 1.08262668355e-3 (unnormalising factor sqrt(2n+1), n = 2).
    c20 = -4.84165371736e-4
    assert abs(EARTH.j2 - (-math.sqrt(5.0) * c20)) < 1e-15
    assert abs(EARTH.j2 - 1.08262668355e-3) < 1e-13


def test_sun_gm_and_sidereal_day():
    # IAU 2009 system (Luzum et al. 2011): GM_sun (TDB) = 1.32712440041e20 m^3/s^2 (from memory).
    assert abs(SUN.mu_km3_s2 * 1e9 - 1.32712440041e20) < 1e9
    # Mean sidereal day 23 h 56 min 4.0905 s (Astronomical Almanac; from memory).
    assert abs(SIDEREAL_DAY_S - (23 * 3600 + 56 * 60 + 4.0905)) < 1e-9
