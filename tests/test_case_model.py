"""The case model: every bad input of issue 2 refused with its JSON path, value and reason.

The rules come from docs/case-file.md. Where a rule rests on a fact of the trade the source
is named beside the check.
"""

from __future__ import annotations

import math

import pytest
from _case_inputs import data, orbit, refused

from orbitledger.case import SCHEMA_ID, CaseError, case_from_data, parse_case, starter_case
from orbitledger.kernel import EARTH, InputError

# --- the starter case and minimal files ---------------------------------------------------


def test_starter_case_is_valid_and_uses_the_classical_form():
    case = starter_case()
    assert case.schema_id == SCHEMA_ID
    assert case.orbit.form == "classical"
    assert case.spacecraft is not None and len(case.stations) == 3
    assert case.window.duration_s == 86400.0 and case.window.step_s == 10.0


def test_minimal_file_has_every_optional_section_default():
    # Old files stay valid: only schema, meta, epoch_utc and orbit are required.
    minimal = {
        "schema": SCHEMA_ID,
        "meta": {"title": "t", "record_id": "R-1"},
        "epoch_utc": "2027-03-21T10:30:00Z",
        "orbit": {
            "form": "classical",
            "a_km": 7000.0,
            "e": 0.0,
            "i_deg": 0.0,
            "raan_deg": 0.0,
            "argp_deg": 0.0,
            "nu_deg": 0.0,
        },
    }
    case = case_from_data(minimal)
    assert case.body.name == "Earth" and case.body_constants() is EARTH
    assert case.spacecraft is None and case.stations == [] and case.burns == []
    assert case.budget is None and case.source is None
    assert case.force_model.propagator == "two-body"
    assert case.window.start_utc is None and case.window_start_utc == case.epoch_utc
    assert (case.earth_orientation.dut1_s, case.earth_orientation.xp_arcsec) == (0.0, 0.0)


# --- bad input, named (issue 2) ----------------------------------------------------------


@pytest.mark.parametrize(
    ("where", "setter"),
    [
        ("orbit.e", lambda d: d["orbit"].__setitem__("e", math.nan)),
        ("orbit.raan_deg", lambda d: d["orbit"].__setitem__("raan_deg", math.inf)),
        ("stations[1].lat_deg", lambda d: d["stations"][1].__setitem__("lat_deg", -math.inf)),
        ("spacecraft.mass_kg", lambda d: d["spacecraft"].__setitem__("mass_kg", math.nan)),
        ("window.step_s", lambda d: d["window"].__setitem__("step_s", math.inf)),
    ],
)
def test_nan_and_infinity_are_refused_anywhere(where, setter):
    raw = data()
    setter(raw)
    err = refused(raw)
    assert err.field == err.path == where
    assert "finite" in err.reason


def test_nan_literal_in_the_text_is_refused_with_its_path_line_and_column():
    text = '{\n  "schema": "orbitledger.case/1",\n  "orbit": {"e": NaN}\n}'
    with pytest.raises(CaseError) as caught:
        parse_case(text, file="c.case.json")
    err = caught.value
    assert (err.field, err.line, err.column) == ("orbit.e", 3, 18) and math.isnan(err.value)
    assert str(err) == (
        "c.case.json: orbit.e = nan: must be a finite number (NaN and infinity are refused) "
        "(line 3, column 18)"
    )


@pytest.mark.parametrize(
    ("where", "section", "field"),
    [
        ("orbit.e", "orbit", "e"),
        ("spacecraft.mass_kg", "spacecraft", "mass_kg"),
        ("spacecraft.drag_area_m2", "spacecraft", "drag_area_m2"),
        ("spacecraft.isp_s", "spacecraft", "isp_s"),
        ("spacecraft.drag_coefficient", "spacecraft", "drag_coefficient"),
    ],
)
def test_negative_values_are_refused_where_only_positive_make_sense(where, section, field):
    raw = data()
    raw[section][field] = -0.5
    err = refused(raw)
    assert err.field == where and err.value == -0.5
    assert err.reason.startswith("must be >")


