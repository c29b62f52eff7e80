"""The editor's layout: header, changed-on-disk question, form sections, tables, results and
figures, and keeping the fields in step with the current case.

``EditorForm`` is the widget half of :class:`orbitledger.widgets.CaseEditor`; the editor adds
the one edit path (validate, save, history) on top. Split so that each module stays one concept.
"""

from __future__ import annotations

import html
from collections.abc import Callable
from datetime import datetime
from pathlib import Path
from typing import Any

import ipywidgets as w

from orbitledger.case import CaseError

from . import pipeline
from .background import BackgroundJob
from .durations import DurationField, is_duration
from .fields import BoolField, ChoiceField, Field, NumberField, TextField, VectorField
from .formview import view_case
from .inputkeys import FIGURE_NEEDS, figure_key
from .livefigures import LiveFigure
from .plan_tables import AllowanceTable, BurnTable
from .results import ResultsPanel
from .sections import SECTIONS, field_specs
from .style import style_sheet
from .tables import StationTable

__all__ = ["EditorForm"]

_FORMS = (
    ("classical elements", "classical"),
    ("apsis altitudes", "apsides"),
    ("Cartesian state (GCRF)", "cartesian"),
)


def _spaced(box: w.Box) -> w.Box:
    box.add_class("ol-spaced")
    return box


