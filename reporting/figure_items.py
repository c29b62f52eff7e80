"""Bokeh figure items (``bokeh.embed.json_item``) as the record keeps and draws them.

BokehJS reads an item's models in document order and needs each model's full definition at
its first appearance; later appearances are references ``{"id": ...}``. Writing a notebook
sorts JSON keys (nbformat), which can put a reference before its definition (a Grid's
``axis`` under ``center`` before the axis itself under ``left``): BokehJS then stops with
"reference pNNNN isn't known". ``drawable_item`` puts every definition back at the first
appearance, whatever the key order. ``item_fingerprint`` hashes a form that does not depend on
where the definitions sit, so the same figure has one fingerprint in every copy.
"""

from __future__ import annotations

from typing import Any

from .record import fingerprint_of

__all__ = ["drawable_item", "item_fingerprint"]


def _is_definition(node: Any) -> bool:
    return (
        isinstance(node, dict) and node.get("type") == "object" and "id" in node and "name" in node
    )


def _is_reference(node: Any) -> bool:
    return isinstance(node, dict) and set(node) == {"id"}


def _definitions(node: Any, found: dict[str, Any]) -> None:
    if isinstance(node, dict):
        if _is_definition(node):
            found.setdefault(node["id"], node)
        for value in node.values():
            _definitions(value, found)
    elif isinstance(node, list):
        for value in node:
            _definitions(value, found)


def drawable_item(item: dict[str, Any]) -> dict[str, Any]:
    """A copy of ``item`` with each model defined where BokehJS first meets it."""
    defs: dict[str, Any] = {}
    _definitions(item, defs)
    seen: set[str] = set()

    def walk(node: Any) -> Any:
        if _is_reference(node) and node["id"] in defs and node["id"] not in seen:
            return walk(defs[node["id"]])
        if _is_definition(node):
            if node["id"] in seen:
                return {"id": node["id"]}
            seen.add(node["id"])
            return {k: walk(v) for k, v in node.items()}
        if isinstance(node, dict):
            return {k: walk(v) for k, v in node.items()}
        if isinstance(node, list):
            return [walk(v) for v in node]
        return node

    return walk(item)


def item_fingerprint(item: dict[str, Any]) -> str:
    """SHA-256 of the item with every model moved to a table by id (placement-independent)."""
    table: dict[str, Any] = {}

    def flat(node: Any) -> Any:
        if _is_definition(node):
            table[node["id"]] = {k: flat(v) for k, v in node.items()}
            return {"id": node["id"]}
        if isinstance(node, dict):
            return {k: flat(v) for k, v in node.items()}
        if isinstance(node, list):
            return [flat(v) for v in node]
        return node

    root = flat(item)
    return fingerprint_of({"root": root, "models": table})
