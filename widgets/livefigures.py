"""Figures that follow the case: the shared builders' output, updated in place on each edit.

A live figure keeps the Bokeh model that is on screen (inside a ``jupyter_bokeh.BokehModel``)
and, on each edit, asks the same builder of ``orbitledger.figures`` for the new figure, then
copies what changed into the model on screen: column data, ranges, texts, positions. Only
those changes travel to the browser (of a source, only its changed columns; numeric columns
as binary buffers), all of one update in one document patch, so the plot is redrawn without
being rebuilt, and the figure in the editor stays the one the record shows
(one figure code path, design.md). When the structure differs (a station added, a burn
removed) the on-screen model is replaced.
"""

from __future__ import annotations

import json
import threading
import time
from collections.abc import Callable, Iterator
from typing import Any

import ipywidgets as w
import numpy as np
from bokeh.core.property.descriptors import PropertyDescriptor
from bokeh.model import Model
from bokeh.models import ColumnDataSource

from .patchpacer import send_paced
from .screendata import line_plans, thin_columns, thin_sources

__all__ = ["LEAN_UPDATES", "LiveFigure", "load_bokehjs", "sync_model", "walk_models"]

# True: lines thinned to the plot's pixels (screendata) and the page fixes of bokehjs_fixes.
# False only in benchmarks/bench_editor_frames.py, which times the former updates beside these
# (read when a figure is made).
LEAN_UPDATES = True


def load_bokehjs() -> None:
    """Put BokehJS on the page once per kernel, inlined (the figures' own loader; design.md,
    known pitfalls: a BokehModel renders only after BokehJS is there)."""
    from orbitledger.figures.show import ensure_notebook_bokehjs

    from .bokehjs_fixes import install_bokehjs_fixes

    ensure_notebook_bokehjs()
    install_bokehjs_fixes()  # see bokehjs_fixes: no echo of updates, fewer style reads


def _children(model: Model) -> Iterator[Model]:
    """Models referenced by ``model``'s properties, in declaration order (deterministic)."""
    for name in sorted(model.properties_with_refs()):
        value = getattr(model, name)
        yield from _models_in(value)


def _models_in(value: Any) -> Iterator[Model]:
    if isinstance(value, Model):
        yield value
    elif isinstance(value, list | tuple):
        for item in value:
            yield from _models_in(item)
    elif isinstance(value, dict):
        for key in sorted(value, key=str):
            yield from _models_in(value[key])


def walk_models(root: Model) -> list[Model]:
    """Every model reachable from ``root``, depth first in property order, each once."""
    seen: set[str] = set()
    out: list[Model] = []
    stack = [root]
    while stack:
        model = stack.pop()
        if model.id in seen:
            continue
        seen.add(model.id)
        out.append(model)
        stack.extend(reversed(list(_children(model))))
    return out


def _same_value(a: Any, b: Any) -> bool:
    """Equal values, NaN equal to NaN (the gaps of a drawn line): a column that did not change
    is not sent again. Lists of arrays (patches' xs) compare item by item."""
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        x, y = np.asarray(a), np.asarray(b)
        if x.shape != y.shape:
            return False
        try:
            nan_ok = x.dtype.kind in "fc" and y.dtype.kind in "fc"
            return bool(np.array_equal(x, y, equal_nan=nan_ok))
        except (TypeError, ValueError):
            return False
    if isinstance(a, list | tuple) and isinstance(b, list | tuple):
        return len(a) == len(b) and all(_same_value(x, y) for x, y in zip(a, b, strict=True))
    if isinstance(a, float) and isinstance(b, float) and a != a and b != b:
        return True  # both NaN
    try:
        return bool(a == b)
    except (TypeError, ValueError):
        return False


