"""Editable tables for the list sections of a case: the ground stations here, the burn plan
and the budget's allowances in ``plan_tables``.

A table shows one row per list entry, an error line per row, and Add / Remove buttons. A cell
commits like a field of the form: after the form's debounce (the quiet time after the last
keystroke), at once on Enter, and at once for a choice or a checkbox; never per keystroke, so a
half-typed value ("9" on the way to "95") is never proposed. A commit proposes the whole new
list for its path (``stations``, ``burns``, ``budget.allowances``) to the editor, which
validates it through the case model like any other edit. A refused list leaves the case and
the file as they were; the cell the error names (``stations.1.lat_deg``) is outlined, and the
row's error line names its column and the reason.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import ipywidgets as w

from .fields import FieldParseError, _format_number, _parse_number, on_enter

__all__ = ["ListTable", "StationTable"]

Propose = Callable[[str, list[dict[str, Any]], "ListTable"], None]
Schedule = Callable[[str, Callable[[], None]], None]


def text_cell(value: str, width: str, tooltip: str) -> w.Text:
    return w.Text(
        value=value,
        continuous_update=True,
        tooltip=tooltip,
        layout=w.Layout(width=width, min_width=width),  # never narrower than its header
    )


def _header(columns: Sequence[tuple[str, str, str]]) -> w.HBox:
    # The same widths as the cells below, with the cells' own margin, so the columns line up.
    cells = [
        w.HTML(f"<b>{_escape(text)}</b>", layout=w.Layout(width=width, min_width=width))
        for _key, text, width in columns
    ]
    box = w.HBox(cells)
    box.add_class("ol-note")
    box.add_class("ol-table-header")
    return box


class ListTable:
    """Base: rows built from a list of dicts; ``propose(path, rows, table)`` on each commit.

    ``schedule(key, fn)`` runs ``fn`` after the debounce (the editor's debouncer; default at
    once) and ``flush(key)`` runs a pending one now (Enter).
    """

    path = ""
    title = ""
    noun = "row"
    # (entry key, header text, width): one per cell, in order.
    columns: Sequence[tuple[str, str, str]] = ()
    # Entry keys shown as checkboxes by the plain row (``_row_widgets``).
    checks: Sequence[str] = ()

    def __init__(
        self,
        entries: list[dict[str, Any]],
        propose: Propose,
        schedule: Schedule | None = None,
        flush: Callable[[str], None] | None = None,
    ) -> None:
        self.propose = propose
        self.schedule: Schedule = schedule or (lambda _key, fn: fn())
        self.flush: Callable[[str], None] = flush or (lambda _key: None)
        self.entries = [dict(e) for e in entries]
        self.rows: list[w.HBox] = []
        self.errors: list[w.HTML] = []
        self.cells: list[dict[str, w.Widget]] = []
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

    # subclasses: _row_widgets(index, entry) -> (cells by entry key, reader, writer)
    def show(self, entries: list[dict[str, Any]]) -> None:
        """Show ``entries`` (the case's current list), rebuilding the rows."""
        self.entries = [dict(e) for e in entries]
        self._readers: list[Callable[[], dict[str, Any]]] = []
        self._writers: list[Callable[[dict[str, Any]], None]] = []
        self.rows, self.errors, self.cells = [], [], []
        children: list[w.Widget] = [_header(self.columns)] if entries else []
        for index, entry in enumerate(self.entries):
            cells, reader, writer = self._row_widgets(index, entry)
            remove = w.Button(
                description="Remove", tooltip=f"Remove {self.noun} {index + 1}", icon="trash"
            )
            remove.layout = w.Layout(width="7.5em", min_width="7.5em")
            remove.on_click(lambda _b, i=index: self._remove(i))
            error = w.HTML("", layout=w.Layout(flex="1 1 10em"))
            error.add_class("ol-error")
            for widget in cells.values():
                if isinstance(widget, w.Text):
                    widget.observe(lambda _c, i=index: self._typed(i), names="value")
                    on_enter(widget, lambda i=index: self.flush(self._key(i)))
                elif isinstance(widget, w.ValueWidget):  # a choice or a checkbox: a commit
                    widget.observe(lambda _c, i=index: self._chosen(i), names="value")
            row = w.HBox([*cells.values(), remove, error])
            row.add_class("ol-field")
            self.rows.append(row)
            self.errors.append(error)
            self.cells.append(cells)
            self._readers.append(reader)
            self._writers.append(writer)
            children.append(row)
        if not entries:
            children.append(w.HTML(f'<span class="ol-note">no {self.noun}s in this case</span>'))
        self.body.children = children
        self.message.value = ""

    def sync(self, entries: list[dict[str, Any]], *, typed_here: bool) -> None:
        """Follow the case's list. After an edit typed in this table the cells already show it
        (keep them, and the keyboard focus); otherwise the cells take the case's values in
        place; rows are rebuilt only when rows came or went."""
        if len(entries) != len(self.entries) or not self.rows and entries:
            self.show(entries)
            return
        if not typed_here and entries != self.entries:
            self._quiet = True
            try:
                for writer, entry in zip(self._writers, entries, strict=True):
                    writer(entry)
            finally:
                self._quiet = False
        self.entries = [dict(e) for e in entries]
        self.clear_errors()

    def clear_errors(self) -> None:
        for error in self.errors:
            error.value = ""
        for cells in self.cells:
            for cell in cells.values():
                cell.remove_class("ol-invalid-cell")
        self.message.value = ""

    def column_of(self, path: str | None) -> str | None:
        """The entry key of the column that ``path`` (``stations.1.lat_deg``) names."""
        if not path or not path.startswith(self.path):
            return None
        rest = path[len(self.path) :].lstrip(".[").split(".", 1)
        if len(rest) < 2:
            return None
        return rest[1].split(".", 1)[0].split("[", 1)[0].split(" ", 1)[0]

    def show_error(self, path: str | None, message: str) -> None:
        """Show ``message`` on the row named in ``path`` (``stations.1.lat_deg``), naming the
        column, and outline that cell; a message about the whole list goes below the table."""
        index = _row_index(self.path, path)
        if index is None or index >= len(self.errors):
            self.message.value = _escape(message)
            return
        key = self.column_of(path)
        cells = self.cells[index]
        labels = {k: text for k, text, _w in self.columns}
        if key in cells:
            cells[key].add_class("ol-invalid-cell")
            message = f"{labels.get(key, key)}: {message}"
        self.errors[index].value = _escape(f"{self.noun} {index + 1}, {message}")

    def _key(self, index: int) -> str:
        return f"{self.path}.{index}"

    def _typed(self, index: int) -> None:
        if not self._quiet:
            self.schedule(self._key(index), lambda: self._edited(index))

    def _chosen(self, index: int) -> None:
        if not self._quiet:
            self._typed(index)
            self.flush(self._key(index))

    def _edited(self, index: int) -> None:
        if index >= len(self._readers):
            return  # the row went away meanwhile
        for cell in self.cells[index].values():
            cell.remove_class("ol-invalid-cell")
        self.errors[index].value = ""
        try:
            new_row = self._readers[index]()
        except FieldParseError as exc:
            self.show_error(exc.path, exc.reason)
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

    def _row_widgets(self, index: int, entry: dict[str, Any]):
        """A plain row (a table with other cells overrides this): ``name`` a text cell, each of
        ``checks`` a checkbox, every other column a number. Returns the cells by entry key, the
        reader (the entry with the cells' values; a bad number raises FieldParseError naming
        ``PATH.INDEX.KEY``) and the writer (the cells take an entry's values)."""
        cells = plain_cells(self.columns, self.path, index, self.checks)

        def write(entry: dict[str, Any]) -> None:
            for key, cell in cells.items():
                if key == "name":
                    cell.value = str(entry.get("name", ""))
                elif key in self.checks:
                    cell.value = bool(entry.get(key))
                else:
                    cell.value = _format_number(entry.get(key))

        def read() -> dict[str, Any]:
            row = dict(self.entries[index])
            for key, cell in cells.items():
                if key == "name":
                    row[key] = cell.value.strip()
                elif key in self.checks:
                    row[key] = bool(cell.value)
                else:
                    where = f"{self.path}.{index}.{key}"
                    row[key] = _parse_number(where, cell.value, optional=False)
            return row

        write(entry)
        return cells, read, write


def _row_index(prefix: str, path: str | None) -> int | None:
    """The row index in ``stations.1.lat_deg`` or ``stations[1].lat_deg``; None if absent."""
    if not path or not path.startswith(prefix) or len(path) == len(prefix):
        return None
    rest = path[len(prefix) :].lstrip(".[")
    head = rest.split(".", 1)[0].split("]", 1)[0]
    return int(head) if head.isdigit() else None


def plain_cells(
    columns: Sequence[tuple[str, str, str]], path: str, index: int, checks: Sequence[str] = ()
) -> dict[str, w.Widget]:
    """The cells of row ``index``: a checkbox for each of ``checks`` (the header names it: no
    label beside), a text cell for every other column; each tooltip names its path."""
    cells: dict[str, w.Widget] = {}
    for key, text, width in columns:
        tooltip = f"{path}.{index}.{key} ({text})"
        if key in checks:
            cells[key] = w.Checkbox(indent=False, layout=w.Layout(width=width, min_width=width))
            cells[key].tooltip = tooltip
        else:
            cells[key] = text_cell("", width, tooltip)
    return cells


class StationTable(ListTable):
    path = "stations"
    title = "Ground stations"
    noun = "station"
    columns = (
        ("name", "name", "12em"),
        ("lat_deg", "latitude (deg)", "8.5em"),
        ("lon_deg", "longitude (deg)", "8.5em"),
        ("height_km", "height (km)", "8.5em"),
        ("elevation_mask_deg", "mask (deg)", "8.5em"),
    )

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


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
