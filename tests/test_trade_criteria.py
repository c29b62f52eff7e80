"""Criteria, reasons and ranked candidates; candidates back to cases and into the trade view.

References: the sun-synchronous condition (node turning 360 deg per tropical year, common
practice) decides which inclinations pass an offset criterion; the candidates' cases are
checked against the single-case results (``orbitledger.analysis.case_results``).
"""

from __future__ import annotations

import math
import warnings
from pathlib import Path

import numpy as np
import pytest

from orbitledger.analysis import case_results
from orbitledger.case import load_case
from orbitledger.kernel.errors import InputError
from orbitledger.trade import (
    Criterion,
    apply_criteria,
    candidates_to_cases,
    parse_criterion,
    rank_candidates,
    sweep,
)

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


@pytest.fixture(scope="module")
def base():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return load_case(EXAMPLES / "candidate-a.case.json")


@pytest.fixture(scope="module")
def study(base):
    vary = {"orbit.altitude_km": "500:600:25", "orbit.i_deg": "97.2:97.9:0.1"}
    return sweep(base, vary, metrics=["orbit", "j2"], progress=False)


def test_parse_criterion():
    assert parse_criterion("contact_min_per_day>=20") == Criterion(
        "contact_min_per_day", ">=", 20.0
    )
    assert parse_criterion(" lifetime_years < 25 ").better == "min"
    for text in ("contact_min_per_day = 20", "x >= y", ">= 3"):
        with pytest.raises(InputError) as err:
            parse_criterion(text)
        assert err.value.field == "criteria"


def test_pass_fail_with_reasons(study):
    judged = apply_criteria(study, ["sun_synchronous_offset_deg <= 0.05", "period_s < 5760"])
    offset = study["sun_synchronous_offset_deg"].to_numpy()
    period = study["period_s"].to_numpy()
    np.testing.assert_array_equal(judged["meets_criteria"], (offset <= 0.05) & (period < 5760))
    k = int(np.flatnonzero((offset > 0.05) & (period >= 5760))[0])
    reasons = judged["reasons"][k]
    assert reasons.startswith(f"sun_synchronous_offset_deg = {offset[k]:.6g} deg, needs <= 0.05")
    assert f"period_s = {period[k]:.6g} s, needs < 5760" in reasons
    assert judged["reasons"][judged["meets_criteria"]].eq("").all()
    assert judged.attrs["criteria"] == ["sun_synchronous_offset_deg <= 0.05", "period_s < 5760"]


def test_not_computed_fails_with_that_reason(base):
    frame = sweep(base, {"orbit.a_km": [7000.0, 20000.0]}, metrics=["j2"], progress=False)
    judged = apply_criteria(frame, ["sun_synchronous_offset_deg <= 1"])
    assert judged["meets_criteria"].tolist() == [True, False]
    assert judged["reasons"][1] == "sun_synchronous_offset_deg not computed for this case"


def test_unknown_metric_is_named(study):
    with pytest.raises(InputError) as err:
        apply_criteria(study, ["contact_min_per_day >= 20"])
    assert err.value.field == "criteria" and "contact_min_per_day" in str(err.value)


def test_ranked_candidates_nearest_sun_synchronous_first(study):
    criteria = ["sun_synchronous_offset_deg <= 0.1", "sun_synchronous_offset_deg >= -0.1"]
    table = rank_candidates(study, criteria, rank_by=[("sun_synchronous_offset_deg", "abs-min")])
    offsets = table["sun_synchronous_offset_deg"].abs().to_numpy()
    assert (np.diff(offsets) >= 0).all() and (offsets <= 0.1).all()
    assert table["rank"].tolist() == list(range(1, len(table) + 1))
    # The sun-synchronous inclination rises with altitude (cos i ~ -a^3.5, common practice):
    # each altitude of the grid has its own nearest inclination, so every altitude appears.
    assert set(table["orbit.altitude_km"]) == set(study["orbit.altitude_km"])
    best = study.loc[table["case"][0]]
    assert abs(best["sun_synchronous_offset_deg"]) == offsets[0]


def test_default_ranking_follows_the_criteria_directions(study):
    table = rank_candidates(study, ["period_s <= 5760", "sun_synchronous_offset_deg >= -0.2"])
    assert (np.diff(table["period_s"].to_numpy()) >= 0).all()  # an upper bound: smaller first
    top = rank_candidates(study, ["period_s >= 5700"], top=3)
    assert len(top) == 3 and (np.diff(top["period_s"].to_numpy()) <= 0).all()


def test_candidates_become_cases_with_the_same_results(base, study):
    table = rank_candidates(study, ["sun_synchronous_offset_deg <= 0.02"], top=3)
    cases = candidates_to_cases(table)
    assert len(cases) == 3
    for case, (_k, row) in zip(cases, table.iterrows(), strict=True):
        assert case.meta.title.startswith(f"#{int(row['rank'])} altitude_km")
        results = case_results(case, ["orbit", "j2"])
        assert results["sun_synchronous_offset_deg"].agrees_with(row["sun_synchronous_offset_deg"])
        assert math.isclose(case.elements().i_deg, row["orbit.i_deg"], rel_tol=0, abs_tol=0)


def test_the_trade_view_takes_a_candidate_table(study):
    from orbitledger.widgets.compare import trade_table

    table = rank_candidates(study, ["sun_synchronous_offset_deg <= 0.02"], top=2)
    trade = trade_table(table)
    assert trade.labels[0].startswith("#1 altitude_km")
    rows = {name: values for name, _d, _u, _g, values, _b, _r in trade.rows}
    np.testing.assert_allclose(
        rows["sun_synchronous_offset_deg"], table["sun_synchronous_offset_deg"], rtol=1e-9
    )
