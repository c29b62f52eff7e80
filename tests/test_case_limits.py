"""Input limits of case files (issue 16): file kind and size, number ranges, JSON depth.

Every refusal is checked as the user meets it: exit status 2 and ONE line on stderr naming
the file and the field or the reason, nothing read beyond the limit, the file unchanged.
Outside references: POSIX file types (stat(2)); Python's int-to-string limit of 4,300 digits
(sys.int_info.str_digits_check_threshold documentation, CPython 3.11+); IAU 2015 Resolution B3
nominal solar radius 695,700 km and GM_sun 1.3271244e20 m^3/s^2 (the largest body a case may
name must fit the ranges); ``jsonschema`` for the printed schema. The ranges themselves are
common practice (bounds well beyond any spacecraft or orbit), stated in docs/case-file.md.
"""

from __future__ import annotations

import copy
import json
import os
import pickle
import subprocess
import sys

import jsonschema
import pytest

from orbitledger.case import CaseError, case_json_schema
from orbitledger.case.model import case_from_data
from orbitledger.case.starter import STARTER_DATA
from orbitledger.case.validation import read_json_text
from orbitledger.cli.main import main
from orbitledger.limits import MAX_CASE_FILE_BYTES, MAX_INTEGER_DIGITS, MAX_JSON_DEPTH


def summary(capsys, path):
    status = main(["summary", str(path)])
    out, err = capsys.readouterr()
    assert status == 2 and out == "", (status, out, err)
    assert err.count("\n") == 1 and "Traceback" not in err, err
    assert err.startswith(f"orbitledger summary: {path}"), err
    return err.strip()


def starter_text(**changes) -> str:
    raw = copy.deepcopy(STARTER_DATA)
    for dotted, value in changes.items():
        section, field = dotted.split("__")
        raw[section][field] = value
    return json.dumps(raw, indent=2)


# --- the file itself ------------------------------------------------------------------------


def test_a_fifo_is_refused_without_blocking(tmp_path):
    fifo = tmp_path / "pipe.case.json"
    os.mkfifo(fifo)
    # A separate process with a timeout: opening a FIFO for reading would block for ever.
    done = subprocess.run(
        [sys.executable, "-m", "orbitledger", "summary", str(fifo)],
        capture_output=True,
        text=True,
        timeout=60,
        check=False,
    )
    assert done.returncode == 2 and done.stdout == ""
    assert done.stderr == f"orbitledger summary: {fifo}: is a FIFO (named pipe), not a case file\n"


def test_a_device_is_refused_before_it_is_read(capsys):
    # /dev/zero never ends: reading it would fill memory (a character device, stat(2)).
    line = summary(capsys, "/dev/zero")
    assert line == "orbitledger summary: /dev/zero: is a character device, not a case file"


def test_a_folder_is_refused(tmp_path, capsys):
    folder = tmp_path / "folder.case.json"
    folder.mkdir()
    assert summary(capsys, folder).endswith(": is a folder, not a case file")


def test_a_file_over_the_size_limit_is_refused_and_one_at_the_limit_is_read(tmp_path, capsys):
    text = starter_text().encode()
    at_limit = tmp_path / "at-limit.case.json"
    at_limit.write_bytes(text + b" " * (MAX_CASE_FILE_BYTES - len(text)))
    assert main(["summary", str(at_limit)]) == 0
    capsys.readouterr()
    over = tmp_path / "over.case.json"
    over.write_bytes(text + b" " * (MAX_CASE_FILE_BYTES + 1 - len(text)))
    before = over.read_bytes()
    line = summary(capsys, over)
    assert line.endswith(": is 4,194,305 bytes; a case file is at most 4 MiB (4,194,304 bytes)")
    assert over.read_bytes() == before


# --- numbers --------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("field", "value", "shown", "bound", "allowed"),
    [
        ("orbit__altitude_km", 1e308, "1e+308", "<= 1e+10", "[-1e+10, 1e+10] km"),
        ("spacecraft__mass_kg", 1e308, "1e+308", "<= 1e+06", "(0, 1e+06] kg"),
        ("spacecraft__mass_kg", 0.0, "0.0", "> 0", "(0, 1e+06] kg"),
        ("window__duration_s", 1e300, "1e+300", "<= 3.2e+09", "(0, 3.2e+09] s"),
        ("window__step_s", 1e-9, "1e-09", ">= 0.001", "[0.001, 3.2e+09] s"),
        ("spacecraft__drag_area_m2", -1e308, "-1e+308", "> 0", "(0, 10000] m^2"),
    ],
)
def test_a_number_outside_its_range_names_the_field_and_the_range(
    tmp_path, capsys, field, value, shown, bound, allowed
):
    path = tmp_path / "c.case.json"
    path.write_text(starter_text(**{field: value}))
    line = summary(capsys, path)
    where = field.replace("__", ".")
    assert f": {where} = {shown}: must be {bound} (the allowed range is {allowed}" in line, line