def sync_model(screen: Model, fresh: Model) -> bool:
    """Copy ``fresh`` into ``screen`` (two figures made by the same builder), in place.

    Returns False (and changes nothing) when their structure differs: a different number or
    kind of models; the caller then replaces the figure. Otherwise sets on ``screen`` every
    plain property whose value differs, and of each source the columns that changed, so only
    what changed is sent to the browser.
    """
    old_models, new_models = walk_models(screen), walk_models(fresh)
    if len(old_models) != len(new_models):
        return False
    if any(type(a) is not type(b) for a, b in zip(old_models, new_models, strict=True)):
        return False
    for old, new in zip(old_models, new_models, strict=True):
        if isinstance(old, ColumnDataSource):
            if old.data.keys() != new.data.keys():
                old.data = dict(new.data)
            else:
                changed = {c: v for c, v in new.data.items() if not _same_value(old.data[c], v)}
                if changed:
                    old.data.update(changed)
            continue
        for name, value in new.properties_with_values(include_defaults=False).items():
            if name in ("id", "name", "subscribed_events") or next(_models_in(value), None):
                continue  # models are synced as models of their own, in the walk
            descriptor: PropertyDescriptor = old.lookup(name)
            if descriptor.readonly:
                continue
            if not _same_value(getattr(old, name), value):
                setattr(old, name, value)
    return True


class LiveFigure:
    """One figure on screen, kept up to date with the case.

    ``build(case)`` makes the figure (a builder of ``orbitledger.figures``); ``data(case,
    screen)``, when given, is its data partner: the columns of the figure's named sources, so
    an update replaces only the sources whose columns changed. Without a data partner the new
    figure is built and synced into the one on screen with :func:`sync_model`. Either way a
    change of structure (another number of stations) replaces the model on screen.

    ``widget`` is what to lay out: a ``jupyter_bokeh.BokehModel`` in a box, with a note line
    that says why, when this figure does not apply to the case. ``timings`` holds the seconds
    the last update spent computing figure data and sending it (the sync produces the
    widget messages).
    """

    def __init__(
        self,
        name: str,
        build: Callable[[Any], Model],
        case: Any,
        data: Callable[[Any, Any], dict[str, dict[str, Any]]] | None = None,
        *,
        defer: bool = False,
    ) -> None:
        from jupyter_bokeh import BokehModel

        self.name = name
        self.build = build
        self.data = data
        self.note = w.HTML("")
        self.note.add_class("ol-note")
        self.model: Model | None = None
        self._sources: dict[str, ColumnDataSource] = {}
        self._plans: dict[str, list] = {}  # the lines of each source (screendata.line_plans)
        self._lean = LEAN_UPDATES
        self.view: Any = None
        self._BokehModel = _batching_bokeh_model(BokehModel)
        self.timings = {"build_s": 0.0, "sync_s": 0.0}
        self.widget = w.VBox([self.note])
        self.widget.add_class("ol-figure")
        self.waiting = False
        self._key: str | None = None
        self._lock = threading.Lock()  # the background job updates some figures
        if defer:
            self.mark_waiting()
        else:
            self.update(case)

    def mark_waiting(self, done: bool = True) -> None:
        """Say that this figure waits for the background job (``done=False``: the job was
        cancelled or failed, so what is drawn is of an earlier case)."""
        if done:
            self.waiting = True
            text = "on the way (computed in the background)\u2026"
            self.note.value = f"{self.name}: {text}" if self.model is None else "updating\u2026"
        elif self.waiting:
            self.note.value = f"{self.name}: not updated for this case (window results not run)"

    def restyle(self, build: Callable[[Any], Model], data: Any) -> None:
        """Take the builders of another palette: the next update builds the figure anew."""
        with self._lock:
            self.build, self.data = build, data
            self.model, self._key = None, None

    def update(self, case: Any, key: str | None = None) -> None:
        """Draw ``case``; ``key`` (``inputkeys.figure_key``): when it equals the last drawn
        one, the drawing would be the same and nothing is done."""
        with self._lock:
            self.waiting = False
            if key is not None and key == self._key and self.model is not None:
                self.timings = {"build_s": 0.0, "sync_s": 0.0}
                return
            self._key = None
            self._update(case)
            if self.model is not None and not self.note.value:
                self._key = key

    def _update(self, case: Any) -> None:
        t0 = time.perf_counter()
        try:
            if self.model is not None and self.data is not None:
                columns = thin_sources(self.data(case, self.model), self._plans)
                t1 = time.perf_counter()
                if self._update_sources(columns):
                    self.note.value = ""
                    self.timings = {"build_s": t1 - t0, "sync_s": time.perf_counter() - t1}
                    return
            fresh = self.build(case)
        except ValueError as exc:  # the case is valid but this figure does not apply to it
            self.note.value = f"{self.name}: {_escape(str(exc))}"
            self.timings = {"build_s": time.perf_counter() - t0, "sync_s": 0.0}
            return
        t1 = time.perf_counter()
        self.note.value = ""
        plans = line_plans(fresh) if self._lean else {}
        for source in fresh.select({"type": ColumnDataSource}):
            if source.name in plans:  # not yet on screen: no event is sent
                source.data = thin_columns(source.data, plans[source.name])
        if self.model is None or not self._hold(lambda: sync_model(self.model, fresh)):
            self.model = fresh
            # Looked up once per model: a model walk costs more than the update itself.
            self._sources = {s.name: s for s in fresh.select({"type": ColumnDataSource}) if s.name}
            self._plans = plans
            self.view = self._BokehModel(fresh)
            self.view._paced = self._lean
            self.widget.children = [self.view, self.note]
        self.timings = {"build_s": t1 - t0, "sync_s": time.perf_counter() - t1}

    def _update_sources(self, columns: dict[str, dict[str, Any]]) -> bool:
        """Put the data partner's columns into the sources on screen, in place; False (and
        nothing changed) when the figure must be rebuilt: a source more or less (a station
        added), or other columns than the screen's."""
        assert self.model is not None
        found = self._sources
        if set(columns) != set(found):
            return False
        if any(set(data) != set(found[name].data) for name, data in columns.items()):
            return False

        def apply() -> bool:
            for name, data in columns.items():
                screen = found[name].data
                changed = {c: v for c, v in data.items() if not _same_value(screen[c], v)}
                if changed:  # one event per source, carrying only its changed columns
                    screen.update(changed)
            return True

        return self._hold(apply)

    def _hold(self, action: Callable[[], bool]) -> bool:
        """Run ``action`` with the document's events held, then send them to the browser as
        one document patch (one message instead of one per changed property)."""
        assert self.model is not None
        doc = self.model.document
        if doc is None:
            return action()
        view = self.view if hasattr(self.view, "begin_batch") else None
        doc.hold("combine")  # one event per changed property, not one per intermediate value
        if view is not None:
            view.begin_batch()
        try:
            return action()
        finally:
            doc.unhold()
            if view is not None:
                view.end_batch()


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


