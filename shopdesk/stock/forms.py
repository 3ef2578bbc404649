"""Stock forms: a part, receiving, adjusting, and the stock page's filter.

Quantities are typed in the part's unit of measure; an oil's may carry a volume unit
("1 L", "250 cc", "4 fl oz"), converted to mL here. The range rules (not zero, not more
than one movement may move, whole numbers for items) live in the services, whose
refusals the views show at the field.
"""

from __future__ import annotations

from decimal import ROUND_HALF_UP, Decimal, InvalidOperation
from typing import Any

from django import forms
from django.conf import settings

from shopdesk.calc import CalcInputError, parse_quantity
from shopdesk.shop.ids import RecordChoiceField
from shopdesk.stock.models import Part

QUANTITY_TEXT_LENGTH = 40


def read_stock_quantity(text: str, unit_of_measure: str) -> Decimal:
    """A quantity typed for a part, in its unit of measure, to 0.01. Raises ``ValidationError``."""
    text = (text or "").strip()
    if not text:
        raise forms.ValidationError("Enter a quantity.", code="required")
    if len(text) > QUANTITY_TEXT_LENGTH:
        raise forms.ValidationError("Too long for a quantity: type a number.", code="invalid")
    if unit_of_measure == Part.UnitOfMeasure.ML:
        try:
            volume = parse_quantity(text, default_unit="mL", dimension="[volume]")
        except CalcInputError as error:
            raise forms.ValidationError(str(error), code="invalid") from None
        magnitude = float(volume.to("mL").magnitude)
        try:
            return Decimal(str(magnitude)).quantize(Decimal("0.01"), rounding=ROUND_HALF_UP)
        except InvalidOperation:  # more digits than a quantity holds (or not a number at all)
            raise forms.ValidationError(
                f"“{text}” is far more than any delivery or fill: check the number.", code="invalid"
            ) from None
    cleaned = text.removesuffix("each").removesuffix("ea").strip().replace(",", ".")
    try:
        number = Decimal(cleaned)
    except InvalidOperation:
        raise forms.ValidationError(
            f"“{text}” is not a number: type how many, e.g. “2”.", code="invalid"
        ) from None
    if not number.is_finite():
        raise forms.ValidationError(f"“{text}” is not a number: type how many, e.g. “2”.", code="invalid")
    return number


def _plain(value: Decimal | None) -> str:
    """2000.00 -> "2000", 12.50 -> "12.5": what a form shows back."""
    if value is None:
        return ""
    text = f"{value:f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


class MoneyField(forms.DecimalField):
    """An amount per unit of measure; the shop's currency sign may be typed with it."""

    def __init__(self, **kwargs: Any) -> None:
        kwargs.setdefault("max_digits", 12)
        kwargs.setdefault("decimal_places", 4)
        kwargs.setdefault("min_value", Decimal("0"))
        super().__init__(**kwargs)
        self.widget = forms.TextInput(attrs={"inputmode": "decimal", "autocomplete": "off"})

    def to_python(self, value: Any) -> Decimal | None:
        if isinstance(value, str):
            value = value.strip().removeprefix(settings.SHOP_CURRENCY).strip()
        return super().to_python(value)

    def prepare_value(self, value: Any) -> Any:
        return _plain(value) if isinstance(value, Decimal) else value


