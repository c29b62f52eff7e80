"""The case editor: a form for every section of a case, live results and figures.

``CaseEditor(case_file)`` (or ``orbitledger.open_case(path).editor()``) shows the case as a
form. Every edit goes the same way, whether typed or scripted with :meth:`CaseEditor.apply`:

1. the case model validates the changed case (``Case.with_changes``); a refusal raises
   ``CaseError`` and changes nothing: not the case, not the file, not the results;
2. the case file is saved atomically (``CaseFile.save``); if the file changed on disk since it
   was loaded, the editor asks (reload from disk, or overwrite) instead of overwriting;
3. the new case becomes current, joins the undo history, and the results panel and the figures
   update in place.

Typing is debounced; a refused value shows its reason beside its field and the last valid case
stays in force. Results that take longer (over the analysis window, or years) run in the
background with a progress bar and a cancel button.
"""

from __future__ import annotations

import html
import threading
import time
from collections.abc import Callable, Mapping
from typing import Any

from orbitledger import analysis
from orbitledger.case import CaseError, CaseFileChanged

from . import pipeline
from .background import Progress
from .casefigures import prime
from .debounce import Debouncer
from .fields import Field
from .form import EditorForm
from .formview import view_case
from .history import History
from .inputkeys import FIGURE_NEEDS, figure_key
from .livefigures import load_bokehjs
from .snapshot import EditorSnapshot
from .tables import ListTable
from .themeprobe import ThemeProbe

__all__ = ["CaseEditor", "editor_figures"]


def editor_figures(theme: str = "light") -> list[tuple[str, Callable, Callable]]:
    """The editor's figures: (name, build(case), data(case, screen)), built by the shared
    builders of ``orbitledger.figures`` from the case (see ``casefigures``)."""
    from .casefigures import CASE_FIGURES

    return [(f.name, lambda case, f=f: f.build(case, theme), f.data) for f in CASE_FIGURES(theme)]


def _case_warnings(case: Any) -> list[str]:
    try:
        return [str(note) for note in case.warnings()]
    except (ValueError, ImportError):  # the kernel's cautions are not there yet
        return []


def _error_path(err: Exception) -> str | None:
    for attr in ("path", "field"):
        value = getattr(err, attr, None)
        if isinstance(value, str):
            return value
    return None


def _error_text(err: Exception) -> str:
    reason = getattr(err, "reason", None)
    return str(reason) if reason else str(err)