_BatchingBokehModel: Any = None


def _batching_bokeh_model(base: type) -> type:
    """``jupyter_bokeh.BokehModel`` that can send a run of document events as one PATCH-DOC
    message (as a Bokeh server does; the browser side applies a patch's events together),
    made once per kernel."""
    global _BatchingBokehModel
    if _BatchingBokehModel is not None:
        return _BatchingBokehModel

    class BatchingBokehModel(base):  # type: ignore[misc, valid-type]
        _batch: list | None = None
        _paced = True  # False for the former updates (LEAN_UPDATES off when the figure was made)

        def begin_batch(self) -> None:
            self._batch = []

        def end_batch(self) -> None:
            events, self._batch = self._batch or [], None
            if not events:
                return
            from bokeh.protocol import Protocol

            msg = Protocol().create("PATCH-DOC", events)
            parts = [({"msg": "patch", "payload": msg.header_json}, None)]
            parts.append(({"msg": "patch", "payload": msg.metadata_json}, None))
            parts.append(({"msg": "patch", "payload": msg.content_json}, None))
            for buffer in msg.buffers:
                parts.append(({"msg": "patch", "payload": json.dumps(buffer.ref)}, None))
                parts.append(({"msg": "patch"}, [buffer.to_bytes()]))

            def send() -> None:
                for content, buffers in parts:
                    self.send(content, buffers)

            # One figure per frame in the browser (patchpacer); the former updates at once.
            send_paced(send, None if self._paced else 0.0)

        def _document_patched(self, event: Any) -> None:
            if self._batch is not None and event.setter is not self:
                self._batch.append(event)
                return
            super()._document_patched(event)

    _BatchingBokehModel = BatchingBokehModel
    return BatchingBokehModel
