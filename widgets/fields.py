"""One field widget per case field: a labelled input, its unit beside it, and an error line.

A field knows its dotted path in the case file (``orbit.e``), turns what was typed into a value
(or says why it cannot), and shows one message beside itself when the editor refuses the value.
The unit shown comes from the field's name, as every case-file field carries its unit in its
name (``a_km``, ``i_deg``, ``v_km_s``; docs/case-file.md).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import Any

import ipywidgets as w

from orbitledger.case.units import unit_of

__all__ = [
    "BoolField",
    "ChoiceField",
    "Field",
    "FieldParseError",
    "NumberField",
    "TextField",
    "VectorField",
    "label_for",
    "on_enter",
    "unit_for",
]


# Labels an analyst reads; a name not listed here is shown with its underscores as spaces.
_LABELS = {
    "a_km": "Semi-major axis",
    "altitude_km": "Altitude (a \u2212 R)",
    "e": "Eccentricity",
    "i_deg": "Inclination",
    "raan_deg": "RAAN",
    "argp_deg": "Argument of perigee",
    "nu_deg": "True anomaly",
    "mean_anomaly_deg": "Mean anomaly",
    "periapsis_alt_km": "Periapsis altitude",
    "apoapsis_alt_km": "Apoapsis altitude",
    "r_km": "Position r",
    "v_km_s": "Velocity v",
    "frame": "Frame",
    "epoch_utc": "Epoch",
    "name": "Name",
    "mass_kg": "Mass",
    "drag_area_m2": "Drag area",
    "drag_coefficient": "Drag coefficient",
    "isp_s": "Isp",
    "propellant_mass_kg": "Propellant",
    "start_utc": "Start",
    "duration_s": "Duration",
    "step_s": "Step",
    "propagator": "Propagator",
    "dut1_s": "dUT1",
    "xp_arcsec": "Polar motion xp",
    "yp_arcsec": "Polar motion yp",
    "title": "Title",
    "lat_deg": "Latitude",
    "lon_deg": "Longitude",
    "height_km": "Height",
    "elevation_mask_deg": "Elevation mask",
}

LABEL_WIDTH = "10.5em"
INPUT_WIDTH = "16em"  # a full double, -4.610733100000001e-16, in a monospace font


def unit_for(name: str) -> str:
    """The unit carried in a case-file field name (``"i_deg"`` -> ``"deg"``); ``""`` if none.

    From the one table of unit suffixes (``orbitledger.case.units``), powers as superscripts.
    """
    return unit_of(name).replace("^2", "\u00b2").replace("^3", "\u00b3")


def label_for(name: str) -> str:
    """The label shown for a case-file field name."""
    return _LABELS.get(name, name.replace("_", " ").capitalize())


class FieldParseError(ValueError):
    """What was typed is not a value of the field's kind (e.g. not a number)."""

    def __init__(self, path: str, text: str, reason: str) -> None:
        self.path = path
        self.text = text
        self.reason = reason
        super().__init__(f"{path} = {text!r}: {reason}")

    def __reduce__(self):  # picklable like every error of the package
        return (type(self), (self.path, self.text, self.reason))


