"""Keys, certificates and signed records for the signature tests.

``make_keys(folder)`` makes, through the command line, a team authority, a checker whose
certificate it issues (key encrypted with a passphrase), an approver with a self-signed
certificate, and an impostor who claims the checker's name. ``openssl_verifies`` checks a
detached signature with the ``openssl`` command line (OpenSSL's ``dgst -verify``).
"""

from __future__ import annotations

import base64
import json
import re
import subprocess
from pathlib import Path
from types import SimpleNamespace

from orbitledger.cli.main import main

PASSPHRASE = "correct horse battery staple"
RECORD_SCRIPT = re.compile(r'(<script\b[^>]*id="orbitledger-record"[^>]*>)(.*?)(</script>)', re.S)


def make_keys(folder: Path) -> SimpleNamespace:
    folder.mkdir(parents=True, exist_ok=True)
    pp = folder / "pass.txt"
    pp.write_text(PASSPHRASE + "\n")
    org = ["--org", "Fenwick Orbital Lab"]
    assert main(["keys", "new-ca", "--name", "Fenwick signing authority", *org, "--out", str(folder / "ca")]) == 0
    assert main(["keys", "new", "--name", "C. Checker", *org, "--email", "checker@fenwick.example",
                 "--out", str(folder / "checker"), "--passphrase-file", str(pp),
                 "--ca", str(folder / "ca.key.pem"), "--ca-cert", str(folder / "ca.cert.pem")]) == 0  # fmt: skip
    assert main(["keys", "new", "--name", "A. Approver", *org, "--out", str(folder / "approver")]) == 0
    assert main(["keys", "new", "--name", "C. Checker", *org, "--out", str(folder / "impostor")]) == 0
    trust = folder / "trust.pem"  # the authority, and the approver's own certificate
    trust.write_text((folder / "ca.cert.pem").read_text() + (folder / "approver.cert.pem").read_text())
    return SimpleNamespace(folder=folder, passphrase=pp, trust=trust,
                           **{n: SimpleNamespace(key=folder / f"{n}.key.pem", cert=folder / f"{n}.cert.pem")
                              for n in ("ca", "checker", "approver", "impostor")})  # fmt: skip


def sign_args(keys: SimpleNamespace, who: str) -> list[str]:
    extra = ["--passphrase-file", str(keys.passphrase)] if who == "checker" else []
    person = getattr(keys, who)
    return ["--key", str(person.key), "--cert", str(person.cert), *extra]


def openssl_verifies(entry: dict, tmp: Path) -> str:
    """``openssl dgst -sha256 -verify`` of one detached signature; returns openssl's output."""
    (tmp / "statement.json").write_bytes(entry["statement"].encode("utf-8"))
    (tmp / "signature.der").write_bytes(base64.b64decode(entry["signature"]))
    (tmp / "signer.cert.pem").write_text(entry["certificate_pem"])
    pub = subprocess.run(
        ["openssl", "x509", "-in", str(tmp / "signer.cert.pem"), "-pubkey", "-noout"],
        capture_output=True, text=True, check=True,
    ).stdout  # fmt: skip
    (tmp / "signer.pub.pem").write_text(pub)
    done = subprocess.run(
        ["openssl", "dgst", "-sha256", "-verify", str(tmp / "signer.pub.pem"),
         "-signature", str(tmp / "signature.der"), str(tmp / "statement.json")],
        capture_output=True, text=True,
    )  # fmt: skip
    return done.stdout + done.stderr


def embedded(path: Path) -> dict:
    return json.loads(RECORD_SCRIPT.search(path.read_text(encoding="utf-8")).group(2))


def rewrite_embedded(path: Path, record: dict) -> None:
    """Replace the record JSON embedded in the HTML at ``path`` (a tamperer's edit)."""
    html = path.read_text(encoding="utf-8")
    m = RECORD_SCRIPT.search(html)
    body = json.dumps(record, sort_keys=True).replace("<", "\\u003c")
    path.chmod(0o644)
    path.write_text(html[: m.start(2)] + body + html[m.end(2) :], encoding="utf-8")
