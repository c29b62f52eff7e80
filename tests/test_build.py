"""The headless build: a clean kernel, the study registry, a failing cell, revision 2 and diff."""

from __future__ import annotations

import json

import nbformat
import pytest
from _record_study import CASE_NAME, write_study
from orbitledger.reporting.build import BuildError, build
from orbitledger.reporting.ledger import Ledger

from orbitledger.cli.main import main


@pytest.fixture(scope="module")
def first_build(tmp_path_factory):
    folder = tmp_path_factory.mktemp("build")
    study = write_study(folder)
    return study, build(study, note="first issue", progress=False)


def test_build_runs_the_study_and_collects_case_result_and_figure(first_build):
    study, outcome = first_build
    record = outcome.record
    assert outcome.revision == 1 and record["record_id"] == "KES2-ORB-001"
    assert outcome.files["html"] == study.parent / "ledger/records/KES2-ORB-001/r0001/record.html"
    (case,) = record["inputs"]
    assert case["name"] == CASE_NAME
    assert json.loads(case["canonical"])["orbit"]["altitude_km"] == 540.0
    assert record["results"] == [
        {"name": "test_length_km", "value": 42.5, "unit": "km", "description": "a test value"}
    ]
    assert [f["name"] for f in record["figures"]] == ["altitude"]
    assert record["decision"]["decision"] == "We fly candidate A."
    # The registry cell added for the run is not part of the record or the kept notebook.
    kept = nbformat.read(outcome.files["notebook"], as_version=4)
    assert len(kept.cells) == len(nbformat.read(study, as_version=4).cells)
    assert all("orbitledger-manifest" not in c.metadata.get("tags", []) for c in kept.cells)
    assert len(record["notebook"]["cells"]) == len(kept.cells)


def test_the_kernel_is_clean_and_runs_in_the_notebook_folder(tmp_path):
    # A variable defined in this test process must not exist in the build's kernel, and the
    # kernel's working folder is the notebook's (so relative case paths resolve).
    import os

    globals()["hidden_state_from_the_test"] = 1
    cell = nbformat.v4.new_code_cell(
        "import os\n"
        "assert 'hidden_state_from_the_test' not in globals()\n"
        "orbitledger.result('cwd_is_study_folder', os.getcwd() == "
        f"{str(tmp_path)!r}, '', 'kernel cwd')"
    )
    study = write_study(tmp_path, extra_cells=[cell])
    assert os.getcwd() != str(tmp_path)
    outcome = build(study, progress=False)
    values = {r["name"]: r["value"] for r in outcome.record["results"]}
    assert values["cwd_is_study_folder"] is True


def test_a_failing_cell_stops_the_build_naming_the_cell_and_writes_nothing(tmp_path, capsys):
    bad = nbformat.v4.new_code_cell("x = 1\nraise ValueError('periapsis below the surface')")
    study = write_study(tmp_path, extra_cells=[bad])
    with pytest.raises(BuildError) as err:
        build(study, progress=False)
    text = str(err.value)
    assert text.startswith("cell 6 (x = 1) failed: ValueError: periapsis below the surface")
    assert (
        not (tmp_path / "ledger" / "index.sqlite").exists()
        or Ledger(tmp_path / "ledger").record_ids() == []
    )
    # The command line: one message, exit 2, nothing in the ledger.
    assert main(["build", str(study)]) == 2
    assert "nothing was written to the ledger" in capsys.readouterr().err
    assert Ledger(tmp_path / "ledger").record_ids() == []


def test_a_mistyped_case_file_stops_the_build_naming_the_path(tmp_path, capsys):
    # A study that opens "candidate-aa.case.json" (a typo for candidate-a.case.json) must not
    # build a record of the starter case: the build fails naming both files, writes nothing.
    typo = nbformat.v4.new_code_cell("other = orbitledger.open_case('candidate-aa.case.json')")
    study = write_study(tmp_path, extra_cells=[typo])
    with pytest.raises(BuildError) as err:
        build(study, progress=False)
    text = str(err.value)
    assert "CaseFileNotFound" in text and "candidate-aa.case.json" in text
    assert "closest existing case file is candidate-a.case.json" in text
    assert not (tmp_path / "candidate-aa.case.json").exists()
    assert main(["build", str(study)]) == 2
    err_text = capsys.readouterr().err
    assert "candidate-aa.case.json" in err_text and "nothing was written" in err_text
    assert Ledger(tmp_path / "ledger").record_ids() == []


def test_bad_command_line_input_exits_2(tmp_path, capsys):
    assert main(["build", str(tmp_path / "missing.ipynb")]) == 2
    assert "no such notebook" in capsys.readouterr().err
    study = write_study(tmp_path)
    assert main(["build", str(study), "--to", "docx"]) == 2
    assert main(["history", "KES2-ORB-001", "--ledger", str(tmp_path / "nowhere")]) == 2


def test_revision_two_after_an_edited_case_has_history_and_diff(first_build, capsys):
    study, _ = first_build
    case_path = study.parent / CASE_NAME
    data = json.loads(case_path.read_text())
    data["orbit"]["altitude_km"] = 560.0
    case_path.write_text(json.dumps(data, indent=2))
    assert main(["build", str(study), "--note", "raise to 560 km"]) == 0
    out = capsys.readouterr().out
    assert "record KES2-ORB-001 revision 2" in out
    ledger = Ledger(study.parent / "ledger")
    second = ledger.record("KES2-ORB-001", 2)
    assert [h["revision"] for h in second["history"]] == [1, 2]
    assert second["history"][1]["note"] == "raise to 560 km"
    changes = second["history"][1]["changes"]
    assert "candidate-a.case.json: orbit.altitude_km changed: 540 -> 560" in changes[0]
    # Standard results follow the input: the period grows (Kepler's third law).
    standard = next(line for line in changes if line.startswith("standard results of candidate-a"))
    assert "semi_major_axis_km changed: 6918.137 -> 6938.137 km" in standard

    ledger_arg = ["--ledger", str(study.parent / "ledger")]
    assert main(["history", "KES2-ORB-001", *ledger_arg]) == 0
    history = capsys.readouterr().out
    assert "rev 1" in history and "rev 2" in history and "raise to 560 km" in history
    assert main(["diff", "KES2-ORB-001", "1", "2", *ledger_arg]) == 0
    diff = capsys.readouterr().out
    row = next(line for line in diff.splitlines() if "orbit.altitude_km" in line)
    assert row.split()[-2:] == ["560", "*"] and "540" in row
    assert "candidate-a.case.json: period_s" in diff


@pytest.mark.slow
@pytest.mark.browser
def test_demo_builds_the_example_study_into_html_and_pdf_that_verify(tmp_path, capsys):
    from orbitledger.reporting.render_pdf import find_browser
    from orbitledger.reporting.verify import verify_file

    if find_browser() is None:
        pytest.skip("no Chromium to print the PDF")
    out = tmp_path / "demo"
    assert main(["demo", "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    html = out / "ledger/records/KES2-ORB-001/r0001/record.html"
    pdf = out / "ledger/records/KES2-ORB-001/r0001/record.pdf"
    assert str(html) in printed and str(pdf) in printed
    for path in (html, pdf):
        report = verify_file(path)
        assert report.ok, report.text()
    record = json.loads((html.parent / "record.json").read_text())
    assert len(record["inputs"]) == 3 and len(record["figures"]) >= 3
    assert len(html.read_bytes()) < 3_000_000
    # A fresh ledger only: the same folder again is refused, nothing overwritten.
    assert main(["demo", "--out", str(out)]) == 2