class PartForm(forms.ModelForm):
    reorder_level = forms.CharField(
        max_length=QUANTITY_TEXT_LENGTH,
        initial="0",
        help_text="Flag the part as low at this count, in its unit of measure (oil: mL, or e.g. “2 L”).",
    )
    cost = MoneyField(
        help_text="Per unit of measure (per mL for oil). Receiving stock with a cost updates it."
    )
    price = MoneyField(
        help_text="Before tax, per unit of measure: per item, or per mL for oil (0.045 per mL is 45.00 a litre)."
    )

    class Meta:
        model = Part
        fields = [
            "part_number",
            "name",
            "kind",
            "unit_of_measure",
            "oil",
            "reorder_level",
            "cost",
            "price",
            "active",
        ]
        labels = {"oil": "Spec-sheet oil"}
        field_classes = {"oil": RecordChoiceField}

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["oil"].queryset = self.fields["oil"].queryset.order_by("name")
        self.fields["cost"].required = False
        if self.instance.pk is not None and not self.is_bound:
            self.initial["reorder_level"] = _plain(self.instance.reorder_level)

    def clean_part_number(self) -> str:
        return "".join(self.cleaned_data["part_number"].split()).upper()

    def clean_name(self) -> str:
        name = " ".join(self.cleaned_data["name"].split())
        if not name:
            raise forms.ValidationError("Enter the part's name.")
        return name

    def clean_cost(self) -> Decimal:
        cost = self.cleaned_data.get("cost")
        return Decimal("0") if cost is None else cost

    def clean(self) -> dict[str, Any]:
        cleaned = super().clean()
        unit = cleaned.get("unit_of_measure") or Part.UnitOfMeasure.EACH
        if "reorder_level" in cleaned:
            try:
                level = read_stock_quantity(cleaned["reorder_level"], unit)
            except forms.ValidationError as error:
                self.add_error("reorder_level", error)
            else:
                if level < 0:
                    self.add_error("reorder_level", "The reorder level cannot be negative.")
                elif level > Decimal("1000000"):
                    self.add_error("reorder_level", "That reorder level is too large: check it.")
                elif unit == Part.UnitOfMeasure.EACH and level != level.to_integral_value():
                    self.add_error("reorder_level", "Parts counted by the item take a whole number.")
                else:
                    cleaned["reorder_level"] = level
        return cleaned


class _PartQuantityForm(forms.Form):
    quantity = forms.CharField(max_length=QUANTITY_TEXT_LENGTH)

    def __init__(self, *args: Any, part: Part, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.part = part
        field = self.fields["quantity"]
        field.widget.attrs.update(
            {"inputmode": "decimal", "autocomplete": "off", "placeholder": part.unit_label}
        )
        field.label = f"Quantity ({part.unit_label})"

    def clean_quantity(self) -> Decimal:
        return read_stock_quantity(self.cleaned_data["quantity"], self.part.unit_of_measure)


class ReceiveForm(_PartQuantityForm):
    lot_code = forms.CharField(
        max_length=60,
        required=False,
        label="Lot code",
        help_text="As printed on the bottle or bag, if it has one.",
    )
    cost = MoneyField(
        required=False, help_text="What the shop paid, per unit of measure. Empty keeps the cost."
    )

    def __init__(self, *args: Any, part: Part, **kwargs: Any) -> None:
        super().__init__(*args, part=part, **kwargs)
        self.fields["quantity"].help_text = (
            "In mL, or with a unit (“1 L”)."
            if part.unit_of_measure == Part.UnitOfMeasure.ML
            else "How many came in."
        )
        self.fields["cost"].label = f"Cost per {part.unit_label}"


class AdjustForm(_PartQuantityForm):
    reason = forms.CharField(
        max_length=300, help_text="Why the count changes: “stocktake”, “damaged”, “found”."
    )

    def __init__(self, *args: Any, part: Part, **kwargs: Any) -> None:
        super().__init__(*args, part=part, **kwargs)
        self.fields["quantity"].label = f"Change by ({part.unit_label})"
        self.fields["quantity"].help_text = "Negative takes away (“-2”), positive adds (“3”)."

    def clean_reason(self) -> str:
        reason = " ".join(self.cleaned_data["reason"].split())
        if not reason:
            raise forms.ValidationError("Say why the count changes.")
        return reason


class StockFilterForm(forms.Form):
    q = forms.CharField(required=False, max_length=100, label="Part number or name")
    low = forms.BooleanField(required=False, label="Low only")
    inactive = forms.BooleanField(required=False, label="Include parts no longer stocked")

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["q"].widget = forms.TextInput(
            attrs={"type": "search", "autocomplete": "off", "placeholder": "e.g. SK-34 or wiper"}
        )

    def values(self) -> dict[str, Any]:
        if not self.is_valid():
            return {"query": "", "low_only": False, "include_inactive": False}
        return {
            "query": self.cleaned_data["q"],
            "low_only": self.cleaned_data["low"],
            "include_inactive": self.cleaned_data["inactive"],
        }
