"""Case files on disk: reading, atomic saving, and refusing to overwrite a file changed since.

A save writes a temporary file in the same folder, flushes and fsyncs it, then renames it over
the case file (``os.replace``, atomic on POSIX and Windows): a reader sees the old file or the
new one, never half of one, and a failed save leaves the old file as it was. Before saving,
the file's bytes are compared (SHA-256) with what was last loaded or saved, so an edit made
meanwhile by another program, another notebook or a person is never silently lost.
"""

from __future__ import annotations

import hashlib
import os
import tempfile
from collections.abc import Callable
from pathlib import Path
from typing import Any, BinaryIO, Protocol

from ..limits import MAX_CASE_FILE_BYTES, read_input_bytes
from .errors import MISSING, CaseError, CaseFileChanged, CaseFileNotFound
from .model import Case, case_from_data
from .validation import read_json_text

__all__ = [
    "load_case",
    "parse_case",
    "CaseFile",
    "open_case",
    "write_new_case",
    "atomic_write_text",
    "atomic_write",
    "CaseRegistry",
]


class CaseRegistry(Protocol):
    """Where a study notes the case files it loads and saves (``orbitledger.study`` is one)."""

    def note_case(self, path: str | os.PathLike, fingerprint: str) -> None: ...


def parse_case(text: str | bytes, file: str | os.PathLike | None = None) -> Case:
    """Validate the JSON text of a case file; ``file`` only names the source in errors."""
    name = str(file) if file is not None else None
    return case_from_data(read_json_text(text, name), file=name)


def _read_bytes(path: Path) -> bytes:
    """The case file's bytes: a regular file of at most ``MAX_CASE_FILE_BYTES`` (limits)."""

    def refuse(reason: str) -> CaseError:
        return CaseError("", MISSING, reason, file=str(path))

    try:
        return read_input_bytes(path, MAX_CASE_FILE_BYTES, refuse, "a case file")
    except FileNotFoundError:
        raise CaseFileNotFound("", MISSING, "no such case file", file=str(path)) from None


def load_case(path: str | os.PathLike) -> Case:
    """Read and validate the case file at ``path``. Raises CaseError (CaseFileNotFound if absent)."""
    path = Path(path)
    return parse_case(_read_bytes(path), path)


def atomic_write_text(
    path: str | os.PathLike, text: str | bytes, *, exclusive: bool = False, mode: int | None = None
) -> bytes:
    """Write ``text`` (UTF-8; bytes as they are) to ``path`` atomically; returns the bytes written.

    ``exclusive=True`` refuses (FileExistsError) when ``path`` exists, also atomically: the
    temporary file is hard-linked into place, which fails if the name is taken. ``mode`` sets
    the file's permissions (e.g. 0o600 for a private key; the temporary file is 0600 from its
    creation, so the text is never readable by others on the way).
    """
    data = text.encode("utf-8") if isinstance(text, str) else bytes(text)
    atomic_write(path, lambda stream: stream.write(data), exclusive=exclusive, mode=mode)
    return data


def atomic_write(
    path: str | os.PathLike,
    write: Callable[[BinaryIO], Any],
    *,
    exclusive: bool = False,
    mode: int | None = None,
) -> None:
    """``write(stream)`` into a temporary file beside ``path``, fsync it, then move it into place.

    The one atomic writer of the package (case files, keys, trade tables, ledger artifacts):
    a reader sees the old file or the new one, never half of one; a failure leaves no
    temporary file. ``exclusive`` and ``mode`` as in :func:`atomic_write_text`.
    """
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(handle, "wb") as stream:
            write(stream)
            stream.flush()
            os.fsync(stream.fileno())
        if mode is None:
            try:
                mode = path.stat().st_mode & 0o777
            except FileNotFoundError:
                umask = os.umask(0)
                os.umask(umask)
                mode = 0o666 & ~umask
        os.chmod(temporary, mode)
        if exclusive:
            try:
                os.link(temporary, path)
            except (AttributeError, NotImplementedError, PermissionError):
                with open(path, "xb") as stream:  # file systems without hard links
                    os.chmod(path, mode)
                    write(stream)
                    stream.flush()
                    os.fsync(stream.fileno())
            os.unlink(temporary)
        else:
            os.replace(temporary, path)
    except BaseException:
        if os.path.exists(temporary):
            os.unlink(temporary)
        raise
    _fsync_folder(folder)


def _fsync_folder(folder: Path) -> None:
    """Make the rename itself durable (POSIX); a no-op where folders cannot be opened."""
    try:
        descriptor = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(descriptor)
    except OSError:
        pass
    finally:
        os.close(descriptor)


def write_new_case(path: str | os.PathLike, case: Case) -> bytes:
    """Write ``case`` to a new file at ``path``; CaseError if a file is already there."""
    path = Path(path)
    try:
        return atomic_write_text(path, case.to_json(), exclusive=True)
    except FileExistsError:
        raise CaseError("", MISSING, "already exists; not overwritten", file=str(path)) from None
    except FileNotFoundError:
        raise CaseError(
            "", MISSING, f"the folder {path.parent} does not exist", file=str(path)
        ) from None
    except OSError as err:
        raise CaseError("", MISSING, f"cannot be written: {err.strerror}", file=str(path)) from None


