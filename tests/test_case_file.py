"""Case files on disk: atomic save, refusal to overwrite a file changed since it was loaded,
the starter case written for a missing file, the study registry, and the JSON Schema.

Outside reference for the schema: the ``jsonschema`` package (Draft 2020-12 validator).
"""

from __future__ import annotations

import json
import os

import jsonschema
import pytest

import orbitledger
from orbitledger import study
from orbitledger.case import (
    CaseError,
    CaseFile,
    CaseFileChanged,
    CaseFileNotFound,
    case_json_schema,
    load_case,
    open_case,
    starter_case,
    write_new_case,
)


@pytest.fixture
def case_path(tmp_path):
    path = tmp_path / "kestrel.case.json"
    write_new_case(path, starter_case())
    return path


def test_open_case_with_create_writes_the_starter_case_for_a_missing_file(tmp_path):
    path = tmp_path / "new.case.json"
    opened = orbitledger.open_case(path, create=True)
    assert path.exists() and opened.case == starter_case()
    assert hasattr(opened, "editor") and isinstance(opened, CaseFile)
    assert opened.orbit.form == "classical"  # attribute access falls through to the case
    before = path.read_bytes()
    assert open_case(path, create=True).case == starter_case() and path.read_bytes() == before
    assert open_case(path).case == starter_case()  # an existing file opens without create


def test_open_case_of_a_missing_file_names_it_and_the_closest_case_file(tmp_path):
    write_new_case(tmp_path / "baseline-25.case.json", starter_case())
    write_new_case(tmp_path / "other.case.json", starter_case())
    typo = tmp_path / "baseline-252.case.json"
    for opener in (orbitledger.open_case, open_case):
        with pytest.raises(CaseFileNotFound) as err:
            opener(typo)
        text = str(err.value)
        assert str(typo) in text and str(tmp_path / "baseline-25.case.json") in text
        assert "create=True" in text and "orbitledger new" in text
        assert "\n" not in text  # one line
    assert not typo.exists()  # nothing written
    (tmp_path / "empty").mkdir()
    with pytest.raises(CaseFileNotFound, match="there is no case file in"):
        open_case(tmp_path / "empty" / "x.case.json")


def test_load_and_save_are_noted_in_the_study_registry(case_path):
    study.reset()
    case_file = CaseFile(case_path, registry=study)
    noted = {c.path: c.fingerprint for c in study.opened_cases()}
    assert noted[str(case_path.resolve())] == case_file.fingerprint
    saved = case_file.save(case_file.case.with_changes({"orbit.e": 0.002}))
    noted = {c.path: c.fingerprint for c in study.opened_cases()}
    assert noted[str(case_path.resolve())] == saved.fingerprint != starter_case().fingerprint
    study.reset()
    orbitledger.open_case(case_path)  # a study notebook's opener passes the study registry
    assert [c.path for c in study.opened_cases()] == [str(case_path.resolve())]


def test_the_case_layer_notes_nothing_without_a_registry(case_path):
    # The registry is given per case file, not written globally on every load (issue 16).
    study.reset()
    case_file = CaseFile(case_path)
    case_file.save(case_file.case.with_changes({"orbit.e": 0.002}))
    load_case(case_path)
    open_case(case_path).reload()
    assert study.opened_cases() == []
    seen = []

    class Registry:
        def note_case(self, path, fingerprint):
            seen.append((str(path), fingerprint))

    own = open_case(case_path, registry=Registry())
    own.save(own.case.with_changes({"orbit.e": 0.003}))
    assert [path for path, _ in seen] == [str(case_path)] * 2
    assert seen[1][1] == own.fingerprint != seen[0][1] and study.opened_cases() == []


def test_save_writes_the_new_case_and_leaves_no_temporary_file(case_path):
    case_file = CaseFile(case_path)
    new = case_file.case.with_changes({"stations[0].lat_deg": 60.3})
    case_file.save(new)
    assert load_case(case_path) == new and case_file.case == new
    assert sorted(p.name for p in case_path.parent.iterdir()) == [case_path.name]


