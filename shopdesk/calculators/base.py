"""What every calculator on the page shares: the kinds and fields it reads, its answer, its base form.

A calculator form computes nothing itself: it converts units at the edge
(``shopdesk.shop.quantities``) and calls the calculation library, whose
:class:`CalcInputError` messages become the form's errors, at the field they concern. Missing
inputs are not errors: the answer says what to type next, so that a live page does not shout
at fields nobody has reached yet.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, ClassVar

from django import forms
from django.conf import settings
from django.db.models import Model

from shopdesk.calc import CalcInputError
from shopdesk.calc.units import STANDARD_ATMOSPHERE
from shopdesk.shop.quantities import (
    FORCE,
    PRESSURE,
    Kind,
    QuantityField,
    format_number,
    format_quantity,
    to_display,
)
from shopdesk.specs.models import Oil, UnitModel

# --- Kinds that shopdesk.shop.quantities does not carry (yet) --------------------------------------

TEMPERATURE = Kind("[temperature]", "degC", None, "degC", {"degC": 1})
VISCOSITY = Kind("[length] ** 2 / [time]", "mm**2/s", None, "mm**2/s", {"mm**2/s": 2})
DENSITY = Kind("[mass] / [length] ** 3", "kg/m**3", None, "kg/m**3", {"kg/m**3": 1})
RIDER_MASS = Kind("[mass]", "kg", None, "kg", {"kg": 1})
SMALL_FORCE = Kind(FORCE.dimension, "N", None, "N", {"N": 1})  # seal friction: tenths matter

_LABELS = {"degC": "°C", "mm**2/s": "mm²/s", "kg/m**3": "kg/m³"}

ATMOSPHERE_KPA = float(STANDARD_ATMOSPHERE.to("kPa").magnitude)  # ISO 2533: gauge + this = absolute

# Shop defaults, not physics (common practice; see DOMAIN.md). A shop may set them in settings.
FORK_LOAD_SHARE = float(getattr(settings, "SHOP_FORK_LOAD_SHARE", 0.35))
FORK_SAG = float(getattr(settings, "SHOP_FORK_SAG", 0.20))
CAVITATION_THRESHOLD_KPA = float(getattr(settings, "SHOP_CAVITATION_THRESHOLD_KPA", 30.0))


def show(value: float | None, kind: Kind, unit: str | None = None) -> str:
    """A value in ``kind``'s stored unit, as the shop reads it (shop display units where chosen)."""
    unit = unit or kind.display_unit
    label = _LABELS.get(unit)
    if label is None:
        return format_quantity(value, kind, unit)
    if value is None:
        return "—"
    return f"{format_number(to_display(value, kind, unit), kind.decimals_for(unit))} {label}"


def show_pressure(kpa: float, *, absolute: bool) -> str:
    """A pressure in the shop's unit with the reference named: "9.5 psi gauge", "24.2 psi absolute"."""
    return f"{format_quantity(kpa, PRESSURE)} {'absolute' if absolute else 'gauge'}"


def other_pressure_unit() -> str:
    """The pressure unit the shop does not use, for a pump that reads the other one."""
    return "bar" if PRESSURE.display_unit == "psi" else "psi"


# --- Fields --------------------------------------------------------------------------------------


class CalcQuantityField(QuantityField):
    """A :class:`QuantityField` that also shows the calculators' own kinds with readable units."""

    def __init__(self, *, kind: Kind, **kwargs: Any) -> None:
        kwargs.setdefault("required", False)
        if kind.display_unit in _LABELS:
            # quantities.py cannot spell these units in its range messages: the library checks the range.
            kwargs.setdefault("minimum", None)
        super().__init__(kind=kind, **kwargs)
        self.widget.attrs["placeholder"] = _LABELS.get(kind.display_unit, self.widget.attrs["placeholder"])

    def prepare_value(self, value: Any) -> Any:
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            return show(float(value), self.kind)
        return value


class PercentField(forms.Field):
    """A share typed in percent ("20", "20 %", "20,5 %"), cleaned to a fraction (0.2)."""

    widget = forms.TextInput

    def __init__(self, *, maximum_included: bool = False, **kwargs: Any) -> None:
        kwargs.setdefault("required", False)
        self.maximum_included = maximum_included
        super().__init__(**kwargs)
        self.widget.attrs.update({"inputmode": "decimal", "autocomplete": "off", "placeholder": "%"})

    def prepare_value(self, value: Any) -> Any:
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            return f"{format_number(value * 100.0, 1)} %"
        return value

    def to_python(self, value: Any) -> float | None:
        text = str(value or "").strip()
        if not text:
            return None
        number = text.removesuffix("%").strip().replace(",", ".")
        try:
            percent = float(number)
        except ValueError:
            raise forms.ValidationError(f"“{text}” is not a percentage: type e.g. “20 %”.") from None
        if percent != percent or percent in (float("inf"), float("-inf")):
            raise forms.ValidationError(f"“{text}” is not a finite number.")
        above = percent > 100.0 if self.maximum_included else percent >= 100.0
        if percent <= 0.0 or above:
            bound = "at most 100 %" if self.maximum_included else "less than 100 %"
            raise forms.ValidationError(
                f"Must be more than 0 % and {bound}, got {format_number(percent, 2)} %."
            )
        return percent / 100.0


