from __future__ import annotations

from typing import Any

from django import forms

from shopdesk.customers.models import Customer, SetupFields, Unit
from shopdesk.customers.selectors import SEARCH_MAX_LENGTH
from shopdesk.shop.ids import RecordChoiceField
from shopdesk.shop.quantities import LENGTH, PRESSURE, SPRING_RATE, QuantityField, format_quantity
from shopdesk.specs.models import UnitModel


class SearchForm(forms.Form):
    """What the front desk typed in the search box; a character no record can hold is refused."""

    q = forms.CharField(
        required=False,
        max_length=SEARCH_MAX_LENGTH,
        strip=True,
        error_messages={
            "max_length": "Search with at most %(limit_value)d characters (this has %(show_value)d).",
            "null_characters_not_allowed": "The search holds a control character (NUL): type it again.",
        },
    )

    def query(self) -> str | None:
        """The text to search for, or None where it was refused (the form's errors say why)."""
        return self.cleaned_data["q"] if self.is_valid() else None


class CustomerForm(forms.ModelForm):
    class Meta:
        model = Customer
        fields = ["name", "phone", "email", "reminder_consent", "notes"]
        widgets = {"notes": forms.Textarea(attrs={"rows": 3})}

    def clean_name(self) -> str:
        name = " ".join(self.cleaned_data["name"].split())
        if not name:
            raise forms.ValidationError("Enter the customer's name.")
        return name

    def clean_phone(self) -> str:
        phone = self.cleaned_data["phone"].strip()
        digits = sum(ch.isdigit() for ch in phone)
        if phone and not 6 <= digits <= 16:
            raise forms.ValidationError("A phone number has 6 to 16 digits.")
        if phone and any(ch.isalpha() for ch in phone):
            raise forms.ValidationError("A phone number holds digits, spaces, +, - and brackets only.")
        return phone

    def clean(self) -> dict[str, Any]:
        cleaned = super().clean()
        if not cleaned.get("phone") and not cleaned.get("email") and not self.errors:
            raise forms.ValidationError(
                "Give a phone number or an email, so the shop can reach the customer."
            )
        return cleaned


class SetupForm(forms.Form):
    """Spring and clicker settings, typed with or without units; pressures are gauge."""

    positive_pressure_kpa = QuantityField(kind=PRESSURE, required=False, label="Air pressure")
    negative_pressure_kpa = QuantityField(kind=PRESSURE, required=False, label="Negative chamber pressure")
    spacer_count = forms.IntegerField(required=False, min_value=0, max_value=20, label="Volume spacers")
    coil_rate_n_mm = QuantityField(
        kind=SPRING_RATE, required=False, minimum=1, maximum=400, label="Coil spring rate"
    )
    rebound_clicks = forms.IntegerField(required=False, min_value=0, max_value=60, label="Rebound (clicks)")
    compression_clicks = forms.IntegerField(
        required=False, min_value=0, max_value=60, label="Compression (clicks)"
    )
    high_speed_compression_clicks = forms.IntegerField(
        required=False, min_value=0, max_value=60, label="High-speed compression (clicks)"
    )

    def __init__(self, *args: Any, unit_model: UnitModel | None = None, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.unit_model = unit_model
        if unit_model is not None and not unit_model.is_air:
            for name in ("positive_pressure_kpa", "negative_pressure_kpa", "spacer_count"):
                self.fields.pop(name)
        if unit_model is not None and unit_model.is_air:
            self.fields.pop("coil_rate_n_mm")

    def clean(self) -> dict[str, Any]:
        cleaned = super().clean()
        maximum = self.unit_model.max_pressure_kpa if self.unit_model else None
        if maximum:
            for name in ("positive_pressure_kpa", "negative_pressure_kpa"):
                value = cleaned.get(name)
                if value is not None and value > maximum:
                    self.add_error(
                        name,
                        f"Above this model's maximum of {format_quantity(maximum, PRESSURE)} "
                        f"(spec sheet). Never exceed the maker's maximum pressure.",
                    )
        spacers = cleaned.get("spacer_count")
        most = self.unit_model.max_spacers if self.unit_model else None
        if spacers is not None and most is not None and spacers > most:
            self.add_error("spacer_count", f"This model takes at most {most} volume spacers.")
        return cleaned

    def setup_values(self) -> dict[str, Any]:
        return {name: self.cleaned_data.get(name) for name in SetupFields.SETUP_FIELDS if name in self.fields}


class UnitForm(forms.ModelForm):
    travel_mm = QuantityField(kind=LENGTH, minimum=10, maximum=250, label="Travel")

    class Meta:
        model = Unit
        fields = [
            "unit_model",
            "serial_number",
            "model_year",
            "travel_mm",
            "hours_per_week",
            "purchased_on",
            "notes",
        ]
        widgets = {
            "purchased_on": forms.DateInput(attrs={"type": "date"}),
            "notes": forms.Textarea(attrs={"rows": 3}),
        }
        labels = {"unit_model": "Model (spec sheet)"}
        field_classes = {"unit_model": RecordChoiceField}

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["unit_model"].queryset = UnitModel.objects.order_by("maker", "name", "year_from")
        self.fields["travel_mm"].required = False
        self.fields["travel_mm"].help_text = "Empty takes the spec sheet's travel."

    def clean_serial_number(self) -> str:
        serial = " ".join(self.cleaned_data["serial_number"].split()).upper()
        if not serial:
            raise forms.ValidationError("Enter the serial number from the unit.")
        return serial

    def clean(self) -> dict[str, Any]:
        cleaned = super().clean()
        unit_model: UnitModel | None = cleaned.get("unit_model")
        if unit_model is None:
            return cleaned
        serial = cleaned.get("serial_number")
        if serial:
            clash = Unit.objects.filter(unit_model=unit_model, serial_number__iexact=serial).exclude(
                pk=self.instance.pk
            )
            other = clash.select_related("customer").first()
            if other is not None:
                self.add_error(
                    "serial_number",
                    f"Serial {serial} is already on a {unit_model.maker} {unit_model.name} "
                    f"of {other.customer.name}. Check the number on the unit.",
                )
        if cleaned.get("travel_mm") is None and "travel_mm" not in self.errors:
            cleaned["travel_mm"] = unit_model.travel_mm
        year = cleaned.get("model_year")
        if year and (
            year < unit_model.year_from - 1 or (unit_model.year_to and year > unit_model.year_to + 1)
        ):
            self.add_error("model_year", f"This spec sheet covers {unit_model}; check the year or the model.")
        return cleaned