class CaseFile:
    """A case bound to its file: ``.case`` is the current Case, ``save`` writes it back safely.

    Attribute access falls through to the case (``case_file.orbit`` is ``case_file.case.orbit``).
    ``registry`` (a :class:`CaseRegistry`, given per case file) is told of every load and save:
    ``orbitledger.open_case`` passes the study registry :mod:`orbitledger.study`, so a record
    lists the case files a study used, each with the fingerprint it last had. Without one
    nothing is noted anywhere: the case layer keeps no global state.
    """

    def __init__(self, path: str | os.PathLike, *, registry: CaseRegistry | None = None) -> None:
        self._path = Path(path)
        self._registry = registry
        self._case: Case
        self._disk_sha256: str
        self.reload()

    @classmethod
    def open(
        cls, path: str | os.PathLike, *, create: bool = False, registry: CaseRegistry | None = None
    ) -> CaseFile:
        """Open the case file at ``path``.

        A missing file is refused (``CaseFileNotFound`` naming the path and the closest
        existing case file beside it), so a mistyped name never starts a study from the
        starter case. ``create=True`` writes the starter case there first (as ``orbitledger
        new`` does); an existing file is opened as it is, never overwritten.
        """
        path = Path(path)
        if not path.exists():
            if not create:
                raise CaseFileNotFound("", MISSING, missing_case_reason(path), file=str(path))
            from .starter import starter_case

            try:
                write_new_case(path, starter_case())
            except CaseError:
                if not path.exists():  # not lost a race to another writer: a real failure
                    raise
        return cls(path, registry=registry)

    @property
    def path(self) -> Path:
        return self._path

    @property
    def case(self) -> Case:
        return self._case

    @property
    def fingerprint(self) -> str:
        """The fingerprint of the current case."""
        return self._case.fingerprint

    def reload(self) -> Case:
        """Read the file again (after an edit elsewhere); returns the new current case."""
        data = _read_bytes(self._path)
        self._case = parse_case(data, self._path)
        self._disk_sha256 = hashlib.sha256(data).hexdigest()
        if self._registry is not None:
            self._registry.note_case(self._path, self._case.fingerprint)
        return self._case

    def changed_on_disk(self) -> bool:
        """True when the file's bytes differ from what was last loaded or saved (or it is gone)."""
        try:
            return hashlib.sha256(_read_bytes(self._path)).hexdigest() != self._disk_sha256
        except CaseError:
            return True

    def save(self, case: Case | None = None, *, force: bool = False) -> Case:
        """Write ``case`` (default: the current one) to the file atomically; it becomes current.

        Raises CaseFileChanged, changing nothing, when the file changed on disk since it was
        loaded or saved; ``force=True`` overwrites it anyway (then ``reload()`` is the other way).
        """
        case = self._case if case is None else case
        if not isinstance(case, Case):
            raise CaseError(
                "case", type(case).__name__, "must be a validated Case", file=str(self._path)
            )
        if not force and self.changed_on_disk():
            raise CaseFileChanged(
                "",
                MISSING,
                "changed on disk since it was loaded; not saved. Call reload() to take the "
                "other edit, or save(case, force=True) to overwrite it",
                file=str(self._path),
            )
        try:
            data = atomic_write_text(self._path, case.to_json())
        except OSError as err:
            raise CaseError(
                "", MISSING, f"cannot be saved: {err.strerror}", file=str(self._path)
            ) from None
        self._case = case
        self._disk_sha256 = hashlib.sha256(data).hexdigest()
        if self._registry is not None:
            self._registry.note_case(self._path, case.fingerprint)
        return case

    def update(self, changes: dict[str, Any], *, force: bool = False) -> Case:
        """Apply changes by JSON path (see ``Case.with_changes``) and save; the file is unchanged
        if the change is refused."""
        return self.save(self._case.with_changes(changes), force=force)

    def __getattr__(self, name: str) -> Any:
        if name.startswith("_"):
            raise AttributeError(name)
        return getattr(self._case, name)

    def __repr__(self) -> str:
        return f"{type(self).__name__}({str(self._path)!r}, fingerprint={self.fingerprint[:12]}...)"


def open_case(
    path: str | os.PathLike, *, create: bool = False, registry: CaseRegistry | None = None
) -> CaseFile:
    """Load the case file at ``path`` as a CaseFile; ``create=True`` writes the starter case
    there first if it is missing (else a missing file raises ``CaseFileNotFound``).
    ``registry`` is noted of its loads and saves (``orbitledger.open_case`` passes the study's)."""
    return CaseFile.open(path, create=create, registry=registry)


def missing_case_reason(path: Path) -> str:
    """Why ``path`` cannot be opened, naming the closest existing case file in its folder."""
    import difflib

    folder = path.parent if str(path.parent) else Path(".")
    try:
        names = sorted(p.name for p in folder.glob("*.case.json") if p.is_file())
    except OSError:
        names = []
    close = difflib.get_close_matches(path.name, names, n=1, cutoff=0.0)
    if close:
        hint = f"the closest existing case file is {folder / close[0]}"
    elif folder.is_dir():
        hint = f"there is no case file in {folder}"
    else:
        hint = f"the folder {folder} does not exist"
    return (
        f"no such case file ({hint}); to start a new case write one with "
        "'orbitledger new PATH' or open_case(PATH, create=True)"
    )