def test_hyperbolic_eccentricity_with_positive_a_is_refused():
    err = refused(data(orbit=orbit(altitude_km=None, a_km=7000.0, e=1.2)))
    assert err.field == "orbit.a_km" and err.value == 7000.0 and "< 0" in err.reason


def test_eccentricity_one_has_no_finite_a():
    err = refused(data(orbit=orbit(altitude_km=None, a_km=7000.0, e=1.0)))
    assert err.field == "orbit.e" and "parabolic" in err.reason


def test_elliptic_eccentricity_with_negative_a_is_refused():
    err = refused(data(orbit=orbit(altitude_km=None, a_km=-7000.0, e=0.3)))
    assert err.field == "orbit.a_km" and err.value == -7000.0 and "> 0" in err.reason


def test_hyperbolic_orbit_with_negative_a_is_accepted():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 4.7: e = 1.4.
    case = case_from_data(data(orbit=orbit(altitude_km=None, a_km=-16725.0, e=1.4, nu_deg=30.0)))
    assert case.orbit.a_km == -16725.0


def test_true_anomaly_beyond_the_asymptote_is_refused():
    # The asymptote of a hyperbola lies at nu = arccos(-1/e) (common practice; Curtis eq. 2.97).
    err = refused(data(orbit=orbit(altitude_km=None, a_km=-20000.0, e=1.5, nu_deg=135.0)))
    assert err.field == "orbit.nu_deg" and "131.81" in err.reason


@pytest.mark.parametrize("i_deg", [-0.1, 180.5, 360.0])
def test_inclination_outside_0_180_is_refused(i_deg):
    err = refused(data(orbit=orbit(i_deg=i_deg)))
    assert err.field == "orbit.i_deg" and err.value == i_deg


@pytest.mark.parametrize("i_deg", [0.0, 180.0])
def test_inclination_bounds_are_allowed(i_deg):
    assert case_from_data(data(orbit=orbit(i_deg=i_deg))).orbit.i_deg == i_deg


def test_other_angles_are_normalised():
    case = case_from_data(
        data(
            orbit=orbit(raan_deg=-30.0, argp_deg=450.0, nu_deg=720.0),
            stations=[
                {"name": "A", "lat_deg": 10.0, "lon_deg": 190.0},
                {"name": "B", "lat_deg": 10.0, "lon_deg": -180.0},
            ],
        )
    )
    assert (case.orbit.raan_deg, case.orbit.argp_deg, case.orbit.nu_deg) == (330.0, 90.0, 0.0)
    assert [s.lon_deg for s in case.stations] == [-170.0, 180.0]


def test_elliptic_mean_anomaly_is_normalised_and_hyperbolic_kept():
    case = case_from_data(data(orbit=orbit(nu_deg=None, mean_anomaly_deg=-90.0)))
    assert case.orbit.mean_anomaly_deg == 270.0
    hyper = orbit(altitude_km=None, a_km=-20000.0, e=1.5, nu_deg=None, mean_anomaly_deg=-400.0)
    assert case_from_data(data(orbit=hyper)).orbit.mean_anomaly_deg == -400.0


def test_periapsis_inside_the_body_is_accepted_with_a_warning():
    # a (1 - e) = 6700 * 0.95 = 6365 km, below the WGS-84 equatorial radius 6378.137 km.
    case = case_from_data(data(orbit=orbit(altitude_km=None, a_km=6700.0, e=0.05)))
    notes = case.warnings()
    assert notes, "a periapsis inside the body must never pass silently"
    assert any("periapsis" in note.lower() for note in notes)


