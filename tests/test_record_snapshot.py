"""What the notebook shows, the record shows: widgets as static snapshots in the record.

The trade view (``compare``) and the case editor display, beside their live view, the table
they show; the record renders it (stars and units) where the placeholder used to be. The
record's HTML is read back with the standard library's ``html.parser``. Outside reference for
a value in the table: the sun-synchronous inclination of a circular-ish orbit,
cos i = -2 n_s a^(7/2) (1 - e^2)^2 / (3 J2 R^2 sqrt(mu)), with the node turning 360 deg per
tropical year (Vallado 4th ed., Sec. 11.4, sun-synchronous orbits; common practice), J2 and R
of EGM96 / WGS-84 as the case cites them.
"""

from __future__ import annotations

import math
import re
from html.parser import HTMLParser

import nbformat
import pytest
from _record_study import CASE_NAME, EXAMPLES, simulated_run, write_study
from orbitledger.reporting.build import record_run

from orbitledger.case import load_case
from orbitledger.study import SNAPSHOT_MIME

WIDGET_MIME = "application/vnd.jupyter.widget-view+json"


@pytest.fixture(scope="module")
def cases():
    return [load_case(EXAMPLES / f"candidate-{x}.case.json") for x in "abc"]


def test_the_trade_view_displays_its_table_beside_the_live_widget(cases):
    from orbitledger.widgets import compare

    view = compare(cases, labels=["A", "B", "C"])
    bundle = view._repr_mimebundle_()
    assert WIDGET_MIME in bundle and SNAPSHOT_MIME in bundle
    snap = bundle[SNAPSHOT_MIME]
    assert [c["text"] for c in snap["columns"]] == ["result", "unit", "A", "B", "C", "better"]
    rows = {r["cells"][0]["name"]: r["cells"] for r in snap["rows"] if "cells" in r}
    table = {row[0]: row for row in view.trade.rows}
    for name, cells in rows.items():
        best = table[name][5]
        marked = [k for k, c in enumerate(cells[2:-1]) if c["best"]]
        assert marked == ([] if best is None else [best]), name
    # Candidate C (51.6 deg) is farthest from sun-synchronous; A nearest: its cell is starred.
    offset = rows["sun_synchronous_offset_deg"]
    assert offset[1]["text"] == "deg" and offset[2]["best"] and offset[-1]["text"] == "nearer 0"
    # The value shown against the closed form of the sun-synchronous inclination (see above).
    a = cases[0].elements().a_km
    e = cases[0].elements().e
    body = cases[0].body_constants()
    n_s = 2.0 * math.pi / (365.2421897 * 86400.0)  # rad/s: one turn per tropical year
    cos_i = -2.0 * n_s * a**3.5 * (1 - e**2) ** 2 / (3.0 * body.j2 * body.radius_km**2)
    i_deg = math.degrees(math.acos(cos_i / math.sqrt(body.mu_km3_s2)))
    shown = rows["sun_synchronous_inclination_deg"][2]["text"]
    assert abs(float(shown) - i_deg) < 1e-3  # deg: the 6 digits shown


def test_the_editor_displays_its_results_panel(cases, tmp_path, monkeypatch):
    from orbitledger.widgets import CaseEditor

    import orbitledger
    from orbitledger.case import starter_case, write_new_case

    path = tmp_path / "kestrel.case.json"
    write_new_case(path, starter_case())
    live = CaseEditor(orbitledger.open_case(path), window_results=False, figures=[])
    snap = live._repr_mimebundle_()[SNAPSHOT_MIME]
    assert snap["kind"] == "results" and snap["title"].endswith("kestrel.case.json")
    names = [r["cells"][0]["name"] for r in snap["rows"] if "cells" in r]
    assert names == list(live.results)  # live: what the panel holds now
    monkeypatch.setenv("ORBITLEDGER_BUILD", "1")  # in a build: every result of the case
    built = [r for r in live._repr_mimebundle_()[SNAPSHOT_MIME]["rows"] if "cells" in r]
    assert {"lifetime_years", "contact_min_per_day"} <= {r["cells"][0]["name"] for r in built}


class _Tables(HTMLParser):
    """Cells of the tables with class "snapshot", and every paragraph's text."""

    def __init__(self):
        super().__init__()
        self.tables, self.in_table, self.cell, self.text = [], False, None, []

    def handle_starttag(self, tag, attrs):
        cls = dict(attrs).get("class") or ""
        if tag == "table" and "snapshot" in cls.split():
            self.in_table = True
            self.tables.append([])
        elif self.in_table and tag in ("td", "th"):
            self.cell = []

    def handle_endtag(self, tag):
        if tag == "table":
            self.in_table = False
        elif self.in_table and tag in ("td", "th") and self.cell is not None:
            self.tables[-1].append(" ".join("".join(self.cell).split()))
            self.cell = None

    def handle_data(self, data):
        self.text.append(data)
        if self.cell is not None:
            self.cell.append(data)


def test_the_record_shows_the_snapshot_where_the_widget_was(cases, tmp_path):
    from orbitledger.widgets import compare

    study = write_study(tmp_path / "study")
    executed, manifest = simulated_run(study)
    view = compare(cases, labels=["A", "B", "C"])
    bundle = view._repr_mimebundle_()
    cell = [c for c in executed.cells if c.cell_type == "code"][0]
    cell.outputs.append(nbformat.v4.new_output("display_data", data=bundle))
    plain = {WIDGET_MIME: bundle[WIDGET_MIME], "text/plain": "VBox()"}  # a widget without one
    cell.outputs.append(nbformat.v4.new_output("display_data", data=plain))
    outcome = record_run(study, executed, manifest, ledger_dir=tmp_path / "ledger")
    page = _Tables()
    # the page as a reader sees it: without the scripts (the embedded record lists the page's
    # text again, for verify)
    page.feed(re.sub(r"<script\b.*?</script>", "", outcome.files["html"].read_text(), flags=re.S))
    (cells,) = page.tables
    assert cells[:6] == ["result", "unit", "A", "B", "C", "better"]
    starred = [c for c in cells if c.endswith("★")]
    assert len(starred) == sum(row[5] is not None for row in view.trade.rows)
    assert "deg/day" in cells and "km/s" in cells
    text = " ".join("".join(page.text).split())
    assert "Trade view: 3 candidates" in text
    # A widget without a snapshot still says so; the trade view is no longer a placeholder.
    assert text.count("an interactive widget") == 1
    assert CASE_NAME in text
