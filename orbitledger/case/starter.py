"""The starter case: Kestrel-2 of the Fenwick Orbital Lab, an invented demonstration mission.

A 48 kg Earth-observation smallsat released near 540 km in a near-circular sun-synchronous
orbit, with three invented ground stations, a burn plan that raises it to its operational
545 km circular orbit, and a five-year delta-v budget with a disposal line. Written by ``orbitledger new`` and by
``open_case(path, create=True)`` for a missing file.
"""

from __future__ import annotations

from .model import SCHEMA_ID, Case, case_from_data

__all__ = ["STARTER_DATA", "starter_case"]

STARTER_DATA = {
    "schema": SCHEMA_ID,
    "meta": {
        "title": "Kestrel-2 candidate A: 540 km sun-synchronous",
        "record_id": "KES2-ORB-001",
        "author": "Fenwick Orbital Lab, flight dynamics",
        "description": (
            "Baseline orbit for the Kestrel-2 imaging smallsat: 540 km near-circular, "
            "sun-synchronous (about 97.5 deg for this altitude under J2)."
        ),
    },
    "epoch_utc": "2027-03-21T10:30:00Z",
    "body": {"name": "Earth"},
    "orbit": {
        "form": "classical",
        "altitude_km": 540.0,
        "e": 0.001,
        "i_deg": 97.5,
        "raan_deg": 30.0,
        "argp_deg": 90.0,
        "nu_deg": 0.0,
    },
    "spacecraft": {
        "name": "Kestrel-2",
        "mass_kg": 48.0,
        "drag_area_m2": 0.12,
        "drag_coefficient": 2.2,
        "isp_s": 220.0,
        "propellant_mass_kg": 2.5,
    },
    "stations": [
        {
            "name": "Harrow Fell",
            "lat_deg": 60.2,
            "lon_deg": -1.3,
            "height_km": 0.08,
            "elevation_mask_deg": 5.0,
        },
        {
            "name": "Saltmarsh Point",
            "lat_deg": 52.95,
            "lon_deg": 1.12,
            "height_km": 0.01,
            "elevation_mask_deg": 5.0,
        },
        {
            "name": "Kuru Ridge",
            "lat_deg": -23.7,
            "lon_deg": 133.9,
            "height_km": 0.6,
            "elevation_mask_deg": 7.0,
        },
    ],
    "window": {"duration_s": 86400.0, "step_s": 10.0},
    "burns": [
        {
            "name": "raise to operational 545 km",
            "at": {"apsis": "apoapsis"},
            "transfer": {"kind": "circular", "altitude_km": 545.0},
        }
    ],
    "budget": {
        "mission_years": 5.0,
        "margin_percent": 10.0,
        "allowances": [
            {"name": "launch dispersion correction", "dv_km_s": 0.010},
            {"name": "collision avoidance", "dv_km_s": 0.0005, "per_year": True},
        ],
        "station_keeping": True,
        "disposal": {"lifetime_limit_years": 5.0, "reentry_altitude_km": 120.0},
    },
}


def starter_case() -> Case:
    """The validated starter case (classical-elements form)."""
    return case_from_data(STARTER_DATA)