class Field:
    """Base of the field widgets: path, label, unit, error line and the edit callback.

    Subclasses provide ``_inputs`` (the ipywidgets that take input), ``_read()`` and
    ``_write(value)``. ``on_edit(fn)`` registers ``fn(field)``, called when the user changes
    the value (never when the editor sets it with :meth:`set_value`).
    """

    def __init__(self, path: str, label: str | None = None, unit: str | None = None) -> None:
        self.path = path
        name = path.rsplit(".", 1)[-1]
        self.label = label if label is not None else label_for(name)
        self.unit = unit if unit is not None else unit_for(name)
        self._callbacks: list[Callable[[Field], None]] = []
        self._quiet = False
        self.error = w.HTML("", layout=w.Layout(min_width="0", flex="1 1 12em"))
        self.error.add_class("ol-error")
        self.unit_label = w.HTML(self.unit, layout=w.Layout(width="4.5em", min_width="4.5em"))
        self.unit_label.add_class("ol-unit")

    # -- building ---------------------------------------------------------------------------
    def _row(self, *inputs: w.Widget) -> w.HBox:
        row = w.HBox([*inputs, self.unit_label, self.error], layout=w.Layout(width="100%"))
        row.add_class("ol-field")
        for widget in inputs:
            widget.observe(self._changed, names="value")
        return row

    def _changed(self, _change: dict[str, Any]) -> None:
        if self._quiet:
            return
        for fn in self._callbacks:
            fn(self)

    # -- public -------------------------------------------------------------------------------
    def on_edit(self, fn: Callable[[Field], None]) -> None:
        self._callbacks.append(fn)

    def on_commit(self, fn: Callable[[Field], None]) -> None:
        """Register ``fn(field)`` for Enter in one of the field's text inputs."""
        for widget in self.input_widgets:
            if isinstance(widget, w.Text):
                on_enter(widget, lambda: fn(self))

    @property
    def input_widgets(self) -> list[w.Widget]:
        """The widgets the user types or chooses in (one, or three for a vector)."""
        inputs = getattr(self, "inputs", None)
        return list(inputs) if inputs is not None else [self.input]

    @property
    def value(self) -> Any:
        """The typed value, parsed; raises :class:`FieldParseError` with the reason."""
        return self._read()

    def set_value(self, value: Any) -> None:
        """Show ``value`` without calling the edit callbacks."""
        self._quiet = True
        try:
            self._write(value)
        finally:
            self._quiet = False

    def show_error(self, message: str) -> None:
        self.error.value = _escape(message)
        self.widget.add_class("ol-invalid")

    def clear_error(self) -> None:
        if self.error.value:
            self.error.value = ""
        self.widget.remove_class("ol-invalid")

    @property
    def has_error(self) -> bool:
        return bool(self.error.value)

    def _read(self) -> Any:  # pragma: no cover - abstract
        raise NotImplementedError

    def _write(self, value: Any) -> None:  # pragma: no cover - abstract
        raise NotImplementedError


def on_enter(text: w.Text, fn: Callable[[], None]) -> None:
    """Call ``fn()`` when the user presses Enter in ``text`` (the front end's "submit" message;
    the value typed before it has arrived already, as the input updates continuously)."""

    def handle(_widget: Any, content: dict, _buffers: Any) -> None:
        if content.get("event") == "submit":
            fn()

    text.on_msg(handle)


def _text_input(label: str, path: str, width: str = INPUT_WIDTH, described: bool = True) -> w.Text:
    text = w.Text(
        description=label if described else "",
        continuous_update=True,
        tooltip=path,
        style={"description_width": LABEL_WIDTH if described else "0"},
        layout=w.Layout(
            width=f"calc({LABEL_WIDTH} + {width})" if described else width,
            flex="0 0 auto",  # the error line beside it takes the room, never the input's
        ),
    )
    return text


def _format_number(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, float) and value.is_integer() and abs(value) < 1e15:
        return repr(value)
    return repr(value) if isinstance(value, float) else str(value)


def _parse_number(path: str, text: str, optional: bool) -> float | None:
    stripped = text.strip()
    if not stripped:
        if optional:
            return None
        raise FieldParseError(path, text, "a number is needed here")
    try:
        number = float(stripped.replace("\u2212", "-"))
    except ValueError:
        raise FieldParseError(path, text, "not a number") from None
    if not math.isfinite(number):
        raise FieldParseError(path, text, "must be a finite number")
    return number


class NumberField(Field):
    """A number typed as text, so that anything typed can be answered with a reason."""

    def __init__(self, path: str, value: Any, *, optional: bool = False, **kw: Any) -> None:
        super().__init__(path, **kw)
        self.optional = optional
        self.input = _text_input(self.label, path)
        self.widget = self._row(self.input)
        self.set_value(value)

    def _read(self) -> float | None:
        return _parse_number(self.path, self.input.value, self.optional)

    def _write(self, value: Any) -> None:
        self.input.value = _format_number(value)


