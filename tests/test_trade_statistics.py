"""``disperse`` prints its statistics; ``sweep`` says how close the best case came.

Outside references: numpy.percentile (method "linear") and Python's statistics.quantiles
(method "inclusive"), both Hyndman & Fan type 7; numpy's sample standard deviation; the
two-body period 2 pi sqrt(a^3 / GM) with the WGS-84 GM (NIMA TR8350.2).
"""

from __future__ import annotations

import math
import re
import statistics

import numpy as np
import pandas as pd
import pytest

from orbitledger.case import starter_case
from orbitledger.cli.main import main
from orbitledger.trade import disperse
from orbitledger.trade.dispersion import Normal
from orbitledger.trade.statistics import criteria_margins, metric_statistics, percentile

GM_WGS84_KM3_S2 = 398_600.4418  # NIMA TR8350.2 (WGS-84), with the atmosphere
R_WGS84_KM = 6378.137


@pytest.mark.parametrize("n", [1, 2, 3, 10, 101, 1000])
def test_percentile_matches_numpy_and_the_standard_library(n):
    rng = np.random.default_rng(n)
    x = rng.normal(5.0, 3.0, n)
    for q in (0.0, 5.0, 37.5, 50.0, 95.0, 100.0):
        assert percentile(x, q) == pytest.approx(np.percentile(x, q, method="linear"), abs=1e-12)
    if n >= 2:  # statistics.quantiles: the 19 cut points of 20 groups are 5 %, 10 %, ... 95 %
        cuts = statistics.quantiles(x.tolist(), n=20, method="inclusive")
        assert percentile(x, 5.0) == pytest.approx(cuts[0], abs=1e-12)
        assert percentile(x, 95.0) == pytest.approx(cuts[-1], abs=1e-12)


def test_percentile_ignores_missing_values():
    assert percentile([np.nan, 1.0, 3.0, np.inf], 50.0) == 2.0
    assert math.isnan(percentile([np.nan], 50.0))


def test_statistics_of_a_dispersion_against_numpy():
    frame = disperse(starter_case(), {"orbit.altitude_km": Normal(2.0)}, 400, 11, ["orbit"])
    frame.loc[3, "period_s"] = np.nan  # a run where the metric is missing
    rows = {r["metric"]: r for r in metric_statistics(frame, ["period_s <= 5725"])}
    period = frame["period_s"].to_numpy()
    ok = period[np.isfinite(period)]
    row = rows["period_s"]
    assert row["unit"] == "s" and row["runs"] == 400 and row["computed"] == 399
    assert row["mean"] == pytest.approx(np.mean(ok), rel=1e-14)
    assert row["std"] == pytest.approx(np.std(ok, ddof=1), rel=1e-12)
    assert (row["min"], row["max"]) == (ok.min(), ok.max())
    for q in (5, 50, 95):
        assert row[f"p{q}"] == pytest.approx(np.percentile(ok, q, method="linear"), rel=1e-14)
    # the missing run fails too: period <= 5725 does not hold where it is not known
    assert row["failing"] == {"period_s <= 5725": int((~(period <= 5725.0)).sum())}
    assert row["failing"]["period_s <= 5725"] == int((ok > 5725.0).sum()) + 1


def _run(capsys, *argv):
    code = main([str(a) for a in argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_disperse_prints_its_statistics(tmp_path, capsys):
    case = tmp_path / "k.case.json"
    case.write_text(starter_case().to_json())
    out = tmp_path / "d.csv"
    code, text, err = _run(capsys, "disperse", case, "--samples", 300, "--disperse",
                           "orbit.altitude_km=normal:2", "--seed", 3, "--metrics", "orbit",
                           "--criteria", "period_s<=5725", "--out", out)  # fmt: skip
    assert code == 0, err
    assert "percentiles: linear, type 7" in text
    table = pd.read_csv(out)
    line = next(r for r in text.splitlines() if r.startswith("period_s "))
    cells = line.split()
    assert cells[1] == "s" and cells[2] == "300"
    mean, std, low, p5, p50, p95, high = (float(c) for c in cells[3:10])
    col = table["period_s"].to_numpy()
    assert mean == pytest.approx(col.mean(), rel=1e-6)
    assert std == pytest.approx(col.std(ddof=1), rel=1e-5)
    for printed, q in ((p5, 5), (p50, 50), (p95, 95)):
        assert printed == pytest.approx(np.percentile(col, q, method="linear"), rel=1e-6)
    assert (low, high) == pytest.approx((col.min(), col.max()), rel=1e-6)
    failing = int((col > 5725.0).sum())
    assert f"criterion period_s <= 5725: {failing} of 300 runs fail" in text


def _period_s(altitude_km: float) -> float:
    return 2.0 * math.pi * math.sqrt((R_WGS84_KM + altitude_km) ** 3 / GM_WGS84_KM3_S2)


def test_sweep_says_how_close_the_best_case_came(tmp_path, capsys):
    case = tmp_path / "k.case.json"
    case.write_text(starter_case().to_json())
    code, text, err = _run(capsys, "sweep", case, "--vary", "orbit.altitude_km=500:600:50",
                           "--metrics", "orbit", "--criteria", "period_s<=5600",
                           "--criteria", "apoapsis_alt_km>=400", "--out", tmp_path / "s.csv")  # fmt: skip
    assert code == 0, err
    assert "0 of 3 pass" in text
    assert "no case meets every criterion; the closest, case 0 (orbit.altitude_km = 500)" in text
    found = re.search(r"period_s <= 5600: period_s = [0-9.]+ s, short by ([0-9.]+) s", text)
    assert found, text
    # The lowest orbit has the shortest period: Kepler's third law with WGS-84's GM.
    assert float(found[1]) == pytest.approx(_period_s(500.0) - 5600.0, abs=1e-3)
    assert re.search(r"apoapsis_alt_km >= 400: apoapsis_alt_km = [0-9.]+ km, holds by", text)


def test_sweep_says_when_every_criterion_holds(tmp_path, capsys):
    case = tmp_path / "k.case.json"
    case.write_text(starter_case().to_json())
    code, text, _ = _run(capsys, "sweep", case, "--vary", "orbit.altitude_km=500:600:50",
                         "--metrics", "orbit", "--criteria", "period_s<=5800",
                         "--out", tmp_path / "s.csv")  # fmt: skip
    assert code == 0
    assert "every criterion holds (best case 0: orbit.altitude_km = 500)" in text
    found = re.search(r"period_s <= 5800: period_s = [0-9.]+ s, holds by ([0-9.]+) s", text)
    assert found and float(found[1]) == pytest.approx(5800.0 - _period_s(500.0), abs=1e-3)


def test_best_case_fails_fewest_criteria_first():
    frame = pd.DataFrame({"x": [1.0, 2.0, 3.0], "a": [10.0, 0.0, 9.0], "b": [0.0, 0.0, 5.0]})
    frame.attrs.update({"inputs": ["x"], "metrics": ["a", "b"], "units": {"a": "km", "b": "s"}})
    best = criteria_margins(frame, ["a >= 9.5", "b >= 4"])
    # row 0 fails b only by 4; row 2 fails a only by 0.5 (relative 0.05): fewest, then smallest
    assert best["case"] == 2 and not best["passes"]
    assert [round(m["margin"], 9) for m in best["margins"]] == [-0.5, 1.0]
