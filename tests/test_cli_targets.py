"""The targets and coverage verbs, the case fields behind them, the coverage figure and the
record's ``targets`` results, end to end on the Kestrel-2 starter case."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from orbitledger.case import CaseError, case_from_data
from orbitledger.cli.main import main

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "candidate-a.case.json"
TARGETS = [
    {"name": "Fenwick Fen", "lat_deg": 52.3, "lon_deg": 0.1},
    {"name": "Kuru Plain", "lat_deg": -12.5, "lon_deg": 131.0, "height_km": 0.1},
    {"name": "Harrow Moor", "lat_deg": 48.0, "lon_deg": 8.0},
]
SENSOR = {"off_nadir_max_deg": 30.0, "min_sun_elevation_deg": 10.0}
REGION = {"lat_min_deg": 36.0, "lat_max_deg": 60.0, "lon_min_deg": -12.0, "lon_max_deg": 12.0,
          "step_deg": 3.0}  # fmt: skip


def _data(**changes) -> dict:
    data = json.loads(EXAMPLE.read_text())
    data.update(targets=TARGETS, sensor=SENSOR, coverage=REGION)
    data.update(changes)
    return data


def _case_file(tmp_path: Path, **changes) -> Path:
    path = tmp_path / "kestrel.case.json"
    path.write_text(json.dumps(_data(**changes)))
    return path


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main(list(argv))
    out = capsys.readouterr()
    return code, out.out, out.err


def test_case_without_targets_keeps_its_fingerprint() -> None:
    # Fields added later stay out of the canonical form while unset (docs/case-file.md).
    plain = json.loads(EXAMPLE.read_text())
    assert (
        case_from_data(plain).canonical_json()
        == case_from_data(dict(plain, targets=[])).canonical_json()
    )
    assert "sensor" not in case_from_data(plain).to_data()


@pytest.mark.parametrize(
    "changes, field, words",
    [
        ({"sensor": None}, "sensor", "targets need a sensor"),
        ({"targets": [], "sensor": None}, "sensor", "coverage region needs a sensor"),
        ({"sensor": {"swath_km": 80.0, "off_nadir_max_deg": 20.0}}, "sensor.swath_km", "not both"),
        ({"sensor": {"min_sun_elevation_deg": 5.0}}, "sensor.off_nadir_max_deg", "give"),
        ({"targets": TARGETS + TARGETS[:1]}, "targets[3].name", "target names are unique"),
        ({"targets": [{"name": "x", "lat_deg": 95.0, "lon_deg": 0.0}]}, "targets[0].lat_deg", "90"),
        ({"coverage": dict(REGION, lat_max_deg=10.0)}, "coverage.lat_max_deg", "lat_min_deg"),
        ({"coverage": dict(REGION, step_deg=0.0)}, "coverage.step_deg", ">"),
        ({"coverage": dict(REGION, lon_max_deg=-20.0)}, "coverage.lon_max_deg", "east of it"),
        ({"targets": [dict(TARGETS[0], name=f"t{k}") for k in range(1001)]}, "targets", "1000"),
    ],
)
def test_bad_imaging_input_names_the_field(changes: dict, field: str, words: str) -> None:
    with pytest.raises(CaseError) as err:
        case_from_data(_data(**changes))
    assert err.value.field == field
    assert words in str(err.value)


def test_targets_verb_table_and_json(tmp_path: Path, capsys) -> None:
    path = _case_file(tmp_path)
    code, out, _ = _run(capsys, "targets", str(path), "--days", "3", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["window"]["duration_s"] == 3 * 86_400.0
    assert {t["name"] for t in data["targets"]} == {t["name"] for t in TARGETS}
    assert data["accesses"]
    for a in data["accesses"]:
        assert a["min_off_nadir_deg"] <= 30.0 + 1e-6
        assert a["sun_elevation_deg"] >= 10.0 - 1e-6
        assert math.isclose(a["duration_s"], a["end_s"] - a["start_s"])
    code, out, _ = _run(capsys, "targets", str(path), "--days", "3")
    assert code == 0
    assert "min off-nadir (deg)" in out and "longest gap (h)" in out and "Caution:" in out


def test_coverage_verb_fractions_and_offline_figure(tmp_path: Path, capsys) -> None:
    path = _case_file(tmp_path)
    figure = tmp_path / "coverage.html"
    code, out, _ = _run(capsys, "coverage", str(path), "--days", "2", "--figure", str(figure))
    assert code == 0
    assert "within day" in out and "81 grid points" in out
    html = figure.read_text()
    assert "Coverage: " in html and "cdn.bokeh.org" not in html  # BokehJS inlined: offline
    code, out, _ = _run(capsys, "coverage", str(path), "--days", "2", "--json")
    data = json.loads(out)
    assert data["points"] == 81 == len(data["grid"])
    assert len(data["fraction_by_day"]) == 2
    assert data["fraction_by_day"][-1] == data["fraction_covered"]


def test_verbs_refuse_a_case_without_the_section(tmp_path: Path, capsys) -> None:
    plain = tmp_path / "plain.case.json"
    plain.write_text(EXAMPLE.read_text())
    code, _, err = _run(capsys, "targets", str(plain))
    assert code == 2 and "targets" in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
    code, _, err = _run(capsys, "coverage", str(plain))
    assert code == 2 and "coverage" in err and len(err.strip().splitlines()) == 1


def test_coverage_over_the_limit_is_one_line_with_the_numbers(tmp_path: Path, capsys) -> None:
    region = {"lat_min_deg": -80.0, "lat_max_deg": 80.0, "lon_min_deg": -180.0,
              "lon_max_deg": 179.9, "step_deg": 0.2}  # fmt: skip
    path = _case_file(tmp_path, coverage=region)
    code, _, err = _run(capsys, "coverage", str(path), "--days", "30")
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert "grid points" in err or "point-samples" in err


def test_record_rows_and_figure_pass_the_record_checks() -> None:
    # The standard results carry the targets group (so the record lists them and verify
    # recomputes them); the coverage figure carries no code (reporting/safe_bokeh.py).
    from bokeh.embed import json_item

    from orbitledger.analysis import case_results
    from orbitledger.analysis.imaging import case_coverage
    from orbitledger.figures import coverage_figure
    from reporting.record import models_and_assumptions
    from reporting.safe_bokeh import problems

    case = case_from_data(_data(window={"duration_s": 86_400.0, "step_s": 10.0}))
    results = case_results(case, ["targets"])
    assert {"revisit_max_gap_h", "target_1_max_gap_h", "coverage_fraction_1d"} <= set(results)
    assert all(r.group == "targets" for r in results.values())
    again = case_results(case, ["targets"])
    assert all(again[n].agrees_with(r.value) for n, r in results.items())
    topics = [row["topic"] for row in models_and_assumptions(case.to_data())]
    assert "Target access" in topics and "Coverage region" in topics
    fig = coverage_figure(case_coverage(case), case.targets)
    assert problems(json_item(fig)) == []


def test_a_sweep_evaluates_the_targets_metrics_as_case_results_do() -> None:
    # A trade over altitude with revisit and coverage as metrics: each row equals the single
    # case's own results (one function computes both, analysis.case_results).
    from orbitledger.analysis import case_results
    from orbitledger.trade import sweep

    base = case_from_data(_data(window={"duration_s": 86_400.0, "step_s": 10.0}))
    frame = sweep(base, {"orbit.altitude_km": [520.0, 560.0]}, metrics=["targets"], progress=False)
    for k, altitude in enumerate([520.0, 560.0]):
        single = case_results(base.with_changes({"orbit.altitude_km": altitude}), ["targets"])
        for name in ("revisit_max_gap_h", "coverage_fraction", "target_accesses_in_window"):
            assert single[name].agrees_with(float(frame[name].iloc[k]))
