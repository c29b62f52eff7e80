"""Sweeps: grids, input paths, point-by-point agreement with the single-case results.

The single-case reference is ``orbitledger.analysis.case_results`` (what the editor and the
records show); the physical checks beside it are Kepler's third law with the WGS-84 mu, the
sun-synchronous node rate (360 deg per tropical year) and a published repeat orbit.
"""

from __future__ import annotations

import math
import warnings
from pathlib import Path

import numpy as np
import pytest

from orbitledger.analysis import case_results
from orbitledger.case import load_case
from orbitledger.kernel.errors import InputError
from orbitledger.trade import grid, sweep, sweep_inputs
from orbitledger.trade.evaluate import estimate_bytes

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
MU_WGS84 = 398600.4418  # km^3/s^2, WGS-84 (NIMA TR8350.2, 3rd ed., Table 3.1)
R_WGS84 = 6378.137  # km, WGS-84 equatorial radius (same source)
TROPICAL_YEAR_DAYS = 365.2421897  # Explanatory Supplement to the Astronomical Almanac (1992)


@pytest.fixture(scope="module")
def base():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return load_case(EXAMPLES / "candidate-a.case.json")


def _agrees(frame, base, groups):
    """Every result of case_results agrees (Result.agrees_with, rel 1e-9) with its column."""
    checked = 0
    for _k, row in frame.iterrows():
        case = base.with_changes({p: row[p] for p in frame.attrs["inputs"]})
        results = case_results(case, groups)
        for name, result in results.items():
            assert name in frame.columns, name
            assert result.agrees_with(float(row[name])), (name, result.value, row[name])
            checked += 1
        for name in frame.attrs["metrics"]:
            if name not in results:  # a result the case does not have: NaN in the table
                assert math.isnan(row[name]), name
    return checked


# --- grids -----------------------------------------------------------------------------------


def test_grid_includes_stop_on_the_grid():
    # numpy.linspace(500, 600, 11) is the reference grid (numpy documentation).
    np.testing.assert_array_equal(grid(500.0, 600.0, 10.0), np.linspace(500.0, 600.0, 11))
    # 0.1 + 2 * 0.1 = 0.30000000000000004: within the tolerance, so 0.3 is the last value.
    assert grid(0.1, 0.3, 0.1).tolist() == [0.1, 0.2, 0.30000000000000004][:2] + [0.3]
    assert grid(600.0, 500.0, -50.0).tolist() == [600.0, 550.0, 500.0]
    assert grid(500.0, 500.0, 10.0).tolist() == [500.0]


def test_grid_stops_before_a_stop_off_the_grid():
    assert grid(500.0, 605.0, 10.0)[-1] == 600.0
    assert grid(500.0, 605.0, 10.0).size == 11


@pytest.mark.parametrize(
    ("step", "words"), [(0.0, "must not be zero"), (-10.0, "wrong sign"), (math.nan, "finite")]
)
def test_grid_bad_steps_are_named(step, words):
    with pytest.raises(InputError) as err:
        grid(500.0, 600.0, step, field="orbit.altitude_km")
    assert err.value.field == "orbit.altitude_km step"
    assert words in str(err.value)


def test_sweep_refuses_a_wrong_signed_grid_string(base):
    with pytest.raises(InputError, match="orbit.altitude_km step = -10.0: has the wrong sign"):
        sweep(base, {"orbit.altitude_km": "500:600:-10"})


# --- input paths -----------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("path", "words"),
    [
        ("orbit.altitud_km", "is not an input of the case"),
        ("orbit.altitude_km.x", "is not an input of the case"),
        ("stations[7].lat_deg", "is not an input of the case"),
        ("meta.title", "is not a numeric input"),
        ("budget.disposal.lifetime_limit_years", "is not set in the base case"),
    ],
)
def test_paths_not_in_the_case_are_named(base, path, words):
    with pytest.raises(InputError) as err:
        sweep(base, {path: [1.0, 2.0]})
    assert err.value.field == path
    assert words in str(err.value)


def test_a_value_the_case_model_refuses_is_named_before_any_work(base):
    with pytest.raises(InputError) as err:  # e >= 0 (docs/case-file.md)
        sweep(base, {"orbit.e": [-0.01, 0.01]}, metrics=["eclipses"])
    assert err.value.field == "orbit.e"


