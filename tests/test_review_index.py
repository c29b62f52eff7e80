"""The review index in a real browser (headless Chromium from file://), history --json, diff --html.

Outside references: the rendered page in Chromium (playwright), what a reader sees: every
record listed, a failing criterion flagged, the changed input highlighted; every request the
browser makes is a file:// one (offline); the CSS colour of a highlighted row is the one the
stylesheet states.
"""

from __future__ import annotations

import copy
import json
import shutil
from pathlib import Path

import pytest
from _record_study import simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.ledger import Ledger, SignOff

from orbitledger.cli.main import main

A, B = "KES2-ORB-001", "KES2-ORB-002"
CHROMIUM = "/usr/bin/chromium"


@pytest.fixture(scope="module")
def ledger_dir(tmp_path_factory):
    folder = tmp_path_factory.mktemp("review")
    study = write_study(folder / "study")
    record_run(study, *simulated_run(study), ledger_dir=folder / "ledger", note="first issue")
    case = study.parent / "candidate-a.case.json"
    data = json.loads(case.read_text())
    data["orbit"]["altitude_km"] = 560.0
    case.write_text(json.dumps(data, indent=2))
    record_run(study, *simulated_run(study), ledger_dir=folder / "ledger", note="20 km higher")
    ledger = Ledger(folder / "ledger")
    for role in ("checked", "approved"):
        html = next(a for a in ledger.artifacts(A, 1) if a.name == "record.html")
        ledger.add_signoff(
            A, 1, SignOff(role, f"{role} person", "2026-01-02T00:00:00Z", html.sha256),
            {f"record-{role}.html": b"<html>%s copy</html>" % role.encode()}, role,
        )  # fmt: skip
    # A second record that carries a failing criterion (as a record with criteria does).
    other = copy.deepcopy(ledger.record(A, 1))
    other.update(record_id=B, title="Kestrel-2 disposal study", history=[])
    other["criteria"] = [
        {"text": "propellant_margin_kg >= 0", "passed": False, "value": -0.54, "unit": "kg"},
        {"text": "lifetime_years <= 5", "passed": True, "value": 4.2, "unit": "yr"},
    ]
    with ledger.new_revision(B) as w:
        other["revision"] = w.revision
        w.write("record.html", b"<html>disposal</html>")
        w.commit(other)
    return folder / "ledger"


def test_history_json_points_to_the_latest_signed_state(ledger_dir, capsys):
    assert main(["history", A, "--json", "--ledger", str(ledger_dir)]) == 0
    doc = json.loads(capsys.readouterr().out)
    first, second = doc["revisions"]
    assert (first["status"], second["status"]) == ("approved", "draft")
    assert first["latest"]["html"] == f"records/{A}/r0001/record-approved.html"
    assert [s["role"] for s in first["signoffs"]] == ["checked", "approved"]
    assert second["changes"][0] == "candidate-a.case.json: orbit.altitude_km changed: 540 -> 560"
    assert main(["history", A, "--ledger", str(ledger_dir)]) == 0
    text = capsys.readouterr().out
    assert (
        f"current state (approved): {ledger_dir.resolve()}/records/{A}/r0001/record-approved.html"
        in text
    )


def test_diff_html_writes_the_side_by_side_page(ledger_dir, tmp_path, capsys):
    out = tmp_path / "diff.html"
    assert main(["diff", A, "1", "2", "--html", str(out), "--ledger", str(ledger_dir)]) == 0
    page = out.read_text()
    assert '<tr class="changed"><td class="mono">orbit.altitude_km</td><td>km</td>' in page
    assert "<script" not in page and "default-src 'none'" in page


@pytest.mark.browser
def test_the_index_in_chromium_lists_flags_and_highlights_offline(ledger_dir, tmp_path):
    if not Path(CHROMIUM).exists():
        pytest.skip("Debian chromium is not installed")
    from playwright.sync_api import sync_playwright

    site = tmp_path / "site"
    assert main(["index", "--ledger", str(ledger_dir), "--out", str(site)]) == 0
    moved = tmp_path / "elsewhere"  # the folder opens from wherever it is copied to
    shutil.copytree(site, moved)
    requests, problems = [], []
    with sync_playwright() as p:
        browser = p.chromium.launch(
            executable_path=CHROMIUM,
            args=["--no-sandbox", "--disable-gpu", "--disable-background-networking"],
        )
        page = browser.new_page()
        page.on("request", lambda r: requests.append(r.url))
        page.on("console", lambda m: problems.append(m.text) if m.type == "error" else None)
        page.goto((moved / "index.html").as_uri())
        rows = page.locator("table.records tbody tr")
        assert rows.count() == 2
        assert [rows.nth(i).get_attribute("id") for i in range(2)] == [A, B]
        assert "1 FAILING" in rows.nth(1).inner_text()
        assert "propellant_margin_kg >= 0: -0.54 kg" in rows.nth(1).inner_text()
        assert "DRAFT" in rows.nth(0).inner_text().upper()
        page.click(f"#{A} a[href='records/{A}.html']")
        assert page.locator("tr#r1").inner_text().count("approved") >= 2
        page.click("tr#r2 a:has-text('side by side')")
        assert page.url.endswith(f"diffs/{A}/r0002.html")
        changed = page.locator("tr.changed", has_text="orbit.altitude_km")
        assert changed.count() == 1
        cells = [changed.locator("td").nth(i).inner_text() for i in range(6)]
        assert cells == ["orbit.altitude_km", "km", "540", "560", "+20", "CHANGED"]
        # review.css: tr.changed td { background: var(--changed) } with --changed: #fff3c4.
        colour = changed.locator("td").first.evaluate("e => getComputedStyle(e).backgroundColor")
        assert colour == "rgb(255, 243, 196)"
        page.screenshot(path=str(tmp_path / "diff.png"), full_page=True)
        browser.close()
    assert requests and all(u.startswith("file://") for u in requests), requests
    assert problems == []
