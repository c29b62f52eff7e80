"""Editable tables for the list sections of a case: ground stations and the burn plan.

A table shows one row per list entry, an error line per row, and Add / Remove buttons. Every
edit proposes the whole new list for its path (``stations`` or ``burns``) to the editor, which
validates it through the case model like any other edit; a refused list leaves the case as it
was and the reason appears on the row the error names (``stations.1.lat_deg``).
"""

from __future__ import annotations

import json
from collections.abc import Callable, Sequence
from typing import Any

import ipywidgets as w

from .fields import FieldParseError, _format_number, _parse_number, unit_for

__all__ = ["BurnTable", "StationTable"]

Propose = Callable[[str, list[dict[str, Any]], "ListTable"], None]


def _cell(value: str, width: str, tooltip: str) -> w.Text:
    return w.Text(
        value=value, continuous_update=True, tooltip=tooltip, layout=w.Layout(width=width)
    )


def _header(columns: Sequence[tuple[str, str]]) -> w.HBox:
    cells = [w.HTML(f"<b>{text}</b>", layout=w.Layout(width=width)) for text, width in columns]
    box = w.HBox(cells)
    box.add_class("ol-note")
    return box


class ListTable:
    """Base: rows built from a list of dicts; ``propose(path, rows, table)`` on each edit."""

    path = ""
    title = ""

    def __init__(self, entries: list[dict[str, Any]], propose: Propose) -> None:
        self.propose = propose
        self.entries = [dict(e) for e in entries]
        self.rows: list[w.HBox] = []
        self.errors: list[w.HTML] = []
        self.add_button = w.Button(description=f"Add {self.noun}", icon="plus")
        self.add_button.layout = w.Layout(width="11em")
        self.add_button.on_click(lambda _b: self._add())
        self.message = w.HTML("")
        self.message.add_class("ol-error")
        self.body = w.VBox([])
        heading = w.HTML(f'<span class="ol-section-title">{self.title}</span>')
        self.widget = w.VBox([heading, self.body, w.HBox([self.add_button, self.message])])
        self.widget.add_class("ol-section")
        self.widget.add_class("ol-table")
        self._quiet = False
        self.show(entries)

    noun = "row"

    # subclasses: _row_widgets(index, entry) -> (inputs, reader), header columns, new entry
    def show(self, entries: list[dict[str, Any]]) -> None:
        """Show ``entries`` (the case's current list), rebuilding the rows."""
        self.entries = [dict(e) for e in entries]
        self._readers: list[Callable[[], dict[str, Any]]] = []
        self.rows, self.errors = [], []
        children: list[w.Widget] = [_header(self.columns)] if entries else []
        for index, entry in enumerate(self.entries):
            inputs, reader = self._row_widgets(index, entry)
            remove = w.Button(
                description="Remove", tooltip=f"Remove {self.noun} {index + 1}", icon="trash"
            )
            remove.layout = w.Layout(width="7.5em")
            remove.on_click(lambda _b, i=index: self._remove(i))
            error = w.HTML("", layout=w.Layout(flex="1 1 10em"))
            error.add_class("ol-error")
            for widget in inputs:
                if isinstance(widget, w.ValueWidget):
                    widget.observe(lambda _c, i=index: self._edited(i), names="value")
            row = w.HBox([*inputs, remove, error])
            row.add_class("ol-field")
            self.rows.append(row)
            self.errors.append(error)
            self._readers.append(reader)
            children.append(row)
        if not entries:
            children.append(w.HTML(f'<span class="ol-note">no {self.noun}s in this case</span>'))
        self.body.children = children
        self.message.value = ""

    def sync(self, entries: list[dict[str, Any]], *, typed_here: bool) -> None:
        """Follow the case's list. After an edit typed in this table the cells already show it
        (keep them, and the keyboard focus); otherwise, or when rows came or went, rebuild."""
        if typed_here and len(entries) == len(self.entries):
            self.entries = [dict(e) for e in entries]
            self.clear_errors()
        elif entries != self.entries or typed_here:
            self.show(entries)
        else:
            self.clear_errors()

    def clear_errors(self) -> None:
        for error in self.errors:
            error.value = ""
        self.message.value = ""

    def show_error(self, path: str | None, message: str) -> None:
        """Show ``message`` on the row named in ``path`` (``stations.1.lat_deg``), else below."""
        index = _row_index(self.path, path)
        target = self.errors[index] if index is not None and index < len(self.errors) else None
        (target or self.message).value = _escape(message)

    def _edited(self, index: int) -> None:
        if self._quiet:
            return
        try:
            new_row = self._readers[index]()
        except FieldParseError as exc:
            self.errors[index].value = _escape(f"{exc.path}: {exc.reason}")
            return
        entries = [dict(e) for e in self.entries]
        entries[index] = new_row
        self.propose(self.path, entries, self)

    def _remove(self, index: int) -> None:
        entries = [dict(e) for i, e in enumerate(self.entries) if i != index]
        self.propose(self.path, entries, self)

    def _add(self) -> None:
        self.propose(self.path, [*self.entries, self._new_entry()], self)

    def _new_entry(self) -> dict[str, Any]:  # pragma: no cover - abstract
        raise NotImplementedError

    columns: Sequence[tuple[str, str]] = ()

    def _row_widgets(self, index: int, entry: dict[str, Any]):  # pragma: no cover - abstract
        raise NotImplementedError