def test_a_failed_write_leaves_the_old_file_whole(case_path, monkeypatch):
    before = case_path.read_bytes()
    case_file = CaseFile(case_path)

    def broken_replace(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", broken_replace)
    with pytest.raises(CaseError, match="cannot be saved: No space left on device"):
        case_file.save(case_file.case.with_changes({"orbit.e": 0.002}))
    assert case_path.read_bytes() == before
    assert sorted(p.name for p in case_path.parent.iterdir()) == [case_path.name]
    assert case_file.case == starter_case()


def test_save_refuses_a_file_changed_on_disk(case_path):
    case_file = CaseFile(case_path)
    # Another editor rewrites the file with the same size and keeps the mtime: only the
    # content hash can tell.
    stat = case_path.stat()
    other = case_path.read_text().replace('"e": 0.001', '"e": 0.009')
    case_path.write_text(other)
    os.utime(case_path, ns=(stat.st_atime_ns, stat.st_mtime_ns))
    assert case_file.changed_on_disk()
    with pytest.raises(CaseFileChanged) as caught:
        case_file.save(case_file.case.with_changes({"orbit.e": 0.002}))
    assert str(case_path) in str(caught.value) and "changed on disk" in str(caught.value)
    assert isinstance(caught.value, CaseError)
    assert case_path.read_text() == other  # nothing lost
    assert case_file.reload().orbit.e == 0.009


def test_force_overwrites_a_changed_file(case_path):
    case_file = CaseFile(case_path)
    case_path.write_text(case_path.read_text().replace('"e": 0.001', '"e": 0.009'))
    new = case_file.case.with_changes({"orbit.e": 0.002})
    case_file.save(new, force=True)
    assert load_case(case_path).orbit.e == 0.002
    case_file.save(new.with_changes({"orbit.e": 0.003}))  # in step with the disk again


def test_a_deleted_file_counts_as_changed(case_path):
    case_file = CaseFile(case_path)
    case_path.unlink()
    with pytest.raises(CaseFileChanged):
        case_file.save()


def test_a_refused_change_leaves_the_file_unchanged(case_path):
    before = case_path.read_bytes()
    case_file = CaseFile(case_path)
    with pytest.raises(CaseError) as caught:
        case_file.update({"orbit.e": -0.1})
    assert caught.value.field == "orbit.e"
    with pytest.raises(CaseError, match=r"stations\[7\]: no such item"):
        case_file.update({"stations[7].lat_deg": 1.0})
    assert case_path.read_bytes() == before and case_file.case == starter_case()


def test_with_changes_paths_and_either_or_partners():
    case = starter_case()
    changed = case.with_changes({"stations.1.lat_deg": 53.0, "stations[2].name": "Kuru Ridge East"})
    assert changed.stations[1].lat_deg == 53.0 and changed.stations[2].name == "Kuru Ridge East"
    assert case.stations[1].lat_deg == 52.95  # unchanged
    by_a = case.with_changes({"orbit.a_km": 6920.0})
    assert by_a.orbit.a_km == 6920.0 and by_a.orbit.altitude_km is None
    with pytest.raises(CaseError, match="orbit.ecc: unknown field; did you mean 'e'"):
        case.with_changes({"orbit.ecc": 0.01})
    bare = case.with_changes({"budget": None})
    with pytest.raises(CaseError, match="budget: not set in this case"):
        bare.with_changes({"budget.mission_years": 5.0})
    with_budget = bare.with_changes({"budget": {"mission_years": 5.0, "margin_percent": 10.0}})
    assert with_budget.budget.mission_years == 5.0


def test_new_case_file_is_never_overwritten(case_path):
    before = case_path.read_bytes()
    with pytest.raises(CaseError, match="already exists; not overwritten"):
        write_new_case(case_path, starter_case().with_changes({"orbit.e": 0.5}))
    assert case_path.read_bytes() == before


def test_loading_a_missing_file():
    with pytest.raises(CaseFileNotFound) as caught:
        load_case("/nonexistent/folder/x.case.json")
    assert isinstance(caught.value, FileNotFoundError) and isinstance(caught.value, CaseError)


def test_json_schema_validates_the_starter_case_and_refuses_typos():
    schema = case_json_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    validator = jsonschema.Draft202012Validator(schema)
    starter = json.loads(starter_case().to_json())
    assert list(validator.iter_errors(starter)) == []
    assert list(validator.iter_errors(starter_case().to_data())) == []
    starter["orbit"]["ecc"] = 0.1
    assert list(validator.iter_errors(starter))
    starter["orbit"].pop("ecc")
    starter["orbit"]["i_deg"] = 190.0
    assert list(validator.iter_errors(starter))


def test_json_schema_accepts_every_orbit_form_and_the_plan_sections():
    case = starter_case().with_changes(
        {
            "burns": [
                {"name": "raise", "at": {"apsis": "periapsis"}, "dv_rtn_km_s": [0.0, 0.012, 0.0]},
                {
                    "name": "trim",
                    "at": {"node": "ascending"},
                    "transfer": {"kind": "inclination", "i_deg": 97.6},
                },
            ],
            "budget": {
                "mission_years": 5.0,
                "allowances": [{"name": "ca", "dv_km_s": 0.001}],
                "disposal": {"lifetime_limit_years": 5.0},
            },
        }
    )
    validator = jsonschema.Draft202012Validator(case_json_schema())
    for form in ("classical", "apsides", "cartesian"):
        data = json.loads(case.with_orbit_form(form).to_json())
        assert list(validator.iter_errors(data)) == [], form
