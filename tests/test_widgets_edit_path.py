"""The editor's edit path without a front end: what an edit recomputes (cached on its inputs),
Cancel of the background results, table cells that commit (never per keystroke), the debouncer
on a fake clock, and the direction of every starred row of the trade view.

Reference values: latitude lies in [-90, 90] deg and station names are unique
(docs/case-file.md); the WGS-84 equatorial radius 6378.137 km (NIMA TR8350.2, Table 3.1) with
r_p = a (1 - e) (Vallado, Fundamentals of Astrodynamics and Applications, 4th ed., Eq. 2-57).
"""

from __future__ import annotations

import heapq
import threading
from pathlib import Path

import pytest
from orbitledger.widgets import CaseEditor, casefigures, pipeline
from orbitledger.widgets.compare import TradeTable, criterion_for
from orbitledger.widgets.debounce import Debouncer
from orbitledger.widgets.inputkeys import CACHE

import orbitledger
from orbitledger import analysis
from orbitledger.analysis import Result
from orbitledger.case import load_case
from orbitledger.case.starter import STARTER_DATA, starter_case

R_EQ_KM = 6378.137  # WGS-84 (NIMA TR8350.2, Table 3.1)


@pytest.fixture
def starter_path(tmp_path: Path) -> Path:
    path = tmp_path / "starter.case.json"
    orbitledger.open_case(path, create=True)  # the starter case, written explicitly
    return path


class FakeLoop:
    """asyncio's ``call_later`` on a clock that moves only when told (no sleeping)."""

    def __init__(self) -> None:
        self.now = 0.0
        self._queue: list[tuple[float, int, list]] = []
        self._count = 0

    def call_later(self, delay: float, fn, *args):
        entry = [fn, args, False]
        self._count += 1
        heapq.heappush(self._queue, (self.now + delay, self._count, entry))

        class Handle:
            def cancel(self_inner) -> None:
                entry[2] = True

        return Handle()

    def advance(self, seconds: float) -> None:
        self.now += seconds
        while self._queue and self._queue[0][0] <= self.now:
            _when, _n, (fn, args, cancelled) = heapq.heappop(self._queue)
            if not cancelled:
                fn(*args)


def test_debouncer_runs_once_after_the_last_keystroke_on_a_fake_clock() -> None:
    loop, calls = FakeLoop(), []
    d = Debouncer(0.05, loop=loop)
    for text in ("0", "0.", "0.0", "0.02"):
        d.trigger("orbit.e", lambda t=text: calls.append(t))
        loop.advance(0.01)  # typing faster than the debounce
    assert calls == [] and d.pending == 1
    loop.advance(0.039)
    assert calls == []  # 49 ms after the last keystroke: still waiting
    loop.advance(0.002)
    assert calls == ["0.02"] and d.pending == 0


def test_enter_flushes_only_its_own_key() -> None:
    loop, calls = FakeLoop(), []
    d = Debouncer(0.35, loop=loop)
    d.trigger("orbit.e", lambda: calls.append("e"))
    d.trigger("orbit.i_deg", lambda: calls.append("i"))
    d.flush("orbit.e")
    assert calls == ["e"] and d.pending == 1
    loop.advance(1.0)
    assert calls == ["e", "i"]


def _count_kernel_work(monkeypatch) -> list[str]:
    """Record every call of the analysis entry points the editor computes with."""
    seen: list[str] = []
    for module, name in (
        (analysis, "case_results"),
        (pipeline.analysis, "case_results"),
        (casefigures, "analysis_trajectory"),
        (casefigures, "budget_for_case"),
        (pipeline.window_groups, "budget_results"),
        (pipeline.window_groups, "eclipse_results"),
        (pipeline.window_groups, "contact_results"),
    ):
        original = getattr(module, name)

        def spy(*args, _original=original, _name=name, **kw):
            seen.append(_name)
            return _original(*args, **kw)

        monkeypatch.setattr(module, name, spy)
    return seen


