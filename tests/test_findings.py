"""Findings first: a case's criteria judged in the record, failures on its cover, --strict.

Outside references: the rocket equation (Tsiolkovsky; standard gravity g0 = 9.80665 m/s^2,
3rd CGPM 1901) for the propellant margin a failing finding reports; the HTML is read back with
the standard library's ``html.parser`` (outside the project's templates).
"""

from __future__ import annotations

import json
import math
from html.parser import HTMLParser

import pytest
from _record_study import CASE_NAME, simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.findings import FailingCriteria
from orbitledger.reporting.ledger import Ledger
from orbitledger.reporting.verify import read_record, verify_record

from orbitledger.analysis import case_results
from orbitledger.case import CaseError, case_from_data, load_case
from orbitledger.trade import case_findings


def _case_data(**changes):
    from _record_study import EXAMPLES

    data = json.loads((EXAMPLES / CASE_NAME).read_text())
    data.update(changes)
    return data


def test_a_case_without_criteria_keeps_its_canonical_json_and_fingerprint():
    data = _case_data()
    data.pop("criteria")
    case = case_from_data(data)
    assert case.criteria == [] and '"criteria"' not in case.canonical_json()
    # The same case with an empty list is the same case (one canonical form).
    assert case_from_data({**data, "criteria": []}).fingerprint == case.fingerprint


@pytest.mark.parametrize(
    ("text", "reason"),
    [
        ("propellant_margin_kg => 0", "write RESULT >= VALUE"),
        ("lifetime_years <= budget.disposal.lifetime_limit_years", "is not set in this case"),
        ("lifetime_years <= spacecraft.name", "is not a number"),
        ("lifetime_years <= 25 years", "write RESULT >= VALUE"),
    ],
)
def test_a_bad_criterion_is_refused_naming_its_place(text, reason):
    with pytest.raises(CaseError) as err:
        case_from_data(_case_data(criteria=["contact_min_per_day >= 60", text]), file="a.case.json")
    message = str(err.value)
    assert message.startswith("a.case.json: criteria[1]") and reason in message
    assert "\n" not in message


def test_findings_judge_stated_criteria_and_every_margin():
    # Candidate A with 0.3 kg of propellant: its budget needs more, so the margin is negative
    # and fails although no criterion names it; a threshold read from the case itself
    # (budget.mission_years, 5 yr) fails against its 21-year natural lifetime.
    data = _case_data(criteria=["lifetime_years <= budget.mission_years"])
    data["spacecraft"] = {**data["spacecraft"], "propellant_mass_kg": 0.3}
    case = case_from_data(data)
    results = case_results(case)
    found = {f["criterion"]: f for f in case_findings(case.to_data(), results)}
    assert set(found) == {"lifetime_years <= budget.mission_years", "propellant_margin_kg >= 0"}
    life = found["lifetime_years <= budget.mission_years"]
    assert life["threshold"] == 5.0 and life["threshold_from"] == "budget.mission_years"
    assert not life["passed"] and "(from budget.mission_years)" in life["reason"]
    margin = found["propellant_margin_kg >= 0"]
    # Rocket equation: propellant = m0 (1 - exp(-dv / (Isp g0))), g0 = 9.80665 m/s^2.
    dv_m_s = results["dv_total_km_s"].value * 1000.0
    needed = 48.0 * (1.0 - math.exp(-dv_m_s / (220.0 * 9.80665)))
    assert abs(margin["value"] - (0.3 - needed)) < 1e-6  # kg: the budget's own figure
    assert margin["value"] < 0 and not margin["passed"] and margin["source"] != "case"
    assert margin["reason"].startswith("propellant_margin_kg = -0.")
    # A result the case does not have fails as "not a result", never passes silently.
    (odd,) = case_findings({**case.to_data(), "criteria": ["no_such_result >= 1"]}, results)[:1]
    assert not odd["passed"] and odd["reason"] == "no_such_result is not a result of this case"


