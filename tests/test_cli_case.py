"""The case verbs of the command line: new, summary, schema; every bad input of issue 2.

A refused input: exit status 2, exactly one line on stderr naming the file, the field path,
the value and the reason, no traceback, and the file on disk unchanged. Outside references:
``jsonschema`` for the printed schema; WGS-84 (NIMA TR8350.2) mu and radius and Kepler's
third law T = 2 pi sqrt(a^3 / mu) (common practice) for the printed period.
"""

from __future__ import annotations

import copy
import json
import math
import subprocess
import sys

import jsonschema
import pytest

from orbitledger.case import starter_case
from orbitledger.case.starter import STARTER_DATA
from orbitledger.cli.main import main


def run(capsys, *argv):
    status = main(list(argv))
    out, err = capsys.readouterr()
    return status, out, err


def write(tmp_path, raw, name="cand.case.json"):
    path = tmp_path / name
    path.write_text(raw if isinstance(raw, str) else json.dumps(raw, indent=2))
    return path


def starter(**orbit_fields):
    raw = copy.deepcopy(STARTER_DATA)
    raw["orbit"].update(orbit_fields)
    raw["orbit"] = {k: v for k, v in raw["orbit"].items() if v is not None}
    return raw


def _set(raw, section, field, value):
    raw[section][field] = value
    return raw


def _drop(raw, key):
    raw.pop(key)
    return raw


BAD_INPUTS = [
    # (id, file text or data, field path, shown value, words of the reason)
    ("nan", starter(e=math.nan), "orbit.e", "nan", "finite"),
    (
        "inf",
        _set(copy.deepcopy(STARTER_DATA), "window", "duration_s", math.inf),
        "window.duration_s",
        "inf",
        "finite",
    ),
    ("negative e", starter(e=-0.01), "orbit.e", "-0.01", ">= 0"),
    (
        "negative mass",
        _set(copy.deepcopy(STARTER_DATA), "spacecraft", "mass_kg", -48.0),
        "spacecraft.mass_kg",
        "-48.0",
        "> 0",
    ),
    (
        "negative area",
        _set(copy.deepcopy(STARTER_DATA), "spacecraft", "drag_area_m2", -0.1),
        "spacecraft.drag_area_m2",
        "-0.1",
        "> 0",
    ),
    (
        "negative isp",
        _set(copy.deepcopy(STARTER_DATA), "spacecraft", "isp_s", -220.0),
        "spacecraft.isp_s",
        "-220.0",
        "> 0",
    ),
    ("e>=1 with a>0", starter(altitude_km=None, a_km=7000.0, e=1.3), "orbit.a_km", "7000.0", "< 0"),
    (
        "e<1 with a<0",
        starter(altitude_km=None, a_km=-7000.0, e=0.3),
        "orbit.a_km",
        "-7000.0",
        "> 0",
    ),
    ("inclination", starter(i_deg=181.0), "orbit.i_deg", "181.0", "<= 180"),
    ("unknown field", starter(e=None, ecc=0.001), "orbit.ecc", None, "did you mean 'e'?"),
    ("wrong type", starter(e="0.001"), "orbit.e", "'0.001'", "must be a number"),
    (
        "missing epoch",
        _drop(copy.deepcopy(STARTER_DATA), "epoch_utc"),
        "epoch_utc",
        None,
        "required field is missing",
    ),
    (
        "bad epoch",
        dict(copy.deepcopy(STARTER_DATA), epoch_utc="2027-13-01T00:00:00Z"),
        "epoch_utc",
        "'2027-13-01T00:00:00Z'",
        "bad month",
    ),
]


@pytest.mark.parametrize(
    ("label", "raw", "where", "shown", "words"), BAD_INPUTS, ids=[b[0] for b in BAD_INPUTS]
)
def test_summary_refuses_bad_input_with_one_line(tmp_path, capsys, label, raw, where, shown, words):
    path = write(tmp_path, raw)
    before = path.read_bytes()
    status, out, err = run(capsys, "summary", str(path))
    assert status == 2 and out == ""
    assert err.count("\n") == 1 and "Traceback" not in err
    line = err.strip()
    assert line.startswith(f"orbitledger summary: {path}: {where}")
    if shown is not None:
        assert f"{where} = {shown}: " in line
    assert words in line
    assert path.read_bytes() == before


@pytest.mark.parametrize(
    ("text", "where"),
    [
        (
            '{\n  "schema": "orbitledger.case/1",\n  "meta": {\n    "title": "x",,\n',
            ":4:18: malformed JSON",
        ),
        (
            '{"schema": "orbitledger.case/1", "epoch_utc": NaN}',
            ": epoch_utc = nan: must be a finite",
        ),
    ],
)
def test_malformed_json_is_named_by_line_and_column(tmp_path, capsys, text, where):
    path = write(tmp_path, text)
    status, out, err = run(capsys, "summary", str(path))
    assert status == 2 and out == "" and err.count("\n") == 1
    assert err.startswith(f"orbitledger summary: {path}{where}")
    assert "column" in err or ":4:18:" in err