def test_the_partner_of_a_set_field_is_an_input(base):
    # The case gives altitude_km; a_km replaces it (with_changes clears the partner).
    frame = sweep(base, {"orbit.a_km": [6900.0, 7000.0]}, progress=False)
    assert frame["semi_major_axis_km"].tolist() == [6900.0, 7000.0]


def test_full_factorial_order(base):
    cols = sweep_inputs(base, {"orbit.altitude_km": [500.0, 600.0], "orbit.i_deg": [97.0, 98.0]})
    assert cols["orbit.altitude_km"].tolist() == [500.0, 500.0, 600.0, 600.0]
    assert cols["orbit.i_deg"].tolist() == [97.0, 98.0, 97.0, 98.0]


# --- point by point against the single-case results ------------------------------------------


def test_vectorised_orbit_and_j2_match_case_results(base):
    vary = {
        "orbit.altitude_km": "500:700:100",
        "orbit.i_deg": [97.4, 97.6],
        "orbit.nu_deg": [10.0, 370.0, -45.0],  # normalised to [0, 360) as by the case model
    }
    frame = sweep(base, vary, metrics=["orbit", "j2"], progress=False)
    assert len(frame) == 18 and "error" not in frame.columns  # no per-case loop was needed
    assert (
        _agrees(frame, base, ["orbit", "j2"]) == 18 * 24
    )  # c3 and v_inf belong to open orbits only


def test_vectorised_mean_anomaly_and_eccentricity_match_case_results(base):
    with_mean = base.with_changes({"orbit.mean_anomaly_deg": 30.0})
    vary = {"orbit.e": [0.0, 0.05, 0.3], "orbit.mean_anomaly_deg": [-20.0, 200.0, 400.0]}
    frame = sweep(with_mean, vary, metrics=["orbit", "j2"], progress=False)
    assert _agrees(frame, with_mean, ["orbit", "j2"]) > 0


def test_vectorised_apsides_form_matches_case_results(base):
    apsides = base.with_orbit_form("apsides")
    vary = {"orbit.periapsis_alt_km": [400.0, 500.0], "orbit.apoapsis_alt_km": [600.0, 900.0]}
    frame = sweep(apsides, vary, metrics=["orbit", "j2"], progress=False)
    assert _agrees(frame, apsides, ["orbit", "j2"]) > 0


def test_no_sun_synchronous_inclination_gives_nan(base):
    # Above about 12 350 km no inclination turns the node at the Sun's rate (kernel.j2 docs).
    frame = sweep(base, {"orbit.a_km": [7000.0, 20000.0]}, metrics=["j2"], progress=False)
    assert math.isfinite(frame["sun_synchronous_inclination_deg"][0])
    assert math.isnan(frame["sun_synchronous_inclination_deg"][1])
    _agrees(frame, base, ["j2"])


def test_body_constants_swept_per_case_give_the_same_values(base):
    with_j2 = base.with_changes({"body.j2": 0.00108263, "body.sources": {"j2": "EGM96"}})
    frame = sweep(with_j2, {"body.j2": [0.00108263, 0.0010826]}, metrics=["j2"], progress=False)
    assert "error" in frame.columns  # evaluated per case: the vectorised path models no body
    _agrees(frame, with_j2, ["j2"])


def test_period_column_is_keplers_third_law(base):
    frame = sweep(base, {"orbit.altitude_km": "300:1500:100"}, metrics=["period_s"], progress=False)
    a = R_WGS84 + frame["orbit.altitude_km"].to_numpy()
    # Kepler's third law, T = 2 pi sqrt(a^3 / mu) (Curtis 3rd ed., Eq. 2.83), WGS-84 mu.
    np.testing.assert_allclose(frame["period_s"], 2 * np.pi * np.sqrt(a**3 / MU_WGS84), atol=1e-6)


def test_node_rate_at_the_sun_synchronous_inclination(base):
    from orbitledger.trade import evaluate_cases

    frame = sweep(base, {"orbit.altitude_km": "400:900:100"}, metrics=["j2"], progress=False)
    paired = {  # each altitude at its own sun-synchronous inclination: a table of cases
        "orbit.altitude_km": frame["orbit.altitude_km"].to_numpy(),
        "orbit.i_deg": frame["sun_synchronous_inclination_deg"].to_numpy(),
    }
    at_sso = evaluate_cases(base, paired, ["raan_rate_deg_per_day"], progress=False)
    # 360 deg per tropical year (common practice; the tropical year from the Explanatory
    # Supplement, 1992), to 1e-9 deg/day.
    rate = at_sso["raan_rate_deg_per_day"].to_numpy()
    assert np.max(np.abs(rate - 360.0 / TROPICAL_YEAR_DAYS)) < 1e-9


