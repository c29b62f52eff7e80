"""Lifetime percentiles of a Monte Carlo run (5/50/95), in the attrs, printed and for the record.

Outside reference: Hyndman & Fan (1996), "Sample quantiles in statistical packages",
definition 1 (inverse of the empirical distribution: the smallest sample x_(k) with
k >= p n / 100), worked by hand below.
"""

from __future__ import annotations

import copy
import json
import math

import pandas as pd
import pytest

from orbitledger import study
from orbitledger.case import case_from_data
from orbitledger.case.starter import STARTER_DATA
from orbitledger.cli.main import main
from orbitledger.trade.dispersion import Normal, disperse
from orbitledger.trade.lifetime_spread import (
    lifetime_percentiles,
    lifetime_spread_lines,
    note_lifetime_percentiles,
)


def test_percentiles_by_hand_with_no_reentry_and_refused_samples():
    # 20 used samples 1..19 and one that never re-enters: definition 1 gives x_(ceil(p n/100)):
    # p5 -> x_(1) = 1, p50 -> x_(10) = 10, p95 -> x_(19) = 19 (by hand).
    years = [float(k) for k in range(1, 20)] + [math.inf, float("nan")]
    frame = pd.DataFrame({"lifetime_years": years, "error": [""] * 20 + ["refused"]})
    stats = lifetime_percentiles(frame)
    assert (stats["p5"], stats["p50"], stats["p95"]) == (1.0, 10.0, 19.0)
    assert stats["samples"] == 20 and stats["refused"] == 1 and stats["not_reentered"] == 1
    frame = pd.DataFrame({"lifetime_years": [3.0, math.inf, math.inf, math.inf]})
    stats = lifetime_percentiles(frame)
    assert stats["p5"] == 3.0 and stats["p50"] is None and stats["p95"] is None
    text = "\n".join(lifetime_spread_lines(stats, 200.0))
    assert "p50 no re-entry within 200 y" in text and "3 samples do not re-enter" in text
    assert lifetime_percentiles(pd.DataFrame({"a_km": [1.0]})) is None


def test_disperse_stores_them_and_the_record_gets_them(tmp_path, capsys):
    case = case_from_data(copy.deepcopy(STARTER_DATA))
    frame = disperse(case, {"spacecraft.mass_kg": Normal(5.0)}, 12, 7, ["lifetime"])
    stats = frame.attrs["lifetime_percentiles"]
    years = sorted(frame["lifetime_years"])
    assert stats["p5"] == years[0] and stats["p50"] == years[5] and stats["p95"] == years[11]
    assert stats["p5"] <= stats["p50"] <= stats["p95"]
    study._results.clear()
    note_lifetime_percentiles(frame)
    assert study._results["lifetime_p50_years"].value == stats["p50"]
    study._results.clear()
    # The verb prints them and saves them beside the table.
    raw = tmp_path / "k.case.json"
    raw.write_text(json.dumps(STARTER_DATA))
    out = tmp_path / "mc.csv"
    argv = ["disperse", str(raw), "--samples", "12", "--seed", "7", "--metrics", "lifetime",
            "--disperse", "spacecraft.mass_kg=normal:5", "--out", str(out)]  # fmt: skip
    assert main(argv) == 0
    printed = capsys.readouterr().out
    assert f"p50 {stats['p50']:.2f} y" in printed
    saved = json.loads((tmp_path / "mc.csv.attrs.json").read_text())
    assert saved["lifetime_percentiles"]["p95"] == pytest.approx(stats["p95"])
