"""A duration typed in seconds, minutes, hours or days; the case always stores seconds.

The unit beside the number is a choice (s, min, h, days: the minute, hour and day of the SI
Brochure, 9th ed. 2019, Table 8: 1 min = 60 s, 1 h = 3600 s, 1 d = 86 400 s). Choosing another
unit converts the number shown and changes nothing in the case. A typed value is converted
exactly: the text is read as a decimal number, multiplied by the unit's whole number of seconds
in decimal arithmetic, and rounded once to the nearest double (``1.1`` h is 3960.0 s, not
3960.0000000000005 as ``1.1 * 3600`` gives). A value shown in a unit it does not divide evenly
(10 s in minutes) is shown to 12 significant digits; left as shown, it stands for the case's
value exactly (nothing is saved from a rounded number nobody typed).
"""

from __future__ import annotations

from decimal import Context, Decimal, InvalidOperation
from typing import Any

import ipywidgets as w

from .fields import Field, FieldParseError, _format_number, _text_input

__all__ = ["DURATION_UNITS", "DurationField", "is_duration", "seconds_from_text", "shown_in"]

# (label, seconds in one unit), SI Brochure 9th ed., Table 8 (non-SI units accepted for use).
DURATION_UNITS: tuple[tuple[str, int], ...] = (("s", 1), ("min", 60), ("h", 3600), ("days", 86400))
_SECONDS = dict(DURATION_UNITS)
_SHOWN_DIGITS = 12
_EXACT = Context(prec=60)  # far more digits than any typed number carries: products are exact


def is_duration(path: str) -> bool:
    """Whether the case field at ``path`` is a span of time in seconds (``window.duration_s``,
    ``window.step_s``, ``stations.0.min_pass_duration_s``), not an offset (``dut1_s``) or a
    specific impulse (``isp_s``)."""
    name = path.rsplit(".", 1)[-1]
    return name.endswith("duration_s") or name == "step_s"


def seconds_from_text(path: str, text: str, unit: str, label: str = "") -> float:
    """The seconds that ``text`` (a number in ``unit``) stands for, converted exactly and
    rounded once; raises :class:`FieldParseError` naming the field and the unit."""
    where = f"{label or path} in {unit}"
    stripped = text.strip().replace("\u2212", "-")
    if not stripped:
        raise FieldParseError(path, text, f"{where}: a number is needed here")
    try:
        number = Decimal(stripped)
    except InvalidOperation:
        raise FieldParseError(path, text, f"{where}: not a number") from None
    if not number.is_finite():
        raise FieldParseError(path, text, f"{where}: must be a finite number")
    seconds = float(_EXACT.multiply(number, Decimal(_SECONDS[unit])))
    if seconds in (float("inf"), float("-inf")):
        raise FieldParseError(path, text, f"{where}: too large")
    return seconds


def shown_in(seconds: float | None, unit: str) -> str:
    """``seconds`` written in ``unit``: exactly where the unit divides it within 12 significant
    digits (86400 s -> ``1`` day, 5400 s -> ``1.5`` h), else rounded to 12 significant digits."""
    if seconds is None:
        return ""
    if unit == "s":
        return _format_number(seconds)
    quotient = _EXACT.divide(Decimal(repr(float(seconds))), Decimal(_SECONDS[unit]))
    rounded = Context(prec=_SHOWN_DIGITS).plus(quotient)
    plain = -5 <= rounded.adjusted() < _SHOWN_DIGITS
    return format(rounded.normalize(), "f" if plain else "e")


class DurationField(Field):
    """A number and its unit (s, min, h, days); :attr:`value` is always in seconds."""

    def __init__(
        self, path: str, value: Any, *, optional: bool = False, unit: str = "s", **kw: Any
    ) -> None:
        super().__init__(path, unit="s", **kw)
        self.optional = optional
        self.input = _text_input(self.label, path)
        self.unit_choice = w.Dropdown(
            options=[label for label, _s in DURATION_UNITS],
            value=unit,
            tooltip=f"{path}: the unit the number is typed in (the case stores seconds)",
            layout=w.Layout(width="4.5em", min_width="4.5em"),
        )
        self.unit_choice.add_class("ol-unit-choice")
        self.unit_choice.observe(self._unit_switched, names="value")
        self.input.observe(self._changed, names="value")
        self.widget = w.HBox(
            [self.input, self.unit_choice, self.error], layout=w.Layout(width="100%")
        )
        self.widget.add_class("ol-field")
        self._stored: float | None = None
        self._shown = ""
        self.set_value(value)

    @property
    def shown_unit(self) -> str:
        return str(self.unit_choice.value)

    def _read(self) -> float | None:
        text = self.input.value
        if text == self._shown:  # left as shown: the case's own value, not its rounding
            return self._stored
        if not text.strip() and self.optional:
            return None
        return seconds_from_text(self.path, text, self.shown_unit, self.label)

    def _write(self, value: Any) -> None:
        seconds = None if value is None else float(value)
        try:
            if self.input.value.strip() and self._read() == seconds:
                self._stored = seconds  # the text typed already says it: keep it (and the caret)
                self._shown = self.input.value
                return
        except FieldParseError:
            pass
        self._stored = seconds
        self._shown = shown_in(seconds, self.shown_unit)
        self.input.value = self._shown

    def _unit_switched(self, change: dict[str, Any]) -> None:
        """Show the same duration in the new unit; the case is not touched."""
        old, new = change["old"], change["new"]
        text = self.input.value
        if text == self._shown:
            seconds = self._stored
        else:
            try:
                seconds = seconds_from_text(self.path, text, old, self.label)
            except FieldParseError:
                return  # nothing to convert: the message already says why
        self._quiet = True
        try:
            keep_stored = text == self._shown
            if keep_stored:
                self._shown = shown_in(seconds, new)
                self.input.value = self._shown
            else:  # a typed value not applied yet: convert it and let it still count as typed
                self.input.value = shown_in(seconds, new)
        finally:
            self._quiet = False

    def show_error(self, message: str) -> None:
        """The message names the unit the value was typed in and what it is in seconds."""
        if self.shown_unit != "s" and not message.startswith(f"{self.label} in "):
            try:
                seconds = self._read()
            except FieldParseError:
                seconds = None
            if seconds is not None:
                message = (
                    f"{message} ({self.input.value.strip()} {self.shown_unit} = {seconds!r} s)"
                )
        super().show_error(message)
