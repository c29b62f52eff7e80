"""``orbitledger seasons`` end to end, and its figures, on the Kestrel-2 starter case.

Outside references: the J2 nodal rate -3/2 n J2 (R/p)^2 cos i (Vallado 4th ed., Eq. 9-41)
with EGM96 J2 and WGS-84 mu and R; the Sun's mean motion, 360 deg per tropical year of
365.24219 days (from memory); beta* = asin(R / a), the largest |beta| with any shadow for a
circular orbit (common practice).
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pytest

from orbitledger.cli.main import build_parser, main

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "candidate-a.case.json"
MU, R_E, J2 = 398_600.4418, 6378.137, 1.0826267e-3  # WGS-84, WGS-84, EGM96


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main(list(argv))
    out = capsys.readouterr()
    return code, out.out, out.err


def test_help_lists_the_verb() -> None:
    assert "seasons" in build_parser().format_help()


def test_json_drift_and_beta_star(capsys) -> None:
    code, out, _ = _run(
        capsys, "seasons", str(EXAMPLE), "--years", "2", "--step-days", "5", "--json"
    )
    assert code == 0
    data = json.loads(out)
    s = data["summary"]
    # the J2 mean a: the osculating 540 km altitude plus the short-period J2 term, which
    # reaches 3/2 J2 R^2 / a ~ 10 km (Brouwer's theory; common practice)
    a = s["mean_semi_major_axis_km"]
    assert abs(a - (R_E + 540.0)) < 15.0
    n = math.sqrt(MU / a**3)
    nodal = math.degrees(-1.5 * n * J2 * (R_E / a) ** 2 * math.cos(math.radians(97.55))) * 86400
    expected = (nodal - 360.0 / 365.24219) / 15.0 * 365.25  # h per year
    # 0.005 h/yr: the equinox precesses 50 arcsec/yr against the GCRF node (0.0037 h/yr)
    assert s["ltan_drift_h_per_year"] == pytest.approx(expected, abs=0.005)
    assert s["ltan_drift_h_per_year_j2_formula"] == pytest.approx(expected, abs=0.005)
    # a 22:30 sun-synchronous orbit at 540 km is in shadow on every orbit (|beta| < beta*)
    assert s["days_with_shadow"] == s["days"] and s["beta_max_deg"] < math.degrees(
        math.asin(R_E / a)
    )
    assert len(data["daily"]["beta_deg"]) == s["days"] == 147
    assert data["caution"]


@pytest.mark.parametrize(
    "argv, field",
    [
        (["--years", "-1"], "--years"),
        (["--years", "nan"], "--years"),
        (["--step-days", "0"], "--step-days"),
        (["--start", "yesterday"], "--start"),
    ],
)
def test_bad_input_is_one_line_exit_2(capsys, argv, field) -> None:
    code, out, err = _run(capsys, "seasons", str(EXAMPLE), *argv)
    assert code == 2 and out == ""
    lines = [x for x in err.splitlines() if "warning" not in x]
    assert len(lines) == 1 and field in lines[0], err


def test_html_written_once_never_over(tmp_path: Path, capsys) -> None:
    page = tmp_path / "seasons.html"
    code, _, _ = _run(capsys, "seasons", str(EXAMPLE), "--years", "0.5", "--html", str(page))
    text = page.read_text()
    # offline: BokehJS inlined, no script or link loaded from a server (BokehJS itself
    # contains the text of a MathJax CDN address, which is not a request)
    assert code == 0 and "Beta angle" in text
    assert re.search(r"<(script|link)[^>]+(src|href)=[\"']?https?:", text) is None
    before = page.read_bytes()
    code, _, err = _run(capsys, "seasons", str(EXAMPLE), "--years", "0.5", "--html", str(page))
    assert code == 2 and "already exists" in err and page.read_bytes() == before


def test_figure_bands_match_the_seasons() -> None:
    from orbitledger.figures import beta_history_data, node_time_data
    from orbitledger.kernel import Elements, eclipse_seasons, mission_seasons

    # A dawn-dusk 800 km orbit: one eclipse season a year around the December solstice.
    dd = Elements(a_km=R_E + 800.0, e=0.0, i_deg=98.6, raan_deg=270.0, argp_deg=0.0, nu_deg=0.0)
    series = mission_seasons(dd, "2027-03-21T06:00:00Z", 730.0, step_days=2.0)
    data = beta_history_data(series)
    assert len(data["seasons"]["start"]) == len(eclipse_seasons(series)) == 2
    assert len(node_time_data(series)["days"]["ltan_h"]) == series.offset_s.size
