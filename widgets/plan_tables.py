"""The tables of the burn plan and of the budget's allowances (see ``tables`` for how a table
commits and shows a refusal)."""

from __future__ import annotations

import json
from typing import Any

import ipywidgets as w

from .fields import FieldParseError, _format_number, _parse_number
from .tables import ListTable, text_cell

__all__ = ["AllowanceTable", "BurnTable"]


class AllowanceTable(ListTable):
    """The budget's fixed allowances: a delta-v per line, once or every mission year."""

    path = "budget.allowances"
    title = "Budget allowances"
    noun = "allowance"
    columns = (
        ("name", "name", "21em"),
        ("dv_km_s", "delta-v (km/s)", "9em"),
        ("per_year", "every year", "6em"),
        ("margin", "with margin", "6em"),
    )
    checks = ("per_year", "margin")  # the plain row of ``tables``: name, delta-v, two checkboxes

    def _new_entry(self) -> dict[str, Any]:
        return {"name": f"allowance {len(self.entries) + 1}", "dv_km_s": 0.0}


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


def _what_text(entry: dict[str, Any]) -> str:
    if entry.get("transfer") is not None:
        return json.dumps(entry["transfer"])
    dv = entry.get("dv_rtn_km_s") or [0.0, 0.0, 0.0]
    return ", ".join(_format_number(x) for x in dv)


class BurnTable(ListTable):
    """The burn plan: when (epoch, apsis or node) and what (a delta-v in RTN, or a transfer)."""

    path = "burns"
    title = "Burn plan"
    noun = "burn"
    columns = (
        ("name", "name", "14em"),
        ("at", "when", "11em"),
        ("epoch_utc", "epoch (UTC)", "13em"),
        ("what", "delta-v R, T, N (km/s) or transfer (JSON)", "26em"),
    )

    def column_of(self, path: str | None) -> str | None:
        key = super().column_of(path)
        if key == "at" and path and "epoch_utc" in path:
            return "epoch_utc"
        return "what" if key in ("dv_rtn_km_s", "transfer") else key

    def _row_widgets(self, index: int, entry: dict[str, Any]):
        name = text_cell("", "14em", f"burns.{index}.name")
        when = w.Dropdown(
            options=list(_AT_CHOICES), layout=w.Layout(width="11em", min_width="11em")
        )
        when.tooltip = f"burns.{index}.at"
        epoch = text_cell("", "13em", f"burns.{index}.at.epoch_utc")
        when.observe(lambda c: setattr(epoch, "disabled", c["new"] != "epoch"), names="value")
        what = text_cell("", "26em", f"burns.{index}: delta-v R, T, N (km/s) or transfer (JSON)")

        def write(entry: dict[str, Any]) -> None:
            at = entry.get("at") or {}
            name.value = str(entry.get("name", ""))
            when.value = _at_key(at)
            epoch.value = str(at.get("epoch_utc", ""))
            epoch.disabled = when.value != "epoch"
            what.value = _what_text(entry)

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

        write(entry)
        return {"name": name, "at": when, "epoch_utc": epoch, "what": what}, read, write

    def _new_entry(self) -> dict[str, Any]:
        return {
            "name": f"burn {len(self.entries) + 1}",
            "at": {"apsis": "periapsis"},
            "dv_rtn_km_s": [0.0, 0.0, 0.0],
        }
