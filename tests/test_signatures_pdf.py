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


def test_each_stamp_sits_in_its_box_on_the_cover_beside_the_status(signed, tmp_path):
    # The cover reserves one box per role (a link #stamp-ROLE Chromium prints); each PAdES
    # widget must cover exactly its role's box on page 1, and poppler's renderer (outside the
    # project) must draw the stamp there, over the box's "not signed when printed".
    from orbitledger.reporting.sign_pdf import stamp_slot
    from PIL import Image, ImageChops
    from pypdf import PdfReader

    _, folder = signed
    first = PdfReader(folder / "record-approved.pdf").pages[0]
    widgets = {
        str(
            a.get_object().get("/T") or a.get_object()["/Parent"].get_object()["/T"]
        ): a.get_object()
        for a in first["/Annots"]
        if a.get_object().get("/Subtype") == "/Widget"
    }
    assert set(widgets) == {"checked", "approved"}
    height = float(first.mediabox.height)
    text = " ".join(first.extract_text().split())
    assert "DRAFT when printed" in text.replace("draft", "DRAFT")  # status as at printing
    assert "after it was printed" in text  # and where the sign-offs since then are
    for role, widget in widgets.items():
        slot = stamp_slot(first, role)
        assert slot is not None, role
        rect = (
            sorted(float(v) for v in widget["/Rect"][::2]),
            sorted(float(v) for v in widget["/Rect"][1::2]),
        )
        want = ([slot[0], slot[2]], [slot[1], slot[3]])
        assert rect == (pytest.approx(want[0], abs=0.01), pytest.approx(want[1], abs=0.01)), role
        assert height / 2 < slot[1] < slot[3] < height  # on the upper half of the cover
    images = {}
    for name in ("record", "record-approved"):
        subprocess.run(["pdftoppm", "-png", "-r", "72", "-f", "1", "-l", "1", "-singlefile",
                        str(folder / f"{name}.pdf"), str(tmp_path / name)], check=True)  # fmt: skip
        images[name] = Image.open(tmp_path / f"{name}.png").convert("L")
    for role in widgets:
        x0, y0, x1, y1 = stamp_slot(first, role)
        box = (int(x0) + 2, int(height - y1) + 2, int(x1) - 2, int(height - y0) - 2)  # 1 px = 1 pt
        before, after = images["record"].crop(box), images["record-approved"].crop(box)
        assert ImageChops.difference(before, after).getbbox() is not None, role  # stamp drawn
        assert after.getextrema()[0] < 100, role  # dark text of the stamp inside the box


def test_a_signature_not_made_through_the_ledger_is_refused(signed, tmp_path, capsys):
    # Someone signs the approved PDF once more, in the free "prepared" box, with their own
    # self-signed key that claims the checker's name (pyhanko signs it as it signs ours): the
    # PDF signature is valid to pdfsig, but verify refuses it: out of role order, and its
    # certificate is not on the trust list.
    from orbitledger.reporting.keys import load_signer
    from orbitledger.reporting.sign_pdf import sign_pdf

    keys, folder = signed
    impostor = load_signer(keys.impostor.key, keys.impostor.cert)
    data = sign_pdf(
        (folder / "record-approved.pdf").read_bytes(), impostor, "prepared", "2026-12-03T14:00:00Z"
    )
    copy = tmp_path / "record-approved.pdf"
    copy.write_bytes(data)
    assert _pdfsig(copy).count("Signature is Valid.") == 3  # to poppler, a valid signature
    capsys.readouterr()
    assert main(["verify", str(copy), "--trust", str(keys.trust)]) == 1
    diffs = [ln for ln in capsys.readouterr().out.splitlines() if ln.strip().startswith("DIFF")]
    assert any("PDF signature 3, prepared by C. Checker" in ln for ln in diffs), diffs
    assert any("order" in ln.lower() for ln in diffs), diffs
