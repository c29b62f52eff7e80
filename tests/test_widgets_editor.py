"""The case editor's logic without a front end: edits, refusals, form switching, undo/redo,
atomic saves and the changed-on-disk question.

Reference values: the WGS-84 equatorial radius 6378.137 km (NIMA TR8350.2, 3rd ed., Table 3.1)
and the Earth's GM 398600.4418 km^3/s^2 (WGS-84, same table), with the conic relations
r_p = a (1 - e), the orbit equation r = p / (1 + e cos nu) and vis-viva v^2 = mu (2/r - 1/a)
(Vallado, Fundamentals of Astrodynamics and Applications, 4th ed., Eqs. 2-57 and 2-61).
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import numpy as np
import pytest
from orbitledger.widgets import CaseEditor
from orbitledger.widgets.inputkeys import CACHE

import orbitledger
from orbitledger.case import CaseError, CaseFileChanged, load_case

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
R_EQ_KM = 6378.137  # WGS-84 equatorial radius (NIMA TR8350.2, Table 3.1)
MU_KM3_S2 = 398600.4418  # WGS-84 GM of the Earth (NIMA TR8350.2, Table 3.1)
MM = 1e-6  # one millimetre in km


@pytest.fixture
def case_path(tmp_path: Path) -> Path:
    path = tmp_path / "candidate-a.case.json"
    shutil.copy(EXAMPLES / "candidate-a.case.json", path)
    return path


@pytest.fixture
def editor(case_path: Path) -> CaseEditor:
    # The window results (eclipses, contacts, lifetime) have their own test below; here they
    # would only compete for the CPU.
    # Figures are checked in their own test below, too.
    return CaseEditor(orbitledger.open_case(case_path), window_results=False, figures=[])


def _periapsis_alt_km(altitude_km: float, e: float) -> float:
    a = R_EQ_KM + altitude_km  # altitude_km is a - R_eq (docs/case-file.md)
    return a * (1.0 - e) - R_EQ_KM


def test_open_case_editor_shows_window_results_from_the_background(case_path: Path) -> None:
    editor = orbitledger.open_case(case_path).editor()
    assert isinstance(editor, CaseEditor)
    assert editor._slow_job.wait(120.0) and editor._slow_job.state == "done"
    s = editor.summary
    # Cylindrical-shadow eclipse fraction of a circular orbit at beta angle b:
    # f = acos(sqrt(h^2 + 2 R h) / ((R + h) cos b)) / pi (Wertz and Larson, Space Mission
    # Analysis and Design, 3rd ed., Eq. 5-5; from memory). e = 0.001 is near enough circular;
    # the conical shadow with penumbra differs by a few seconds per orbit.
    h = 540.0
    ratio = math.sqrt(h**2 + 2 * R_EQ_KM * h) / (
        (R_EQ_KM + h) * math.cos(math.radians(s["beta_angle_deg"]))
    )
    expected = math.acos(ratio) / math.pi
    assert abs(s["eclipse_fraction_mean"] - expected) * s["period_s"] < 30.0  # seconds per orbit
    assert 'data-result="eclipse_fraction_mean"' in editor.results_panel.table.value


def test_figures_update_in_place(case_path: Path) -> None:
    editor = CaseEditor(orbitledger.open_case(case_path), window_results=False)
    names = [f.name for f in editor._figures]
    assert {"orbit plane", "ground track"} <= set(names)
    plane = editor._figures[names.index("orbit plane")]
    track = editor._figures[names.index("ground track")]
    models = (plane.model, track.model)
    sources = dict(plane._sources)
    before = {k: {c: np.array(v, copy=True) for c, v in s.data.items()} for k, s in sources.items()}
    editor.apply({"orbit.e": 0.05})
    assert (plane.model, track.model) == models  # same Bokeh models on screen, no rebuild
    changed = [
        k
        for k, s in sources.items()
        if any(not np.array_equal(np.asarray(s.data[c]), before[k][c]) for c in s.data)
    ]
    assert changed  # the conic's columns follow the new eccentricity
    # Every column drawn before is still there (colours, markers): nothing lost on screen.
    assert all(set(s.data) == set(before[k]) for k, s in sources.items())
    # The drawn periapsis distance follows r_p = a (1 - e) (Vallado Eq. 2-57) to 1 m.
    conic = sources[next(k for k in sources if k.startswith("conic"))].data
    r = np.hypot(np.asarray(conic["x_km"]), np.asarray(conic["y_km"]))
    assert abs(r.min() - (R_EQ_KM + 540.0) * (1 - 0.05)) < 1e-3
    editor.apply({"stations": [s.model_dump() for s in editor.case.stations[:2]]})
    assert track.model is not models[1]  # fewer stations: that figure was rebuilt
    assert plane.model is models[0]


def test_budget_chart_updates_in_place_with_its_labels(case_path: Path) -> None:
    # The budget (its disposal search) is computed in the background, with the window results.
    CACHE.clear()  # results are cached on their inputs: this test wants them computed
    editor = CaseEditor(orbitledger.open_case(case_path))
    assert editor._slow_job.wait(120.0) and editor._slow_job.state == "done"
    budget = next(f for f in editor._figures if f.name == "delta-v budget")
    model, source = budget.model, budget._sources["lines"]
    before = list(source.data["basis"])
    editor.apply({"orbit.e": 0.004})  # a lower perigee: more drag make-up, another basis text
    assert editor._slow_job.wait(120.0) and editor._slow_job.state == "done"
    assert budget.model is model  # no rebuild: every drawn column comes from budget_data
    cols = source.data
    assert list(cols["basis"]) != before
    # The bar labels follow the new values (with margin, m/s, one decimal), and the total row
    # is the sum of the lines (common practice for a delta-v budget), to 1 mm/s.
    assert cols["value_text"] == [f"{v:.1f} m/s" for v in cols["with_margin_m_s"]]
    lines = [k for k, name in enumerate(cols["line"]) if name != "total"]
    total = sum(cols["with_margin_m_s"][k] for k in lines)
    assert abs(cols["with_margin_m_s"][-1] - total) < 1e-3
    assert cols["total_hatch"][-1] == "/" and set(cols["total_hatch"][:-1]) == {" "}


def test_opening_shows_the_case_and_its_results(editor: CaseEditor) -> None:
    assert editor.case.orbit.altitude_km == 540.0
    # r_p = a (1 - e), Vallado 4th ed. Eq. 2-57; R_eq from WGS-84.
    assert abs(editor.summary["periapsis_alt_km"] - _periapsis_alt_km(540.0, 0.001)) < MM
    assert editor.fields["orbit.e"].input.value == "0.001"
    assert editor.fields["orbit.i_deg"].unit == "deg"
    assert editor.fields["orbit.altitude_km"].unit == "km"
    assert editor.fields["spacecraft.mass_kg"].unit == "kg"
    assert 'data-result="periapsis_alt_km"' in editor.results_panel.table.value


def test_apply_saves_and_updates_the_results(editor: CaseEditor, case_path: Path) -> None:
    editor.apply({"orbit.e": 0.02})
    assert editor.case.orbit.e == 0.02
    assert load_case(case_path).orbit.e == 0.02  # the edit is in the file
    assert abs(editor.summary["periapsis_alt_km"] - _periapsis_alt_km(540.0, 0.02)) < MM
    assert editor.fields["orbit.e"].input.value == "0.02"
    assert 'data-result="periapsis_alt_km"' in editor.results_panel.table.value


def test_a_refused_apply_changes_nothing(editor: CaseEditor, case_path: Path) -> None:
    before_bytes = case_path.read_bytes()
    before_case, before_summary = editor.case, dict(editor.summary)
    before_fields = {p: [t.value for t in f.input_widgets] for p, f in editor.fields.items()}
    before_panel = editor.results_panel.table.value
    with pytest.raises(CaseError) as refused:
        editor.apply({"orbit.e": -0.1})
    assert refused.value.path == "orbit.e"
    assert editor.case is before_case
    assert editor.summary == before_summary
    assert case_path.read_bytes() == before_bytes
    assert {p: [t.value for t in f.input_widgets] for p, f in editor.fields.items()} == before_fields
    assert editor.results_panel.table.value == before_panel
    assert not editor._history.can_undo


def test_typed_values_are_checked_beside_their_field(editor: CaseEditor, case_path: Path) -> None:
    field = editor.fields["orbit.e"]
    before = case_path.read_bytes()
    field.input.value = "0.0x"  # no loop runs here, so the debounced edit applies at once
    assert "not a number" in field.error.value
    field.input.value = "-0.5"
    assert field.error.value  # the model's reason, shown beside the field
    assert "ol-invalid" in field.widget._dom_classes
    assert case_path.read_bytes() == before and editor.case.orbit.e == 0.001
    # Another field still works while e shows its error; the last valid case stays in force.
    editor.fields["orbit.i_deg"].input.value = "97.6"
    assert editor.case.i_deg if False else editor.case.orbit.i_deg == 97.6
    assert field.input.value == "-0.5" and field.error.value
    field.input.value = "0.03"
    assert field.error.value == "" and editor.case.orbit.e == 0.03
    assert load_case(case_path).orbit.e == 0.03


def test_inclination_out_of_range_is_refused_with_the_reason(editor: CaseEditor) -> None:
    field = editor.fields["orbit.i_deg"]
    field.input.value = "181"
    assert "180" in field.error.value  # inclination lies in [0, 180] deg (docs/case-file.md)
    assert editor.case.orbit.i_deg == 97.55


def test_form_switching_is_a_view_and_converts_exactly(editor: CaseEditor, case_path: Path) -> None:
    a = R_EQ_KM + 540.0
    before_text, fingerprint = case_path.read_text(), editor.case.fingerprint
    editor.form_choice.value = "apsides"
    assert editor.case.orbit.form == "classical"  # a view: the case is unchanged
    assert "orbit.periapsis_alt_km" in editor.fields and "orbit.e" not in editor.fields
    shown = {p: f.value for p, f in editor.fields.items() if p.startswith("orbit.")}
    # r_p = a (1 - e), r_a = a (1 + e): Vallado 4th ed. Eq. 2-57.
    assert abs(shown["orbit.periapsis_alt_km"] - (a * (1 - 0.001) - R_EQ_KM)) < MM
    assert abs(shown["orbit.apoapsis_alt_km"] - (a * (1 + 0.001) - R_EQ_KM)) < MM
    # Shown rounded where the conversion's float noise lies (533.0818630000003 unrounded).
    assert editor.fields["orbit.periapsis_alt_km"].input.value == "533.081863"
    editor.form_choice.value = "cartesian"
    r, v = (np.array(editor.fields[p].value) for p in ("orbit.r_km", "orbit.v_km_s"))
    # Orbit equation r = p / (1 + e cos nu) with nu = 0, and vis-viva: Vallado Eqs. 2-57, 2-61.
    p = a * (1 - 0.001**2)
    assert abs(np.linalg.norm(r) - p / (1 + 0.001)) < MM
    assert abs(np.linalg.norm(v) ** 2 - MU_KM3_S2 * (2 / np.linalg.norm(r) - 1 / a)) < 1e-9
    assert all(len(t.value) <= 16 for t in editor.fields["orbit.v_km_s"].inputs)  # no noise
    editor.form_choice.value = "classical"
    assert editor.fields["orbit.e"].input.value == "0.001"  # the case's own values again
    assert editor.case.fingerprint == fingerprint and case_path.read_text() == before_text
    assert len(editor._history) == 1  # nothing was edited
    # An edit in a shown form saves the case in that form, the other fields as shown.
    editor.form_choice.value = "apsides"
    editor.fields["orbit.periapsis_alt_km"].input.value = "530"
    saved = load_case(case_path).orbit
    assert saved.form == "apsides" and saved.periapsis_alt_km == 530.0
    assert saved.apoapsis_alt_km == 546.918137 and saved.i_deg == 97.55


def test_a_field_of_another_form_is_named_with_its_form(editor: CaseEditor) -> None:
    apsides = editor.case.with_orbit_form("apsides")
    with pytest.raises(CaseError) as refused:
        apsides.with_changes({"orbit.altitude_km": 600.0})
    text = str(refused.value)
    assert "orbit.altitude_km" in text and "classical" in text and "apsides" in text
    assert "with_orbit_form('classical')" in text


def test_undo_and_redo_are_saved(editor: CaseEditor, case_path: Path) -> None:
    editor.apply({"orbit.e": 0.01})
    editor.apply({"orbit.i_deg": 98.0})
    editor.undo()
    assert editor.case.orbit.i_deg == 97.55 and editor.case.orbit.e == 0.01
    assert load_case(case_path).orbit.i_deg == 97.55
    assert editor.fields["orbit.i_deg"].input.value == "97.55"
    editor.undo()
    assert load_case(case_path).orbit.e == 0.001
    assert editor.undo_button.disabled and not editor.redo_button.disabled
    editor.redo()
    editor.redo()
    assert load_case(case_path).orbit.i_deg == 98.0 and editor.redo_button.disabled
    with pytest.raises(IndexError):
        editor.redo()


def test_saves_are_atomic_and_leave_no_temporary_files(
    editor: CaseEditor, case_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    editor.apply({"orbit.e": 0.004})
    assert sorted(p.name for p in case_path.parent.iterdir()) == [case_path.name]
    json.loads(case_path.read_text())  # whole, valid JSON
    before_bytes, before_case = case_path.read_bytes(), editor.case

    def failing_replace(*_args, **_kw):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr("os.replace", failing_replace)
    with pytest.raises(CaseError):
        editor.apply({"orbit.e": 0.005})
    assert case_path.read_bytes() == before_bytes  # the old file is whole
    assert editor.case is before_case  # and the editor did not move on


def test_changed_on_disk_asks_then_overwrites(editor: CaseEditor, case_path: Path) -> None:
    data = json.loads(case_path.read_text())
    data["meta"]["title"] = "Kestrel-2 candidate A, edited by a colleague"
    case_path.write_text(json.dumps(data))
    theirs = case_path.read_bytes()
    with pytest.raises(CaseFileChanged):
        editor.apply({"orbit.e": 0.002})
    assert editor._conflict.layout.display == "flex"  # the question is on screen
    assert case_path.read_bytes() == theirs and editor.case.orbit.e == 0.001
    editor.fields["orbit.e"].input.value = "0.0025"  # typing meanwhile does not overwrite
    assert case_path.read_bytes() == theirs
    editor.overwrite()
    assert load_case(case_path).orbit.e == 0.0025
    assert editor._conflict.layout.display == "none"


def test_changed_on_disk_reload_takes_the_file(editor: CaseEditor, case_path: Path) -> None:
    data = json.loads(case_path.read_text())
    data["orbit"]["i_deg"] = 97.4
    case_path.write_text(json.dumps(data))
    with pytest.raises(CaseFileChanged):
        editor.apply({"orbit.e": 0.002})
    editor.reload_from_disk()
    assert editor.case.orbit.i_deg == 97.4 and editor.case.orbit.e == 0.001
    assert editor.fields["orbit.i_deg"].input.value == "97.4"
    editor.apply({"orbit.e": 0.002})  # saving works again, on top of the colleague's edit
    assert load_case(case_path).orbit.i_deg == 97.4 and load_case(case_path).orbit.e == 0.002


def test_station_table_add_edit_remove(editor: CaseEditor, case_path: Path) -> None:
    table = editor.stations
    table.add_button.click()
    assert len(editor.case.stations) == 4 and len(load_case(case_path).stations) == 4
    lat_cell = table.rows[3].children[1]
    lat_cell.value = "95"  # latitude in [-90, 90] deg (docs/case-file.md)
    assert "90" in table.errors[3].value and editor.case.stations[3].lat_deg == 0.0
    lat_cell.value = "-33.9"
    assert editor.case.stations[3].lat_deg == -33.9 and table.errors[3].value == ""
    table.rows[0].children[-2].click()  # Remove Harrow Fell
    assert [s.name for s in load_case(case_path).stations][0] == "Saltmarsh Point"


def test_duplicate_station_names_are_refused(editor: CaseEditor) -> None:
    name_cell = editor.stations.rows[1].children[0]
    name_cell.value = "Harrow Fell"  # station names are unique (docs/case-file.md)
    assert editor.stations.errors[1].value or editor.stations.message.value
    assert editor.case.stations[1].name == "Saltmarsh Point"


def test_summary_follows_the_orbit_equation_after_an_altitude_edit(editor: CaseEditor) -> None:
    editor.apply({"orbit.altitude_km": 600.0, "orbit.e": 0.0})
    a = R_EQ_KM + 600.0
    # Circular orbit: T = 2 pi sqrt(a^3 / mu) (Kepler's third law, Vallado Eq. 2-29).
    assert abs(editor.summary["period_s"] - 2 * math.pi * math.sqrt(a**3 / MU_KM3_S2)) < 1e-6
