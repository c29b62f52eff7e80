"""The editor's parts on their own: units from names, parsing, history, debouncing, background
jobs, and the in-place figure sync.

These are checks of our own mechanics (no physics); each states the behaviour it pins down.
"""

from __future__ import annotations

import threading
import time

import pytest
from bokeh.plotting import figure
from orbitledger.widgets.background import BackgroundJob
from orbitledger.widgets.debounce import Debouncer
from orbitledger.widgets.fields import FieldParseError, NumberField, VectorField, unit_for
from orbitledger.widgets.history import History
from orbitledger.widgets.livefigures import sync_model


@pytest.mark.parametrize(
    ("name", "unit"),
    [
        ("a_km", "km"),
        ("v_km_s", "km/s"),
        ("i_deg", "deg"),
        ("duration_s", "s"),
        ("mass_kg", "kg"),
        ("drag_area_m2", "m\u00b2"),
        ("xp_arcsec", "arcsec"),
        ("epoch_utc", "UTC"),
        ("margin_percent", "%"),
        ("e", ""),
        ("drag_coefficient", ""),
    ],
)
def test_units_come_from_the_field_names(name: str, unit: str) -> None:
    # The case file carries the unit in every field name (docs/case-file.md).
    assert unit_for(name) == unit


def test_number_field_parses_and_refuses_with_a_reason() -> None:
    field = NumberField("orbit.e", 0.001)
    assert field.input.value == "0.001" and field.value == 0.001
    field.input.value = " 2e-3 "
    assert field.value == 0.002
    for text, reason in (("abc", "not a number"), ("nan", "finite"), ("", "needed")):
        field.input.value = text
        with pytest.raises(FieldParseError, match=reason):
            _ = field.value
    assert NumberField("spacecraft.isp_s", None, optional=True).value is None


def test_field_callbacks_fire_on_user_edits_only() -> None:
    seen = []
    field = VectorField("orbit.r_km", [7000.0, 0.0, 0.0])
    field.on_edit(lambda f: seen.append(f.value))
    field.set_value([1.0, 2.0, 3.0])
    assert seen == []
    field.inputs[2].value = "4.5"
    assert seen == [[1.0, 2.0, 4.5]]


def test_history_drops_the_undone_branch() -> None:
    h = History("a")
    h.push("b")
    h.push("c")
    assert h.undo() == "b" and h.undo() == "a" and not h.can_undo
    h.push("d")
    assert not h.can_redo and h.current == "d" and len(h) == 2


# The debounce itself is tested on a fake clock in test_widgets_edit_path.py.


def test_debouncer_without_a_loop_runs_at_once() -> None:
    calls = []
    Debouncer(1.0).trigger("k", lambda: calls.append(1))
    assert calls == [1]


def test_background_job_reports_progress_and_finishes() -> None:
    job = BackgroundJob("passes over 30 days", describe=lambda r: f"{r} passes", min_interval_s=0.0)

    def work(progress):
        for day in range(30):
            progress(day / 30, f"day {day + 1} of 30")
        return 142

    job.start(work)
    assert job.wait(5.0)
    assert job.state == "done" and job.result == 142
    assert job.bar.value == 1.0 and "142 passes" in job.status.value
    assert job.cancel_button.disabled


def test_background_job_cancel_stops_at_the_next_report() -> None:
    started = threading.Event()
    job = BackgroundJob("lifetime")

    def work(progress):
        started.set()
        for k in range(10_000):
            progress(k / 10_000)
            time.sleep(0.001)
        return "finished"

    job.start(work)
    assert started.wait(5.0)
    assert not job.cancel_button.disabled
    job.cancel_button.click()
    assert job.wait(5.0)
    assert job.state == "cancelled" and job.result is None and job.status.value == "cancelled"


def test_background_job_failure_is_shown_not_lost() -> None:
    job = BackgroundJob("porkchop")

    def work(_progress):
        raise ValueError("transfer time must be > 0 s")

    job.start(work)
    job.wait(5.0)
    assert job.state == "failed" and "transfer time" in job.status.value


def test_sync_model_updates_sources_and_ranges_in_place() -> None:
    def build(n: int):
        fig = figure(title=f"{n} points", x_range=(0, n))
        fig.line(list(range(n)), [x * x for x in range(n)])
        return fig

    screen = build(3)
    source = screen.renderers[0].data_source
    assert sync_model(screen, build(5))
    assert screen.renderers[0].data_source is source  # same model, new columns
    assert list(source.data["x"]) == [0, 1, 2, 3, 4]
    assert screen.title.text == "5 points" and screen.x_range.end == 5
    other = build(2)
    other.scatter([1], [1])
    assert not sync_model(screen, other)  # another structure: the caller rebuilds


def test_every_result_group_has_a_panel_title():
    # The panel and the trade view title each group of orbitledger.analysis.
    from orbitledger.widgets.results import GROUP_TITLES

    from orbitledger.analysis import ALL_GROUPS

    assert set(GROUP_TITLES) == set(ALL_GROUPS)
