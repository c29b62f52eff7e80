"""The exponential atmosphere against the tables it comes from."""

from __future__ import annotations

import math

import numpy as np
import pytest

from orbitledger.kernel.atmosphere import (
    SOLAR_ACTIVITY_LEVELS,
    density_and_scale_height,
    density_kg_m3,
    solar_activity_level,
)
from orbitledger.kernel.errors import InputError

# Rows of Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Table 8-4,
# transcribed again here: (base altitude km, nominal density kg/m^3, scale height km).
VALLADO_TABLE_8_4_ROWS = [
    (0.0, 1.225, 7.249),
    (100.0, 5.297e-7, 5.877),
    (150.0, 2.070e-9, 22.523),
    (200.0, 2.789e-10, 37.105),
    (300.0, 2.418e-11, 53.628),
    (400.0, 3.725e-12, 58.515),
    (500.0, 6.967e-13, 63.822),
    (700.0, 3.614e-14, 88.667),
    (900.0, 5.245e-15, 181.05),
    (1000.0, 3.019e-15, 268.00),
]


@pytest.mark.parametrize("h0, rho0, scale", VALLADO_TABLE_8_4_ROWS)
def test_base_densities_and_band_interior_follow_vallado_table_8_4(h0, rho0, scale):
    # At each band's base the density is the tabulated one; 0.6 H into the band it has fallen
    # by exp(-0.6) (Vallado 4th ed., Table 8-4 and the exponential law above it).
    assert density_kg_m3(h0) == pytest.approx(rho0, rel=1e-12)
    h = h0 + 0.6 * scale
    if h0 < 1000.0:  # stay inside the band (all bands here are wider than 0.6 H)
        assert density_kg_m3(h) == pytest.approx(rho0 * math.exp(-0.6), rel=1e-12)
    assert density_and_scale_height(h0)[1] == pytest.approx(scale)


def test_table_is_nearly_continuous_at_band_edges():
    # Each band, run to the next band's base, lands within 12 % of the next tabulated density
    # (a property of Vallado's Table 8-4 fit; a mistyped row would break it).
    edges = np.array(
        [
            25,
            30,
            40,
            50,
            60,
            70,
            80,
            90,
            100,
            110,
            120,
            130,
            140,
            150,
            180,
            200,
            250,
            300,
            350,
            400,
            450,
            500,
            600,
            700,
            800,
            900,
            1000,
        ],
        dtype=float,
    )
    below = density_kg_m3(edges - 1e-9)
    at = density_kg_m3(edges)
    assert np.all(np.abs(below / at - 1.0) < 0.12)


@pytest.mark.parametrize(
    "h_km, rho_ref",
    [
        (0.0, 1.225),  # U.S. Standard Atmosphere 1976, sea level (exact by definition)
        (50.0, 1.027e-3),  # U.S. Standard Atmosphere 1976, Table 1 (value from memory)
        (80.0, 1.846e-5),  # U.S. Standard Atmosphere 1976, Table 1 (value from memory)
    ],
)
def test_lower_atmosphere_agrees_with_us_standard_atmosphere_1976(h_km, rho_ref):
    assert density_kg_m3(h_km) == pytest.approx(rho_ref, rel=0.05)


def _ips_density(h_km, f107, ap=15.0):
    # IPS Radio and Space Services, "Satellite Orbital Decay Calculations" (1999), written
    # out here independently of the kernel.
    temperature = 900.0 + 2.5 * (f107 - 70.0) + 1.5 * ap
    mass = 27.0 - 0.012 * (h_km - 200.0)
    return 6e-10 * np.exp(-(h_km - 175.0) / (temperature / mass))


@pytest.mark.parametrize("h_km", [250.0, 400.0, 480.0])
@pytest.mark.parametrize("level", ["low", "high"])
def test_solar_activity_levels_scale_by_the_ips_flux_model(h_km, level):
    f107 = SOLAR_ACTIVITY_LEVELS[level].f107_sfu
    expected_ratio = _ips_density(h_km, f107) / _ips_density(h_km, 150.0)
    ratio = density_kg_m3(h_km, level) / density_kg_m3(h_km, "moderate")
    assert ratio == pytest.approx(expected_ratio, rel=1e-9)


def test_moderate_table_is_close_to_the_ips_model_at_mean_flux():
    # Two published models of the same mean thermosphere agree within 35 % at 250-500 km.
    h = np.array([250.0, 300.0, 400.0, 500.0])
    assert np.all(np.abs(density_kg_m3(h) / _ips_density(h, 150.0) - 1.0) < 0.35)


def test_levels_are_ordered_above_the_anchor_and_equal_below():
    h = np.array([200.0, 300.0, 400.0, 600.0, 900.0])
    low, mod, high = (density_kg_m3(h, name) for name in ("low", "moderate", "high"))
    assert np.all(low < mod) and np.all(mod < high)
    # Solar-minimum to maximum swing at 500 km is an order of magnitude (common practice).
    assert 5.0 < density_kg_m3(500.0, "high") / density_kg_m3(500.0, "low") < 40.0
    below = np.array([0.0, 90.0, 150.0, 175.0])
    assert np.array_equal(density_kg_m3(below, "low"), density_kg_m3(below, "high"))


def test_vectorised_over_any_shape_and_refuses_unknown_level():
    h = np.linspace(0.0, 1200.0, 24).reshape(2, 3, 4)
    rho = density_kg_m3(h, "high")
    assert rho.shape == (2, 3, 4)
    assert rho.flat[5] == density_kg_m3(h.flat[5], "high")
    assert np.all(np.diff(density_kg_m3(np.linspace(0, 1200, 500))) < 0)
    with pytest.raises(InputError, match="solar_activity"):
        density_kg_m3(400.0, "extreme")
    assert solar_activity_level("High").name == "high"