def test_a_5001_digit_integer_is_refused_by_the_range_of_its_field(tmp_path, capsys):
    # 5,001 digits is past Python's int-to-string limit of 4,300 (CPython 3.11+ docs): the
    # literal must never be converted. It shows as its first digits and its length.
    digits = "9" * 5001
    path = tmp_path / "c.case.json"
    path.write_text(starter_text(orbit__e=123456.0).replace("123456.0", digits))
    line = summary(capsys, path)
    assert ": orbit.e = 999999999999... (5001 digits): must be <= 1000" in line
    assert "(the allowed range is [0, 1000])" in line
    path.write_text(starter_text(orbit__altitude_km=123456.0).replace("123456.0", "-" + digits))
    line = summary(capsys, path)
    assert ": orbit.altitude_km = -999999999999... (5001 digits): must be >= -1e+10" in line


def test_a_long_integer_in_a_field_without_a_range_is_refused_too(tmp_path, capsys):
    # Angles take any finite value (normalised to [0, 360)); a 5,001-digit one is still refused.
    path = tmp_path / "c.case.json"
    path.write_text(starter_text(orbit__raan_deg=123456.0).replace("123456.0", "7" * 5001))
    line = summary(capsys, path)
    assert line.endswith(
        f": orbit.raan_deg = 777777777777... (5001 digits): no case field takes an integer"
        f" of more than {MAX_INTEGER_DIGITS} digits"
    )


def test_an_integer_at_the_digit_limit_is_read_as_a_number():
    text = '{"n": ' + "1" * MAX_INTEGER_DIGITS + ', "m": -' + "2" * MAX_INTEGER_DIGITS + "}"
    assert read_json_text(text) == {"n": int("1" * 24), "m": -int("2" * 24)}


def test_the_refusal_of_a_long_integer_survives_pickling():
    raw = copy.deepcopy(STARTER_DATA)
    raw["orbit"]["e"] = read_json_text('{"e": %s}' % ("9" * 5001))["e"]
    with pytest.raises(CaseError) as caught:
        case_from_data(raw, file="c.case.json")
    again = pickle.loads(pickle.dumps(caught.value))
    assert str(again) == str(caught.value) and "(5001 digits)" in str(again)


def test_the_largest_body_fits_the_ranges_and_the_schema_carries_them():
    # IAU 2015 Resolution B3: nominal solar radius 695,700 km; GM_sun 1.3271244e20 m^3/s^2.
    raw = copy.deepcopy(STARTER_DATA)
    raw["body"] = {"name": "Sun", "radius_km": 695700.0, "mu_km3_s2": 1.3271244e11}
    raw["body"]["sources"] = {"radius_km": "IAU 2015 B3", "mu_km3_s2": "IAU 2015 B3"}
    raw["orbit"]["altitude_km"] = 1.5e8
    raw.pop("stations", None)
    schema = case_json_schema()
    case_from_data(raw)
    jsonschema.validate(raw, schema)
    raw["spacecraft"]["mass_kg"] = 1e308
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(raw, schema)


def test_more_stations_than_the_limit_are_refused(tmp_path, capsys):
    raw = copy.deepcopy(STARTER_DATA)
    one = raw["stations"][0]
    raw["stations"] = [dict(one, name=f"S{k}") for k in range(1001)]
    path = tmp_path / "c.case.json"
    path.write_text(json.dumps(raw))
    assert ": stations = " in (line := summary(capsys, path))
    assert "must have at most 1000 items (has 1001)" in line


# --- nesting --------------------------------------------------------------------------------


@pytest.mark.parametrize("depth", [MAX_JSON_DEPTH + 1, 990, 100_000])
def test_deep_nesting_is_refused_before_parsing(tmp_path, capsys, depth):
    text = starter_text()
    path = tmp_path / "deep.case.json"
    path.write_text(text.rstrip()[:-1] + ', "extra": ' + "[" * depth + "]" * depth + "}")
    line = summary(capsys, path)
    assert f"nested more than {MAX_JSON_DEPTH} deep" in line
    # The place of the first bracket too deep: line and column of the file (1-based).
    last_line = text.rstrip().count("\n") + 1
    assert f"{path}:{last_line}:" in line


def test_nesting_at_the_limit_and_brackets_inside_text_pass_the_depth_check():
    inner = MAX_JSON_DEPTH - 1  # the outer object is the first level
    expected: list = []
    for _ in range(inner - 1):
        expected = [expected]
    assert read_json_text('{"a": ' + "[" * inner + "]" * inner + "}") == {"a": expected}
    with pytest.raises(CaseError, match=f"nested more than {MAX_JSON_DEPTH} deep"):
        read_json_text('{"a": ' + "[" * (inner + 1) + "]" * (inner + 1) + "}")
    title = "[" * 500 + '\\"{' * 50
    assert read_json_text('{"title": "' + title + '"}') == {"title": "[" * 500 + '"{' * 50}
