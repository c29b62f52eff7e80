"""A study's table on disk: CSV or Parquet, with its attributes (seed, units, base case).

``save_table(frame, "study.parquet")`` keeps ``frame.attrs`` in the Parquet file's metadata
(pandas stores them there); ``save_table(frame, "study.csv")`` writes the attributes beside
the CSV as ``study.csv.attrs.json``. Both are written atomically (a temporary file in the same
folder, then renamed), so a failed or refused run leaves any earlier file as it was.
``load_table`` reads either back with its attributes.
"""

from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Any

from ..case.io import atomic_write, atomic_write_text
from ..kernel.errors import InputError

__all__ = ["TABLE_SUFFIXES", "check_table_path", "load_table", "save_table"]

TABLE_SUFFIXES = (".csv", ".parquet")


def check_table_path(path: str | os.PathLike, *, field: str = "--out") -> Path:
    """The output path, checked before any work: a known suffix, an existing folder."""
    out = Path(path)
    if out.suffix.lower() not in TABLE_SUFFIXES:
        raise InputError(field, str(path), "must end in .csv or .parquet")
    folder = out.parent if str(out.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(field, str(path), f"the folder {str(folder)!r} does not exist")
    if out.is_dir():
        raise InputError(field, str(path), "is a folder")
    return out


def _json_attrs(attrs: dict[str, Any]) -> str:
    return json.dumps(attrs, indent=1, sort_keys=True, default=float)


def save_table(frame: Any, path: str | os.PathLike) -> Path:
    """Write ``frame`` (and its attrs) to ``path`` (.csv or .parquet), atomically."""
    out = check_table_path(path, field="path")
    if out.suffix.lower() == ".parquet":
        atomic_write(out, lambda stream: frame.to_parquet(stream, index=False))
    else:
        side = out.with_name(out.name + ".attrs.json")
        atomic_write(out, lambda stream: frame.to_csv(stream, index=False))
        text = _json_attrs(dict(frame.attrs))
        atomic_write_text(side, text)
    return out


def load_table(path: str | os.PathLike) -> Any:
    """Read a table written by :func:`save_table`, attributes included."""
    import pandas as pd

    source = Path(path)
    if source.suffix.lower() == ".parquet":
        return pd.read_parquet(source)
    frame = pd.read_csv(source, keep_default_na=True)
    if "error" in frame.columns:
        frame["error"] = frame["error"].fillna("").astype(str)
    side = source.with_name(source.name + ".attrs.json")
    if side.exists():
        frame.attrs.update(json.loads(side.read_text(encoding="utf-8")))
    return frame