class CatalogueChoiceField(forms.ChoiceField):
    """A choice among objects loaded once per request (several selects share one query)."""

    def __init__(self, *, empty_label: str, **kwargs: Any) -> None:
        kwargs.setdefault("required", False)
        super().__init__(choices=[("", empty_label)], **kwargs)
        self.empty_label = empty_label
        self.objects: dict[str, Model] = {}

    def set_objects(self, objects: Sequence[Model], label: Any = str) -> None:
        self.objects = {str(item.pk): item for item in objects}
        self.choices = [("", self.empty_label), *((key, label(item)) for key, item in self.objects.items())]

    def clean(self, value: Any) -> Model | None:
        key = super().clean(value)
        return self.objects.get(key) if key else None


@dataclass(frozen=True)
class Catalogue:
    """The spec-sheet rows the page offers: oils and air-spring unit models (one query each)."""

    oils: list[Oil]
    air_models: list[UnitModel]

    @classmethod
    def load(cls) -> Catalogue:
        return cls(
            oils=list(Oil.objects.order_by("name")),
            air_models=list(
                UnitModel.objects.filter(spring_kind=UnitModel.SpringKind.AIR).order_by(
                    "maker", "name", "year_from"
                )
            ),
        )

    def air_model(self, key: Any) -> UnitModel | None:
        return next((model for model in self.air_models if str(model.pk) == str(key)), None)


# --- What a calculator shows ---------------------------------------------------------------------


@dataclass(frozen=True)
class Reading:
    label: str
    value: str
    detail: str = ""
    main: bool = False


@dataclass(frozen=True)
class Alarm:
    title: str
    text: str


@dataclass(frozen=True)
class Table:
    caption: str
    head: tuple[str, ...]
    rows: list[tuple[str, ...]]


@dataclass
class Outcome:
    """A calculator's answer, formatted for the page. ``missing`` lists inputs still to type."""

    readings: list[Reading] = field(default_factory=list)
    missing: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    alarm: Alarm | None = None
    table: Table | None = None
    # For a plot: (label, positions_mm, forces_N, style) and (label, x_mm, y_N).
    curves: list[tuple[str, Any, Any, str]] = field(default_factory=list)
    marks: list[tuple[str, float, float]] = field(default_factory=list)


class BlamedError(CalcInputError):
    """A calculator's error that the form knows belongs to one field (None: the whole form)."""

    def __init__(self, field_name: str | None, message: str) -> None:
        super().__init__(message)
        self.field_name = field_name


_IDENTIFIER = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")


class CalculatorForm(forms.Form):
    """One calculator: its fields, the library call, and where the library's errors belong."""

    section: ClassVar[str]
    title: ClassVar[str]
    intro: ClassVar[str] = ""
    # The library's parameter names (as its messages name them) -> this form's fields.
    parameters: ClassVar[dict[str, str]] = {}
    # (legend, field names); empty: one group of every visible field.
    groups: ClassVar[tuple[tuple[str, tuple[str, ...]], ...]] = ()

    def __init__(
        self,
        data: Mapping[str, Any] | None = None,
        *,
        catalogue: Catalogue,
        initial: dict[str, Any] | None = None,
    ) -> None:
        super().__init__(data, prefix=self.section, initial={**self.defaults(), **(initial or {})})
        self.catalogue = catalogue
        self._outcome: Outcome | None = None
        self._calculated = False

    def defaults(self) -> dict[str, Any]:
        return {}

    def outcome(self) -> Outcome | None:
        """The answer for bound, valid input; None otherwise (the errors are on the form)."""
        if not self._calculated:
            self._calculated = True
            if self.is_bound and self.is_valid():
                try:
                    self._outcome = self.calculate(self.cleaned_data)
                except CalcInputError as error:
                    self.add_library_error(error)
        return self._outcome

    def calculate(self, values: dict[str, Any]) -> Outcome:
        raise NotImplementedError

    def add_library_error(self, error: CalcInputError) -> None:
        message = str(error)
        if isinstance(error, BlamedError):
            self.add_error(error.field_name, message)
            return
        for word in _IDENTIFIER.findall(message):
            name = self.field_for(word)
            if name is not None:
                self.add_error(name, message)
                return
        self.add_error(None, message)

    def field_for(self, parameter: str) -> str | None:
        return self.parameters.get(parameter)

    def missing(self, values: Mapping[str, Any], *names: str) -> list[str]:
        """Labels of the fields among ``names`` that are still empty, in lower case for a sentence."""
        return [str(self.fields[name].label).lower() for name in names if values.get(name) is None]

    def fieldsets(self) -> list[tuple[str, list[forms.BoundField]]]:
        if not self.groups:
            return [("", list(self.visible_fields()))]
        return [(legend, [self[name] for name in names]) for legend, names in self.groups]


def number_with_unit(value: float, unit: str, decimals: int = 2) -> str:
    """A number the shop's units do not cover (kPa absolute, mm²): "166.8 kPa"."""
    return f"{format_number(value, decimals)} {unit}"