class _Text(HTMLParser):
    """The visible text of one element (by id) of an HTML page, scripts and styles left out."""

    def __init__(self, element_id):
        super().__init__()
        self.id, self.depth, self.parts, self.skip = element_id, 0, [], 0

    def handle_starttag(self, tag, attrs):
        if self.depth:
            self.depth += 1
        elif dict(attrs).get("id") == self.id:
            self.depth = 1
        self.skip += tag in ("script", "style")

    def handle_endtag(self, tag):
        self.skip -= tag in ("script", "style")
        if self.depth:
            self.depth -= 1

    def handle_data(self, data):
        if self.depth and not self.skip:
            self.parts.append(data)

    def text(self, page):
        self.feed(page)
        return " ".join("".join(self.parts).split())


@pytest.fixture
def failing_study(tmp_path):
    study = write_study(tmp_path / "study")
    case_path = study.parent / CASE_NAME
    data = json.loads(case_path.read_text())
    data["spacecraft"]["propellant_mass_kg"] = 0.3
    data["criteria"] = ["lifetime_years <= 25"]  # the margin is judged without being named
    case_path.write_text(json.dumps(data))
    return study, tmp_path / "ledger"


def test_a_failing_criterion_shows_on_the_cover_and_strict_refuses_it(failing_study):
    study, ledger = failing_study
    executed, manifest = simulated_run(study)
    with pytest.raises(FailingCriteria) as err:
        record_run(study, executed, manifest, ledger_dir=ledger, strict=True)
    assert "propellant_margin_kg = -0." in str(err.value) and "--accept-failing" in str(err.value)
    assert not (ledger / "index.sqlite").exists() or Ledger(ledger).record_ids() == []

    # Without --strict the record is written, its failures first.
    outcome = record_run(study, executed, manifest, ledger_dir=ledger)
    page = outcome.files["html"].read_text()
    cover = _Text("cover-findings").text(page)
    assert cover.startswith("⚠ 1 of 2 criteria not met")
    assert "candidate-a.case.json: propellant_margin_kg = -0." in cover
    assert "a margin must not be negative" in cover
    findings = _Text("decision").text(page)
    assert findings.index("Findings") < findings.index("Cautions")
    assert "propellant_margin_kg >= 0" in findings and "FAIL" in findings
    assert "not a compliance finding" in findings  # lifetime criteria carry the caution
    record, extras = read_record(outcome.files["html"])
    assert record["findings"]["failing"] == 1 and record["findings"]["accepted_failing"] == ""
    assert verify_record(record, extras).ok


def test_accept_failing_records_the_reason_and_verify_judges_the_findings_again(
    failing_study,
):
    study, ledger = failing_study
    executed, manifest = simulated_run(study)
    reason = "propellant top-up of 0.5 kg agreed with the bus supplier (minutes 2027-03-02)"
    outcome = record_run(
        study, executed, manifest, ledger_dir=ledger, strict=True, accept_failing=reason
    )
    assert outcome.record["findings"]["accepted_failing"] == reason
    cover = _Text("cover-findings").text(outcome.files["html"].read_text())
    assert f"Recorded although failing, because: {reason}" in cover
    record, extras = read_record(outcome.files["html"])
    # A finding turned from fail to pass in the embedded record is caught.
    margin = next(
        f for f in record["findings"]["cases"][0]["findings"] if f["metric"] == "propellant_margin_kg"
    )
    margin["passed"], margin["reason"] = True, ""
    report = verify_record(record, extras)
    assert not report.ok
    assert [c.what for c in report.checks if not c.ok] == ["findings: criteria judged again"]
    with pytest.raises(Exception, match="give the reason in words"):
        record_run(study, executed, manifest, ledger_dir=ledger, accept_failing="  ")


@pytest.mark.slow
def test_build_strict_on_the_command_line_exits_1_and_writes_nothing(failing_study, capsys):
    from orbitledger.cli.main import main

    study, ledger = failing_study
    assert main(["build", str(study), "--strict"]) == 1
    err = capsys.readouterr().err
    assert "--strict: 1 of" in err and "nothing was written to the ledger" in err
    assert Ledger(study.parent / "ledger").record_ids() == []
    assert main(["build", str(study), "--strict", "--accept-failing", "top-up agreed"]) == 0
    (rid,) = Ledger(study.parent / "ledger").record_ids()
    kept = Ledger(study.parent / "ledger").record(rid, 1)
    assert kept["findings"]["accepted_failing"] == "top-up agreed"
    assert load_case(study.parent / CASE_NAME).spacecraft.propellant_mass_kg == 0.3