def test_a_title_edit_does_no_kernel_work(starter_path: Path, monkeypatch) -> None:
    editor = CaseEditor(orbitledger.open_case(starter_path))
    assert editor._slow_job.wait(300.0)
    seen = _count_kernel_work(monkeypatch)
    editor.apply({"meta.title": "Kestrel-2 candidate A, renamed"})
    assert editor._slow_job.wait(60.0)
    assert seen == []  # no result, trajectory or budget recomputed
    assert not editor._slow_job.running and "dv_total_km_s" in editor.results
    # A station's mask: the contacts again, nothing else.
    editor.apply({"stations.0.elevation_mask_deg": 10.0})
    assert editor._slow_job.wait(300.0)
    assert set(seen) == {"contact_results"}


def test_an_orbit_edit_recomputes_the_budget_in_the_background(starter_path: Path) -> None:
    editor = CaseEditor(orbitledger.open_case(starter_path))
    assert editor._slow_job.wait(300.0)
    before = CACHE.computed.get("budget", 0)
    editor.apply({"orbit.e": 0.0012})
    # The fast results are there at once: r_p = a (1 - e) (Vallado Eq. 2-57).
    a = R_EQ_KM + STARTER_DATA["orbit"]["altitude_km"]
    assert abs(editor.summary["periapsis_alt_km"] - (a * (1 - 0.0012) - R_EQ_KM)) < 1e-6
    assert editor._slow_job.wait(300.0) and editor._slow_job.state == "done"
    assert CACHE.computed["budget"] == before + 1
    assert "dv_total_km_s" in editor.results


def test_cancel_leaves_a_clear_state_and_a_way_to_run_again(starter_path: Path, monkeypatch):
    CACHE.clear()
    release = threading.Event()
    started = threading.Event()
    original = pipeline.slow_group

    def slow(case, group):
        started.set()
        release.wait(60.0)
        return original(case, group)

    monkeypatch.setattr(pipeline, "slow_group", slow)
    editor = CaseEditor(orbitledger.open_case(starter_path))
    job = editor._slow_job
    assert started.wait(30.0) and job.running
    assert "on the way" in editor.results_panel.table.value
    assert job.run_button.layout.display == "none"  # started by the editor itself
    job.cancel_button.click()
    # At once, without waiting for the thread: the state says so and Run is back.
    assert job.state == "cancelled" and not job.running
    assert job.run_button.layout.display != "none"
    assert "cancelled" in editor.results_panel.table.value
    assert "press" in editor.results_panel.table.value
    release.set()
    monkeypatch.setattr(pipeline, "slow_group", original)
    job.run_button.click()
    assert job.wait(300.0) and job.state == "done"
    assert "dv_total_km_s" in editor.results and "cancelled" not in editor.results_panel.table.value
    assert job.run_button.layout.display == "none"


def test_table_cells_commit_after_the_debounce_never_per_keystroke(starter_path: Path) -> None:
    loop = FakeLoop()
    editor = CaseEditor(orbitledger.open_case(starter_path), window_results=False, figures=[])
    editor._debounce.loop = loop
    table = editor.stations
    lat = table.cells[0]["lat_deg"]
    for text in ("9", "95"):  # typing 95: "9" must never reach the file
        lat.value = text
        loop.advance(0.1)
    assert load_case(starter_path).stations[0].lat_deg == 60.2
    loop.advance(1.0)  # the debounce ends: "95" is proposed and refused
    assert load_case(starter_path).stations[0].lat_deg == 60.2  # the last valid table
    assert "latitude (deg)" in table.errors[0].value and "90" in table.errors[0].value
    assert "ol-invalid-cell" in lat._dom_classes
    name = table.cells[0]["name"]
    for prefix in ("H", "Ha", "Harrow Fell Nort", "Harrow Fell North"):
        name.value = prefix
        loop.advance(0.05)
    lat.value = "59.9"
    editor._debounce.flush()  # Enter in the cell
    saved = load_case(starter_path).stations[0]
    assert (saved.name, saved.lat_deg) == ("Harrow Fell North", 59.9)
    assert editor._history.__len__() == 2  # one edit in the history, not one per keystroke
    assert "ol-invalid-cell" not in lat._dom_classes and table.errors[0].value == ""


def test_allowance_table_edits_the_budget(starter_path: Path) -> None:
    editor = CaseEditor(orbitledger.open_case(starter_path), window_results=False, figures=[])
    table = editor.allowances
    assert [e["name"] for e in table.entries] == [
        a["name"] for a in STARTER_DATA["budget"]["allowances"]
    ]
    table.cells[0]["dv_km_s"].value = "-1"
    assert "delta-v (km/s)" in table.errors[0].value  # dv_km_s >= 0 (docs/case-file.md)
    table.cells[0]["dv_km_s"].value = "0.02"
    assert load_case(starter_path).budget.allowances[0].dv_km_s == 0.02


