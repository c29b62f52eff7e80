"""What the editor's layout lets an analyst read, in JupyterLab with headless Chromium: the
Cartesian state's full values and units (nothing clipped), table headers over their columns,
the allowances' names whole, and a duration typed in hours saved in seconds.

Measured in the page: a value or unit is clipped when the element's ``scrollWidth`` exceeds its
``clientWidth`` (CSSOM View Module, W3C, "scrollWidth"/"clientWidth"); a header sits over its
column when their left edges agree within 1 px. The hour is 3600 s (SI Brochure, BIPM, 9th ed.
2019, Table 8). The server, browser and notebook are those of test_browser_editor.py.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from test_browser_editor import editor_page
from test_browser_lab import _artefact, _wait_for

from orbitledger.case import load_case

pytestmark = [pytest.mark.browser, pytest.mark.slow]

# Does the element show all of its content? (an input's text, a unit label's text)
_CLIPPED = "e => e.scrollWidth > e.clientWidth + 1"


def test_cartesian_values_units_and_table_columns_are_readable(tmp_path: Path, jupyter_editor) -> None:
    with editor_page("lab", "lab/tree/starter-editor.ipynb", tmp_path, jupyter_editor) as (page, editor, path):
        editor.locator(".ol-section select").first.select_option(label="Cartesian state (GCRF)")
        vz = editor.get_by_label("z", exact=True).last  # the velocity's z component
        editor.get_by_label("Velocity v x", exact=True).wait_for(timeout=20_000)
        vz.fill("-4.610733100000001e-16")  # a full double (17 significant digits)
        vz.press("Enter")
        _wait_for(lambda: load_case(path).orbit.form == "cartesian", 30, "the Cartesian save")
        assert load_case(path).orbit.v_km_s[2] == -4.610733100000001e-16
        orbit = editor.locator(".ol-section").first
        inputs = orbit.locator(".ol-vector input")
        assert inputs.count() == 6
        widths = [inputs.nth(k).evaluate("e => e.clientWidth") for k in range(6)]
        assert max(widths) - min(widths) <= 1, widths  # no input squeezed by its error line
        for k in range(6):
            assert not inputs.nth(k).evaluate(_CLIPPED), inputs.nth(k).input_value()
        mass = editor.get_by_label("Mass", exact=True)  # a plain field is as wide
        assert abs(mass.evaluate("e => e.clientWidth") - widths[0]) <= 1
        units = orbit.locator(".ol-vector .ol-unit")
        assert [units.nth(k).inner_text() for k in range(6)] == ["km"] * 3 + ["km/s"] * 3
        for k in range(6):
            assert not units.nth(k).evaluate(_CLIPPED)

        for table in editor.locator(".ol-table").all():
            header = table.locator(".ol-table-header > *")
            first_row = table.locator(".ol-field").first
            cells = first_row.locator(":scope > *")
            for k in range(header.count()):
                left = header.nth(k).bounding_box()["x"]
                assert abs(left - cells.nth(k).bounding_box()["x"]) <= 1.0, (k, left)
        names = editor.locator(".ol-table").nth(2).locator(".ol-field input[type=text]")
        assert not names.first.evaluate(_CLIPPED), names.first.input_value()

        duration = editor.get_by_label("Duration", exact=True)
        unit = duration.locator("xpath=ancestor::div[contains(@class,'ol-field')][1]//select")
        unit.select_option("h")
        _wait_for(lambda: duration.input_value() == "24", 20, "86400 s shown as 24 h")
        duration.fill("1.1")
        duration.press("Enter")
        _wait_for(lambda: load_case(path).window.duration_s == 3960.0, 30, "1.1 h saved as s")
        _artefact(tmp_path, "lab-editor-layout.png", editor.screenshot())