def test_a_missing_file_and_a_newer_schema(tmp_path, capsys):
    status, _, err = run(capsys, "summary", str(tmp_path / "absent.case.json"))
    assert status == 2 and "no such case file" in err and err.count("\n") == 1
    path = write(tmp_path, dict(copy.deepcopy(STARTER_DATA), schema="orbitledger.case/2"))
    status, _, err = run(capsys, "summary", str(path))
    assert status == 2 and "schema = 'orbitledger.case/2'" in err and "newer orbitledger" in err


def test_new_writes_the_starter_case_and_never_overwrites(tmp_path, capsys):
    path = tmp_path / "kestrel.case.json"
    status, out, err = run(capsys, "new", str(path))
    assert status == 0 and err == "" and str(path) in out
    written = json.loads(path.read_text())
    assert written["orbit"]["form"] == "classical"
    before = path.read_bytes()
    status, out, err = run(capsys, "new", str(path))
    assert status == 2 and out == "" and err.count("\n") == 1
    assert f"{path}: already exists; not overwritten" in err
    assert path.read_bytes() == before
    status, _, err = run(capsys, "new", str(tmp_path / "no-such-folder" / "x.case.json"))
    assert status == 2 and "does not exist" in err


def test_summary_table_shows_units_and_the_period(tmp_path, capsys):
    path = tmp_path / "kestrel.case.json"
    run(capsys, "new", str(path))
    status, out, err = run(capsys, "summary", str(path))
    assert status == 0 and err == ""
    assert "KES2-ORB-001" in out and "semi-major axis a" in out and " km" in out
    assert "period" in out and "caution:" in out
    # WGS-84 mu and radius (NIMA TR8350.2); Kepler's third law.
    a_km = 6378.137 + 540.0
    period_s = 2.0 * math.pi * math.sqrt(a_km**3 / 398600.4418)
    line = next(line for line in out.splitlines() if line.strip().startswith("period "))
    assert abs(float(line.split()[1]) - period_s) < 1e-3  # 1 ms

    # Heights name their reference: periapsis altitude = radius - 6378.137 km (WGS-84 a).
    def value(label: str) -> float:
        row = next(ln for ln in out.splitlines() if ln.strip().startswith(label + "  "))
        return float(row.split()[-2])

    alt = value("periapsis altitude (above the equatorial radius)")
    assert alt == pytest.approx(value("periapsis radius") - 6378.137, abs=1e-5)


def test_summary_json(tmp_path, capsys):
    path = tmp_path / "kestrel.case.json"
    run(capsys, "new", str(path))
    status, out, _ = run(capsys, "summary", str(path), "--json")
    assert status == 0
    data = json.loads(out)
    assert data["fingerprint"] == starter_case().fingerprint
    assert data["elements"]["a_km"] == pytest.approx(6918.137, abs=1e-9)
    assert data["summary"]["period_s"] == pytest.approx(
        2.0 * math.pi * math.sqrt(6918.137**3 / 398600.4418), abs=1e-6
    )
    assert data["warnings"] == []


def test_summary_warns_of_a_periapsis_inside_the_body(tmp_path, capsys):
    # a (1 - e) = 6700 * 0.97 = 6499 km ... inside for e = 0.05: 6365 km < 6378.137 km (WGS-84).
    path = write(tmp_path, starter(altitude_km=None, a_km=6700.0, e=0.05))
    status, out, err = run(capsys, "summary", str(path))
    assert status == 0 and err == ""
    warnings = [line for line in out.splitlines() if line.startswith("warning: ")]
    assert warnings and any("periapsis" in line.lower() for line in warnings)
    status, out, _ = run(capsys, "summary", str(path), "--json")
    assert json.loads(out)["warnings"]


def test_schema_verb_prints_a_schema_that_validates_the_starter_case(capsys):
    status, out, _ = run(capsys, "schema")
    assert status == 0
    schema = json.loads(out)
    jsonschema.Draft202012Validator.check_schema(schema)
    jsonschema.validate(json.loads(starter_case().to_json()), schema)


@pytest.mark.parametrize("verb", ["new", "summary", "schema"])
def test_every_verb_has_help(capsys, verb):
    with pytest.raises(SystemExit) as caught:
        main([verb, "--help"])
    assert caught.value.code == 0
    assert f"orbitledger {verb}" in capsys.readouterr().out


def test_the_installed_command_prints_one_line_and_no_traceback(tmp_path):
    path = write(tmp_path, starter(e=-1.0))
    before = path.read_bytes()
    done = subprocess.run(
        [sys.executable, "-m", "orbitledger", "summary", str(path)],
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode == 2 and done.stdout == ""
    assert done.stderr == (
        f"orbitledger summary: {path}: orbit.e = -1.0: must be >= 0 (the allowed range is [0, 1000])\n"
    )
    assert path.read_bytes() == before