def test_window_groups_match_case_results(base):
    short = base.with_changes({"window.duration_s": 43200.0, "window.step_s": 30.0})
    vary = {"orbit.altitude_km": [520.0, 560.0], "orbit.raan_deg": [157.5, 200.0]}
    frame = sweep(short, vary, metrics=["eclipses", "contacts"], chunk_size=3, progress=False)
    assert (frame["error"] == "").all()
    assert _agrees(frame, short, ["eclipses", "contacts"]) == 4 * 11


def test_lifetime_and_budget_match_case_results(base):
    vary = {"orbit.altitude_km": [450.0, 600.0]}
    frame = sweep(base, vary, metrics=["lifetime", "budget"], progress=False)
    # lifetime: 4 results (the case scenario, the low and high levels, B); budget: 4
    assert _agrees(frame, base, ["lifetime", "budget"]) == 2 * 8
    # Higher orbits live longer under drag (common practice).
    assert frame["lifetime_years"][1] > frame["lifetime_years"][0]


def test_unknown_metric_is_named(base):
    with pytest.raises(InputError) as err:
        sweep(base, {"orbit.altitude_km": [500.0]}, metrics=["contact_minutes"])
    assert err.value.field == "metrics" and "contact_minutes" in str(err.value)


# --- repeat ground track ---------------------------------------------------------------------


def test_repeat_track_against_a_published_repeat_orbit(base):
    # Landsat 8: 233 revolutions in 16 days, 705 km, 98.2 deg (USGS Landsat 8 Data Users
    # Handbook, Sec. 1; from memory). J2-only mean elements put the repeat near 700 km.
    landsat = base.with_changes({"orbit.e": 0.0, "orbit.i_deg": 98.2})
    frame = sweep(
        landsat,
        {"orbit.altitude_km": [705.0]},
        metrics=["repeat_track"],
        repeat=(233, 16),
        progress=False,
    )
    assert abs(frame["repeat_track_sma_offset_km"][0]) < 10.0


def test_repeat_track_mismatch_is_zero_on_the_repeat_and_follows_keplers_law(base):
    from orbitledger.kernel.design import repeat_ground_track_sma_km

    circ = base.with_changes({"orbit.e": 0.0, "orbit.i_deg": 98.2})
    a_rep = float(repeat_ground_track_sma_km(233, 16, 98.2, 0.0))
    frame = sweep(
        circ,
        {"orbit.a_km": [a_rep, a_rep + 0.1]},
        metrics=["repeat_track"],
        repeat=(233, 16),
        progress=False,
    )
    assert abs(frame["repeat_track_mismatch_km"][0]) < 1e-6  # 1 mm on an exact repeat
    # A larger a lengthens the period (T ~ a^1.5, Kepler's third law): the Earth turns
    # further during the k revolutions, so the track lands west by about 3 pi m R da / a.
    slope = (frame["repeat_track_mismatch_km"][1] - frame["repeat_track_mismatch_km"][0]) / 0.1
    expected = -3.0 * math.pi * 16 * R_WGS84 / a_rep
    assert abs(slope - expected) < 0.01 * abs(expected)


def test_repeat_track_needs_its_cycle(base):
    with pytest.raises(InputError) as err:
        sweep(base, {"orbit.altitude_km": [500.0]}, metrics=["repeat_track"])
    assert err.value.field == "repeat"


# --- memory ----------------------------------------------------------------------------------


def test_a_sweep_too_large_is_refused_with_the_number(base):
    huge = {"orbit.altitude_km": "300:1500:0.0001", "orbit.i_deg": "0:180:0.0001"}
    with pytest.raises(InputError) as err:  # 12 000 001 x 1 800 001 cases: never built
        sweep(base, huge, metrics=["orbit"])
    assert err.value.field == "vary"
    assert "21,600,013,800,001 cases" in str(err.value) and "TiB" in str(err.value)


def test_memory_limit_given(base):
    need = estimate_bytes(101, 1, ("orbit", "j2"))
    with pytest.raises(InputError, match=r"limit .*, max_memory_bytes\); coarsen"):
        sweep(base, {"orbit.altitude_km": "500:600:1"}, max_memory_bytes=need - 1)
    frame = sweep(base, {"orbit.altitude_km": "500:600:1"}, max_memory_bytes=need, progress=False)
    assert len(frame) == 101
