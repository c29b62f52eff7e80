"""Estimates before work (issue 16): a window, a propagation or a trade study over a limit is
refused with one line giving the estimate, the limit and what to change, before any work.

Outside references: IEEE 754 binary64 (a float64 sample is 8 bytes, so a window of N epochs
holds at least 8 N bytes of sample times and 24 N of positions); IEC 80000-13 binary prefixes
(1 GiB = 2**30 bytes) and SI prefixes (1 MB = 10**6 bytes) for the limit's spelling; Kepler's
third law for the period (T = 2 pi sqrt(a^3 / GM), GM = 398600.4418 km^3/s^2, IERS
Conventions 2010) behind the number of eclipse samples. The limits themselves are stated in
docs/case-file.md ("Work limits"), common practice for a desktop tool.
"""

from __future__ import annotations

import copy
import json
import math
import time

import pytest

from orbitledger.analysis.estimates import (
    DEFAULT_MEMORY_LIMIT_BYTES,
    MEMORY_LIMIT_ENV,
    WORK_LIMIT_ENV,
    memory_limit_bytes,
    window_estimate,
    work_limit,
)
from orbitledger.case.model import case_from_data
from orbitledger.case.starter import STARTER_DATA
from orbitledger.cli.main import main

TEN_YEARS_S = 3650 * 86_400.0


def _write(tmp_path, data, name="hostile.case.json"):
    path = tmp_path / name
    path.write_text(json.dumps(data), encoding="utf-8")
    return path


def _with(**sections):
    data = copy.deepcopy(STARTER_DATA)
    for key, value in sections.items():
        data[key] = value
    return data


def _refused(capsys, argv, path):
    status = main(argv)
    out, err = capsys.readouterr()
    assert status == 2 and out == "", (status, out, err)
    assert err.count("\n") == 1 and "Traceback" not in err, err
    assert f": {path}: " in err, err  # the file is named
    return err.strip()


@pytest.mark.parametrize("verb", ["passes", "groundtrack", "ephemeris"])
def test_a_ten_year_window_at_one_second_is_refused_with_the_estimate(tmp_path, capsys, verb):
    path = _write(tmp_path, _with(window={"duration_s": TEN_YEARS_S, "step_s": 1.0}))
    line = _refused(capsys, [verb, str(path)], path)
    assert "window.step_s = 1.0: over 3650 days would need" in line, line
    assert f"(limit 512 MiB, {MEMORY_LIMIT_ENV}); use a larger step or a shorter window" in line
    # The estimate is at least the sample times and positions: 8 + 24 bytes an epoch (IEEE 754).
    case = case_from_data(_with(window={"duration_s": TEN_YEARS_S, "step_s": 1.0}))
    epochs = TEN_YEARS_S / 1.0 + 1
    assert window_estimate(case, verb).bytes >= 32 * epochs


def test_a_millisecond_step_over_a_day_is_refused_and_a_nanosecond_step_by_range(tmp_path, capsys):
    path = _write(tmp_path, _with(window={"duration_s": 86_400.0, "step_s": 1e-3}))
    assert "window.step_s = 0.001: over 1 days would need" in _refused(
        capsys, ["passes", str(path)], path
    )
    path = _write(tmp_path, _with(window={"duration_s": 86_400.0, "step_s": 1e-9}), "ns.case.json")
    assert "window.step_s = 1e-09: must be >= 0.001" in _refused(
        capsys, ["passes", str(path)], path
    )


def test_many_stations_over_a_long_window_name_the_stations(tmp_path, capsys):
    station = STARTER_DATA["stations"][0]
    stations = [dict(station, name=f"Site {k}") for k in range(1000)]
    data = _with(stations=stations, window={"duration_s": 30 * 86_400.0, "step_s": 10.0})
    path = _write(tmp_path, data)
    line = _refused(capsys, ["passes", str(path)], path)
    assert "stations = '1,000 stations': over 30 days would need" in line, line
    assert "use fewer stations, a larger step or a shorter window" in line


def test_the_eclipse_search_samples_360_points_an_orbit(tmp_path, capsys):
    """Samples = window / (T / 360), T from Kepler's third law for a = R + 540 km."""
    case = case_from_data(_with(window={"duration_s": TEN_YEARS_S, "step_s": 10.0}))
    a_km = 6378.137 + 540.0  # WGS-84 equatorial radius
    period_s = 2 * math.pi * math.sqrt(a_km**3 / 398600.4418)
    assert window_estimate(case, "eclipses").evaluations == pytest.approx(
        TEN_YEARS_S / (period_s / 360.0), rel=1e-6
    )
    path = _write(tmp_path, _with(window={"duration_s": TEN_YEARS_S, "step_s": 10.0}))
    line = _refused(capsys, ["eclipses", str(path)], path)
    assert "window.duration_s = 315360000.0: over 3650 days would need" in line, line
    assert "the seasons verb covers months and years" in line


