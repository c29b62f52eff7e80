"""A case's density model and flux scenario: case fields, the analyst's CSV table, the profile.

Outside references: ECSS-E-ST-10-04C (2008) activity levels (from memory, as in
test_nrlmsis.py), the NASA/NOAA Solar Cycle 25 Prediction Panel's date of the cycle 25 minimum
(December 2019), and the physics that more flux means a shorter lifetime (common practice).
"""

from __future__ import annotations

import copy
import json

import numpy as np
import pytest

from orbitledger.analysis.flux_scenario import (
    case_density_profile,
    case_flux_history,
    read_flux_table,
    scenario_profiles,
)
from orbitledger.case import CaseError, case_from_data
from orbitledger.case.starter import STARTER_DATA
from orbitledger.cli.main import main
from orbitledger.kernel.errors import InputError


def case_with(force_model: dict):
    raw = copy.deepcopy(STARTER_DATA)
    raw["force_model"] = force_model
    return case_from_data(raw)


def test_default_is_nrlmsis_at_the_solar_activity_level():
    case = case_with({"solar_activity": "high"})
    assert case.force_model.density_model == "nrlmsis"
    history = case_flux_history(case)
    # ECSS-E-ST-10-04C high (long-term) activity: F10.7 = F10.7a = 250, Ap = 45 (from memory).
    assert history.states() == [(250.0, 250.0, 45.0)]
    assert case_density_profile(case).model.startswith("NRLMSIS 2.1")
    fast = case_with({"density_model": "exponential", "solar_activity": "high"})
    assert case_density_profile(fast).model.startswith("piecewise-exponential")
    # The default is left out of the canonical form: older case files keep their fingerprint.
    assert "density_model" not in case_with({}).to_data()["force_model"]


@pytest.mark.parametrize(
    ("scenario", "field", "words"),
    [
        ({"kind": "constant"}, "flux_scenario.level", "needs a level"),
        ({"kind": "constant", "level": "low", "ap": 4}, "flux_scenario.level", "not both"),
        ({"kind": "constant", "f107_sfu": 20, "f107a_sfu": 70, "ap": 4}, "f107_sfu", "50, 400"),
        ({"kind": "constant", "level": "low", "file": "x.csv"}, "flux_scenario.file", "not used"),
        ({"kind": "solar-cycle", "period_years": 30}, "period_years", "<= 15"),
        (
            {"kind": "solar-cycle", "f107_min_sfu": 200, "f107_max_sfu": 150},
            "f107_max_sfu",
            "above",
        ),
        ({"kind": "table"}, "flux_scenario.file", "needs the CSV"),
        ({"kind": "sunspots"}, "flux_scenario.kind", ""),
    ],
)
def test_bad_scenarios_are_refused_naming_the_field(scenario, field, words):
    with pytest.raises(CaseError) as err:
        case_with({"flux_scenario": scenario})
    assert field in str(err.value) and words in str(err.value)
    assert "\n" not in str(err.value)


def test_exponential_model_refuses_a_flux_scenario():
    with pytest.raises(CaseError, match="force_model.flux_scenario.*exponential"):
        case_with({"density_model": "exponential", "flux_scenario": {"kind": "solar-cycle"}})


def test_stated_constant_values_and_the_solar_cycle_reach_the_kernel():
    stated = case_with({"flux_scenario": {"kind": "constant", "f107_sfu": 180.0,
                                          "f107a_sfu": 170.0, "ap": 12.0}})  # fmt: skip
    assert case_flux_history(stated).states() == [(180.0, 170.0, 12.0)]
    cycle = case_flux_history(case_with({"flux_scenario": {"kind": "solar-cycle"}}))
    # Starter epoch 2027-03-21: 7.3 years after the December 2019 minimum (NASA/NOAA panel),
    # so the flux falls from its start towards the next minimum and rises again after.
    assert (
        cycle.period_years == 11.0 and 65.0 <= cycle.f107_sfu.min() < cycle.f107_sfu.max() <= 250.0
    )
    assert cycle.f107_sfu[0] > cycle.f107_sfu[int(np.argmin(cycle.f107_sfu))]


def write_table(path, rows, header="date_utc,f107_sfu,f107a_sfu,ap"):
    path.write_text(
        "# invented forecast for the Kestrel-2 study\n" + header + "\n" + "\n".join(rows) + "\n"
    )
    return path


