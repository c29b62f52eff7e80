"""The ledger: the archive of records, in a folder (SQLite) or in PostgreSQL.

``open_ledger(address)`` chooses the back end from the address: ``postgresql://...`` (or
``postgres://...``) is a PostgreSQL ledger (``ledger_pg.PgLedger``, through psycopg 3);
anything else is a folder (``ledger_sqlite.Ledger``). An address that looks like a URL of
another kind is refused, never taken as a folder name. Both back ends offer the same interface
(``ledger_base.LedgerBase``): the build protocol, history, sign-offs, artifacts with their
SHA-256, ``check``; the schema of each is versioned with ordered migrations
(``ledger_schema``). The layout and the rules are described in docs/ledger.md.
"""

from __future__ import annotations

import os
import re
from pathlib import Path
from typing import Any

from orbitledger.kernel.errors import InputError

from .ledger_base import LedgerBase, RevisionWriter, status_of
from .ledger_parts import (
    Artifact,
    Reservation,
    RevisionInfo,
    SignOff,
    atomic_write_once,
    sha256_hex,
    utc_now,
    validate_record_id,
)
from .ledger_sqlite import Ledger

__all__ = [
    "Artifact",
    "Ledger",
    "LedgerBase",
    "Reservation",
    "RevisionInfo",
    "RevisionWriter",
    "SignOff",
    "atomic_write_once",
    "is_database_address",
    "ledger_address",
    "open_ledger",
    "sha256_hex",
    "status_of",
    "utc_now",
    "validate_record_id",
]

ENV_VAR = "ORBITLEDGER_LEDGER"
_URL = re.compile(r"^[A-Za-z][A-Za-z0-9+.-]*://")


def is_database_address(address: str | Path) -> bool:
    """True for a PostgreSQL address; InputError for a URL of any other kind."""
    text = str(address)
    if text.startswith(("postgresql://", "postgres://")):
        return True
    if _URL.match(text):
        raise InputError(
            "--ledger",
            text,
            "not a ledger address: give a folder, or postgresql://user@host/database",
        )
    return False


def ledger_address(given: str | Path | None, default: str | Path) -> str | Path:
    """The ledger a verb uses: ``--ledger``, else ``ORBITLEDGER_LEDGER``, else ``default``."""
    if given:
        return given
    return os.environ.get(ENV_VAR) or default


def open_ledger(address: str | Path, *, create: bool = True) -> Any:
    """The ledger at ``address`` (a folder or a PostgreSQL URL); created if ``create``."""
    if is_database_address(address):
        from .ledger_pg import PgLedger

        return PgLedger(str(address), create=create)
    return Ledger(address, create=create)
