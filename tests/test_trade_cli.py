"""The sweep and disperse verbs end to end: files written, attrs kept, bad input exit 2
without touching an earlier file, an unreachable scheduler refused within its timeout.

The values checked are Kepler's third law with the WGS-84 constants (Curtis 3rd ed., Eq. 2.83)
and numpy's PCG64 stream for the dispersion.
"""

from __future__ import annotations

import math
import time
from pathlib import Path

import numpy as np
import pytest

from orbitledger.cli.main import main
from orbitledger.trade import load_table

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
CASE = str(EXAMPLES / "candidate-a.case.json")
MU_WGS84 = 398600.4418  # km^3/s^2 (NIMA TR8350.2, 3rd ed., Table 3.1)
R_WGS84 = 6378.137  # km (same source)

pytestmark = pytest.mark.filterwarnings("ignore")


@pytest.mark.parametrize("suffix", [".csv", ".parquet"])
def test_sweep_writes_the_table_with_its_attrs(tmp_path, capsys, suffix):
    out = tmp_path / f"sweep{suffix}"
    status = main(
        ["sweep", CASE, "--vary", "orbit.altitude_km=500:600:50", "--vary", "orbit.i_deg=97.4,97.6",
         "--metrics", "period_s,sun_synchronous_offset_deg",
         "--criteria", "sun_synchronous_offset_deg<=0.1", "--out", str(out)]
    )  # fmt: skip
    assert status == 0
    text = capsys.readouterr().out
    assert "sweep: 6 cases, 2 inputs, 2 metrics, in-process" in text and "of 6 pass" in text
    table = load_table(out)
    assert table["orbit.altitude_km"].tolist() == [500.0, 500.0, 550.0, 550.0, 600.0, 600.0]
    a = R_WGS84 + table["orbit.altitude_km"].to_numpy()
    np.testing.assert_allclose(table["period_s"], 2 * math.pi * np.sqrt(a**3 / MU_WGS84), atol=1e-6)
    assert table.attrs["units"]["period_s"] == "s"
    assert table.attrs["criteria"] == ["sun_synchronous_offset_deg <= 0.1"]
    assert table["meets_criteria"].dtype == bool


def test_disperse_is_reproducible_from_its_seed(tmp_path):
    runs = []
    for name in ("one.parquet", "two.parquet"):
        out = tmp_path / name
        args = ["disperse", CASE, "--samples", "300", "--disperse", "orbit.altitude_km=normal:2",
                "--seed", "99", "--metrics", "orbit", "--out", str(out)]  # fmt: skip
        assert main(args) == 0
        runs.append(load_table(out))
    assert runs[0].equals(runs[1]) and runs[0].attrs["seed"] == 99
    rng = np.random.Generator(np.random.PCG64(99))  # numpy's stream is the reference
    np.testing.assert_array_equal(runs[0]["orbit.altitude_km"], rng.normal(540.0, 2.0, 300))


@pytest.mark.parametrize(
    ("args", "words"),
    [
        (["--vary", "orbit.altitude_km=500:600:0"], "step = 0.0: must not be zero"),
        (["--vary", "orbit.altitude_km=600:500:10"], "wrong sign"),
        (["--vary", "orbit.altitud_km=500:600:10"], "orbit.altitud_km: is not an input"),
        (["--vary", "orbit.altitude_km=500:600"], "START:STOP:STEP"),
        (["--vary", "orbit.altitude_km=500:600:10", "--metrics", "nope"], "unknown metric"),
        (["--vary", "orbit.altitude_km=500:600:10", "--criteria", "lifetime_years<=5"],
         "is not among the metrics"),
        (["--vary", "orbit.altitude_km=500:600:10", "--metrics", "repeat_track"], "repeat cycle"),
    ],
)  # fmt: skip
def test_bad_input_exit_2_and_an_earlier_file_kept(tmp_path, capsys, args, words):
    out = tmp_path / "kept.csv"
    out.write_text("earlier results\n")
    assert main(["sweep", CASE, *args, "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert words in err and "Traceback" not in err and len(err.strip().splitlines()) == 1
    assert out.read_text() == "earlier results\n"


def test_bad_output_path_is_refused_before_work(tmp_path, capsys):
    args = ["sweep", CASE, "--vary", "orbit.altitude_km=500:600:10", "--out"]
    assert main([*args, str(tmp_path / "t.xlsx")]) == 2
    assert main([*args, str(tmp_path / "missing" / "t.csv")]) == 2
    assert "does not exist" in capsys.readouterr().err


def test_unreachable_scheduler_is_refused_within_its_timeout(tmp_path, capsys):
    started = time.perf_counter()
    status = main(
        ["sweep", CASE, "--vary", "orbit.altitude_km=500:520:10", "--metrics", "eclipses",
         "--scheduler", "tcp://127.0.0.1:9", "--connect-timeout", "2",
         "--out", str(tmp_path / "t.csv")]
    )  # fmt: skip
    elapsed = time.perf_counter() - started
    assert status == 2
    assert "cannot be reached within 2 s" in capsys.readouterr().err
    assert elapsed < 30.0  # a bound on hanging (the timeout is 2 s), not a speed check
    assert not (tmp_path / "t.csv").exists()
