"""Errors in the case's words (issue 16): a mutated case run through the command line is refused
with exit 2 and ONE stderr line naming the case file and the case field the user wrote, never a
kernel argument (``elements``, ``ballistic_coefficient_kg_m2``, ``initial_mass_kg``); and a
message never spans lines.

Outside references: the ballistic coefficient B = m / (Cd A) (Vallado, Fundamentals of
Astrodynamics and Applications, 4th ed., section 8.6.2); the rocket equation
m_f = m0 exp(-dv / (Isp g0)) with g0 = 9.80665 m/s^2 (3rd CGPM, 1901), whose final mass rounds
to zero in IEEE 754 binary64 for dv / (Isp g0) > 745 (exp(-745) is the smallest subnormal);
IEEE 754 for the smallest subnormal, 5e-324; Unicode Standard Annex #9 for the bidi controls;
ECMA-48 for the ESC (0x1B) that starts an ANSI escape.
"""

from __future__ import annotations

import copy
import json
import math

import pytest

from orbitledger.case.starter import STARTER_DATA
from orbitledger.cli.main import main
from orbitledger.cli.one_line import one_line


def _case(tmp_path, edit, name="mutated.case.json"):
    data = copy.deepcopy(STARTER_DATA)
    edit(data)
    path = tmp_path / name
    path.write_text(json.dumps(data), encoding="utf-8")
    return path


def _refused(capsys, verb, path):
    status = main([verb, str(path)])
    out, err = capsys.readouterr()
    assert status == 2 and out == "", (status, out, err)
    assert err.count("\n") == 1 and "Traceback" not in err and "Warning" not in err, err
    prefix = f"orbitledger {verb}: {path}: "
    assert err.startswith(prefix), err
    return err[len(prefix) :].strip()


def _set(section, field, value):
    def edit(data):
        data[section][field] = value

    return edit


@pytest.mark.parametrize("verb", ["budget", "lifetime"])
def test_a_drag_area_whose_ballistic_coefficient_overflows_names_the_area(tmp_path, capsys, verb):
    # 48 kg / (2.2 x 5e-324 m^2) overflows binary64 (max 1.8e308): B = inf.
    assert 48.0 / (2.2 * 5e-324) == math.inf
    path = _case(tmp_path, _set("spacecraft", "drag_area_m2", 5e-324))
    line = _refused(capsys, verb, path)
    assert line.startswith("spacecraft.drag_area_m2 = 5e-324: gives a ballistic coefficient"), line
    assert "ballistic_coefficient_kg_m2" not in line


def test_a_drag_coefficient_that_underflows_the_product_names_it(tmp_path, capsys):
    assert 5e-324 * 0.12 == 0.0  # the product Cd A underflows to zero (IEEE 754)
    path = _case(tmp_path, _set("spacecraft", "drag_coefficient", 5e-324))
    assert _refused(capsys, "lifetime", path).startswith("spacecraft.drag_coefficient = 5e-324:")


def test_a_mass_too_small_for_drag_names_the_mass(tmp_path, capsys):
    def edit(data):
        data["spacecraft"].update(
            mass_kg=5e-324, propellant_mass_kg=0.0, drag_area_m2=1e4, drag_coefficient=10.0
        )

    path = _case(tmp_path, edit)
    assert 5e-324 / (10.0 * 1e4) == 0.0  # B underflows to zero
    assert _refused(capsys, "lifetime", path).startswith("spacecraft.mass_kg = 5e-324:")


def test_a_budget_that_uses_up_the_mass_names_the_mass_not_initial_mass_kg(tmp_path, capsys):
    # At Isp 1e-300 s any delta-v gives dv / (Isp g0) far above 745: the rocket equation's
    # final mass rounds to zero, and the next line of the budget starts from no mass.
    assert 48.0 * math.exp(-1.0 / (1e-300 * 9.80665)) == 0.0
    path = _case(tmp_path, _set("spacecraft", "isp_s", 1e-300))
    line = _refused(capsys, "budget", path)
    assert line.startswith("spacecraft.mass_kg = 48.0: the budget's delta-v at Isp 1e-300 s"), line
    assert "initial_mass_kg" not in line