class EditorForm(w.VBox):
    """The editor's widgets; subclasses provide the actions the buttons and fields call."""

    # -- building the form --------------------------------------------------------------------
    def _build(self, figure_builders: list[tuple[str, Callable, Callable | None]]) -> None:
        self._title = w.HTML()
        self._title.add_class("ol-title")
        self._path = w.HTML()
        self._path.add_class("ol-path")
        self._state = w.HTML()
        self._state.add_class("ol-status")
        self.undo_button = w.Button(description="Undo", icon="undo", tooltip="Undo the last edit")
        self.redo_button = w.Button(description="Redo", icon="repeat", tooltip="Redo")
        for button in (self.undo_button, self.redo_button):
            button.layout = w.Layout(width="6.5em")
        self.undo_button.on_click(lambda _b: self._guarded(self.undo))
        self.redo_button.on_click(lambda _b: self._guarded(self.redo))
        brand = w.HTML('<span class="ol-brand">orbitledger \u00b7 case editor</span>')
        names = w.VBox(
            [
                _spaced(w.HBox([brand, self._title])),
                _spaced(w.HBox([self._path, self._state])),
            ],
            layout=w.Layout(flex="1 1 auto"),
        )
        header = w.HBox([names, self.undo_button, self.redo_button])
        header.add_class("ol-header")

        reload_button = w.Button(
            description="Reload from disk",
            icon="refresh",
            tooltip="Discard this edit and load the file as it is now",
        )
        overwrite_button = w.Button(
            description="Overwrite",
            icon="save",
            button_style="warning",
            tooltip="Save this edit over the file's new content",
        )
        reload_button.layout = overwrite_button.layout = w.Layout(width="12em")
        reload_button.on_click(lambda _b: self._guarded(self.reload_from_disk))
        overwrite_button.on_click(lambda _b: self._guarded(self.overwrite))
        self._conflict = w.HBox(
            [
                w.HTML(
                    "<b>The case file changed on disk since it was loaded.</b> "
                    "Your edit is not saved yet: reload the file, or overwrite it with your edit?",
                    layout=w.Layout(flex="1 1 auto"),
                ),
                reload_button,
                overwrite_button,
            ]
        )
        self._conflict.add_class("ol-conflict")
        self._conflict.layout.display = "none"
        self._conflict_buttons = (reload_button, overwrite_button)

        self.form_choice = w.Dropdown(
            options=_FORMS,
            description="Orbit given as",
            style={"description_width": "10.5em"},
            layout=w.Layout(width="25em"),
        )
        self.form_choice.observe(self._form_switched, names="value")
        self._sections: dict[str, w.VBox] = {}
        self._fields: dict[str, Field] = {}
        boxes = {}
        for key, title, _paths in SECTIONS:
            box = w.VBox([])
            box.add_class("ol-section")
            self._sections[key] = box
            boxes[key] = (title, box)
        self._section_titles = {key: title for key, title, _ in SECTIONS}
        self.results_panel = ResultsPanel()
        self._warnings = w.HTML("")
        self._warnings.add_class("ol-warn")
        tables = (StationTable, BurnTable, AllowanceTable)
        self.stations, self.burns, self.allowances = (
            t([], self._propose_list, self._debounce.trigger, self._debounce.flush) for t in tables
        )
        self._slow_job = BackgroundJob(
            "window results",
            self._window_job,
            describe=lambda r: f"{len(r)} window results",
            on_done=self._window_job_done,
            auto=self.window_results,
        )
        later = pipeline.background_needs(self._case)
        self._figures = [
            LiveFigure(
                name,
                build,
                self._case,
                data,
                defer=FIGURE_NEEDS.get(name, "orbit") in later
                and not pipeline.kernel_ready(self._case, FIGURE_NEEDS.get(name, "orbit")),
            )
            for name, build, data in figure_builders
        ]
        figure_box = w.HBox([f.widget for f in self._figures])
        figure_box.add_class("ol-figures")
        # Two columns: the form on the left, the results (and their background job) on the
        # right, so an edit and its effect are side by side; they wrap on a narrow page.
        form = w.VBox(
            [self._sections[key] for key, _title, _paths in SECTIONS],
            layout=w.Layout(flex="1 1 33em", min_width="32em"),  # label, a full double, unit
        )
        self.results_panel.widget.children = [
            self.results_panel.title,
            self._slow_job.widget,
            *self.results_panel.widget.children[1:],
        ]
        self.results_panel.widget.layout = w.Layout(flex="1 1 30em", min_width="24em")
        grid = w.HBox(
            [form, self.results_panel.widget],
            layout=w.Layout(flex_flow="row wrap", align_items="flex-start"),
        )
        self.children = [
            style_sheet(),
            header,
            self._conflict,
            self._warnings,
            grid,
            self.stations.widget,
            self.burns.widget,
            self.allowances.widget,
            figure_box,
        ]

    def _orbit_case(self) -> Any:
        """The case whose orbit the form shows: the case itself, or its view in the orbit form
        chosen (``formview``; not saved until a value is edited in that form)."""
        form = getattr(self, "_view_form", None)
        if form is None or form == self._case.orbit.form:
            self._view_form = None
            return self._case
        cached = getattr(self, "_view_cache", None)
        if cached is not None and cached[0] is self._case and cached[1] == form:
            return cached[2]
        try:
            shown = view_case(self._case, form)
        except CaseError:  # the form no longer applies (an orbit made hyperbolic)
            self._view_form = None
            return self._case
        self._view_cache = (self._case, form, shown)
        return shown

    def _theme_changed(self, theme: str) -> None:
        """The front end shows ``theme``: draw the figures again in its palette."""
        if theme == self._theme:
            return
        self._theme = theme
        from .casefigures import CASE_FIGURES

        builders = {f.name: (lambda c, f=f: f.build(c, theme), f.data) for f in CASE_FIGURES(theme)}
        later = pipeline.background_needs(self._case)
        for figure in self._figures:
            if figure.name not in builders:
                continue
            figure.restyle(*builders[figure.name])
            need = FIGURE_NEEDS.get(figure.name, "orbit")
            if need in later and not pipeline.kernel_ready(self._case, need):
                figure.mark_waiting()  # the background job draws it when its data is there
                if not self._slow_job.running:
                    figure.mark_waiting(done=False)  # no job: say so, as after Cancel
            else:
                figure.update(self._case, figure_key(figure.name, self._case))

    def _refresh_fields(self, *, clear_errors: bool, source: Any = None) -> None:
        case = self._case
        self._title.value = html.escape(getattr(getattr(case, "meta", None), "title", "") or "")
        path = getattr(self.case_file, "path", None)
        self._path.value = html.escape(str(Path(path).name) if path else "not bound to a file")
        self.undo_button.disabled = not self._history.can_undo
        self.redo_button.disabled = not self._history.can_redo
        form = self._orbit_case().orbit.form
        if self.form_choice.value != form:
            self._quiet_form = True
            try:
                self.form_choice.value = form
            finally:
                self._quiet_form = False
        for key, _title, _paths in SECTIONS:
            self._refresh_section(key, clear_errors)
        data = case.model_dump(mode="json")
        for table in (self.stations, self.burns, self.allowances):
            *parents, last = table.path.split(".")
            parent: Any = data
            for part in parents:  # budget.allowances: shown when the case has a budget
                parent = parent.get(part) if isinstance(parent, dict) else None
            present = isinstance(parent, dict) and last in parent
            table.widget.layout.display = "flex" if present else "none"
            if present:
                table.sync(parent[last] or [], typed_here=source is table)

    def _refresh_section(self, key: str, clear_errors: bool) -> None:
        specs = field_specs(self._orbit_case() if key == "orbit" else self._case, key)
        box = self._sections[key]
        shown = [p for p, f in self._fields.items() if getattr(f, "_section", None) == key]
        if [s.path for s in specs] != shown:
            for path in shown:
                del self._fields[path]
            fields = [self._make_field(spec, key) for spec in specs]
            heading = w.HTML(f'<span class="ol-section-title">{self._section_titles[key]}</span>')
            extra = [self.form_choice] if key == "orbit" else []
            box.children = [heading, *extra, *(f.widget for f in fields)]
            box.layout.display = "flex" if fields else "none"
            return
        for spec in specs:
            field = self._fields[spec.path]
            if clear_errors or not field.has_error:
                field.clear_error()
                field.set_value(spec.value)

    def _make_field(self, spec: Any, section: str) -> Field:
        if spec.kind == "choice":
            field: Field = ChoiceField(spec.path, spec.value, spec.options)
        elif spec.kind == "bool":
            field = BoolField(spec.path, spec.value)
        elif spec.kind == "vector":
            field = VectorField(spec.path, spec.value)
        elif spec.kind == "text":
            field = TextField(spec.path, spec.value, optional=spec.optional)
        elif is_duration(spec.path):  # typed in s, min, h or days; the unit chosen is kept
            if not hasattr(self, "_duration_units"):
                self._duration_units: dict[str, str] = {}
            units = self._duration_units
            field = DurationField(spec.path, spec.value, unit=units.get(spec.path, "s"))
            field.unit_choice.observe(
                lambda c, p=spec.path: units.__setitem__(p, c["new"]), names="value"
            )
        else:
            field = NumberField(spec.path, spec.value, optional=spec.optional)
        if spec.help:
            for widget in field.input_widgets:
                widget.tooltip = f"{spec.path}: {spec.help}"
        if spec.path == "window.start_utc":
            field.input.placeholder = "the case epoch"
        field._section = section  # type: ignore[attr-defined]
        field.on_edit(lambda f: self._debounce.trigger(f.path, lambda: self._field_edited(f)))
        field.on_commit(lambda f: self._debounce.flush(f.path))  # Enter applies at once
        self._fields[spec.path] = field
        return field

    def _show_results(self, failed: list[str] = ()) -> None:
        job = self._slow_job
        if not self._job_needed:
            note = ""
        elif job.state == "running":
            note = "window results on the way\u2026"
        elif job.state == "cancelled":
            note = "window results cancelled: press \u201cRun: window results\u201d to compute them"
        else:
            note = "window results not computed yet: press \u201cRun: window results\u201d"
        with self._panel_lock:
            self.results_panel.show(self.results, " ".join([*failed, note]).strip())

    def _status(self, text: str, *, error: bool = False) -> None:
        stamp = datetime.now().strftime("%H:%M:%S")
        fingerprint = getattr(self._case, "fingerprint", "")
        short = f" \u00b7 case {fingerprint[:12]}" if fingerprint else ""
        self._state.value = html.escape(f"{text} {stamp}{short}")
        if error:
            self._state.add_class("ol-status-error")
        else:
            self._state.remove_class("ol-status-error")