def test_csv_table_is_read_and_drives_the_profile(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    rows = [f"2027-{m:02d}-01,{100 + 10 * m},{100 + 10 * m},8" for m in range(1, 13)]
    rows += [f"2028-{m:02d}-01T00:00:00Z,220,220,20" for m in range(1, 13)]
    write_table(tmp_path / "flux.csv", rows)
    dates, values, digest = read_flux_table("flux.csv")
    assert dates.size == 24 and values[0].tolist() == [110.0, 110.0, 8.0] and len(digest) == 64
    case = case_with({"flux_scenario": {"kind": "table", "file": "flux.csv"}})
    profile = case_density_profile(case)
    assert profile.time_varying and "flux.csv" in profile.scenario
    # Later quarters have more flux: the density at 450 km rises along the table.
    assert profile.density_kg_m3(450.0, 1.5) > profile.density_kg_m3(450.0, 0.0)


@pytest.mark.parametrize(
    ("rows", "header", "where", "words"),
    [
        (["2027-01-01,abc,100,8"], None, "line 3, column f107_sfu", "not a number"),
        (
            ["2027-01-01,100,100,8", "2026-12-01,100,100,8"],
            None,
            "line 4, column date_utc",
            "increase",
        ),
        (["2027-13-01,100,100,8"], None, "line 3, column date_utc", "bad month"),
        (["2027-01-01,100,100,999"], None, "line 3, column ap", "0..400"),
        (["2027-01-01,100,100"], None, "line 3, column ap", "not a number"),
        (["2027-01-01,100,8"], "date_utc,f107_sfu,ap", "line 2", "f107a_sfu"),
    ],
)
def test_bad_csv_rows_get_one_line_naming_file_line_and_column(
    tmp_path, rows, header, where, words
):
    path = write_table(tmp_path / "bad.csv", rows, header or "date_utc,f107_sfu,f107a_sfu,ap")
    with pytest.raises(InputError) as err:
        read_flux_table(path)
    text = str(err.value)
    assert text.startswith(str(path)) and where in text and words in text and "\n" not in text


def test_cli_lifetime_refuses_a_bad_table_with_one_line(tmp_path, capsys):
    write_table(tmp_path / "bad.csv", ["2027-01-01,100,100,8", "2027-02-01,100,x,8"])
    raw = copy.deepcopy(STARTER_DATA)
    raw["force_model"] = {"flux_scenario": {"kind": "table", "file": str(tmp_path / "bad.csv")}}
    case_path = tmp_path / "k.case.json"
    case_path.write_text(json.dumps(raw))
    assert main(["lifetime", str(case_path)]) == 2
    err = capsys.readouterr().err.strip()
    assert "bad.csv" in err and "line 4, column f107a_sfu" in err and "Traceback" not in err


def test_scenario_lifetimes_order_low_case_high():
    from orbitledger.kernel.lifetime import lifetime_years

    case = case_with({})
    names = [name for name, _ in scenario_profiles(case)]
    assert names == ["case", "low", "high"]
    years = {
        name: lifetime_years(case.elements(), ballistic_coefficient_kg_m2=50.0, density=p).years
        for name, p in scenario_profiles(case)
    }
    assert years["high"] < years["case"] < years["low"]


def test_lifetime_results_give_the_value_per_scenario():
    # The record's lifetime group: the case's scenario, then the low and high levels of the
    # same model; more flux, shorter life (common practice).
    from orbitledger.analysis import case_results

    results = case_results(case_with({"flux_scenario": {"kind": "solar-cycle"}}), ["lifetime"])
    case, low, high = (
        results[n].value
        for n in ("lifetime_years", "lifetime_low_activity_years", "lifetime_high_activity_years")
    )
    assert high < case < low
    assert "solar cycle" in results["lifetime_years"].description
    assert "ECSS-E-ST-10-04C" in results["lifetime_high_activity_years"].description


def test_profile_from_moves_the_time_origin():
    from orbitledger.analysis.flux_scenario import profile_from
    from orbitledger.kernel.flux import solar_cycle_flux
    from orbitledger.kernel.nrlmsis import nrlmsis_profile

    cycle = nrlmsis_profile(solar_cycle_flux(2461406.5, 2458832.5), 97.5)
    later = profile_from(cycle, 5.0)
    for t in (0.0, 3.3, 9.0, 14.0):  # periodic: the same density 5 years on
        assert later.density_kg_m3(500.0, t) == pytest.approx(cycle.density_kg_m3(500.0, t + 5.0))
    constant = case_density_profile(case_with({}))
    assert profile_from(constant, 5.0) is constant


def test_numerical_drag_uses_the_case_density():
    from orbitledger.analysis.inputs import case_force_model

    case = case_with({"propagator": "numerical", "drag": True, "solar_activity": "low"})
    model = case_force_model(case)
    assert model.density.model.startswith("NRLMSIS 2.1") and "low activity" in model.description
    fast = case_with({"propagator": "numerical", "drag": True, "density_model": "exponential"})
    assert case_force_model(fast).density is None  # the exponential model, untabulated
    assert "moderate solar activity" in case_force_model(fast).description


def test_record_states_the_density_model_and_flux_scenario():
    # The record's "models and assumptions" rows, from the case data alone.
    from reporting.record import models_and_assumptions

    raw = copy.deepcopy(STARTER_DATA)
    raw["force_model"] = {"flux_scenario": {"kind": "solar-cycle", "period_years": 10.5}}
    rows = {r["topic"]: r["value"] for r in models_and_assumptions(raw)}
    assert (
        rows["Density model"].startswith("NRLMSIS 2.1")
        and "lifetime and disposal" in rows["Density model"]
    )
    assert "solar cycle" in rows["Solar activity"] and "10.5 years" in rows["Solar activity"]
    raw["force_model"] = {"density_model": "exponential", "solar_activity": "low"}
    rows = {r["topic"]: r["value"] for r in models_and_assumptions(raw)}
    assert rows["Density model"].startswith("piecewise-exponential") and rows[
        "Solar activity"
    ].startswith("low")
