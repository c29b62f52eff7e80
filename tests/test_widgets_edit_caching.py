"""What an edit recomputes: the delta-v budget is keyed on every input it reads (each such
edit recomputes it, with the right value) and on nothing else (a title, station or window edit
reuses it without any kernel call); a new section or field of the case (e.g. atmosphere
options) is an input until listed as unused; the ground track drawn with the window's shared
Earth rotation equals the kernel's own ``ground_track``.

Reference values: the rocket equation m_p = m0 (1 - exp(-dv / (g0 Isp))) (Tsiolkovsky; Curtis,
Orbital Mechanics for Engineering Students, 3rd ed., Eq. 6.1) with standard gravity
g0 = 9.80665 m/s^2 (3rd CGPM, 1901).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from orbitledger.widgets import casefigures, pipeline
from orbitledger.widgets.inputkeys import CACHE, inputs_key

import orbitledger
from orbitledger.kernel.groundtrack import ground_track

G0_M_S2 = 9.80665  # standard gravity (3rd CGPM, 1901)


@pytest.fixture
def starter(tmp_path: Path):
    return orbitledger.open_case(tmp_path / "starter.case.json", create=True).case


def _spy_budget(monkeypatch) -> list[int]:
    calls: list[int] = []
    original = casefigures.budget_for_case

    def spy(case, *args, **kw):
        calls.append(1)
        return original(case, *args, **kw)

    monkeypatch.setattr(casefigures, "budget_for_case", spy)
    return calls


# Every input the budget reads (orbitledger.analysis.budget_for_case): the orbit, the
# spacecraft, the atmosphere's solar activity, the burn plan and the budget section.
BUDGET_INPUTS = [
    {"orbit.e": 0.002},
    {"orbit.altitude_km": 560.0},
    {"spacecraft.mass_kg": 50.0},
    {"spacecraft.isp_s": 230.0},
    {"spacecraft.drag_area_m2": 0.2},
    {"spacecraft.drag_coefficient": 2.0},
    {"spacecraft.propellant_mass_kg": 3.0},
    {"force_model.solar_activity": "high"},
    {"burns.0.transfer.altitude_km": 550.0},
    {"budget.margin_percent": 5.0},
    {"budget.mission_years": 4.0},
    {"budget.station_keeping": False},
    {"budget.allowances.0.dv_km_s": 0.02},
    {"budget.disposal.lifetime_limit_years": 4.0},
    {"budget.disposal.reentry_altitude_km": 110.0},
]


@pytest.mark.parametrize("change", BUDGET_INPUTS, ids=lambda c: next(iter(c)))
def test_each_budget_input_recomputes_the_budget(starter, monkeypatch, change):
    CACHE.clear()
    base = pipeline.slow_group(starter, "budget")
    calls = _spy_budget(monkeypatch)
    edited = starter.with_changes(change)
    after = pipeline.slow_group(edited, "budget")
    assert calls == [1]  # computed again, once
    report = casefigures.budget_report(edited)  # the chart's, shared: no second computation
    assert calls == [1]
    if "propellant_mass_kg" in next(iter(change)):
        assert report.budget.propellant_available_kg == 3.0
    else:
        assert after["dv_total_km_s"].value != base["dv_total_km_s"].value or (
            after["propellant_total_kg"].value != base["propellant_total_kg"].value
        )
    budget = report.budget
    # The lines stack multiplicatively, so the total obeys the rocket equation as one burn.
    expected = budget.initial_mass_kg * (
        1.0 - math.exp(-budget.total_dv_km_s * 1000.0 / (G0_M_S2 * budget.isp_s))
    )
    assert budget.total_propellant_kg == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    "change",
    [
        {"meta.title": "Kestrel-2, renamed"},
        {"meta.description": "another note"},
        {"stations.0.elevation_mask_deg": 10.0},
        {"window.duration_s": 2 * 86400.0},
        {"window.step_s": 30.0},
    ],
    ids=lambda c: next(iter(c)),
)
def test_edits_the_budget_does_not_read_reuse_it(starter, monkeypatch, change):
    CACHE.clear()
    base = pipeline.slow_group(starter, "budget")
    base_report = casefigures.budget_report(starter)
    calls = _spy_budget(monkeypatch)
    edited = starter.with_changes(change)
    assert pipeline.slow_group(edited, "budget") is base
    assert casefigures.budget_report(edited) is base_report
    assert calls == []


class _Data:
    """A case stand-in whose data gains a section the key lists do not know."""

    def __init__(self, data: dict) -> None:
        self._data = data

    def to_data(self) -> dict:
        return self._data


def test_a_new_section_or_field_is_an_input_until_listed(starter):
    data = starter.to_data()
    plain = _Data(dict(data))
    with_atmosphere = _Data({**data, "atmosphere": {"model": "nrlmsis-2.0"}})
    other_model = _Data({**data, "atmosphere": {"model": "exponential"}})
    assert inputs_key(plain, "budget") != inputs_key(with_atmosphere, "budget")
    assert inputs_key(with_atmosphere, "budget") != inputs_key(other_model, "budget")
    assert inputs_key(with_atmosphere, "lifetime") != inputs_key(other_model, "lifetime")
    # A new field of the force model (where the atmosphere options live) too.
    new_field = _Data({**data, "force_model": {**data["force_model"], "density_model": "x"}})
    assert inputs_key(plain, "budget") != inputs_key(new_field, "budget")
    # The title is not an input of the budget.
    retitled = _Data({**data, "meta": {**data["meta"], "title": "other"}})
    assert inputs_key(plain, "budget") == inputs_key(retitled, "budget")


def test_ground_track_with_the_shared_rotation_equals_the_kernels(starter):
    CACHE.clear()
    for case in (starter, starter.with_changes({"orbit.e": 0.003})):
        drawn = casefigures.case_track(case)
        reference = ground_track(
            casefigures.case_trajectory(case), casefigures.window_offsets_s(case)
        )
        assert np.array_equal(drawn.lat_deg, reference.lat_deg)
        assert np.array_equal(drawn.lon_deg, reference.lon_deg)


def test_a_long_window_draws_its_track_in_the_background(tmp_path: Path):
    from orbitledger.widgets import CaseEditor

    path = tmp_path / "long.case.json"
    orbitledger.open_case(path, create=True)
    editor = CaseEditor(orbitledger.open_case(path), window_results=False)
    three_days = 3 * 86400.0
    editor.apply({"window.duration_s": three_days})
    # 3 days at 10 s: 25 921 epochs, more than the edit path takes at once.
    assert pipeline.window_epochs(editor.case) == 25_921 > pipeline.FAST_WINDOW_EPOCHS
    track = next(f for f in editor._figures if f.name == "ground track")
    assert track.waiting
    assert not CACHE.peek(editor.case, "trajectory", name="track")[0]
    editor.run_window_results()
    assert editor._slow_job.wait(600.0) and editor._slow_job.state == "done"
    assert not track.waiting
    drawn = casefigures.case_track(editor.case)
    assert drawn.offset_s[-1] == three_days and drawn.offset_s.size == 25_921


def test_imaging_sections_are_not_inputs_of_the_orbit_or_the_budget(starter):
    # Common practice (the access geometry reads the trajectory, never the other way round):
    # targets, the sensor and a coverage region change no trajectory, budget or lifetime.
    data = starter.to_data()
    plain = _Data(dict(data))
    imaging = _Data({
        **data,
        "targets": [{"name": "Brackwater Delta", "lat_deg": 52.1, "lon_deg": 4.3}],
        "sensor": {"off_nadir_max_deg": 30.0},
    })  # fmt: skip
    for group in ("orbit", "trajectory", "eclipses", "contacts", "lifetime", "budget"):
        assert inputs_key(plain, group) == inputs_key(imaging, group), group
    # The density model the NRLMSIS work added is an input of the budget and the lifetime.
    exponential = starter.with_changes({"force_model.density_model": "exponential"})
    assert inputs_key(starter, "budget") != inputs_key(exponential, "budget")
    assert inputs_key(starter, "lifetime") != inputs_key(exponential, "lifetime")