def test_a_numerical_year_is_refused_by_the_work_limit_ten_years_by_memory(tmp_path, capsys):
    data = _with(window={"duration_s": 365 * 86_400.0, "step_s": 60.0})
    data["force_model"] = dict(STARTER_DATA.get("force_model", {}), propagator="numerical")
    path = _write(tmp_path, data)
    line = _refused(capsys, ["eclipses", str(path)], path)
    assert "window.duration_s = 31536000.0: over 365 days would need about" in line, line
    assert f"evaluations for the numerical propagation (limit 1e+09, {WORK_LIMIT_ENV})" in line
    assert 'force_model.propagator "j2-mean"' in line
    data["window"] = {"duration_s": TEN_YEARS_S, "step_s": 60.0}
    path = _write(tmp_path, data)
    line = _refused(capsys, ["passes", str(path)], path)
    assert "over 3650 days would need 1.03 GiB for the numerical propagation" in line, line


def test_the_limits_follow_the_environment(tmp_path, capsys, monkeypatch):
    assert memory_limit_bytes() == DEFAULT_MEMORY_LIMIT_BYTES == 512 * 2**20
    monkeypatch.setenv(MEMORY_LIMIT_ENV, "2GiB")
    assert memory_limit_bytes() == 2 * 2**30  # IEC binary prefix
    monkeypatch.setenv(MEMORY_LIMIT_ENV, "800MB")
    assert memory_limit_bytes() == 800e6  # SI prefix
    monkeypatch.setenv(WORK_LIMIT_ENV, "5e6")
    assert work_limit() == 5e6
    # The starter case (one day at 10 s, three stations) passes by default, not under 1 MiB.
    path = _write(tmp_path, copy.deepcopy(STARTER_DATA))
    monkeypatch.delenv(MEMORY_LIMIT_ENV)
    monkeypatch.delenv(WORK_LIMIT_ENV)
    assert main(["passes", str(path)]) == 0
    capsys.readouterr()
    monkeypatch.setenv(MEMORY_LIMIT_ENV, "1MiB")
    line = _refused(capsys, ["passes", str(path)], path)
    assert f"(limit 1 MiB, {MEMORY_LIMIT_ENV})" in line, line
    monkeypatch.setenv(MEMORY_LIMIT_ENV, "lots")
    assert f"{MEMORY_LIMIT_ENV} = 'lots': must be a size such as 512MiB" in _refused(
        capsys, ["passes", str(path)], path
    )


def test_a_billion_case_grid_and_a_long_contact_sweep_are_refused(tmp_path, capsys):
    path = _write(tmp_path, copy.deepcopy(STARTER_DATA))
    out = str(tmp_path / "out.csv")
    argv = ["sweep", str(path), "--vary", "orbit.altitude_km=400:900:0.0000005", "--out", out]
    status = main(argv)
    _, err = capsys.readouterr()
    assert status == 2 and err.count("\n") == 1, err
    assert "orbit.altitude_km step = 5e-07: makes 1,000,000,001 values, 7.45 GiB" in err, err
    argv = ["sweep", str(path), "--vary", "orbit.altitude_km=400:900:0.01"]
    status = main([*argv, "--metrics", "contacts", "--out", out])
    _, err = capsys.readouterr()
    assert status == 2 and err.count("\n") == 1, err
    assert "vary = '50,001 cases': would need about" in err and WORK_LIMIT_ENV in err, err
    assert not (tmp_path / "out.csv").exists()


def test_verify_refuses_a_self_consistent_record_over_the_limits_before_recomputing(
    tmp_path, capsys
):
    import hashlib

    from reporting.record import RECORD_SCHEMA

    case = case_from_data(_with(window={"duration_s": TEN_YEARS_S, "step_s": 1.0}))
    canonical = case.canonical_json()
    record = {
        "schema": RECORD_SCHEMA,
        "record_id": "KES2-HOSTILE",
        "revision": 1,
        "inputs": [
            {
                "name": "hostile.case.json",
                "canonical": canonical,
                "fingerprint": hashlib.sha256(canonical.encode("utf-8")).hexdigest(),
            }
        ],
    }
    path = tmp_path / "hostile.record.json"
    path.write_text(json.dumps(record), encoding="utf-8")
    started = time.perf_counter()
    status = main(["verify", str(path)])
    elapsed = time.perf_counter() - started
    out, err = capsys.readouterr()
    assert status == 1, (out, err)
    assert "input hostile.case.json: within the work limits" in out + err
    assert "over 3650 days would need" in out + err and MEMORY_LIMIT_ENV in out + err
    assert "not recomputed" in out + err
    print(f"verify refused in {elapsed:.2f} s")  # reported, not asserted (RULES: no timing)


