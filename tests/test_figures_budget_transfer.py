"""Delta-v budget chart and transfer (porkchop) contours: the drawn values against the
kernel's results and against the rocket equation and the calendar."""

from __future__ import annotations

import datetime as dt
import json
import math

import erfa
import numpy as np
import pytest
from bokeh.embed import json_item

from orbitledger.figures import budget_figure, transfer_data, transfer_figure
from orbitledger.figures.budget import TOTAL_LINE
from orbitledger.figures.sources import sources_of
from orbitledger.kernel import BudgetItem, InputError, delta_v_budget
from orbitledger.kernel.porkchop import planetary_porkchop

G0 = 9.80665  # m/s^2, 3rd CGPM (1901)
LINES = [
    BudgetItem("launch dispersion correction", 0.015, False, "allowance"),
    BudgetItem("orbit raise", 0.0121, True, "Hohmann 520 -> 545 km"),
    BudgetItem("station keeping (5 y)", 0.0083, True, "drag make-up"),
    BudgetItem("disposal", 0.041, True, "perigee to 300 km"),
]


@pytest.fixture(scope="module")
def budget():
    return delta_v_budget(LINES, isp_s=220.0, initial_mass_kg=48.0, margin_percent=10.0)


def test_bars_are_the_budget_lines_in_m_s(budget):
    fig = budget_figure(budget)
    cols = sources_of(fig)["lines"].data
    assert cols["line"] == [x.name for x in LINES] + [TOTAL_LINE]
    for k, item in enumerate(LINES):
        assert cols["dv_m_s"][k] == pytest.approx(item.dv_km_s * 1000.0, abs=1e-9)
        margin = 0.1 * item.dv_km_s * 1000.0 if item.margin else 0.0
        assert cols["margin_m_s"][k] == pytest.approx(margin, abs=1e-9)  # the 10 % policy
    assert cols["with_margin_m_s"][-1] == pytest.approx(budget.total_dv_km_s * 1000.0, abs=1e-9)
    # propellant of the whole budget by the rocket equation, m_p = m0 (1 - exp(-dv / (Isp g0)))
    # (Tsiolkovsky; Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Eq. 6.1);
    # line by line it compounds to the same total; 1 g.
    total_dv = cols["with_margin_m_s"][-1]
    assert cols["propellant_kg"][-1] == pytest.approx(
        48.0 * (1.0 - math.exp(-total_dv / (220.0 * G0))), abs=1e-3
    )
    assert fig.xaxis[0].axis_label == "delta-v (m/s)"
    rows = [row for tool in fig.tools if hasattr(tool, "tooltips") for row in tool.tooltips]
    assert ("propellant", "@{propellant_kg}{0.000} kg") in rows
    json.dumps(json_item(fig))


def test_budgets_side_by_side(budget):
    other = delta_v_budget(LINES[:2], isp_s=220.0, initial_mass_kg=48.0, margin_percent=5.0)
    fig = budget_figure([budget, other], labels=["A", "B"])
    factors = list(fig.y_range.factors)
    assert ("orbit raise", "A") in factors and ("orbit raise", "B") in factors
    assert ("disposal", "B") not in factors  # B has no disposal line
    with pytest.raises(InputError, match="budgets"):
        budget_figure([])


@pytest.fixture(scope="module")
def mars_grid():
    d0 = sum(erfa.cal2jd(2026, 9, 1))
    dep = d0 + np.arange(0.0, 150.0, 5.0)
    arr = d0 + 150.0 + np.arange(0.0, 300.0, 6.0)
    return planetary_porkchop("earth", "mars", dep, arr)


def test_porkchop_values_axes_and_minimum(mars_grid):
    data = transfer_data(mars_grid, quantity="c3")
    c = data["contour"]
    # contour z is (arrival, departure): the kernel's grid transposed, invalid cells NaN
    expected = np.where(mars_grid.valid, mars_grid.c3_km2_s2, np.nan).T
    np.testing.assert_array_equal(np.isnan(c["z"]), np.isnan(expected))
    np.testing.assert_allclose(c["z"], expected, equal_nan=True)
    # JD 2026-09-01 0h on the datetime axis: the calendar through Python's datetime
    first = (dt.datetime(2026, 9, 1) - dt.datetime(1970, 1, 1)).total_seconds() * 1000.0
    assert c["x"][0] == pytest.approx(first, abs=1e-3)
    best = data["best"]
    assert best["value"][0] == pytest.approx(np.nanmin(expected), abs=1e-12)
    assert c["levels"][0] <= best["value"][0] < c["levels"][1]


def test_porkchop_figure_labels(mars_grid):
    fig = transfer_figure(mars_grid)
    assert fig.xaxis[0].axis_label == "departure (TDB)"
    assert fig.yaxis[0].axis_label == "arrival (TDB)"
    rows = [row for tool in fig.tools if hasattr(tool, "tooltips") for row in tool.tooltips]
    assert ("total delta-v", "@{value}{0.000} km/s") in rows
    json.dumps(json_item(fig))
    with pytest.raises(InputError, match="quantity"):
        transfer_data(mars_grid, quantity="cost")
