"""Canonical JSON and fingerprints of cases.

Outside references: Python's json module with sort_keys=True and separators=(",", ":")
(floats written with float.__repr__, the shortest round-trip text), and hashlib's SHA-256
(FIPS 180-4). The expected canonical text below is written out by hand.
"""

from __future__ import annotations

import hashlib
import json

from orbitledger.case import parse_case, starter_case

MINIMAL = {
    "schema": "orbitledger.case/1",
    "meta": {"title": "Kestrel-2 — Fenwick Ørbital", "record_id": "R-1"},
    "epoch_utc": "2027-03-21T10:30:00Z",
    "orbit": {"form": "cartesian", "r_km": [7000, 0, -0.0], "v_km_s": [0, 7.5, 1e-3]},
}

# Written by hand: keys sorted at every level, no white space, defaults filled in, floats as
# repr (7000 in a float field is 7000.0; 1e-3 is 0.001; 1e-10 stays 1e-10), -0.0 as 0.0, the
# integer zonal_degree kept as 2, non-ASCII text as UTF-8 (not \u escapes).
EXPECTED = (
    '{"body":{"flattening":null,"j2":null,"j3":null,"j4":null,"mu_km3_s2":null,"name":"Earth",'
    '"radius_km":null,"rotation_rate_rad_s":null,"sources":{}},"budget":null,"burns":[],'
    '"earth_orientation":{"dut1_s":0.0,"xp_arcsec":0.0,"yp_arcsec":0.0},'
    '"epoch_utc":"2027-03-21T10:30:00Z",'
    '"force_model":{"atol_km":1e-06,"drag":false,"propagator":"two-body","rtol":1e-10,'
    '"solar_activity":"moderate","third_body":[],"zonal_degree":2},'
    '"meta":{"alternatives":[],"author":"","decision":"","description":"","rationale":"",'
    '"record_id":"R-1","title":"Kestrel-2 — Fenwick Ørbital"},'
    '"orbit":{"form":"cartesian","frame":"GCRF","r_km":[7000.0,0.0,0.0],"v_km_s":[0.0,7.5,0.001]},'
    '"schema":"orbitledger.case/1","source":null,"spacecraft":null,"stations":[],'
    '"window":{"duration_s":86400.0,"start_utc":null,"step_s":10.0}}'
)


def test_canonical_form_matches_the_hand_written_text():
    case = parse_case(json.dumps(MINIMAL))
    assert case.canonical_json() == EXPECTED


def test_canonical_form_matches_pythons_json_module():
    # Reference: json.dumps with sorted keys and compact separators.
    case = starter_case()
    reference = json.dumps(
        case.to_data(), sort_keys=True, separators=(",", ":"), ensure_ascii=False
    )
    assert case.canonical_json() == reference


def test_fingerprint_is_sha256_of_the_utf8_canonical_text():
    case = parse_case(json.dumps(MINIMAL))
    assert case.fingerprint == hashlib.sha256(EXPECTED.encode("utf-8")).hexdigest()
    assert len(case.fingerprint) == 64


def test_fingerprint_is_stable_under_key_order_whitespace_and_number_spelling():
    reordered = {
        "orbit": {"v_km_s": [0.0, 7.50, 0.001], "r_km": [7.0e3, 0.0, 0.0], "form": "cartesian"},
        "epoch_utc": "2027-03-21T10:30:00.000Z",
        "meta": {"record_id": "R-1", "title": "Kestrel-2 — Fenwick Ørbital"},
        "schema": "orbitledger.case/1",
    }
    first = parse_case(json.dumps(MINIMAL)).fingerprint
    second = parse_case(json.dumps(reordered, indent=7, ensure_ascii=True)).fingerprint
    assert first == second


def test_fingerprint_changes_when_one_digit_changes():
    changed = json.loads(json.dumps(MINIMAL))
    changed["orbit"]["v_km_s"][1] = 7.51
    assert (
        parse_case(json.dumps(changed)).fingerprint != parse_case(json.dumps(MINIMAL)).fingerprint
    )
    case = starter_case()
    assert case.with_changes({"orbit.e": 0.0011}).fingerprint != case.fingerprint


def test_the_saved_form_reads_back_to_the_same_case():
    case = starter_case()
    again = parse_case(case.to_json())
    assert again == case and again.fingerprint == case.fingerprint
    assert case.to_json().endswith("\n") and '"r_km"' not in case.to_json()


def test_floats_round_trip_exactly_through_the_canonical_text():
    case = starter_case().with_changes(
        {"orbit.e": 1.0 / 3.0, "orbit.altitude_km": 540.123456789012}
    )
    data = json.loads(case.canonical_json())
    assert data["orbit"]["e"] == 1.0 / 3.0
    assert data["orbit"]["altitude_km"] == 540.123456789012
