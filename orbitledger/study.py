"""What a study notebook has used: the case files it opened, its named results, its figures.

This registry lives in the notebook's kernel process. ``orbitledger build`` reads it at the end
of a clean run to assemble the record; nothing here does I/O or imports reporting.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

__all__ = ["OpenedCase", "note_case", "opened_cases", "reset"]


@dataclass(frozen=True)
class OpenedCase:
    path: str
    fingerprint: str


_cases: dict[str, OpenedCase] = {}


def note_case(path: str | Path, fingerprint: str) -> None:
    """Record that the study opened (or saved) the case file at ``path``; last fingerprint wins."""
    key = str(Path(path).resolve())
    _cases[key] = OpenedCase(path=key, fingerprint=fingerprint)


def opened_cases() -> list[OpenedCase]:
    return list(_cases.values())


def reset() -> None:
    """Forget everything recorded (for tests)."""
    _cases.clear()

