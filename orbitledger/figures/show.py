"""Show a figure in the notebook and tag it for the calculation record.

``show(fig, name, caption)`` publishes two outputs in the running cell:

1. one MIME bundle with ``application/vnd.orbitledger.figure+json`` =
   ``{"name", "caption", "item": bokeh.embed.json_item(fig)}`` (what the record build collects),
   ``text/html`` (the element that BokehJS renders into) and ``text/plain`` (a fallback);
2. Bokeh's own notebook output, the script under ``application/vnd.bokehjs_exec.v0+json``
   that renders the figure live into that element.

BokehJS must be on the page before a figure renders (design.md, known pitfalls), so the first
``show`` in a kernel runs ``bokeh.io.output_notebook(INLINE, hide_banner=True)`` itself; a user
never has to remember it. INLINE keeps the notebook and the record working offline.

Names are unique per study: a second figure under a name already shown is refused with an
``InputError``, except when the same notebook cell runs again (JupyterLab and Notebook 7 send the
cell's id with each execution), which replaces its own figure. ``orbitledger.study.reset()``
starts a new study: its names are free again.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..kernel.errors import InputError

__all__ = [
    "FIGURE_MIME_TYPE",
    "ShownFigure",
    "ensure_notebook_bokehjs",
    "figure_bundle",
    "forget_figures",
    "show",
    "shown_figures",
]

FIGURE_MIME_TYPE = "application/vnd.orbitledger.figure+json"


@dataclass(frozen=True)
class ShownFigure:
    name: str
    caption: str
    cell_id: str | None
    execution_count: int | None


_shown: dict[str, ShownFigure] = {}
_bokehjs_loaded = False


def ensure_notebook_bokehjs() -> None:
    """Load BokehJS (inlined, no banner) into the notebook page once per kernel.

    Safe to call many times; also used by the editor widgets before their first BokehModel.
    """
    global _bokehjs_loaded
    if _bokehjs_loaded:
        return
    from bokeh.io import output_notebook
    from bokeh.resources import INLINE

    output_notebook(INLINE, hide_banner=True)
    _bokehjs_loaded = True


def figure_bundle(fig, name: str, caption: str = "") -> dict:
    """The record's part of the output: ``{FIGURE_MIME_TYPE: {...}, "text/plain": ...}``."""
    from bokeh.embed import json_item

    plain = f"[figure {name}]" + (f" {caption}" if caption else "")
    return {
        FIGURE_MIME_TYPE: {"name": name, "caption": caption, "item": json_item(fig)},
        "text/plain": plain,
    }


def _current_cell() -> tuple[str | None, int | None]:
    """(cell id, execution count) of the running cell, where the front end sends them."""
    try:
        from IPython import get_ipython
    except ImportError:  # pragma: no cover - IPython is a dependency of ipykernel
        return None, None
    shell = get_ipython()
    if shell is None:
        return None, None
    count = getattr(shell, "execution_count", None)
    kernel = getattr(shell, "kernel", None)
    cell_id = None
    if kernel is not None and hasattr(kernel, "get_parent"):
        try:
            parent = kernel.get_parent("shell") or {}
        except TypeError:  # ipykernel < 6.0 had no channel argument
            parent = kernel.get_parent() or {}
        cell_id = (parent.get("metadata") or {}).get("cellId")
    return cell_id, count


def _check_name(name: str, caption: str) -> ShownFigure:
    if not isinstance(name, str) or not name.strip():
        raise InputError("name", name, "a figure needs a non-empty name (unique in the study)")
    if not isinstance(caption, str):
        raise InputError("caption", caption, "must be a string")
    cell_id, count = _current_cell()
    entry = ShownFigure(name=name, caption=caption, cell_id=cell_id, execution_count=count)
    previous = _shown.get(name)
    if previous is not None and not _study_still_has(name):
        previous = None  # the study was reset (orbitledger.study.reset): a new study
    if previous is not None:
        rerun = (
            cell_id is not None
            and previous.cell_id == cell_id
            and previous.execution_count != count
        )
        if not rerun:
            raise InputError(
                "name",
                name,
                "a figure of this name was already shown in this study; give each figure "
                "its own name",
            )
    return entry


def _study_still_has(name: str) -> bool:
    """Whether the study registry still lists ``name`` (True when it keeps no figure list)."""
    from .. import study

    manifest = getattr(study, "manifest", None)
    if manifest is None:
        return True
    return any(f.get("name") == name for f in manifest().get("figures", []))


def show(fig, name: str, caption: str = "") -> None:
    """Display ``fig`` live in the notebook and tag it for the record as ``name``.

    Given any Bokeh model (a figure or a layout) made by the builders of this package, a name
    unique in the study and an optional caption. Raises ``InputError`` for an empty or
    duplicate name; nothing is displayed or recorded then.
    """
    from bokeh.embed.notebook import notebook_content
    from bokeh.io.notebook import EXEC_MIME_TYPE, JS_MIME_TYPE
    from IPython.display import publish_display_data

    entry = _check_name(name, caption)
    bundle = figure_bundle(fig, name, caption)
    ensure_notebook_bokehjs()
    script, div, _doc = notebook_content(fig)
    bundle["text/html"] = div
    publish_display_data(bundle)
    publish_display_data(
        {JS_MIME_TYPE: script, EXEC_MIME_TYPE: ""}, metadata={EXEC_MIME_TYPE: {"id": fig.id}}
    )
    _shown[name] = entry
    from .. import study

    note_figure = getattr(study, "note_figure", None)
    if note_figure is not None:
        note_figure(name, caption)


def shown_figures() -> list[ShownFigure]:
    """The figures shown so far in this kernel, in order."""
    return list(_shown.values())


def forget_figures() -> None:
    """Forget the shown names (a new study in the same kernel; tests)."""
    _shown.clear()
