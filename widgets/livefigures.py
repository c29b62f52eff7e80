"""Figures that follow the case: the shared builders' output, updated in place on each edit.

A live figure keeps the Bokeh model that is on screen (inside a ``jupyter_bokeh.BokehModel``)
and, on each edit, asks the same builder of ``orbitledger.figures`` for the new figure, then
copies what changed into the model on screen: column data, ranges, texts, positions. Only
those changes travel to the browser, as one document patch per changed property, so the plot
is redrawn without being rebuilt, and the figure in the editor stays the one the record shows
(one figure code path, design.md). When the structure differs (a station added, a burn
removed) the on-screen model is replaced.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Iterator
from typing import Any

import ipywidgets as w
import numpy as np
from bokeh.core.property.descriptors import PropertyDescriptor
from bokeh.model import Model
from bokeh.models import ColumnDataSource

__all__ = ["LiveFigure", "load_bokehjs", "sync_model", "walk_models"]


def load_bokehjs() -> None:
    """Put BokehJS on the page once per kernel, inlined (the figures' own loader; design.md,
    known pitfalls: a BokehModel renders only after BokehJS is there)."""
    from orbitledger.figures.show import ensure_notebook_bokehjs

    ensure_notebook_bokehjs()


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
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        try:
            return bool(np.array_equal(np.asarray(a), np.asarray(b)))
        except (TypeError, ValueError):
            return False
    try:
        return bool(a == b)
    except (TypeError, ValueError):
        return False


def _data_changed(old: dict[str, Any], new: dict[str, Any]) -> bool:
    if old.keys() != new.keys():
        return True
    return any(not _same_value(old[k], new[k]) for k in new)


def _is_text_column(values: Any) -> bool:
    return (
        isinstance(values, list | tuple)
        and bool(values)
        and all(isinstance(v, str) for v in values)
    )


def _with_styling(screen: dict[str, Any], data: dict[str, Any]) -> dict[str, Any] | None:
    """``data`` plus the styling columns the builder added on screen (colours, markers per
    row, derived from the categories of the data); None when they cannot be kept.

    They are kept when the rows and every text column (the categories they derive from, such
    as a sector's fill class or an apsis name) are unchanged; otherwise the figure is rebuilt.
    """
    extra = set(screen) - set(data)
    if not extra:
        return data if set(data) == set(screen) else None
    if set(data) - set(screen):
        return None
    lengths = {len(v) for v in data.values()} | {len(screen[c]) for c in extra}
    if len(lengths) != 1:
        return None
    for column, values in data.items():
        if _is_text_column(values) and list(values) != list(screen[column]):
            return None
    return {**{c: screen[c] for c in extra}, **data}


def sync_model(screen: Model, fresh: Model) -> bool:
    """Copy ``fresh`` into ``screen`` (two figures made by the same builder), in place.

    Returns False (and changes nothing) when their structure differs: a different number or
    kind of models; the caller then replaces the figure. Otherwise sets on ``screen`` every
    plain property whose value differs, and replaces a source's ``data`` when any column
    changed, so only what changed is sent to the browser.
    """
    old_models, new_models = walk_models(screen), walk_models(fresh)
    if len(old_models) != len(new_models):
        return False
    if any(type(a) is not type(b) for a, b in zip(old_models, new_models, strict=True)):
        return False
    for old, new in zip(old_models, new_models, strict=True):
        if isinstance(old, ColumnDataSource):
            if _data_changed(old.data, new.data):
                old.data = dict(new.data)
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
    ) -> None:
        from jupyter_bokeh import BokehModel

        self.name = name
        self.build = build
        self.data = data
        self.note = w.HTML("")
        self.note.add_class("ol-note")
        self.model: Model | None = None
        self._sources: dict[str, ColumnDataSource] = {}
        self.view: Any = None
        self._BokehModel = BokehModel
        self.timings = {"build_s": 0.0, "sync_s": 0.0}
        self.widget = w.VBox([self.note])
        self.widget.add_class("ol-figure")
        self.update(case)

    def update(self, case: Any) -> None:
        t0 = time.perf_counter()
        try:
            if self.model is not None and self.data is not None:
                columns = self.data(case, self.model)
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
        if self.model is None or not self._hold(lambda: sync_model(self.model, fresh)):
            self.model = fresh
            # Looked up once per model: a model walk costs more than the update itself.
            self._sources = {s.name: s for s in fresh.select({"type": ColumnDataSource}) if s.name}
            self.view = self._BokehModel(fresh)
            self.widget.children = [self.view, self.note]
        self.timings = {"build_s": t1 - t0, "sync_s": time.perf_counter() - t1}

    def _update_sources(self, columns: dict[str, dict[str, Any]]) -> bool:
        assert self.model is not None
        found = self._sources
        if set(columns) != set(found):
            return False  # structure changed (a station more or less): rebuild
        merged: dict[str, dict[str, Any]] = {}
        for name, data in columns.items():
            full = _with_styling(found[name].data, data)
            if full is None:
                return False  # columns the screen lacks, or styling that no longer applies
            merged[name] = full
        columns = merged

        def apply() -> bool:
            for name, data in columns.items():
                if _data_changed(found[name].data, data):
                    found[name].data = dict(data)
            return True

        return self._hold(apply)

    def _hold(self, action: Callable[[], bool]) -> bool:
        assert self.model is not None
        doc = self.model.document
        if doc is None:
            return action()
        doc.hold("combine")  # one patch per changed property, not one per intermediate value
        try:
            return action()
        finally:
            doc.unhold()


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
