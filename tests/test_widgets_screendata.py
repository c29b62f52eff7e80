"""The live figures' lines thinned to their pixels (widgets/screendata.py), and the bytes an
edit sends to the browser.

Reference: the M4 aggregation (Jugel, Jerzak, Hackenbroich, Markl, "M4: A Visualization-Oriented
Time Series Data Aggregation", PVLDB 7(10), 2014): a line drawn through the first, last,
lowest and highest point of each pixel column's run touches the same pixels as the full line.
Each check compares the thinned line with a brute-force pass over the full arrays: per pixel
column, the lowest and highest point; per piece between breaks (NaN), its first and last
point. The ground-track split at +-180 deg is the one of ``figures.mapping``.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
from orbitledger.widgets import CaseEditor, casefigures, patchpacer
from orbitledger.widgets.screendata import LinePlan, line_plans, m4_keep, thin_columns

import orbitledger
from orbitledger.figures import altitude_speed_figure, ground_track_data, ground_track_figure


def _column_extremes(x, y, pixels, span):
    """Brute force: {column: (lowest y, highest y)} over the finite points."""
    out: dict[int, tuple[float, float]] = {}
    x0, x1 = span
    for xi, yi in zip(x, y, strict=True):
        if not (math.isfinite(xi) and math.isfinite(yi)):
            continue
        c = math.floor((xi - x0) * pixels / (x1 - x0))
        lo, hi = out.get(c, (math.inf, -math.inf))
        out[c] = (min(lo, yi), max(hi, yi))
    return out


def _pieces(x, y):
    """Brute force: the (first, last) point of each run of finite points between breaks."""
    pieces, current = [], []
    for xi, yi in zip(x, y, strict=True):
        if math.isfinite(xi) and math.isfinite(yi):
            current.append((xi, yi))
        elif current:
            pieces.append((current[0], current[-1]))
            current = []
    if current:
        pieces.append((current[0], current[-1]))
    return pieces


def _assert_same_drawing(x, y, keep, pixels, span):
    xs, ys = np.asarray(x)[keep], np.asarray(y)[keep]
    assert _column_extremes(xs, ys, pixels, span) == _column_extremes(x, y, pixels, span)
    assert _pieces(xs, ys) == _pieces(x, y)


def test_a_time_series_keeps_every_columns_lowest_and_highest_point() -> None:
    # 30 days at 10 s: the height of a slightly eccentric orbit with noise and two data gaps.
    rng = np.random.default_rng(7)
    t = np.arange(0.0, 30 * 86400.0 + 1, 10.0)
    y = 550.0 + 12.0 * np.sin(2 * np.pi * t / 5760.0) + rng.normal(0.0, 0.5, t.size)
    y[1000:1010] = np.nan
    y[50_000] = np.nan
    keep = m4_keep(t, y, 720)
    assert keep.sum() <= 4 * 720 + 3 * 3  # four per column, plus a break's neighbours
    assert keep.sum() < t.size / 50
    _assert_same_drawing(t, y, keep, 720, (t[0], t[-1]))
    # One NaN per gap is enough to break the line: the ten NaN in a row become one.
    assert np.isnan(y[keep]).sum() == 2


def test_a_ground_track_keeps_its_antimeridian_breaks_and_eclipse_ends(tmp_path: Path) -> None:
    case = orbitledger.open_case(tmp_path / "s.case.json", create=True).case
    track = casefigures.case_track(case)
    # Every epoch of the window (the record's figure draws at most 4000 of them).
    data = ground_track_data([track], max_points=10**6)
    fig = ground_track_figure([track], max_points=10**6)
    plans = line_plans(fig)
    assert {"track-0", "eclipse-0"} <= set(plans)
    plan = plans["track-0"][0]
    assert (plan.x, plan.y, plan.x_span) == ("lon_deg", "lat_deg", (-180.0, 180.0))
    for name in ("track-0", "eclipse-0"):
        full = data[name]
        thin = thin_columns(full, plans[name])
        assert len(thin["lon_deg"]) < len(full["lon_deg"])
        keep = m4_keep(full["lon_deg"], full["lat_deg"], plan.pixels, plan.x_span)
        _assert_same_drawing(full["lon_deg"], full["lat_deg"], keep, plan.pixels, (-180, 180))
        # Each piece of the track ends at +-180 deg where it crosses the antimeridian.
        ends = [p for piece in _pieces(thin["lon_deg"], thin["lat_deg"]) for p in piece]
        assert ends == [p for piece in _pieces(full["lon_deg"], full["lat_deg"]) for p in piece]
    # The tooltip columns follow the same rows: each kept time is a sample's own time.
    thin = thin_columns(data["track-0"], plans["track-0"])
    full_times = set(
        np.asarray(data["track-0"]["time_utc"])[np.isfinite(data["track-0"]["time_utc"])]
    )
    assert set(np.asarray(thin["time_utc"])[np.isfinite(thin["time_utc"])]) <= full_times


def test_sources_drawn_by_markers_or_patches_are_sent_whole(tmp_path: Path) -> None:
    case = orbitledger.open_case(tmp_path / "s.case.json", create=True).case
    track = casefigures.case_track(case)
    plans = line_plans(ground_track_figure([track], [s.model_dump() for s in case.stations]))
    assert "stations" not in plans and "coastline" not in plans  # markers, a patch
    fig = altitude_speed_figure([casefigures._window_states(case)])
    plans = line_plans(fig)
    # One plan per line of the source, in any order (Bokeh's select gives a set of plots).
    assert sorted((p.x, p.y) for p in plans["series-0"]) == [
        ("time_utc", "height_km"),
        ("time_utc", "speed_km_s"),
    ]
    short = {"x": np.arange(10.0), "y": np.arange(10.0)}
    assert thin_columns(short, [LinePlan("x", "y", 720)]) == short  # fewer rows than pixels


def _bytes_of_one_edit(editor: CaseEditor, edit: dict) -> dict[str, int]:
    """Bytes (JSON text and binary buffers) each figure sends for ``edit``, the figures the
    background job would draw included (drawn here, at once)."""
    sent: dict[str, int] = {}
    hooked = [fig.view for fig in editor._figures if fig.view is not None]
    for fig in editor._figures:
        if fig.view is None:
            continue

        def send(content, buffers=None, name=fig.name) -> None:
            size = len(json.dumps(content)) + sum(len(b) for b in buffers or [])
            sent[name] = sent.get(name, 0) + size

        fig.view.send = send
    editor.apply(edit)
    for fig in editor._figures:
        fig.update(editor.case)  # a no-op for a figure the edit already drew
    patchpacer.flush()  # the patches go one frame apart, from the pacer's thread
    for view in hooked:
        del view.send  # back to the widget's own method
    return sent


@pytest.mark.parametrize("days", [1, 30])
def test_an_orbit_edit_sends_a_bounded_payload(tmp_path: Path, days: int) -> None:
    path = tmp_path / "starter.case.json"
    orbitledger.open_case(path, create=True)
    editor = CaseEditor(orbitledger.open_case(path), window_results=False)
    _bytes_of_one_edit(editor, {"window.duration_s": days * 86400.0})
    _bytes_of_one_edit(editor, {"orbit.e": 0.0011})  # every figure on screen
    sent = _bytes_of_one_edit(editor, {"orbit.e": 0.0016})
    assert {"ground track", "height and speed"} <= set(sent)
    # Height and speed: at most 4 rows per pixel column of its 720-pixel plot for each of its
    # two lines, 4 columns of 8-byte floats (a day at 10 s is 8 641 rows; 30 days 259 201).
    assert sent["height and speed"] <= 2 * 4 * 720 * 4 * 8 + 8 * 1024
    # Everything an orbit edit sends (whole columns: about 440 KiB for 1 day, 6.3 MiB for 30).
    # The map draws at most 4 000 track points plus the eclipse ends, about 300 KiB at 30 days.
    assert sum(sent.values()) <= (300 if days == 1 else 550) * 1024