def test_a_transfer_below_the_reentry_altitude_names_the_burn(tmp_path, capsys):
    def edit(data):
        data["burns"][0]["transfer"]["altitude_km"] = 100.0

    line = _refused(capsys, "budget", _case(tmp_path, edit))
    assert line.startswith("burns[0] = 'raise to operational 545 km': the operational orbit:"), line
    assert "elements" not in line and "below the re-entry altitude 120 km" in line


@pytest.mark.parametrize("verb", ["budget", "lifetime"])
def test_a_reentry_altitude_above_the_orbit_names_the_reentry_altitude(tmp_path, capsys, verb):
    def edit(data):
        data["budget"]["disposal"]["reentry_altitude_km"] = 1000.0

    line = _refused(capsys, verb, _case(tmp_path, edit))
    assert line.startswith("budget.disposal.reentry_altitude_km = 1000.0: "), line
    assert "elements" not in line


def test_a_disposal_from_beyond_the_moon_is_refused_before_the_decay_search(tmp_path, capsys):
    # 1e6 km is beyond the Moon's mean distance, 384,400 km (NASA Moon fact sheet).
    def edit(data):
        data["burns"][0]["transfer"]["altitude_km"] = 1e6

    line = _refused(capsys, "budget", _case(tmp_path, edit))
    assert "leaves an apoapsis 1e+06 km high; drag disposal" in line, line
    assert line.startswith("burns[0] = ")


def test_an_epoch_beyond_the_time_scale_tables_names_the_field(tmp_path, capsys):
    def edit(data):
        data["epoch_utc"] = "9999-12-31T23:59:59Z"

    path = _case(tmp_path, edit)
    for verb in ("summary", "passes", "lifetime"):
        line = _refused(capsys, verb, path)
        assert line.startswith("epoch_utc = '9999-12-31T23:59:59Z': lies after 2099"), line
        assert "eraEpv00 is valid 1900-2100 AD" in line


@pytest.mark.parametrize(
    "title", ["Kestrel \x1b[31mRED\x1b[0m", "Kestrel\nsecond line", "Kestrel \u202eevil"]
)
def test_titles_with_control_or_bidi_characters_are_refused(tmp_path, capsys, title):
    def edit(data):
        data["meta"]["title"] = title

    line = _refused(capsys, "summary", _case(tmp_path, edit))
    assert line.startswith("meta.title = "), line
    assert "must be one line of plain text" in line
    assert "\x1b" not in line and "\u202e" not in line  # shown escaped (repr)


def test_a_path_with_a_newline_is_shown_escaped_on_one_line(tmp_path, capsys):
    path = tmp_path / "two\nlines.case.json"
    status = main(["passes", str(path)])
    _, err = capsys.readouterr()
    assert status == 2 and err.count("\n") == 1, err
    assert "two\\nlines.case.json" in err


def test_summary_shows_a_path_with_a_newline_on_its_one_line(tmp_path, capsys):
    from orbitledger.case import open_case

    path = tmp_path / "two\nlines.case.json"
    open_case(path, create=True)
    assert main(["summary", str(path)]) == 0
    out, _ = capsys.readouterr()
    (line,) = [x for x in out.splitlines() if x.startswith("file ")]
    assert line.endswith("two\\nlines.case.json")


def test_one_line_escapes_controls_and_bidi_and_keeps_plain_text():
    assert one_line("plain text, 540 km") == "plain text, 540 km"
    assert one_line("a\nb\x1b[0m\u202e") == "a\\nb\\x1b[0m\\u202e"


def test_numeric_warnings_never_reach_stdout_and_an_error_is_the_one_line(tmp_path, capsys):
    # Isp 5e-324 s: dv / (Isp g0) overflows in numpy (RuntimeWarning) before the refusal.
    path = _case(tmp_path, _set("spacecraft", "isp_s", 5e-324))
    line = _refused(capsys, "budget", path)
    assert line.startswith("spacecraft.mass_kg = 48.0:"), line