class CaseEditor(EditorSnapshot, EditorForm):
    """The editing widget for one case (bound to its case file when given one).

    ``source``: a ``CaseFile`` (edits are saved to it) or a bare ``Case`` (edits stay in the
    session). ``theme``: the figures' palette, ``"light"`` or ``"dark"``; by default the
    figures follow the front end's theme (JupyterLab, Notebook 7), light where there is none.
    ``debounce_s``: quiet time after the last keystroke before a typed value is applied.
    ``figures``: (name, build, data) triples; default :func:`editor_figures`.
    """

    def __init__(
        self,
        source: Any,
        *,
        theme: str | None = None,
        debounce_s: float = 0.35,
        figures: list[tuple[str, Callable, Callable | None]] | None = None,
        window_results: bool = True,
    ) -> None:
        super().__init__()
        load_bokehjs()
        if hasattr(source, "save") and hasattr(source, "case"):
            self.case_file, case = source, source.case
        else:
            self.case_file, case = None, source
        self._case = case
        self._history: History[Any] = History(case)
        self._debounce = Debouncer(debounce_s)
        self.window_results = window_results
        self._generation = 0
        self._pending: Any = None  # a valid case waiting on the changed-on-disk question
        self._view_form: str | None = None  # the orbit form shown, when not the case's own
        self._results: dict[str, Any] = {}
        self._slow_results: dict[str, Any] = {}
        self._job_needed = False
        self._failed_groups: list[str] = []  # the background groups that did not apply
        self._panel_lock = threading.Lock()
        self.timings: dict[str, float] = {}
        self.add_class("ol-editor")
        self.layout.width = "100%"
        # No theme given: follow the front end's (``themeprobe``); light until it reports.
        self._theme = theme or "light"
        self._follow_theme = theme is None and figures is None
        self._build(figures if figures is not None else editor_figures(self._theme))
        if self._follow_theme:
            self._theme_probe = ThemeProbe(self._theme_changed)
            self.children = [*self.children, self._theme_probe.widget]
        self._refresh_fields(clear_errors=True)
        self._status("opened" if self.case_file is not None else "not bound to a file")
        self._recompute()

    # -- public API ---------------------------------------------------------------------------
    @property
    def case(self) -> Any:
        """The current validated case (what the case file holds)."""
        return self._case

    @property
    def results(self) -> dict[str, Any]:
        """The current named results, ``{name: orbitledger.analysis.Result}``."""
        return {**self._results, **self._slow_results}

    @property
    def summary(self) -> dict[str, float]:
        """The current results as ``{name: value}`` (orbit_summary's keys, plus more)."""
        return analysis.results_as_values(self.results)

    def apply(self, changes: Mapping[str, Any]) -> Any:
        """Apply ``{dotted path: value}`` as one edit; returns the new case.

        Raises ``CaseError`` (nothing changes) for an invalid value, and ``CaseFileChanged``
        when the file changed on disk since it was loaded: the editor then shows its question
        (reload from disk / overwrite) and keeps the edit pending until it is answered.
        """
        changes = dict(changes)
        return self._commit(self._edit_base(changes).with_changes(changes))

    def switch_form(self, form: str) -> Any:
        """Show the orbit in ``form`` ("classical", "apsides", "cartesian"): a view, not an
        edit. The case, its file and its fingerprint stay as they are; the fields show the
        orbit converted, rounded where the conversion's float noise lies (``formview``). An
        edit of an orbit field then saves the case in that form. Returns the case as shown
        (validated, not saved); raises ``CaseError`` where the form does not apply."""
        shown = view_case(self._case, form)
        self._view_form = None if form == self._case.orbit.form else form
        self._refresh_fields(clear_errors=True)
        if self._view_form is None:
            self._status("orbit shown as given in the case file")
        else:
            self._status(f"orbit shown as {form} (a view: saved when you edit a value of it)")
        return shown

    def _edit_base(self, changes: Mapping[str, Any]) -> Any:
        """The case an edit applies to: the orbit's view in the form shown when the edit
        touches the orbit, else the case."""
        if self._view_form is not None and any(str(p).startswith("orbit.") for p in changes):
            return self._orbit_case()
        return self._case

    def undo(self) -> Any:
        """Return to the case before the last edit (and save it); returns the case."""
        self._debounce.flush()
        return self._commit(self._history.peek_undo(), move=self._history.undo)

    def redo(self) -> Any:
        self._debounce.flush()
        return self._commit(self._history.peek_redo(), move=self._history.redo)

    def reload_from_disk(self) -> Any:
        """Drop a pending edit and take the case file's current content as the case."""
        fresh = self.case_file.reload() if self.case_file is not None else self._case
        self._pending = None
        self._conflict.layout.display = "none"
        self._history.push(fresh)
        self._set_case(fresh, clear_errors=True)
        self._status("reloaded from disk")
        return fresh

    def overwrite(self) -> Any:
        """Save the pending edit over the file that changed on disk."""
        if self._pending is None:
            raise RuntimeError("no edit is waiting on the changed-on-disk question")
        pending, self._pending = self._pending, None
        self._conflict.layout.display = "none"
        return self._commit(pending, force=True)

    @property
    def fields(self) -> dict[str, Field]:
        """The field widgets by dotted path (for scripting and tests)."""
        return dict(self._fields)

    # -- the one edit path ----------------------------------------------------------------------
    def _commit(
        self,
        new_case: Any,
        *,
        move: Callable[[], Any] | None = None,
        force: bool = False,
        source: Any = None,
    ) -> Any:
        if self.case_file is not None:
            try:
                self.case_file.save(new_case, force=force)
            except CaseFileChanged:
                self._pending = new_case
                self._conflict.layout.display = "flex"
                self._status("not saved: the file changed on disk", error=True)
                raise
        if move is not None:
            move()
        else:
            self._history.push(new_case)
        self._case = new_case  # the status line names the saved case at once, then results
        self._status("saved" if self.case_file is not None else "applied (no case file)")
        self._set_case(new_case, clear_errors=move is not None or force, source=source)
        return new_case

    def _set_case(self, case: Any, *, clear_errors: bool, source: Any = None) -> None:
        self._case = case
        self._generation += 1
        t0 = time.perf_counter()
        self._refresh_fields(clear_errors=clear_errors, source=source)
        self.timings = {"fields_s": time.perf_counter() - t0}
        self._recompute()

    def _recompute(self) -> None:
        """The edit path's computations: the fast ones now, the rest in the background (see
        ``pipeline``); each is cached on its inputs, so only what the edit changed is done."""
        t0 = time.perf_counter()
        case = self._case
        try:
            self._results = pipeline.fast_results(case)
        except ValueError as exc:  # a valid case the kernel cannot summarise (shown, not lost)
            self._results = {}
            self.results_panel.show_error(f"results unavailable: {exc}")
        later = pipeline.background_needs(case)
        now = [n for n in ("orbit", "window", "budget") if n not in later]
        if self._figures:
            prime(case, now)  # the figures' kernel work: ephemeris, ground track
        t1 = time.perf_counter()
        self._slow_results, failed, missing = pipeline.cached_background_results(case)
        self._failed_groups = failed
        waiting = [
            f
            for f in self._figures
            if FIGURE_NEEDS.get(f.name, "orbit") in later
            and not pipeline.kernel_ready(case, FIGURE_NEEDS.get(f.name, "orbit"))
        ]
        self._job_needed = bool(missing or waiting)
        self._show_results(failed)
        self._warnings.value = html.escape(" ".join(_case_warnings(case)))
        t2 = time.perf_counter()
        data = send = 0.0
        for figure in self._figures:
            if figure in waiting:
                figure.mark_waiting()
                continue
            figure.update(case, figure_key(figure.name, case))
            data += figure.timings["build_s"]
            send += figure.timings["sync_s"]
        self.timings.update(
            kernel_s=t1 - t0,
            figure_data_s=data,
            widget_s=self.timings.get("fields_s", 0.0) + (t2 - t1) + send,
        )
        if not self._job_needed:
            self._slow_job.cancel(quiet=True)  # a run for an older case is no longer wanted
            self._slow_job.show_idle(f"{len(self._slow_results)} window results (cached)")
        elif self.window_results:
            self.run_window_results()
        else:
            self._slow_job.show_idle("not computed yet: press Run")

    def run_window_results(self) -> None:
        """Compute the results over the analysis window (eclipses, contacts, lifetime, the
        budget) and the figures that wait for them, in the background; they join the panel
        when done. Each edit does this itself unless the editor was made with
        ``window_results=False``; after Cancel, an edit or this method runs them again."""
        self._slow_job.start()
        self._show_results()
        if self._slow_job.state != "running":  # it finished meanwhile: show how it ended
            self._show_results(self._failed_groups)

    def _window_job(self, progress: Progress) -> dict[str, Any]:
        return self._slow_groups(list(pipeline.BACKGROUND_GROUPS), progress, self._generation)

    def _history_marker(self) -> int:
        return self._generation

    def _slow_groups(self, groups: list[str], progress: Progress, marker: int) -> dict[str, Any]:
        case, out, failed = self._case, {}, []
        later = pipeline.background_needs(case)
        steps = len(groups) + 1
        t0 = time.perf_counter()

        def current() -> bool:
            return self._history_marker() == marker

        def draw(need: str) -> None:
            for figure in self._figures:
                if FIGURE_NEEDS.get(figure.name, "orbit") == need and need in later and current():
                    figure.update(case, figure_key(figure.name, case))

        if "window" in later:  # the numerical propagation, with its own progress
            progress(0.0, "propagating over the window\u2026")
            prime(case, ["window"], lambda f: progress(f / steps, "propagating\u2026"))
            draw("window")
        for k, group in enumerate(groups):
            progress((k + 1) / steps, f"{group}\u2026")
            try:
                out.update(pipeline.slow_group(case, group))
            except ValueError as exc:  # one group that does not apply does not stop the rest
                failed.append(f"{group}: {exc}")
            if group == "budget":
                prime(case, ["budget"])
                draw("budget")
                self.timings["budget_s"] = time.perf_counter() - t0
            if current():
                self._slow_results = dict(out)
                self._show_results(failed)
        progress(1.0)
        self.timings["background_s"] = time.perf_counter() - t0
        if current():
            self._job_needed = False
            self._failed_groups = list(failed)
            self._show_results(failed)
        return out

    def _window_job_done(self, job: Any) -> None:
        """The job ended (done, cancelled or failed): the panel shows that end, never the
        "on the way" note of the run (which a fast run could otherwise leave behind)."""
        if job.state in ("cancelled", "failed"):
            for figure in self._figures:
                figure.mark_waiting(done=False)
        self._show_results(self._failed_groups if job.state == "done" else [])

    # -- typed edits ------------------------------------------------------------------------
    def _field_edited(self, field: Field) -> None:
        try:
            value = field.value
        except ValueError as exc:  # FieldParseError: not a number, empty
            field.show_error(getattr(exc, "reason", str(exc)))
            return
        try:
            new_case = self._edit_base({field.path: value}).with_changes({field.path: value})
        except CaseError as exc:
            self._show_refusal(exc, field)
            return
        field.clear_error()
        self._guarded(lambda: self._commit(new_case, source=field))

    def _propose_list(self, path: str, entries: list[dict[str, Any]], table: ListTable) -> None:
        try:
            new_case = self._case.with_changes({path: entries})
        except CaseError as exc:
            table.show_error(_error_path(exc), _error_text(exc))
            return
        self._guarded(lambda: self._commit(new_case, source=table))

    def _form_switched(self, change: dict[str, Any]) -> None:
        if getattr(self, "_quiet_form", False):
            return
        try:
            self.switch_form(change["new"])
        except CaseError as exc:
            self._status(_error_text(exc), error=True)
            self._quiet_form = True
            self.form_choice.value = self._orbit_case().orbit.form
            self._quiet_form = False

    def _show_refusal(self, exc: Exception, field: Field) -> None:
        path = _error_path(exc)
        target = self._fields.get(path or "", field)
        text = _error_text(exc)
        if target is not field:
            text = f"{path}: {text}"
        field.show_error(text)

    def _guarded(self, action: Callable[[], Any]) -> None:
        """Run a button's or a field's action; a refusal is shown, never raised into the UI."""
        try:
            action()
        except CaseFileChanged:
            pass  # the question is on screen
        except (CaseError, IndexError, OSError) as exc:
            self._status(_error_text(exc), error=True)
