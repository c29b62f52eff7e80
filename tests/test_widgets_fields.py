"""The editor's fields and tables as widget models (values in, traits out): durations typed in
s, min, h or days, the Cartesian state one component per line, and table columns that line up.

References: the minute, hour and day of the SI Brochure (BIPM, 9th ed. 2019, Table 8:
1 min = 60 s, 1 h = 3600 s, 1 d = 86 400 s); the shortest repr of a double has at most 17
significant digits (IEEE 754-2019, clause 5.12.2: 17 digits round-trip binary64); a monospace
digit is 0.6 em wide (DejaVu Sans Mono's advance width, 1233/2048 em: its font tables, from
memory).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from orbitledger.widgets import CaseEditor
from orbitledger.widgets.durations import DurationField, is_duration, seconds_from_text, shown_in
from orbitledger.widgets.fields import INPUT_WIDTH, FieldParseError, VectorField

import orbitledger
from orbitledger.case import load_case

MONO_DIGIT_EM = 0.602  # DejaVu Sans Mono advance width 1233/2048 em (from memory)


@pytest.fixture
def starter_path(tmp_path: Path) -> Path:
    path = tmp_path / "starter.case.json"
    orbitledger.open_case(path, create=True)  # the starter case: window.duration_s 86400
    return path


def _editor(path: Path) -> CaseEditor:
    return CaseEditor(orbitledger.open_case(path), window_results=False, figures=[])


def test_durations_are_the_spans_of_time_not_offsets_or_impulses() -> None:
    assert is_duration("window.duration_s") and is_duration("window.step_s")
    assert is_duration("stations.0.min_pass_duration_s")
    assert not is_duration("earth_orientation.dut1_s") and not is_duration("spacecraft.isp_s")


@pytest.mark.parametrize(
    ("text", "unit", "seconds"),
    [
        ("1.1", "h", 3960.0),  # 1.1 x 3600 = 3960 exactly (SI Brochure Table 8); 1.1*3600 in
        ("0.1", "min", 6.0),  # floats gives 3960.0000000000005, 0.1*60 gives 6.000000000000001
        ("2.5", "days", 216000.0),
        ("30", "min", 1800.0),
        ("\u22121", "s", -1.0),  # a typographic minus; the model refuses it, not the parser
    ],
)
def test_a_typed_duration_is_converted_exactly(text: str, unit: str, seconds: float) -> None:
    assert seconds_from_text("window.duration_s", text, unit) == seconds


def test_a_duration_is_shown_exactly_where_the_unit_divides_it() -> None:
    assert shown_in(86400.0, "days") == "1" and shown_in(5400.0, "h") == "1.5"
    assert shown_in(10.0, "min") == "0.166666666667"  # 1/6 min, to 12 significant digits
    assert shown_in(86400.0, "s") == "86400.0"


def test_switching_the_unit_changes_the_view_not_the_case(starter_path: Path) -> None:
    editor = _editor(starter_path)
    before = starter_path.read_bytes()
    fingerprint = editor.case.fingerprint
    duration, step = editor.fields["window.duration_s"], editor.fields["window.step_s"]
    assert isinstance(duration, DurationField) and isinstance(step, DurationField)
    duration.unit_choice.value = "days"
    assert duration.input.value == "1"
    step.unit_choice.value = "min"  # 10 s = 1/6 min: shown rounded, stands for 10 s exactly
    assert step.input.value == "0.166666666667" and step.value == 10.0
    duration.unit_choice.value = "h"
    assert duration.input.value == "24" and duration.value == 86400.0
    assert starter_path.read_bytes() == before and editor.case.fingerprint == fingerprint
    assert len(editor._history) == 1  # nothing was edited

    duration.input.value = "1.5"  # 1.5 h
    editor._debounce.flush()
    assert load_case(starter_path).window.duration_s == 5400.0
    assert duration.input.value == "1.5" and duration.shown_unit == "h"
    editor.apply({"spacecraft.mass_kg": 41.0})  # another edit keeps the unit and the text
    assert duration.input.value == "1.5" and duration.shown_unit == "h"
    editor.apply({"window.duration_s": 7200.0})  # set from code: shown in the unit chosen
    assert duration.input.value == "2"


def test_a_refused_duration_names_the_field_and_the_unit(starter_path: Path) -> None:
    editor = _editor(starter_path)
    before = starter_path.read_bytes()
    duration = editor.fields["window.duration_s"]
    duration.unit_choice.value = "h"
    duration.input.value = "a day"
    editor._debounce.flush()
    assert "Duration in h: not a number" in duration.error.value
    assert "ol-invalid" in duration.widget._dom_classes
    duration.input.value = "1e9"  # 3.6e12 s: beyond the model's 3.2e9 s
    editor._debounce.flush()
    assert "1e9 h = 3600000000000.0 s" in duration.error.value
    assert starter_path.read_bytes() == before
    with pytest.raises(FieldParseError, match="Duration in min: a number is needed"):
        seconds_from_text("window.duration_s", " ", "min", "Duration")
    duration.input.value = "3"
    editor._debounce.flush()
    assert not duration.has_error and load_case(starter_path).window.duration_s == 10800.0


def test_the_cartesian_state_shows_a_full_double_per_line() -> None:
    value = [451.0475408900001, -781.2372574600002, -4.610733100000001e-16]
    field = VectorField("orbit.v_km_s", value)
    assert [t.value for t in field.inputs] == [repr(x) for x in value]  # nothing rounded
    assert [t.description for t in field.inputs] == ["Velocity v x", "y", "z"]
    assert len(field.widget.children) == 3  # one line per component, each with its unit
    assert all("km/s" in line.children[1].value for line in field.widget.children)
    # The input holds a double's shortest repr in full: sign, 16 digits, point, "e-16"; two em
    # go to the label's margin, the input's padding and borders (26 px at 13 px in JupyterLab 4,
    # measured in tests/test_browser_layout.py).
    width_em = float(INPUT_WIDTH.removesuffix("em"))
    assert width_em - 2.0 >= len(repr(value[2])) * MONO_DIGIT_EM


def _em(width: str) -> float:
    return float(re.fullmatch(r"([\d.]+)em", width).group(1))


def test_table_headers_are_as_wide_as_their_columns(starter_path: Path) -> None:
    editor = _editor(starter_path)
    for table in (editor.stations, editor.burns, editor.allowances):
        header = table.body.children[0]
        assert "ol-table-header" in header._dom_classes
        for (key, _text, width), cell in zip(table.columns, header.children, strict=True):
            widget = table.cells[0][key]
            assert cell.layout.min_width == width == widget.layout.width, (table.path, key)
            assert widget.layout.min_width == width, (table.path, key)  # never squeezed
    # The allowance flags: one checkbox under its header, no second label to clip.
    flags = editor.allowances.cells[0]
    assert flags["per_year"].description == "" and flags["margin"].description == ""
    name = editor.allowances.cells[0]["name"]
    assert _em(name.layout.width) * 1.0 >= len(name.value) * MONO_DIGIT_EM  # not cut off
