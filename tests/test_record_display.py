"""What a record shows against what it records: one formatter, lists matched by name.

- Budget allowances are matched by name across cases and revisions: candidate B of the example
  (our own Kestrel-2 data) carries only "collision avoidance", candidate A "launch dispersion
  correction" first; B's 1 m/s must sit beside A's 1 m/s, not beside A's 15 m/s.
- An empty list and an unset value show the same "—" and are no difference.
- The page and ``verify`` format through ``reporting.display``: a page that shows the record's
  values in the record's order verifies; rows moved or values swapped on the page do not.
- A date more than three calendar years from the build shows to the day, the calendar day as
  written; the three years are counted by the calendar (Python's ``datetime``, exact integer
  microseconds), the day checked against astropy's ``Time`` (two-part Julian dates; its
  ``ymdhms``, since a formatted string rounds to its precision: 23:59:59.999999 printed to the
  millisecond is the next day, the drift the record must not show).
"""

from __future__ import annotations

import json
import re
import shutil

import pytest
from _record_study import EXAMPLES, simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.diff import diff_records, flatten
from orbitledger.reporting.display import display_input, display_value
from orbitledger.reporting.templating import inputs_side_by_side
from orbitledger.reporting.verify import verify_file

from orbitledger.cli.main import main

LAUNCH, AVOID = "launch dispersion correction", "collision avoidance"


def _case(name: str, edit=None) -> dict:
    data = json.loads((EXAMPLES / name).read_text())
    if edit:
        edit(data)
    return {"name": name, "canonical": json.dumps(data, sort_keys=True)}


def _rows(tables: list[dict]) -> dict[str, dict]:
    return {r["path"]: r for t in tables for s in t["sections"] for r in s["rows"]}


def test_allowances_are_matched_by_name_across_cases():
    a, b = _case("candidate-a.case.json"), _case("candidate-b.case.json")
    rows = _rows(inputs_side_by_side([a, b]))
    avoid = rows[f"budget.allowances['{AVOID}'].dv_km_s"]
    # both examples carry 0.001 km/s for collision avoidance (examples/candidate-*.case.json)
    assert [c["text"] for c in avoid["cells"]] == ["0.001", "0.001"] and not avoid["differs"]
    launch = rows[f"budget.allowances['{LAUNCH}'].dv_km_s"]
    assert [c["text"] for c in launch["cells"]] == ["0.015", "—"] and launch["differs"]
    assert not any("allowances[0]" in p for p in rows)
    # the same lines in another order in the file: no difference, in the inputs or in diff
    swapped = _case("candidate-a.case.json", lambda d: d["budget"]["allowances"].reverse())
    old, new = {"inputs": [a]}, {"inputs": [{**swapped, "name": a["name"]}]}
    assert diff_records(old, new) == []
    assert not any(r["differs"] for r in _rows(inputs_side_by_side([a, swapped])).values())


def test_an_empty_list_and_an_unset_value_are_the_same_dash():
    assert display_input([]) == display_input(None) == display_input({}) == "—"
    a = _case("candidate-a.case.json", lambda d: d["budget"].__setitem__("allowances", []))
    b = _case("candidate-a.case.json", lambda d: d["budget"].pop("allowances"))
    rows = _rows(inputs_side_by_side([a, b]))
    assert [c["text"] for c in rows["budget.allowances"]["cells"]] == ["—", "—"]
    assert not rows["budget.allowances"]["differs"]
    assert diff_records({"inputs": [a]}, {"inputs": [{**b, "name": a["name"]}]}) == []
    # a real change is still one: a line added to the empty list
    c = _case("candidate-b.case.json")
    assert any(
        "allowances" in ch.path
        for ch in diff_records({"inputs": [a]}, {"inputs": [{**c, "name": a["name"]}]})
    )


def test_lists_whose_order_matters_stay_by_position():
    # burns fly in plan order (common practice: a burn plan is an ordered sequence), so two
    # burns swapped are a change; stations are matched by name like allowances
    burn = {"name": "raise", "epoch_utc": "2027-01-10T00:00:00Z", "dv_km_s": [0.0, 0.001, 0.0]}
    plan = {"burns": [burn, {**burn, "name": "trim"}]}
    assert set(flatten(plan)) >= {"burns[0].name", "burns[1].name"}
    swapped = {"burns": plan["burns"][::-1]}
    assert flatten(swapped) != flatten(plan)
    stations = flatten(json.loads((EXAMPLES / "candidate-a.case.json").read_text()))
    assert stations["stations['Kuru Ridge'].lat_deg"] == -23.7  # examples/candidate-a.case.json


BUILT = "2026-12-03T13:00:00Z"


