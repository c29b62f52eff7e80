"""``verify --ledger``: the whole ledger checked, its hash chain followed revision by revision.

Each revision's record carries ``previous_record_sha256``, the SHA-256 of the record JSON
(``record.json``) of the revision before it, taken under the ledger's lock when it was built.
Following the chain finds a revision that was removed (a gap, or a link that names another
record), reordered or swapped (a record that says another revision number; a link that does
not match) or replaced (its record JSON no longer the one the next revision was built after).
The store is checked as well: every artifact against its SHA-256 (a file changed, missing or
swapped between folders), the index row against the ``record.json`` it indexes (an edited
row), and each sign-off against the artifact it cites.

What it cannot see: a replacement of the *last* revision together with its index row, since
no later record links to it; a signature on it (or a copy of the ledger elsewhere) can.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from typing import Any

__all__ = ["LedgerReport", "verify_ledger"]


@dataclass
class LedgerReport:
    address: str
    checks: list[tuple[str, bool, str]] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return all(ok for _, ok, _ in self.checks)

    def add(self, what: str, ok: bool, detail: str = "") -> None:
        self.checks.append((what, ok, detail))

    def text(self) -> str:
        lines = [f"{self.address}: ledger"]
        for what, ok, detail in self.checks:
            lines.append(f"  {'ok  ' if ok else 'DIFF'} {what}" + (f": {detail}" if detail else ""))
        lines += [f"  note {n}" for n in self.notes]
        failed = sum(not ok for _, ok, _ in self.checks)
        total = len(self.checks)
        lines.append(
            f"{total} checks, all hold" if not failed else f"{failed} of {total} checks differ"
        )
        return "\n".join(lines) + "\n"


def verify_ledger(ledger: Any) -> LedgerReport:
    """Check the store and follow every record id's hash chain (see the module doc)."""
    report = LedgerReport(ledger.address)
    problems = ledger.check()
    report.add("every artifact against its SHA-256", not problems, "; ".join(problems[:5]) + (
        f"; ... ({len(problems) - 5} more)" if len(problems) > 5 else ""))  # fmt: skip
    ids = ledger.record_ids()
    if not ids:
        report.notes.append("the ledger holds no revisions")
    for record_id in ids:
        _follow(ledger, record_id, report)
    return report


def _record_json_of(ledger: Any, record_id: str, revision: int) -> tuple[bytes | None, str]:
    for a in ledger.artifacts(record_id, revision):
        if a.name == "record.json":
            try:
                return ledger.read_artifact(a), a.relpath
            except Exception as err:  # missing: reported by the store check, named here too
                return None, f"{a.relpath} ({err})"
    return None, ""


def _follow(ledger: Any, record_id: str, report: LedgerReport) -> None:
    from .ledger_parts import sha256_hex

    numbers = [r.revision for r in ledger.revisions(record_id)]
    expected = list(range(1, (numbers[-1] if numbers else 0) + 1))
    missing = sorted(set(expected) - set(numbers))
    report.add(
        f"{record_id}: revisions 1-{len(expected)} all present",
        not missing,
        f"revision {', '.join(map(str, missing))} missing from the index" if missing else "",
    )
    problems: list[str] = []
    previous_sha: str | None = None
    previous_number = 0
    linked_before = False
    unlinked: list[int] = []
    for n in numbers:
        record = ledger.record(record_id, n)
        data, where = _record_json_of(ledger, record_id, n)
        try:
            own = json.loads(data) if data is not None else record
        except ValueError:
            problems.append(f"revision {n}: {where} is not JSON")
            own = record
        if data is not None and own != record:
            problems.append(f"revision {n}: the index row differs from {where} (an edited row?)")
        if own.get("record_id") != record_id or own.get("revision") != n:
            problems.append(
                f"revision {n}: {where or 'its record'} says {own.get('record_id')} revision "
                f"{own.get('revision')} (swapped or reordered?)"
            )
        if "previous_record_sha256" not in own:
            unlinked.append(n)
            if linked_before:
                problems.append(f"revision {n}: carries no link to revision {previous_number}")
        else:
            linked_before = True
            link = own["previous_record_sha256"]
            if n == 1 and link is not None:
                problems.append("revision 1: links to an earlier record (revisions removed?)")
            elif n > 1 and previous_number != n - 1:
                problems.append(f"revision {n}: was built after revision {n - 1}, which is missing")
            elif n > 1 and link != previous_sha:
                problems.append(
                    f"revision {n}: the record JSON of revision {n - 1} is not the one revision {n} "
                    f"was built after (revision {n - 1} replaced, removed or reordered)"
                )
        history = [h.get("revision") for h in own.get("history") or []]
        if history and history != list(range(1, n + 1)):
            problems.append(f"revision {n}: its history lists revisions {history}")
        by_name = {a.name: a for a in ledger.artifacts(record_id, n)}
        for s in ledger.signoffs(record_id, n):
            html = by_name.get("record.html")
            if html is not None and s.artifact_sha256 != html.sha256:
                problems.append(
                    f"revision {n}: the {s.role} sign-off cites SHA-256 {s.artifact_sha256[:16]}..., "
                    f"record.html is {html.sha256[:16]}..."
                )
        raw = (
            data if data is not None else (ledger._record_text(record_id, n) or "").encode("utf-8")
        )
        previous_sha, previous_number = sha256_hex(raw), n
    report.add(
        f"{record_id}: hash chain of {len(numbers)} revisions", not problems, "; ".join(problems)
    )
    if unlinked:
        report.notes.append(
            f"{record_id}: revision{'s' if len(unlinked) > 1 else ''} "
            f"{', '.join(map(str, unlinked))} {'predate' if len(unlinked) > 1 else 'predates'} the hash chain "
            "(checked by their SHA-256 in the index only)"
        )
    if numbers:
        report.notes.append(
            f"{record_id}: the last revision ({numbers[-1]}) is linked by no later one; "
            "its signatures (or a copy of the ledger) vouch for it"
        )