def test_allowance_rows_commit_like_station_rows(starter_path: Path) -> None:
    # Both tables' rows come from the one plain row of widgets.tables (the one home of a row's
    # commit): typed cells wait for the debounce, a checkbox commits at once, a refused cell
    # is outlined and its column named while the file keeps the last valid list.
    from orbitledger.widgets.plan_tables import AllowanceTable
    from orbitledger.widgets.tables import ListTable, StationTable

    assert AllowanceTable._row_widgets is ListTable._row_widgets is StationTable._row_widgets
    loop = FakeLoop()
    editor = CaseEditor(orbitledger.open_case(starter_path), window_results=False, figures=[])
    editor._debounce.loop = loop
    table = editor.allowances
    dv = table.cells[1]["dv_km_s"]
    assert dv.tooltip == "budget.allowances.1.dv_km_s (delta-v (km/s))"
    assert table.cells[1]["per_year"].value is True and table.cells[0]["margin"].value is False
    dv.value = "0.0"
    dv.value = "0.002"
    loop.advance(0.1)
    assert load_case(starter_path).budget.allowances[1].dv_km_s == 0.0005  # not yet committed
    table.cells[1]["margin"].value = True  # a checkbox: the row commits at once, typed cell too
    saved = load_case(starter_path).budget.allowances
    assert saved[1].margin is True and saved[1].dv_km_s == 0.002 and saved[1].per_year is True
    assert saved[0].margin is False
    dv.value = "abc"
    editor._debounce.flush()  # Enter in the cell
    assert "ol-invalid-cell" in dv._dom_classes
    assert table.errors[1].value.startswith("allowance 2, delta-v (km/s): ")
    assert load_case(starter_path).budget.allowances[1].dv_km_s == 0.002  # kept


# Which way is better for every result that gets a star (common practice in mission design:
# less delta-v and propellant, more spare propellant and contact, less eclipse and gap).
EXPECTED_DIRECTIONS = {
    "sun_synchronous_offset_deg": "abs-min",
    "longest_eclipse_s": "min",
    "eclipse_fraction_mean": "min",
    "eclipse_fraction_max": "min",
    "passes_per_day": "max",
    "contact_min_per_day": "max",
    "longest_gap_min": "min",
    "dv_total_km_s": "min",
    "propellant_total_kg": "min",
    "final_mass_kg": "max",
    "propellant_margin_kg": "max",
    "disposal_dv_km_s": "min",
}


def test_every_starred_row_has_the_stated_direction() -> None:
    names = list(analysis.case_results(starter_case()))
    rules = {n: criterion_for(n) for n in names if criterion_for(n) is not None}
    assert rules == EXPECTED_DIRECTIONS
    for name, rule in rules.items():
        low, high = (0.5, 2.0) if rule != "abs-min" else (0.5, -2.0)
        results = [
            {name: Result(name, value, "kg", "d", "budget")} for value in (high, low, high * 3)
        ]
        table = TradeTable(["A", "B", "C"], results)
        star = table.rows[0][5]
        expected = {"min": 1, "abs-min": 1, "max": 2}[rule]
        assert star == expected, name
    # "Propellant on board minus the budget's total": the candidate with more spare wins.
    spare = [
        {"propellant_margin_kg": Result("propellant_margin_kg", v, "kg", "d", "budget")}
        for v in (0.64, 0.35)
    ]
    assert TradeTable(["A", "B"], spare).rows[0][5] == 0


def test_units_are_spelled_alike_in_the_trade_table_and_the_editor() -> None:
    from orbitledger.widgets.results import results_table_html

    row = {
        "specific_energy_km2_s2": Result("specific_energy_km2_s2", -28.8, "km^2/s^2", "E", "orbit")
    }
    trade = TradeTable(["A", "B"], [row, row]).html()
    assert "km\u00b2/s\u00b2" in trade and "km^2" not in trade
    assert "km\u00b2/s\u00b2" in results_table_html(row)
