"""Quantities at the edge of the app: read typed values with units, show stored ones.

The database keeps one fixed unit per field, named in the field (``pressure_kpa``,
``volume_ml``, ``length_mm``). Forms accept any unit of the right kind and convert
with pint (``shopdesk.calc.units``); pages show values in the shop's display units
(settings ``SHOP_PRESSURE_UNIT``, ``SHOP_VOLUME_UNIT``, ``SHOP_LENGTH_UNIT``).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from decimal import Decimal
from typing import Any

from django import forms
from django.conf import settings
from django.core.exceptions import ValidationError

from shopdesk.calc import Q_, CalcInputError, parse_quantity


@dataclass(frozen=True)
class Kind:
    """One kind of quantity as the app stores and shows it."""

    dimension: str
    stored_unit: str  # the unit of the database field
    display_setting: str | None  # the setting that picks the display unit, if the shop may choose
    fixed_display_unit: str  # used when there is no setting
    decimals: dict[str, int]  # decimals to show, per display unit

    @property
    def display_unit(self) -> str:
        if self.display_setting:
            return str(getattr(settings, self.display_setting))
        return self.fixed_display_unit

    def decimals_for(self, unit: str) -> int:
        return self.decimals.get(unit, 2)


PRESSURE = Kind("[pressure]", "kPa", "SHOP_PRESSURE_UNIT", "psi", {"psi": 1, "bar": 2, "kPa": 0})
VOLUME = Kind("[volume]", "mL", "SHOP_VOLUME_UNIT", "mL", {"mL": 1, "fl oz": 2})
LENGTH = Kind("[length]", "mm", "SHOP_LENGTH_UNIT", "mm", {"mm": 1, "in": 3})
MASS = Kind("[mass]", "g", None, "g", {"g": 1})
TORQUE = Kind("[length] ** 2 * [mass] / [time] ** 2", "N*m", None, "N*m", {"N*m": 1})
SPRING_RATE = Kind("[mass] / [time] ** 2", "N/mm", None, "N/mm", {"N/mm": 1})
FORCE = Kind("[length] * [mass] / [time] ** 2", "N", None, "N", {"N": 0})

_PINT_NAMES = {"fl oz": "fluid_ounce", "N*m": "N*m"}
_LABELS = {"fl oz": "fl oz", "N*m": "N·m", "mL": "mL", "kPa": "kPa", "N/mm": "N/mm"}


def unit_label(unit: str) -> str:
    return _LABELS.get(unit, unit)


@functools.cache
def _linear_map(stored_unit: str, unit: str) -> tuple[float, float]:
    """(scale, offset) taking ``stored_unit`` to ``unit``, read off pint once per pair: every
    unit the app shows is a linear (or, for temperatures, affine) map of its stored one, and
    parsing the units on each value cost a job page tens of milliseconds."""
    target = _PINT_NAMES.get(unit, unit)
    offset = float(Q_(0.0, stored_unit).to(target).magnitude)
    return float(Q_(1.0, stored_unit).to(target).magnitude) - offset, offset


def to_display(value: float | Decimal | None, kind: Kind, unit: str | None = None) -> float | None:
    """A stored value converted to the display unit (or ``unit``), as a float."""
    if value is None:
        return None
    scale, offset = _linear_map(kind.stored_unit, unit or kind.display_unit)
    return float(value) * scale + offset


def format_quantity(value: float | Decimal | None, kind: Kind, unit: str | None = None) -> str:
    """A stored value as the shop reads it: ``"85 psi"``, ``"120.0 mL"``; an em dash when empty."""
    if value is None or value == "":
        return "—"
    unit = unit or kind.display_unit
    shown = to_display(value, kind, unit)
    return f"{format_number(shown, kind.decimals_for(unit))} {unit_label(unit)}"


def format_number(value: float | None, decimals: int) -> str:
    """A number rounded to ``decimals`` places, without trailing zeros: 85.0 -> "85", 5.90 -> "5.9"."""
    if value is None:
        return "—"
    text = f"{value:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in {"-0", ""} else text


class QuantityField(forms.Field):
    """A form field that takes a value with or without a unit and cleans to the stored unit.

    ``"85"`` takes the shop's display unit; ``"5.9 bar"`` carries its own. The cleaned
    value is a ``float`` in ``kind.stored_unit``. ``minimum`` and ``maximum`` are in the
    stored unit; the minimum is inclusive only when ``allow_minimum``.
    """

    def __init__(
        self,
        *,
        kind: Kind,
        minimum: float | None = 0.0,
        maximum: float | None = None,
        allow_minimum: bool = True,
        **kwargs: Any,
    ) -> None:
        self.kind = kind
        self.minimum = minimum
        self.maximum = maximum
        self.allow_minimum = allow_minimum
        kwargs.setdefault("widget", forms.TextInput)
        super().__init__(**kwargs)
        self.widget.attrs.setdefault("inputmode", "decimal")
        self.widget.attrs.setdefault("autocomplete", "off")
        self.widget.attrs.setdefault("placeholder", unit_label(kind.display_unit))

    def prepare_value(self, value: Any) -> Any:
        # Stored numbers are shown in the display unit with the unit written out,
        # so that what the user sees is exactly what would be saved again.
        if isinstance(value, (int, float, Decimal)) and not isinstance(value, bool):
            return format_quantity(value, self.kind)
        return value

    def to_python(self, value: Any) -> float | None:  # type: ignore[override]
        if value in self.empty_values:
            return None
        text = str(value).strip()
        if not text:
            return None
        if len(text) > 40:
            raise ValidationError(
                "Too long for a value: type a number and a unit, e.g. “85 psi”.", code="invalid"
            )
        display_unit = _PINT_NAMES.get(self.kind.display_unit, self.kind.display_unit)
        try:
            quantity = parse_quantity(text, default_unit=display_unit, dimension=self.kind.dimension)
        except CalcInputError as error:
            raise ValidationError(str(error), code="invalid") from None
        stored = float(quantity.to(self.kind.stored_unit).magnitude)
        self._check_range(stored)
        return stored

    def _check_range(self, stored: float) -> None:
        below = self.minimum is not None and (
            stored < self.minimum or (stored == self.minimum and not self.allow_minimum)
        )
        if below:
            word = "at least" if self.allow_minimum else "more than"
            raise ValidationError(
                f"Must be {word} {format_quantity(self.minimum, self.kind)}.", code="min_value"
            )
        if self.maximum is not None and stored > self.maximum:
            raise ValidationError(
                f"Must be at most {format_quantity(self.maximum, self.kind)}.", code="max_value"
            )
