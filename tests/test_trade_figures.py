"""Trade figures: heat map cells and criteria contours, dispersion histogram, candidate table.

References: the contour of a linear metric (periapsis altitude = (R + h)(1 - e) - R) at its
threshold lies where the closed form puts it; histogram counts are numpy.histogram's.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pytest
from bokeh.embed import json_item
from bokeh.models import ContourRenderer, DataTable

from orbitledger.case import load_case
from orbitledger.figures.show import FIGURE_MIME_TYPE, figure_bundle
from orbitledger.figures.trade import (
    candidate_table_figure,
    dispersion_histogram_data,
    dispersion_histogram_figure,
    sweep_heatmap_data,
    sweep_heatmap_figure,
)
from orbitledger.kernel.errors import InputError
from orbitledger.trade import Normal, disperse, rank_candidates, sweep

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
R_WGS84 = 6378.137  # km, WGS-84 equatorial radius (NIMA TR8350.2, 3rd ed., Table 3.1)


@pytest.fixture(scope="module")
def base():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return load_case(EXAMPLES / "candidate-a.case.json")


@pytest.fixture(scope="module")
def study(base):
    vary = {"orbit.altitude_km": "500:600:10", "orbit.e": "0:0.01:0.002"}
    return sweep(base, vary, metrics=["orbit", "j2"], progress=False)


def test_heat_map_cells_are_the_study(study):
    data = sweep_heatmap_data(study, "orbit.altitude_km", "orbit.e", "periapsis_alt_km")
    cells = data["cells"]
    np.testing.assert_array_equal(cells["value"], study["periapsis_alt_km"])
    np.testing.assert_allclose(cells["w"], 10.0) and np.testing.assert_allclose(cells["h"], 0.002)


def test_criterion_contour_lies_on_the_closed_form(study):
    threshold = 530.0
    fig = sweep_heatmap_figure(
        study,
        "orbit.altitude_km",
        "orbit.e",
        "periapsis_alt_km",
        criteria=[f"periapsis_alt_km >= {threshold}"],
    )
    contours = list(fig.select(type=ContourRenderer))
    assert len(contours) == 1
    lines = contours[0].line_renderer.data_source.data
    xs = np.concatenate(lines["xs"])
    ys = np.concatenate(lines["ys"])
    # h_p = (R + h)(1 - e) - R = threshold  =>  h = (R + threshold) / (1 - e) - R. The metric
    # is linear in h, so the contour (linear interpolation along h) meets it to a mm or so.
    expected = (R_WGS84 + threshold) / (1.0 - ys) - R_WGS84
    assert np.max(np.abs(xs - expected)) < 0.01  # km, the interpolation across e bends it
    json_item(fig)  # serialisable: the record embeds it


def test_a_threshold_not_crossed_draws_no_contour(study):
    fig = sweep_heatmap_figure(
        study, "orbit.altitude_km", "orbit.e", "period_s", criteria=["period_s >= 1"]
    )
    assert not list(fig.select(type=ContourRenderer))


def test_heat_map_bad_axes_are_named(base, study):
    with pytest.raises(InputError) as err:
        sweep_heatmap_figure(study, "orbit.altitude_km", "orbit.i_deg", "period_s")
    assert err.value.field == "y"
    three = sweep(
        base,
        {"orbit.altitude_km": [500.0, 600.0], "orbit.e": [0.0, 0.01], "orbit.i_deg": [97, 98]},
        progress=False,
    )
    with pytest.raises(InputError, match="the sweep varies this input too"):
        sweep_heatmap_figure(three, "orbit.altitude_km", "orbit.e", "period_s")
    fig = sweep_heatmap_figure(
        three, "orbit.altitude_km", "orbit.e", "period_s", fixed={"orbit.i_deg": 98.0}
    )
    json_item(fig)


def test_dispersion_histogram(base):
    frame = disperse(base, {"orbit.altitude_km": Normal(2.0)}, 2000, seed=5, progress=False)
    data = dispersion_histogram_data(frame, "period_s", bins=30)
    counts, edges = np.histogram(frame["period_s"], bins=30)  # numpy as the reference
    np.testing.assert_array_equal(data["bins"]["count"], counts)
    np.testing.assert_array_equal(data["bins"]["left"], edges[:-1])
    assert data["stats"]["n"] == [2000]
    fig = dispersion_histogram_figure(frame, "period_s", bins=30)
    bundle = figure_bundle(fig, "period-dispersion", "Period under a 2 km altitude dispersion")
    assert bundle[FIGURE_MIME_TYPE]["name"] == "period-dispersion"  # tagged for the record


def test_candidate_table_is_a_datatable_with_units(study):
    table = rank_candidates(study, ["periapsis_alt_km >= 590"])
    model = candidate_table_figure(table)
    assert isinstance(model, DataTable)
    titles = [c.title for c in model.columns]
    assert titles[:2] == ["rank", "case"]
    assert "orbit.altitude_km (km)" in titles and "periapsis_alt_km (km)" in titles
    assert model.source.data["rank"].tolist() == list(range(1, len(table) + 1))
    json_item(model)