@pytest.mark.parametrize(
    ("value", "shown"),
    [
        ("2029-12-03T13:00:01Z", "2029-12-03"),  # three calendar years and one second after
        ("2029-12-03T13:00:00Z", "2029-12-03T13:00:00Z"),  # exactly three years: to the second
        ("2023-12-03T12:59:59Z", "2023-12-03"),  # more than three years before
        ("2041-06-30T23:59:59.999999Z", "2041-06-30"),  # its own day, not the next one
        ("2027-06-30T23:59:59Z", "2027-06-30T23:59:59Z"),  # near: to the second
        ("2029-12-03T13:00:00.5Z", "2029-12-03"),  # half a second past three years
        ("2029-12-03T13:00:00.000Z", "2029-12-03T13:00:00.000Z"),  # exactly three years
        ("2023-12-03T12:59:59.999Z", "2023-12-03"),  # a millisecond more than three years before
        ("2023-12-03T13:00:00.0000001Z", "2023-12-03T13:00:00.0000001Z"),  # past the us: dropped
    ],
)
def test_far_dates_show_their_calendar_day(value, shown):
    from astropy.time import Time

    assert display_value(value, "", BUILT) == shown
    if len(shown) == 10:  # astropy (outside) puts the instant on the same calendar day
        ymd = Time(value.rstrip("Z"), format="isot", scale="utc").ymdhms
        assert f"{ymd.year:04d}-{ymd.month:02d}-{ymd.day:02d}" == shown


def test_three_years_from_29_february_count_by_the_calendar():
    # 2028-02-29 + 3 years: 2031 has no 29 February; the day after 28 February is taken
    # (Python's datetime refuses the date; common practice for anniversaries)
    built = "2028-02-29T00:00:00Z"
    assert display_value("2031-03-01T00:00:00Z", "", built) == "2031-03-01T00:00:00Z"
    assert display_value("2031-03-01T00:00:01Z", "", built) == "2031-03-01"


# --- the built record: page and verify through the same formatter --------------------------

_FAR = {"name": "reentry_utc", "value": "2041-06-30T23:59:59.999999Z", "unit": "",
        "description": "re-entry (test value)"}  # fmt: skip


@pytest.fixture(scope="module")
def two_cases(tmp_path_factory):
    folder = tmp_path_factory.mktemp("display")
    study = write_study(folder / "study")
    shutil.copy(EXAMPLES / "candidate-b.case.json", folder / "study" / "candidate-b.case.json")
    results = [
        {"name": "test_length_km", "value": 42.5, "unit": "km", "description": "a test value"},
        _FAR,
    ]
    executed, manifest = simulated_run(study, results=results)
    from orbitledger.case import load_case

    b = load_case(folder / "study" / "candidate-b.case.json")
    manifest["cases"].append(
        {
            "path": str((folder / "study" / "candidate-b.case.json").resolve()),
            "fingerprint": b.fingerprint,
        }
    )
    outcome = record_run(study, executed, manifest, ledger_dir=folder / "ledger")
    return outcome.files["html"]


def _check_cell(html: str, key: str) -> re.Match:
    found = re.search(
        r'(<tr[^>]*>(?:(?!</tr>).)*?data-check="' + re.escape(key) + r'">)([^<]*)(</td>)',
        html,
        re.S,
    )
    assert found, key
    return found


def test_the_record_in_its_own_order_verifies(two_cases):
    html = two_cases.read_text(encoding="utf-8")
    key = f"i|candidate-b.case.json|budget.allowances[&#39;{AVOID}&#39;].dv_km_s"
    assert _check_cell(html, key).group(2) == "0.001"
    assert "2041-06-30</b>" in html or ">2041-06-30<" in html  # the far date, to the day
    report = verify_file(two_cases)
    assert report.ok, report.text()


def _verify_out(tmp_path, capsys, html: str) -> list[str]:
    path = tmp_path / "tampered.html"
    path.write_text(html, encoding="utf-8")
    capsys.readouterr()
    assert main(["verify", str(path)]) == 1
    return [
        ln.lower() for ln in capsys.readouterr().out.splitlines() if ln.strip().startswith("DIFF")
    ]


def test_allowance_rows_moved_on_the_page_are_caught(two_cases, tmp_path, capsys):
    html = two_cases.read_text(encoding="utf-8")
    rows = {}
    for name in (LAUNCH, AVOID):
        key = f"budget.allowances[&#39;{name}&#39;].dv_km_s"
        start = html.rindex("<tr", 0, html.index(f'data-check="i|candidate-a.case.json|{key}"'))
        rows[name] = html[start : html.index("</tr>", start) + 5]
    first, second = rows[LAUNCH], rows[AVOID]
    moved = html.replace(first, "\0").replace(second, first).replace("\0", second)
    assert moved != html
    diffs = _verify_out(tmp_path, capsys, moved)
    assert any("inputs" in d for d in diffs), diffs


def test_allowance_values_swapped_on_the_page_are_caught(two_cases, tmp_path, capsys):
    html = two_cases.read_text(encoding="utf-8")
    key = f"i|candidate-a.case.json|budget.allowances[&#39;{LAUNCH}&#39;].dv_km_s"
    cell = _check_cell(html, key)
    swapped = html[: cell.start(2)] + "0.001" + html[cell.end(2) :]
    diffs = _verify_out(tmp_path, capsys, swapped)
    assert any(f"allowances['{LAUNCH}'].dv_km_s shows '0.001'" in d for d in diffs), diffs


def test_a_far_date_shown_a_day_later_is_caught(two_cases, tmp_path, capsys):
    html = two_cases.read_text(encoding="utf-8")
    assert html.count(">2041-06-30<") >= 1
    diffs = _verify_out(tmp_path, capsys, html.replace(">2041-06-30<", ">2041-07-01<"))
    assert any("reentry_utc" in d for d in diffs), diffs
