"""PAdES signatures on the PDF record, checked by poppler's ``pdfsig`` (outside the project).

A record printed to PDF is signed by the checker, then the approver, each as an incremental
update; ``pdfsig`` (poppler-utils) must report "Signature is Valid" for both, and one byte
changed outside the signatures must make ``orbitledger verify`` exit 1.
"""

from __future__ import annotations

import shutil
import subprocess

import pytest
from _record_study import simulated_run, write_study
from _signing import make_keys, sign_args
from orbitledger.reporting.build import record_run
from orbitledger.reporting.render_pdf import find_browser

from orbitledger.cli.main import main

RID = "KES2-ORB-001"
pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(find_browser() is None, reason="no Chromium to print with"),
    pytest.mark.skipif(shutil.which("pdfsig") is None, reason="no pdfsig (poppler-utils)"),
]


@pytest.fixture(scope="module")
def signed(tmp_path_factory):
    folder = tmp_path_factory.mktemp("signed-pdf")
    keys = make_keys(folder / "keys")
    study = write_study(folder / "study")
    executed, manifest = simulated_run(study)
    outcome = record_run(
        study, executed, manifest, to=("html", "pdf"), ledger_dir=folder / "ledger"
    )
    assert outcome.messages == []
    ledger = folder / "ledger"
    for role, who in (("checked", "checker"), ("approved", "approver")):
        argv = ["sign", RID, "1", "--role", role, *sign_args(keys, who), "--ledger", str(ledger)]
        assert main(argv) == 0
    return keys, ledger / "records" / RID / "r0001"


def _pdfsig(path):
    return subprocess.run(["pdfsig", str(path)], capture_output=True, text=True).stdout


def test_pdfsig_finds_both_signatures_valid_in_order(signed, capsys):
    keys, folder = signed
    out = _pdfsig(folder / "record-approved.pdf")
    # poppler's pdfsig prints one block per signature, in file order
    assert out.count("Signature is Valid.") == 2, out
    assert out.index("C. Checker") < out.index("A. Approver"), out
    assert "Signature Type: ETSI.CAdES.detached" in out  # PAdES (ETSI EN 319 142-1) sub-filter
    assert "Total document signed" in out  # the approver's signature covers the whole file
    checked = _pdfsig(folder / "record-checked.pdf")
    assert checked.count("Signature is Valid.") == 1, checked
    capsys.readouterr()
    assert main(["verify", str(folder / "record-approved.pdf"), "--trust", str(keys.trust)]) == 0
    text = capsys.readouterr().out
    assert "checked by C. Checker" in text and "approved by A. Approver" in text


def test_one_byte_changed_outside_the_signatures_is_named(signed, tmp_path, capsys):
    keys, folder = signed
    data = bytearray((folder / "record-approved.pdf").read_bytes())
    at = data.index(b"/Producer")  # inside the first revision's metadata, no signature's bytes
    data[at + 1] = ord("Q")
    copy = tmp_path / "record-approved.pdf"
    copy.write_bytes(bytes(data))
    assert "Signature is Valid." not in _pdfsig(copy)  # poppler agrees the file changed
    capsys.readouterr()
    assert main(["verify", str(copy), "--trust", str(keys.trust)]) == 1
    out = capsys.readouterr().out
    assert (
        "PDF signature 1, checked by C. Checker: the signed bytes changed after signing" in out
    ), out
    assert "PDF signature 2, approved by A. Approver: the signed bytes changed after signing" in out
