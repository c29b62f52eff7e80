"""PDF signatures: PAdES baseline B-B (ETSI EN 319 142-1) through pyhanko, one per sign-off.

``sign_pdf(pdf, signer, role, time_utc)`` appends an incremental update to ``pdf`` holding a
new signature field named after the role (``prepared``, ``checked``, ``approved``) and its
signature: the bytes before it are left exactly as they were, so an earlier signature stays
valid when a later one is added (ISO 32000-1, 12.8: a signature covers the file up to its own
revision). The reason of the signature is the role; the signer's name is the certificate's.
Its visible stamp ("CHECKED by NAME", organisation, time, the certificate's SHA-256, on white)
covers the role's box in the sign-off area that the printed cover reserves next to its status
(``stamp_slot``: the box's place is the rectangle of the link ``#stamp-ROLE`` Chromium prints
for it), so a printed record shows who signed, where a reader looks for the status. A PDF
printed without that area gets the stamp in the top margin of page 1 (``stamp_box``).

pyhanko runs on asyncio; called from a running event loop (a notebook), the signing runs in a
worker thread.
"""

from __future__ import annotations

import io
import threading
from collections.abc import Callable
from typing import Any

from cryptography.hazmat.primitives import serialization

from orbitledger.kernel.errors import InputError

from .keys import Signer

__all__ = ["ROLE_ORDER", "outside_event_loop", "sign_pdf", "stamp_box", "stamp_slot"]

ROLE_ORDER = ("prepared", "checked", "approved")


def outside_event_loop(fn: Callable[[], Any]) -> Any:
    """``fn()``, in a worker thread when this thread runs an asyncio loop (pyhanko needs its own)."""
    import asyncio

    try:
        asyncio.get_running_loop()
    except RuntimeError:
        return fn()
    box: dict[str, Any] = {}

    def work() -> None:
        try:
            box["value"] = fn()
        except BaseException as err:  # handed back to the caller's thread
            box["error"] = err

    thread = threading.Thread(target=work, name="orbitledger-sign")
    thread.start()
    thread.join()
    if "error" in box:
        raise box["error"]
    return box["value"]


def stamp_box(role: str, width_pt: float, height_pt: float) -> tuple[float, float, float, float]:
    """The box of ``role``'s stamp in the top margin of page 1: three boxes side by side inside
    the record's 15 mm side margins and its 16 mm top margin (record.css ``@page``)."""
    margin = 15 / 25.4 * 72
    gap = 6.0
    width = (width_pt - 2 * margin - 2 * gap) / 3
    x0 = margin + ROLE_ORDER.index(role) * (width + gap)
    return (x0, height_pt - 40.0, x0 + width, height_pt - 7.0)


def stamp_slot(page: Any, role: str) -> tuple[float, float, float, float] | None:
    """The box the cover reserves for ``role``'s stamp on ``page`` (a pypdf page), or None."""
    for annot in page.get("/Annots") or []:
        a = annot.get_object()
        if a.get("/Subtype") == "/Link" and str(a.get("/Dest", "")).lstrip("/") == f"stamp-{role}":
            x0, y0, x1, y1 = (float(v) for v in a["/Rect"])
            return (min(x0, x1), min(y0, y1), max(x0, x1), max(y0, y1))
    return None


def _asn1(signer: Signer) -> tuple[Any, Any, list[Any]]:
    from asn1crypto import keys as akeys
    from asn1crypto import x509 as ax509

    der = serialization.Encoding.DER
    key = akeys.PrivateKeyInfo.load(
        signer.key.private_bytes(
            der, serialization.PrivateFormat.PKCS8, serialization.NoEncryption()
        )
    )
    cert = ax509.Certificate.load(signer.cert.public_bytes(der))
    chain = [ax509.Certificate.load(c.public_bytes(der)) for c in signer.chain]
    return key, cert, chain


def sign_pdf(pdf: bytes, signer: Signer, role: str, time_utc: str) -> bytes:
    """``pdf`` with one more signature, by ``signer`` as ``role`` (see the module docstring)."""
    from pyhanko.pdf_utils.content import RawContent
    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter
    from pyhanko.pdf_utils.layout import (
        AxisAlignment,
        BoxConstraints,
        InnerScaling,
        Margins,
        SimpleBoxLayoutRule,
    )
    from pyhanko.pdf_utils.reader import PdfFileReader
    from pyhanko.pdf_utils.text import TextBoxStyle
    from pyhanko.sign import fields, signers
    from pyhanko.stamp import TextStampStyle
    from pyhanko_certvalidator.registry import SimpleCertificateStore

    if role not in ROLE_ORDER:
        raise InputError("--role", role, "choose prepared, checked or approved")
    try:
        from pypdf import PdfReader

        taken = {s.field_name for s in PdfFileReader(io.BytesIO(pdf)).embedded_signatures}
        first = PdfReader(io.BytesIO(pdf)).pages[0]
        box = first.mediabox  # inherited boxes resolved
        width, height = float(box.width), float(box.height)
        place = stamp_slot(first, role) or stamp_box(role, width, height)
    except Exception as err:  # pyhanko raises several kinds for a damaged file
        raise InputError("record.pdf", None, f"cannot be read to sign it: {err}") from None
    if role in taken:
        raise InputError("--role", role, "the PDF carries a signature of this role already")
    key, cert, chain = _asn1(signer)
    simple = signers.SimpleSigner(
        signing_cert=cert,
        signing_key=key,
        cert_registry=SimpleCertificateStore.from_certs([cert, *chain]),
    )
    meta = signers.PdfSignatureMetadata(
        field_name=role,
        reason=role,
        md_algorithm="sha256",
        subfilter=fields.SigSeedSubFilter.PADES,
    )
    org = "\n" + signer.org.replace("%", "%%") if signer.org else ""  # the stamp text is a %-template
    style = TextStampStyle(
        stamp_text=(
            f"{role.upper()} by {signer.name.replace('%', '%%')}{org}\n{time_utc}\n"
            f"certificate SHA-256 {signer.fingerprint[:16]}"
        ),
        text_box_style=TextBoxStyle(font_size=7),
        border_width=1,
        # opaque white under the text: the reserved box's "not signed when printed" is covered
        background=RawContent(b"1 1 1 rg 0 0 10 10 re f", box=BoxConstraints(10, 10)),
        background_opacity=1.0,
        background_layout=SimpleBoxLayoutRule(
            x_align=AxisAlignment.ALIGN_MID,
            y_align=AxisAlignment.ALIGN_MID,
            margins=Margins(),
            inner_content_scaling=InnerScaling.STRETCH_FILL,
        ),
    )
    spec = fields.SigFieldSpec(sig_field_name=role, on_page=0, box=place)
    pdf_signer = signers.PdfSigner(meta, simple, stamp_style=style, new_field_spec=spec)

    def run() -> bytes:
        writer = IncrementalPdfFileWriter(io.BytesIO(pdf))
        return pdf_signer.sign_pdf(writer).getvalue()

    try:
        return outside_event_loop(run)
    except InputError:
        raise
    except Exception as err:  # pyhanko raises several kinds for a PDF it cannot extend
        raise InputError("record.pdf", None, f"signing failed: {err}") from None
