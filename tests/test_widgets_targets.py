"""The editor's results panel shows the targets group (target access, revisit, coverage),
computed in the background with the window results and cached on its own inputs.

The values are the record's (``orbitledger.analysis.case_results``), whose access geometry is
checked against astropy's AltAz frame and get_sun in tests/test_targets.py; here the check is
that the editor shows exactly those, and that an edit recomputes the group only when it
changes what the group reads (common practice: the access geometry reads the trajectory and
the imaging sections, not the stations, the burn plan or the budget).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from orbitledger.widgets import CaseEditor
from orbitledger.widgets.inputkeys import CACHE

import orbitledger
from orbitledger.analysis import case_results

pytestmark = pytest.mark.slow

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "candidate-a.case.json"
TARGETS = [
    {"name": "Fenwick Fen", "lat_deg": 52.3, "lon_deg": 0.1},
    {"name": "Kuru Plain", "lat_deg": -12.5, "lon_deg": 131.0},
]
SENSOR = {"off_nadir_max_deg": 45.0}


def _same(a: float, b: float) -> bool:
    return a == b or (math.isnan(a) and math.isnan(b))


def _editor(tmp_path: Path) -> CaseEditor:
    data = json.loads(EXAMPLE.read_text())
    data.update(targets=TARGETS, sensor=SENSOR)
    data["window"]["duration_s"] = 2 * 86400.0  # two days: several accesses to each target
    path = tmp_path / "imaging.case.json"
    path.write_text(json.dumps(data))
    editor = CaseEditor(orbitledger.open_case(path), figures=[])
    _wait(editor)
    return editor


def _wait(editor: CaseEditor) -> None:
    """Until the background job has ended ("idle" when everything was cached already)."""
    assert editor._slow_job.wait(300.0) and editor._slow_job.state in ("done", "idle")


def _cached(editor: CaseEditor) -> bool:
    return CACHE.peek(editor.case, "targets", name="results:targets")[0]


def test_the_panel_shows_the_targets_group_as_the_record_does(tmp_path: Path) -> None:
    editor = _editor(tmp_path)
    record = case_results(editor.case, ["targets"])
    assert record, "the case has targets: the group has results"
    for name, result in record.items():
        assert _same(editor.summary[name], result.value), name
        assert f'data-result="{name}"' in editor.results_panel.table.value
    assert "Targets and coverage" in editor.results_panel.table.value


def test_only_an_edit_the_group_reads_recomputes_it(tmp_path: Path) -> None:
    editor = _editor(tmp_path)
    editor.apply({"meta.title": "Kestrel-2 imaging, second look"})
    assert _cached(editor), "a title edit keeps the targets results"
    mask = editor.case.to_data()["stations"][0]["elevation_mask_deg"]
    editor.apply({"stations[0].elevation_mask_deg": mask + 1.0})
    assert _cached(editor), "a station edit keeps the targets results"
    editor.apply({"sensor.off_nadir_max_deg": 30.0})
    assert not _cached(editor), "a sensor edit recomputes them"
    _wait(editor)
    assert _cached(editor)
    narrower = case_results(editor.case, ["targets"])
    assert all(_same(editor.summary[name], r.value) for name, r in narrower.items())