def test_unknown_fields_are_refused_with_the_nearest_name():
    err = refused(data(orbit=orbit(e=None, ecc=0.001)))
    assert str(err) == "cand.case.json: orbit.ecc: unknown field; did you mean 'e'?"
    err = refused(
        data(stations=[{"name": "A", "lat_deg": 1.0, "lon_deg": 2.0, "elevation_mask": 5.0}])
    )
    assert err.field == "stations[0].elevation_mask"
    assert err.reason == "unknown field; did you mean 'elevation_mask_deg'?"
    raw = data()
    raw["spacecraft"]["drag_area"] = 0.1
    assert refused(raw).reason == "unknown field; did you mean 'drag_area_m2'?"
    raw = data()
    raw["statons"] = []
    assert refused(raw).reason == "unknown field; did you mean 'stations'?"


@pytest.mark.parametrize(
    ("where", "section", "field", "value", "reason"),
    [
        ("orbit.e", "orbit", "e", "0.001", "must be a number"),
        ("orbit.i_deg", "orbit", "i_deg", True, "must be a number"),
        ("spacecraft.mass_kg", "spacecraft", "mass_kg", [48.0], "must be a number"),
        ("meta.title", "meta", "title", 42, "must be text (a JSON string)"),
        ("stations", None, "stations", {"name": "A"}, "must be a list (a JSON array)"),
        ("spacecraft", None, "spacecraft", "Kestrel", "must be an object"),
    ],
)
def test_wrong_types_are_refused(where, section, field, value, reason):
    raw = data()
    (raw[section] if section else raw)[field] = value
    err = refused(raw)
    assert (err.field, err.value, err.reason) == (where, value, reason)


def test_a_missing_epoch_is_refused():
    err = refused(data(epoch_utc=None))
    assert str(err) == "cand.case.json: epoch_utc: required field is missing"
    assert err.value is InputError.MISSING


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("2027-02-30T00:00:00Z", "bad day"),
        ("21/03/2027 10:30", "ISO 8601"),
        ("2027-03-21T10:30:00+02:00", "UTC"),
        ("2017-01-01T23:59:60Z", "leap second"),
    ],
)
def test_an_epoch_that_does_not_parse_is_refused_with_the_reason(text, words):
    err = refused(data(epoch_utc=text))
    assert err.field == "epoch_utc" and err.value == text and words in err.reason


def test_epoch_spellings_normalise_and_a_real_leap_second_is_accepted():
    # 2016-12-31T23:59:60 UTC is a leap second (IERS Bulletin C 52).
    assert (
        case_from_data(data(epoch_utc="2016-12-31T23:59:60Z")).epoch_utc == "2016-12-31T23:59:60Z"
    )
    assert case_from_data(data(epoch_utc="2027-03-21 10:30:00.500+00:00")).epoch_utc == (
        "2027-03-21T10:30:00.5Z"
    )


@pytest.mark.parametrize(
    ("text", "line", "column"),
    [
        ('{"schema": "orbitledger.case/1",\n "meta": {"title": "x"\n "record_id": "R"}}', 3, 2),
        ('{"schema": "orbitledger.case/1",}', 1, 33),
        ("", 1, 1),
    ],
)
def test_malformed_json_reports_line_and_column(text, line, column):
    with pytest.raises(CaseError) as caught:
        parse_case(text, file="bad.case.json")
    err = caught.value
    assert (err.line, err.column) == (line, column)
    assert str(err).startswith(f"bad.case.json:{line}:{column}: malformed JSON")


def test_a_duplicate_key_is_refused():
    with pytest.raises(CaseError, match=r"orbit\.e: the key appears twice"):
        parse_case('{"orbit": {"e": 0.1, "e": 0.2}}')


def test_a_newer_schema_is_refused_with_a_clear_message():
    raw = data(schema="orbitledger.case/2")
    raw["a_field_from_the_future"] = 1
    err = refused(raw)
    assert err.field == "schema" and "newer orbitledger" in err.reason
    assert refused(data(schema="something/1")).field == "schema"