def test_an_oem_export_at_a_millisecond_step_is_refused_before_sampling(tmp_path, capsys):
    path = _write(tmp_path, copy.deepcopy(STARTER_DATA))
    out = tmp_path / "k.oem"
    status = main(["export", "--format", "oem", "--step", "0.001", str(path), "-o", str(out)])
    _, err = capsys.readouterr()
    assert status == 2 and err.count("\n") == 1, err
    assert "step_s = 0.001: over 1 days would need" in err and "for the ephemeris" in err, err
    assert not out.exists()


def test_a_century_of_seasons_every_hundredth_of_a_day_is_refused_by_the_work_limit(
    tmp_path, capsys
):
    # 100 years x 365.25 days / 0.01 day = 3.65e6 orbits, 720 samples each (kernel.seasons).
    path = _write(tmp_path, copy.deepcopy(STARTER_DATA))
    status = main(["seasons", str(path), "--years", "100", "--step-days", "0.01"])
    _, err = capsys.readouterr()
    assert status == 2 and err.count("\n") == 1, err
    assert "--step-days = 0.01: over 100 years would need about 2.63e+09 evaluations" in err, err
    assert "use a larger --step-days or fewer --years" in err


def test_a_numerical_window_ten_years_after_the_epoch_names_the_start(tmp_path, capsys):
    # Integrated from the epoch (2027-03-21) to the window's end: 3,654 days, ~5,700 s orbits.
    data = _with(window={"start_utc": "2037-03-21T10:30:00Z", "duration_s": 86_400.0})
    data["force_model"] = dict(STARTER_DATA.get("force_model", {}), propagator="numerical")
    path = _write(tmp_path, data)
    line = _refused(capsys, ["passes", str(path)], path)
    assert "window.start_utc = '2037-03-21T10:30:00Z': over 3654 days from the epoch" in line, line
    assert "start the window nearer the epoch" in line


def test_a_sweep_result_over_the_memory_limit_is_refused_with_the_estimate(
    tmp_path, capsys, monkeypatch
):
    path = _write(tmp_path, copy.deepcopy(STARTER_DATA))
    out = tmp_path / "out.csv"
    big = ["sweep", str(path), "--vary", "orbit.altitude_km=400:600:0.1",
           "--vary", "orbit.i_deg=90:100:0.005", "--out", str(out)]  # fmt: skip
    line = _refused(capsys, big, path)
    # 2,001 x 2,001 cases, 29 columns of float64 held three times over:
    # 4,004,001 x 29 x 8 x 3 bytes = 2.79e9 bytes = 2.6 GiB (plain arithmetic).
    assert 4_004_001 * 29 * 8 * 3 / 2**30 == pytest.approx(2.6, abs=0.005)
    assert "vary = '4,004,001 cases': at 29 columns a case would need 2.6 GiB" in line, line
    assert f"(limit 512 MiB, {MEMORY_LIMIT_ENV}); coarsen the grid" in line, line
    assert not out.exists()
    small = ["sweep", str(path), "--vary", "orbit.altitude_km=500:600:50", "--out", str(out)]
    assert main(small) == 0 and out.exists()  # 3 cases: 2,016 bytes, well under 512 MiB
    capsys.readouterr()
    out.unlink()
    monkeypatch.setenv(MEMORY_LIMIT_ENV, "1KiB")  # the same budget as every heavy verb
    line = _refused(capsys, small, path)
    # one input: 28 columns; 3 x 28 x 8 x 3 = 2,016 bytes = 1.97 KiB (plain arithmetic)
    assert 3 * 28 * 8 * 3 / 2**10 == pytest.approx(1.97, abs=0.005)
    assert "at 28 columns a case would need 1.97 KiB for the trade study's results" in line
    assert f"(limit 1 KiB, {MEMORY_LIMIT_ENV})" in line, line
    assert not out.exists()
    monkeypatch.setenv(MEMORY_LIMIT_ENV, "2GiB")
    assert f"(limit 2 GiB, {MEMORY_LIMIT_ENV})" in _refused(capsys, big, path)
    monkeypatch.setenv(MEMORY_LIMIT_ENV, "3GiB")  # checked, not built: an estimate alone
    from orbitledger.trade.evaluate import refuse_if_too_large

    refuse_if_too_large(4_004_001, 2, ("orbit", "j2"))
