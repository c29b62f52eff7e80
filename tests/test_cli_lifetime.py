"""The ``lifetime`` verb: the case's drag inputs reach the kernel, results and refusals as specified.

Outside references: the ballistic coefficient m / (Cd A) of the case's spacecraft (definition,
Montenbruck & Gill, Satellite Orbits, Sec. 3.5; arithmetic here), the rule-of-thumb lifetime band of a small
satellite near 540 km (one to a few decades at moderate activity; common practice, ESA/NASA
debris-mitigation guidance), and the kernel's own ``lifetime_years`` for the same inputs.
"""

from __future__ import annotations

import copy
import json

import pytest

from orbitledger.case.starter import STARTER_DATA
from orbitledger.cli.main import main
from orbitledger.kernel import Elements
from orbitledger.kernel.flux import level_flux
from orbitledger.kernel.lifetime import lifetime_years
from orbitledger.kernel.nrlmsis import nrlmsis_profile


def run(capsys, *argv):
    status = main(list(argv))
    out, err = capsys.readouterr()
    return status, out, err


def write_case(tmp_path, changes=None, drop=(), name="kes.case.json"):
    raw = copy.deepcopy(STARTER_DATA)
    for key in drop:
        raw.pop(key, None)
    for key, value in (changes or {}).items():
        raw[key] = value
    path = tmp_path / name
    path.write_text(json.dumps(raw, indent=2))
    return path


def test_json_lifetime_of_the_starter_case(tmp_path, capsys):
    path = write_case(tmp_path)
    status, out, err = run(capsys, "lifetime", str(path), "--json")
    assert status == 0, err
    data = json.loads(out)
    craft = STARTER_DATA["spacecraft"]
    b = craft["mass_kg"] / (craft["drag_coefficient"] * craft["drag_area_m2"])
    assert data["assumptions"]["ballistic_coefficient_kg_m2"].startswith(f"{b:.6g}")
    assert data["reentered"] and 5.0 < data["lifetime_years"] < 60.0  # common practice band
    assert data["assumptions"]["solar_activity"].startswith("moderate")
    assert "disposal-compliance" in data["caution"]
    assert data["reentry_epoch_utc"][:2] == "20"
    # The verb reports exactly what the kernel computes for the same inputs: NRLMSIS 2.1 at
    # the moderate ECSS level by default, the exponential model when the case asks for it.
    orbit = STARTER_DATA["orbit"]
    elements = Elements(6378.137 + orbit["altitude_km"], orbit["e"], orbit["i_deg"], 0, 0, 0)
    msis = nrlmsis_profile(level_flux("moderate"), orbit["i_deg"])
    kernel = lifetime_years(elements, ballistic_coefficient_kg_m2=b, density=msis)
    assert data["lifetime_years"] == pytest.approx(kernel.years, rel=1e-9)
    assert data["density_model"].startswith("NRLMSIS 2.1")
    assert [row["scenario"] for row in data["scenarios"]] == ["case", "low", "high"]
    low, high = data["scenarios"][1]["lifetime_years"], data["scenarios"][2]["lifetime_years"]
    assert high < data["lifetime_years"] and (low is None or low > data["lifetime_years"])
    fast = {"density_model": "exponential"}
    status, out, err = run(
        capsys, "lifetime", str(write_case(tmp_path, {"force_model": fast})), "--json"
    )
    assert status == 0, err
    kernel = lifetime_years(elements, ballistic_coefficient_kg_m2=b)
    assert json.loads(out)["lifetime_years"] == pytest.approx(kernel.years, rel=1e-9)


def test_solar_activity_and_disposal_limit_come_from_the_case(tmp_path, capsys):
    moderate = json.loads(run(capsys, "lifetime", str(write_case(tmp_path)), "--json")[1])
    path = write_case(
        tmp_path,
        {
            "force_model": {"solar_activity": "high"},
            "budget": {
                "mission_years": 5.0,
                "disposal": {"lifetime_limit_years": 5.0, "reentry_altitude_km": 100.0},
            },
        },
        name="high.case.json",
    )
    status, out, err = run(capsys, "lifetime", str(path), "--json")
    assert status == 0, err
    high = json.loads(out)
    assert high["lifetime_years"] < moderate["lifetime_years"]
    assert high["assumptions"]["reentry_altitude_km"].startswith("100")
    assert high["lifetime_limit_years"] == 5.0
    assert high["within_limit_preliminary"] is (high["lifetime_years"] <= 5.0)


def test_table_shows_the_number_its_assumptions_and_the_caution(tmp_path, capsys):
    status, out, _ = run(capsys, "lifetime", str(write_case(tmp_path)))
    assert status == 0
    assert "orbital lifetime" in out and "years" in out
    assert "NRLMSIS 2.1" in out and "ballistic coefficient (kg/m^2)" in out
    assert "at high activity" in out and "ECSS-E-ST-10-04C" in out
    assert "Caution:" in out


def test_numerical_method_reports_a_decay_inside_a_short_span(tmp_path, capsys):
    orbit = dict(STARTER_DATA["orbit"], altitude_km=200.0)
    path = write_case(tmp_path, {"orbit": orbit}, name="low.case.json")
    status, out, err = run(
        capsys, "lifetime", str(path), "--json", "--method", "numerical", "--max-years", "0.05"
    )
    assert status == 0, err
    data = json.loads(out)
    assert data["method"] == "numerical" and data["reentered"]
    assert 0.0 < data["lifetime_days"] < 0.05 * 365.25
    assert err == ""  # no progress bar when stderr is not a terminal


def test_refusals_exit_2_with_one_line(tmp_path, capsys):
    no_craft = write_case(tmp_path, drop=("spacecraft",), name="bare.case.json")
    status, out, err = run(capsys, "lifetime", str(no_craft))
    assert status == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and "spacecraft" in err and "bare.case.json" in err
    status, _, err = run(capsys, "lifetime", str(tmp_path / "missing.case.json"))
    assert status == 2 and "Traceback" not in err
    status, _, err = run(capsys, "lifetime", str(write_case(tmp_path)), "--max-years", "-1")
    assert status == 2 and "--max-years" in err
    status, _, err = run(
        capsys, "lifetime", str(write_case(tmp_path)), "--method", "numerical", "--max-years", "50"
    )
    assert status == 2 and "max_years" in err and len(err.strip().splitlines()) == 1
