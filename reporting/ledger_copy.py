"""Moving records between ledgers: ``ledger copy`` and ``ledger export``.

``copy_ledger(source, target)`` copies every committed revision, its sign-offs and every
artifact byte for byte, from either back end to either back end. Each artifact is hashed when
read from the source (against the source's index) and again when read back from the target;
any difference stops the copy with the artifact named. Each revision goes over in one
transaction, so an interrupted copy leaves only whole revisions: running it again skips what
is there and copies the rest (and any sign-off added to the source since). A target that holds
anything the source does not (another record, another revision, other bytes) is refused
before anything is written.

``export_artifacts(ledger, out)`` writes artifacts as files (``out/records/ID/r0001/...``),
each checked against its SHA-256, with a ``SHA256SUMS`` list that ``sha256sum -c`` reads.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from orbitledger.kernel.errors import InputError

from .ledger_parts import Artifact, atomic_write_once, sha256_hex

__all__ = ["CopySummary", "copy_ledger", "export_artifacts"]


@dataclass
class CopySummary:
    revisions: int = 0
    artifacts: int = 0
    bytes: int = 0
    skipped: int = 0


def _checked(ledger: Any, artifact: Artifact) -> bytes:
    data = ledger.read_artifact(artifact)
    if sha256_hex(data) != artifact.sha256 or len(data) != artifact.size:
        raise InputError(
            ledger.address, artifact.relpath, "SHA-256 differs from the ledger's index; not copied"
        )
    return data


def _refuse_foreign(source: Any, target: Any) -> None:
    """Refuse a target holding anything the source does not (checked before any write)."""
    for record_id in target.record_ids():
        have = (
            {r.revision: r for r in source.revisions(record_id)}
            if _known(source, record_id)
            else {}
        )
        for r in target.revisions(record_id):
            where = f"{record_id} revision {r.revision}"
            if r.revision not in have:
                raise InputError(
                    "DST", target.address, f"not empty: holds {where}, which {source.address} lacks"
                )
            if target._record_text(record_id, r.revision) != source._record_text(
                record_id, r.revision
            ):
                raise InputError("DST", target.address, f"holds another {where} than the source")
            theirs = {a.name: a.sha256 for a in source.artifacts(record_id, r.revision)}
            for a in target.artifacts(record_id, r.revision):
                if theirs.get(a.name) != a.sha256:
                    raise InputError(
                        "DST", target.address, f"{where}: {a.name} differs from the source's"
                    )


def _known(ledger: Any, record_id: str) -> bool:
    return record_id in set(ledger.record_ids())


def copy_ledger(source: Any, target: Any) -> CopySummary:
    """Copy every revision of ``source`` into ``target`` (see the module doc)."""
    if source.address == target.address and source.kind == target.kind:
        raise InputError("DST", target.address, "is the source itself")
    _refuse_foreign(source, target)
    done = CopySummary()
    for record_id in source.record_ids():
        present = {r.revision for r in target.revisions(record_id)}
        for info in source.revisions(record_id):
            n = info.revision
            have_roles = {s.role for s in target.signoffs(record_id, n)} if n in present else set()
            have_names = {a.name for a in target.artifacts(record_id, n)} if n in present else set()
            signoffs = [s for s in source.signoffs(record_id, n) if s.role not in have_roles]
            wanted = [a for a in source.artifacts(record_id, n) if a.name not in have_names]
            if n in present and not signoffs and not wanted:
                done.skipped += 1
                continue
            artifacts = [(a, _checked(source, a)) for a in wanted]
            target.insert_copied(
                info,
                source._record_text(record_id, n),
                source.record_changes(record_id).get(n, []),
                source.committed_utc(record_id, n),
                artifacts,
                signoffs,
            )
            for a in target.artifacts(record_id, n):  # read back: the target holds the bytes
                if a.name in {w.name for w in wanted}:
                    _checked(target, a)
            done.revisions += n not in present
            done.artifacts += len(artifacts)
            done.bytes += sum(len(d) for _, d in artifacts)
    return done


def export_artifacts(
    ledger: Any, out: Path, record_id: str | None = None, revision: int | None = None
) -> list[Path]:
    """Write the artifacts of the chosen revisions under ``out`` (write-once, SHA-256 checked)."""
    ids = [record_id] if record_id else ledger.record_ids()
    written: list[Path] = []
    sums: dict[str, str] = {}
    out = Path(out)
    for rid in ids:
        numbers = [r.revision for r in ledger.revisions(rid)]
        if revision is not None:
            ledger.info(rid, revision)  # InputError naming the known revisions
            numbers = [revision]
        elif not numbers:
            raise InputError("RECORD_ID", rid, f"no revisions in {ledger.address}")
        for n in numbers:
            for a in ledger.artifacts(rid, n):
                data = _checked(ledger, a)
                path = out.joinpath(*a.relpath.split("/"))
                if path.exists():
                    if sha256_hex(path.read_bytes()) != a.sha256:
                        raise InputError(
                            str(path), None, "exists with other content; not overwritten"
                        )
                else:
                    atomic_write_once(path, data)
                    written.append(path)
                sums[a.relpath] = a.sha256
    listing = out / "SHA256SUMS"
    if listing.exists():  # a second export adds its lines to the first's
        for line in listing.read_text(encoding="utf-8").splitlines():
            digest, _, rel = line.partition("  ")
            sums.setdefault(rel, digest)
    out.mkdir(parents=True, exist_ok=True)
    text = "".join(f"{digest}  {rel}\n" for rel, digest in sorted(sums.items()))
    tmp = out / ".SHA256SUMS.tmp"
    tmp.write_text(text, encoding="utf-8")
    tmp.replace(listing)
    return written