def _row_index(prefix: str, path: str | None) -> int | None:
    """The row index in ``stations.1.lat_deg`` or ``stations[1].lat_deg``; None if absent."""
    if not path or not path.startswith(prefix) or len(path) == len(prefix):
        return None
    rest = path[len(prefix) :].lstrip(".[")
    head = rest.split(".", 1)[0].split("]", 1)[0]
    return int(head) if head.isdigit() else None


class StationTable(ListTable):
    path = "stations"
    title = "Ground stations"
    noun = "station"
    _NUMBERS = ("lat_deg", "lon_deg", "height_km", "elevation_mask_deg")
    columns = (
        ("name", "11em"),
        ("latitude (deg)", "8.5em"),
        ("longitude (deg)", "8.5em"),
        ("height (km)", "8.5em"),
        ("mask (deg)", "8.5em"),
    )

    def _row_widgets(self, index: int, entry: dict[str, Any]):
        name = _cell(str(entry.get("name", "")), "11em", f"stations.{index}.name")
        numbers = {
            key: _cell(
                _format_number(entry.get(key)), "7.5em", f"stations.{index}.{key} ({unit_for(key)})"
            )
            for key in self._NUMBERS
        }

        def read() -> dict[str, Any]:
            row = dict(self.entries[index])
            row["name"] = name.value.strip()
            for key, cell in numbers.items():
                row[key] = _parse_number(f"stations.{index}.{key}", cell.value, optional=False)
            return row

        return [name, *numbers.values()], read

    def _new_entry(self) -> dict[str, Any]:
        taken = {e.get("name") for e in self.entries}
        n = len(self.entries) + 1
        while f"New station {n}" in taken:
            n += 1
        return {
            "name": f"New station {n}",
            "lat_deg": 0.0,
            "lon_deg": 0.0,
            "height_km": 0.0,
            "elevation_mask_deg": 5.0,
        }


_AT_CHOICES = (
    ("at an epoch", "epoch"),
    ("next periapsis", "periapsis"),
    ("next apoapsis", "apoapsis"),
    ("next ascending node", "ascending"),
    ("next descending node", "descending"),
)


def _at_key(at: dict[str, Any]) -> str:
    if "epoch_utc" in at:
        return "epoch"
    return str(at.get("apsis") or at.get("node") or "periapsis")


def _at_value(key: str, epoch_text: str) -> dict[str, Any]:
    if key == "epoch":
        return {"epoch_utc": epoch_text.strip()}
    if key in ("periapsis", "apoapsis"):
        return {"apsis": key}
    return {"node": key}


class BurnTable(ListTable):
    """The burn plan: when (epoch, apsis or node) and what (a delta-v in RTN, or a transfer)."""

    path = "burns"
    title = "Burn plan"
    noun = "burn"
    columns = (
        ("name", "10em"),
        ("when", "11em"),
        ("epoch (UTC)", "13em"),
        ("delta-v R, T, N (km/s) or transfer (JSON)", "22em"),
    )

    def _row_widgets(self, index: int, entry: dict[str, Any]):
        name = _cell(str(entry.get("name", "")), "10em", f"burns.{index}.name")
        at = entry.get("at") or {}
        when = w.Dropdown(
            options=list(_AT_CHOICES), value=_at_key(at), layout=w.Layout(width="11em")
        )
        when.tooltip = f"burns.{index}.at"
        epoch = _cell(str(at.get("epoch_utc", "")), "13em", f"burns.{index}.at.epoch_utc")
        epoch.disabled = when.value != "epoch"
        when.observe(lambda c: setattr(epoch, "disabled", c["new"] != "epoch"), names="value")
        if "transfer" in entry and entry["transfer"] is not None:
            what = _cell(json.dumps(entry["transfer"]), "22em", f"burns.{index}.transfer (JSON)")
        else:
            dv = entry.get("dv_rtn_km_s") or [0.0, 0.0, 0.0]
            what = _cell(
                ", ".join(_format_number(x) for x in dv),
                "22em",
                f"burns.{index}.dv_rtn_km_s (km/s)",
            )

        def read() -> dict[str, Any]:
            row = {
                k: v for k, v in self.entries[index].items() if k not in ("dv_rtn_km_s", "transfer")
            }
            row["name"] = name.value.strip()
            row["at"] = _at_value(when.value, epoch.value)
            text = what.value.strip()
            if text.startswith("{"):
                try:
                    row["transfer"] = json.loads(text)
                except json.JSONDecodeError as exc:
                    raise FieldParseError(
                        f"burns.{index}.transfer", text, f"not JSON: {exc.msg}"
                    ) from None
            else:
                parts = [p for p in text.replace(";", ",").split(",") if p.strip()]
                if len(parts) != 3:
                    raise FieldParseError(
                        f"burns.{index}.dv_rtn_km_s", text, "three numbers R, T, N in km/s"
                    )
                row["dv_rtn_km_s"] = [
                    _parse_number(f"burns.{index}.dv_rtn_km_s", p, optional=False) for p in parts
                ]
            return row

        return [name, when, epoch, what], read

    def _new_entry(self) -> dict[str, Any]:
        return {
            "name": f"burn {len(self.entries) + 1}",
            "at": {"apsis": "periapsis"},
            "dv_rtn_km_s": [0.0, 0.0, 0.0],
        }


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
