"""The case model's rules across fields and sections, and the warnings of accepted cases.

The rules come from docs/case-file.md. Where a rule rests on a fact of the trade the source
is named beside the check.
"""

from __future__ import annotations

import pydantic
import pytest
from _case_inputs import data, orbit, refused

from orbitledger.case import Case, case_from_data, starter_case
from orbitledger.kernel import EARTH

# --- cross-field rules ---------------------------------------------------------------------


def test_either_or_pairs():
    assert refused(data(orbit=orbit(a_km=7000.0))).reason == "give a_km or altitude_km, not both"
    assert refused(data(orbit=orbit(altitude_km=None))).field == "orbit.a_km"
    assert refused(data(orbit=orbit(nu_deg=None))).field == "orbit.nu_deg"


def test_apsides_and_station_rules():
    apsides = {
        "form": "apsides",
        "periapsis_alt_km": 600.0,
        "apoapsis_alt_km": 500.0,
        "i_deg": 97.5,
        "raan_deg": 0.0,
        "argp_deg": 0.0,
        "nu_deg": 0.0,
    }
    assert refused(data(orbit=apsides)).field == "orbit.apoapsis_alt_km"
    twice = [
        {"name": "A", "lat_deg": 1.0, "lon_deg": 2.0},
        {"name": "A", "lat_deg": 3.0, "lon_deg": 4.0},
    ]
    assert refused(data(stations=twice)).field == "stations[1].name"
    mask = [{"name": "A", "lat_deg": 1.0, "lon_deg": 2.0, "elevation_mask_deg": -6.0}]
    assert refused(data(stations=mask)).field == "stations[0].elevation_mask_deg"


def test_burn_plan_rules():
    early = [
        {"name": "b", "at": {"epoch_utc": "2027-03-20T00:00:00Z"}, "dv_rtn_km_s": [0.0, 0.01, 0.0]}
    ]
    assert refused(data(burns=early)).field == "burns[0].at.epoch_utc"
    both = [
        {
            "name": "b",
            "at": {"apsis": "periapsis"},
            "dv_rtn_km_s": [0.0, 0.01, 0.0],
            "transfer": {"kind": "circular", "altitude_km": 560.0},
        }
    ]
    assert refused(data(burns=both)).field == "burns[0].transfer"
    two_ways = [
        {"name": "b", "at": {"apsis": "periapsis", "node": "ascending"}, "dv_rtn_km_s": [0, 0, 0]}
    ]
    assert refused(data(burns=two_ways)).field == "burns[0].at"
    good = [
        {"name": "raise", "at": {"apsis": "periapsis"}, "dv_rtn_km_s": [0.0, 0.012, 0.0]},
        {
            "name": "circ",
            "at": {"epoch_utc": "2027-03-22T00:00:00Z"},
            "transfer": {"kind": "circular", "altitude_km": 560.0},
        },
        {
            "name": "trim",
            "at": {"node": "ascending"},
            "transfer": {"kind": "inclination", "i_deg": 97.6},
        },
    ]
    assert [b.name for b in case_from_data(data(burns=good)).burns] == ["raise", "circ", "trim"]


def test_drag_needs_the_spacecraft_and_sgp4_needs_a_tle():
    err = refused(data(spacecraft=None, force_model={"propagator": "numerical", "drag": True}))
    assert err.field == "force_model.drag"
    assert refused(data(force_model={"propagator": "sgp4"})).field == "force_model.propagator"


def test_body_override_needs_its_source():
    assert refused(data(body={"name": "Earth", "j2": 1.0826e-3})).field == "body.j2"
    case = case_from_data(data(body={"name": "Earth", "j2": 1.0826e-3, "sources": {"j2": "JGM-3"}}))
    body = case.body_constants()
    assert body.j2 == 1.0826e-3 and body.sources["j2"] == "JGM-3"
    assert (
        body.mu_km3_s2 == EARTH.mu_km3_s2
        and body.sources["mu_km3_s2"] == EARTH.sources["mu_km3_s2"]
    )


def test_models_are_frozen():
    case = starter_case()
    with pytest.raises(pydantic.ValidationError, match="frozen"):
        case.orbit.e = 0.5  # type: ignore[misc]
    assert isinstance(case, Case)


# --- warnings: accepted, but never silently --------------------------------------------------


def test_the_starter_case_has_no_warnings():
    assert starter_case().warnings() == []


def test_a_window_before_the_epoch_is_warned():
    case = case_from_data(data(window={"start_utc": "2027-03-21T10:00:00Z"}))
    notes = case.warnings()
    assert len(notes) == 1 and "1800 s before the epoch" in notes[0]
    assert case.window_start_utc == "2027-03-21T10:00:00Z"


def test_an_epoch_before_utc_existed_is_refused():
    # UTC with leap seconds starts in 1960 (as the kernel's parse_utc, ERFA eraDat note).
    err = refused(data(epoch_utc="1957-10-04T19:28:34Z"))
    assert err.field == "epoch_utc" and "1960" in err.reason


def test_settings_the_propagator_does_not_use_are_warned():
    notes = case_from_data(data(force_model={"drag": True, "third_body": ["moon"]})).warnings()
    assert any("only the numerical propagator" in note for note in notes)
    quiet = case_from_data(data(force_model={"propagator": "numerical", "drag": True}))
    assert quiet.warnings() == []


def test_a_hyperbolic_orbit_is_warned_as_an_escape():
    hyper = orbit(altitude_km=None, a_km=-20000.0, e=1.5, nu_deg=10.0)
    assert any("hyperbolic" in note for note in case_from_data(data(orbit=hyper)).warnings())
