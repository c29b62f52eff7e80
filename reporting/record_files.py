"""Reading a record from its PDF (the attached ``record.json``) or from its JSON file alone.

Both return ``(record, extras)`` as ``verify.read_record`` does; a damaged file is bad input.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from orbitledger.kernel.errors import InputError

__all__ = ["read_json_record", "read_pdf_record"]


def read_json_record(path: Path, text: str) -> tuple[dict[str, Any], dict[str, Any]]:
    try:
        return json.loads(text), {"kind": "json"}
    except json.JSONDecodeError as err:
        raise InputError("RECORD", str(path), f"the record JSON does not parse: {err}") from None


def read_pdf_record(path: Path) -> tuple[dict[str, Any], dict[str, Any]]:
    from pypdf import PdfReader

    try:
        attachments = {name: blobs[0] for name, blobs in PdfReader(path).attachments.items()}
    except Exception as err:  # pypdf raises several kinds for a damaged file
        raise InputError("RECORD", str(path), f"unreadable PDF: {err}") from None
    if "record.json" not in attachments:
        raise InputError(
            "RECORD", str(path), "not an orbitledger record (no record.json attachment)"
        )
    try:
        record = json.loads(attachments["record.json"])
    except json.JSONDecodeError as err:
        raise InputError(
            "RECORD", str(path), f"the attached record JSON does not parse: {err}"
        ) from None
    return record, {"kind": "pdf", "attachments": attachments, "data": path.read_bytes()}