class TextField(Field):
    """Free text (names, UTC epochs); an empty optional text means ``None``."""

    def __init__(self, path: str, value: Any, *, optional: bool = False, **kw: Any) -> None:
        super().__init__(path, **kw)
        self.optional = optional
        self.input = _text_input(self.label, path, width="16em")
        self.widget = self._row(self.input)
        self.set_value(value)

    def _read(self) -> str | None:
        text = self.input.value.strip()
        if not text and self.optional:
            return None
        return text

    def _write(self, value: Any) -> None:
        self.input.value = "" if value is None else str(value)


class ChoiceField(Field):
    """One of a fixed set of values (a dropdown)."""

    def __init__(self, path: str, value: Any, options: Sequence[Any], **kw: Any) -> None:
        super().__init__(path, **kw)
        self.input = w.Dropdown(
            options=list(options),
            description=self.label,
            style={"description_width": LABEL_WIDTH},
            layout=w.Layout(width=f"calc({LABEL_WIDTH} + {INPUT_WIDTH})", flex="0 0 auto"),
        )
        self.widget = self._row(self.input)
        self.set_value(value)

    def _read(self) -> Any:
        return self.input.value

    def _write(self, value: Any) -> None:
        if value not in self.input.options:
            self.input.options = [*self.input.options, value]
        self.input.value = value


class BoolField(Field):
    """A yes/no setting (a checkbox)."""

    def __init__(self, path: str, value: Any, **kw: Any) -> None:
        super().__init__(path, **kw)
        self.input = w.Checkbox(
            description=self.label,
            indent=True,
            style={"description_width": LABEL_WIDTH},
            layout=w.Layout(width=f"calc({LABEL_WIDTH} + {INPUT_WIDTH} + 2em)"),
        )
        self.widget = self._row(self.input)
        self.set_value(value)

    def _read(self) -> bool:
        return bool(self.input.value)

    def _write(self, value: Any) -> None:
        self.input.value = bool(value)


class VectorField(Field):
    """A 3-vector (``r_km``, ``v_km_s``, ``dv_rtn_km_s``): one component per line, each input
    wide enough for a full double (``-4.610733100000001e-16``) with the unit beside it."""

    def __init__(
        self, path: str, value: Any, *, axes: Sequence[str] = ("x", "y", "z"), **kw: Any
    ) -> None:
        super().__init__(path, **kw)
        self.axes = tuple(axes)
        self.inputs = [
            _text_input(f"{self.label} {axis}" if n == 0 else axis, f"{path} {axis}")
            for n, axis in enumerate(self.axes)
        ]
        units = [self.unit_label] + [
            w.HTML(self.unit, layout=w.Layout(width="4.5em", min_width="4.5em"))
            for _axis in self.axes[1:]
        ]
        for unit in units[1:]:
            unit.add_class("ol-unit")
        # One line per component; the error line beside the first.
        lines = [w.HBox([self.inputs[0], units[0], self.error], layout=w.Layout(width="100%"))]
        lines += [
            w.HBox([text, unit]) for text, unit in zip(self.inputs[1:], units[1:], strict=True)
        ]
        for line in lines:
            line.add_class("ol-field")
        self.widget = w.VBox(lines, layout=w.Layout(width="100%"))
        self.widget.add_class("ol-vector")
        for text in self.inputs:
            text.observe(self._changed, names="value")
        self.set_value(value)

    def _read(self) -> list[float]:
        out: list[float] = []
        for axis, text in zip(self.axes, self.inputs, strict=True):
            number = _parse_number(f"{self.path} {axis}", text.value, optional=False)
            assert number is not None
            out.append(number)
        return out

    def _write(self, value: Any) -> None:
        values = list(value) if value is not None else [None] * len(self.inputs)
        for text, number in zip(self.inputs, values, strict=False):
            text.value = _format_number(number)


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
