"""The budget and transfer verbs, run through the command-line entry point."""

from __future__ import annotations

import json

import pytest

from orbitledger.cli.main import main
from orbitledger.kernel import EARTH, hohmann, propellant_mass_kg


def _write_case(tmp_path, with_plan: bool = True):
    from orbitledger.case import starter_case

    data = starter_case().to_data()
    data.pop("burns", None)
    data.pop("budget", None)
    if with_plan:
        data["burns"] = [
            {
                "name": "raise apogee",
                "at": {"apsis": "periapsis"},
                "dv_rtn_km_s": [0.0, 0.012, 0.0],
            },
            {
                "name": "to 560 km",
                "at": {"epoch_utc": "2027-03-22T00:00:00Z"},
                "transfer": {"kind": "circular", "altitude_km": 560.0},
            },
        ]
        data["budget"] = {
            "mission_years": 5.0,
            "margin_percent": 10.0,
            "allowances": [
                {"name": "launch dispersion correction", "dv_km_s": 0.015},
                {"name": "collision avoidance", "dv_km_s": 0.001, "per_year": True},
            ],
            "station_keeping": True,
            "disposal": {"lifetime_limit_years": 5.0, "reentry_altitude_km": 120.0},
        }
    path = tmp_path / "kestrel.case.json"
    path.write_text(json.dumps(data))
    return path


def test_budget_json(tmp_path, capsys):
    path = _write_case(tmp_path)
    assert main(["budget", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    names = [line["name"] for line in data["lines"]]
    assert names == [
        "launch dispersion correction",
        "raise apogee",
        "to 560 km",
        "station keeping (drag make-up)",
        "collision avoidance",
        "disposal (perigee lowering)",
    ]
    first = data["lines"][0]
    # allowance without margin; propellant by the rocket equation (Curtis 3rd ed., Eq. 6.1)
    assert first["margin_km_s"] == 0.0
    assert abs(first["propellant_kg"] - propellant_mass_kg(0.015, 220.0, 48.0)) < 1e-12
    raise_line = data["lines"][1]
    assert abs(raise_line["margin_km_s"] - 0.1 * 0.012) < 1e-12
    assert abs(data["lines"][4]["dv_km_s"] - 0.005) < 1e-12  # 1 m/s per year x 5 years
    assert "licensing authority" in data["caution"]
    assert data["disposal"]["lifetime_after_years"] <= 5.0
    assert len(data["burns"]) == 3  # the circular transfer flies two impulses


def test_budget_circular_transfer_is_a_hohmann(tmp_path, capsys):
    # The "to 560 km" burn starts from a near-circular orbit; its two impulses cost about a
    # Hohmann transfer between the radii (Vallado 4th ed., Algorithm 36; within 1 m/s here
    # since the start orbit is slightly elliptic after the 12 m/s apogee raise).
    path = _write_case(tmp_path)
    main(["budget", str(path), "--json"])
    data = json.loads(capsys.readouterr().out)
    line = data["lines"][2]
    r0 = EARTH.radius_km + 540.0
    h = hohmann(r0, EARTH.radius_km + 560.0)
    assert abs(line["dv_km_s"] - h.dv_total_km_s) < 0.015  # km/s: from an elliptic start


def test_budget_needs_a_budget_section_or_options(tmp_path, capsys):
    path = _write_case(tmp_path, with_plan=False)
    assert main(["budget", str(path)]) == 2
    err = capsys.readouterr().err
    assert "budget.mission_years" in err and "Traceback" not in err
    assert main(["budget", str(path), "--mission-years", "3", "--margin-percent", "5"]) == 0
    out = capsys.readouterr().out
    assert "station keeping" in out and "caution:" in out


def test_transfer_hohmann_matches_vallado_example_6_1(capsys):
    # Vallado 4th ed., Example 6-1: 191.34411 km to 35 781.34857 km: total 3.935 224 km/s.
    argv = [
        "transfer",
        "hohmann",
        "--from-alt-km",
        "191.34411",
        "--to-alt-km",
        "35781.34857",
        "--json",
    ]
    assert main(argv) == 0
    data = json.loads(capsys.readouterr().out)
    assert abs(data["dv_total_km_s"] - 3.935224) < 2e-6


def test_transfer_lambert_vallado_example_7_5(capsys):
    argv = [
        "transfer",
        "lambert",
        "--r1-km",
        "15945.34",
        "0",
        "0",
        "--r2-km",
        "12214.83899",
        "10249.46731",
        "0",
    ]
    assert main(argv + ["--tof-s", "4560", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    # Vallado 4th ed., Example 7-5: v0 = (2.058913, 2.915965, 0) km/s
    assert data["v1_km_s"] == pytest.approx([2.058913, 2.915965, 0.0], abs=2e-6)


@pytest.mark.parametrize(
    "argv, option",
    [
        (
            [
                "transfer",
                "bielliptic",
                "--from-alt-km",
                "400",
                "--to-alt-km",
                "900",
                "--via-alt-km",
                "500",
            ],
            "--via-alt-km",
        ),
        (["transfer", "hohmann", "--from-alt-km", "-500", "--to-alt-km", "550"], "--from-alt-km"),
        (
            [
                "transfer",
                "lambert",
                "--r1-km",
                "7000",
                "0",
                "0",
                "--r2-km",
                "0",
                "8000",
                "0",
                "--tof-s",
                "3000",
                "--revolutions",
                "1",
            ],
            "minimum time of flight",
        ),
    ],
)
def test_transfer_bad_input_is_one_line_exit_2(argv, option, capsys):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert option in err and "\n" not in err
