"""The background job's panel after a run: finished or cancelled, it is back in its idle look
(no Cancel, no bar, no "on the way" note), with a way to run again after a cancel; also when
the run ends before the editor has written its "on the way" note (a fast, cached run).

Reference values: the periapsis r_p = a (1 - e) (Vallado, Fundamentals of Astrodynamics and
Applications, 4th ed., Eq. 2-57) with the WGS-84 equatorial radius 6378.137 km (NIMA TR8350.2,
Table 3.1).
"""

from __future__ import annotations

import threading
from pathlib import Path

import pytest
from orbitledger.widgets import CaseEditor, pipeline
from orbitledger.widgets.background import BackgroundJob
from orbitledger.widgets.inputkeys import CACHE

import orbitledger

R_EQ_KM = 6378.137  # WGS-84 (NIMA TR8350.2, Table 3.1)


@pytest.fixture
def starter_path(tmp_path: Path) -> Path:
    path = tmp_path / "starter.case.json"
    orbitledger.open_case(path, create=True)
    return path


def _idle(job: BackgroundJob) -> bool:
    return (
        job.cancel_button.layout.display == "none"
        and job.bar.layout.visibility == "hidden"
        and not job.running
    )


def test_a_finished_job_is_idle() -> None:
    job = BackgroundJob("passes", describe=lambda r: f"{r} passes", min_interval_s=0.0)
    assert _idle(job)
    release = threading.Event()
    job.start(lambda progress: (release.wait(30.0), progress(0.5), 7)[2])
    assert job.cancel_button.layout.display != "none" and job.bar.layout.visibility == "visible"
    release.set()
    assert job.wait(30.0) and job.state == "done"
    assert _idle(job) and job.status.value == "7 passes"
    assert job.run_button.layout.display != "none"  # not started by an editor: Run stays


def test_a_cancelled_editor_job_is_idle_with_run_back(starter_path: Path, monkeypatch) -> None:
    CACHE.clear()
    release, started = threading.Event(), threading.Event()
    original = pipeline.slow_group

    def slow(case, group):
        started.set()
        release.wait(60.0)
        return original(case, group)

    monkeypatch.setattr(pipeline, "slow_group", slow)
    editor = CaseEditor(orbitledger.open_case(starter_path))
    job = editor._slow_job
    assert started.wait(30.0) and job.running and not _idle(job)
    job.cancel_button.click()
    assert _idle(job) and job.run_button.layout.display != "none"
    assert "on the way" not in editor.results_panel.table.value
    release.set()
    assert job.wait(60.0)
    assert _idle(job) and "on the way" not in editor.results_panel.table.value


def test_a_finished_editor_job_leaves_no_pending_note(starter_path: Path) -> None:
    editor = CaseEditor(orbitledger.open_case(starter_path))
    job = editor._slow_job
    assert job.wait(300.0) and job.state == "done"
    assert _idle(job) and job.run_button.layout.display == "none"
    assert "on the way" not in editor.results_panel.table.value
    assert "dv_total_km_s" in editor.results
    editor.apply({"orbit.e": 0.0013})
    assert job.wait(300.0)
    assert _idle(job) and "on the way" not in editor.results_panel.table.value
    a = R_EQ_KM + 540.0  # the starter case's altitude
    assert editor.summary["periapsis_alt_km"] == pytest.approx(a * (1 - 0.0013) - R_EQ_KM)


def test_a_run_that_ends_before_the_note_is_written_still_ends_idle(
    starter_path: Path, monkeypatch
) -> None:
    # The race: the job finishes (its groups cached) before run_window_results writes its
    # "on the way" note; the panel must still show the finished state.
    editor = CaseEditor(orbitledger.open_case(starter_path), window_results=False)
    job = editor._slow_job
    original_start = job.start

    def start_and_finish(fn=None):
        original_start(fn)
        assert job.wait(300.0)

    monkeypatch.setattr(job, "start", start_and_finish)
    editor.run_window_results()
    assert job.state == "done" and _idle(job)
    assert "on the way" not in editor.results_panel.table.value
    assert "dv_total_km_s" in editor.results
