"""Forms for the bench's records. Values are typed with or without units and stored in fixed units."""

from __future__ import annotations

from typing import Any

from django import forms
from django.conf import settings

from shopdesk.calc import Q_, CalcInputError, parse_quantity
from shopdesk.calc import oil as oil_calc
from shopdesk.shop.ids import IdField, RecordChoiceField
from shopdesk.shop.quantities import LENGTH, PRESSURE, SPRING_RATE, VOLUME, QuantityField, format_quantity
from shopdesk.specs.models import Chamber, UnitModel
from shopdesk.stock.models import Part, StockLot
from shopdesk.workshop import diagnosis
from shopdesk.workshop.models import OilRecord, SpringRecord

_PINT = {"fl oz": "fluid_ounce"}


STALE_FORM = "This form was changed or is from an old page: reload the job page and enter the values again."


class VersionedForm(forms.Form):
    version = IdField(
        widget=forms.HiddenInput,
        required=False,
        min_value=1,
        error_messages={"invalid": STALE_FORM, "min_value": STALE_FORM},
    )


def shop_temperature() -> Any:
    return Q_(settings.SHOP_TEMPERATURE_C, "degC")


class OilRecordForm(VersionedForm):
    drained = forms.CharField(
        required=False,
        max_length=40,
        label="Drained",
        help_text="mL, or grams from the scale (“88 g”): grams are converted with the oil's density.",
    )
    condition = forms.ChoiceField(choices=[("", "—"), *OilRecord.Condition.choices], required=False)
    filled_ml = QuantityField(kind=VOLUME, required=False, maximum=1000, label="Filled")
    oil_part = RecordChoiceField(queryset=Part.objects.none(), required=False, label="Oil from stock")
    oil_lot = RecordChoiceField(queryset=StockLot.objects.none(), required=False, label="Lot")
    fill_confirmed = forms.BooleanField(required=False, label="The fill differs from the spec on purpose")
    notes = forms.CharField(required=False, max_length=300)

    SHARED_CHOICES = ("oil_part", "oil_lot")

    def __init__(
        self, *args: Any, chamber: Chamber, choices: dict[str, list[Any]] | None = None, **kwargs: Any
    ) -> None:
        super().__init__(*args, **kwargs)
        self.chamber = chamber
        self.fields["drained"].widget.attrs.update({"inputmode": "decimal", "autocomplete": "off"})
        oils = Part.objects.filter(kind=Part.Kind.OIL, active=True).select_related("oil").order_by("name")
        self.fields["oil_part"].queryset = oils
        self.fields["oil_lot"].queryset = StockLot.objects.filter(part__kind=Part.Kind.OIL).select_related(
            "part"
        )
        self.fields["oil_lot"].label_from_instance = lambda lot: (
            f"{lot.part.part_number} · lot {lot.lot_code}"
        )
        # Shown from the lists given; a choice posted is still checked against the query.
        for name, listed in (choices or {}).items():
            self.fields[name].choices = listed

    def share_choices(self) -> dict[str, list[Any]]:
        """Reads the oil and lot lists once and keeps them, for this form and for the other chambers'
        forms on the same page (``choices=``): each select had read them again."""
        # iter(): list() would first ask the choices' length, one COUNT query more each
        listed = {name: list(iter(self.fields[name].choices)) for name in self.SHARED_CHOICES}
        for name, choices in listed.items():
            self.fields[name].choices = choices
        return listed

    def density_source(self) -> Any:
        """The oil whose density turns grams into mL: the one chosen, else the spec sheet's."""
        part = self.cleaned_data.get("oil_part") if hasattr(self, "cleaned_data") else None
        if part is not None and part.oil is not None:
            return part.oil
        return self.chamber.oil

    def clean_drained(self) -> dict[str, float | None]:
        text = self.cleaned_data["drained"].strip()
        if not text:
            return {"drained_ml": None, "drained_weighed_g": None}
        default = _PINT.get(settings.SHOP_VOLUME_UNIT, settings.SHOP_VOLUME_UNIT)
        try:
            volume = parse_quantity(text, default_unit=default, dimension="[volume]")
        except CalcInputError as volume_error:
            try:
                mass = parse_quantity(text, default_unit="g", dimension="[mass]")
            except CalcInputError:
                raise forms.ValidationError(
                    f"{volume_error} Type a volume (“95 mL”) or what the scale showed (“82 g”)."
                ) from None
            return self._from_mass(mass)
        drained_ml = float(volume.to("mL").magnitude)
        if not 0 <= drained_ml <= 1000:
            raise forms.ValidationError("Drained must be between 0 and 1000 mL.")
        return {"drained_ml": drained_ml, "drained_weighed_g": None}

    def _from_mass(self, mass: Any) -> dict[str, float | None]:
        grams = float(mass.to("g").magnitude)
        if not 0 <= grams <= 1000:
            raise forms.ValidationError("Drained must be between 0 and 1000 g.")
        oil = self.chamber.oil
        if oil is None:
            raise forms.ValidationError(
                "This chamber has no oil on its spec sheet: type the volume in mL instead."
            )
        if grams == 0:
            return {"drained_ml": 0.0, "drained_weighed_g": 0.0}
        volume = oil_calc.volume_for_mass(
            mass=Q_(grams, "g"), rho15=Q_(oil.density_15c_kg_m3, "kg/m**3"), temperature=shop_temperature()
        )
        return {"drained_ml": float(volume.to("mL").magnitude), "drained_weighed_g": grams}

    def clean(self) -> dict[str, Any]:
        cleaned = super().clean()
        part, lot = cleaned.get("oil_part"), cleaned.get("oil_lot")
        if lot is not None and part is None:
            self.add_error("oil_lot", "Choose the oil this lot belongs to.")
        elif lot is not None and lot.part_id != part.pk:
            self.add_error("oil_lot", f"Lot {lot.lot_code} is not a lot of {part.name}.")
        filled = cleaned.get("filled_ml")
        if filled is not None and part is None and "oil_part" not in self.errors:
            self.add_error("oil_part", "Say which oil went in, so that stock follows the fill.")
        off = diagnosis.fill_outside_tolerance(chamber=self.chamber, filled_ml=filled)
        if off is not None and not cleaned.get("fill_confirmed"):
            self.add_error(
                "filled_ml",
                f"{format_quantity(filled, VOLUME)} is {off:+.0f} % from the spec's "
                f"{format_quantity(self.chamber.volume_ml, VOLUME)} (tolerance ±{settings.SHOP_FILL_TOLERANCE_PERCENT:g} %). "
                "Tick the box below to confirm it is meant.",
            )
            self.needs_confirmation = True
        return cleaned

    def record_values(self) -> dict[str, Any]:
        drained = self.cleaned_data.get("drained") or {"drained_ml": None, "drained_weighed_g": None}
        return {
            **drained,
            "condition": self.cleaned_data.get("condition") or "",
            "filled_ml": self.cleaned_data.get("filled_ml"),
            "oil_part": self.cleaned_data.get("oil_part"),
            "oil_lot": self.cleaned_data.get("oil_lot"),
            "fill_confirmed": bool(self.cleaned_data.get("fill_confirmed")),
            "notes": self.cleaned_data.get("notes", ""),
        }

    @staticmethod
    def initial_for(record: OilRecord | None) -> dict[str, Any]:
        if record is None:
            return {}
        if record.drained_weighed_g is not None:
            drained = f"{record.drained_weighed_g:g} g"
        else:
            drained = format_quantity(record.drained_ml, VOLUME) if record.drained_ml is not None else ""
        return {
            "version": record.version,
            "drained": drained,
            "condition": record.condition,
            "filled_ml": record.filled_ml,
            "oil_part": record.oil_part_id,
            "oil_lot": record.oil_lot_id,
            "fill_confirmed": record.fill_confirmed,
            "notes": record.notes,
        }


class SpringRecordForm(VersionedForm):
    positive_pressure_kpa = QuantityField(kind=PRESSURE, required=False, label="Air pressure")
    negative_pressure_kpa = QuantityField(kind=PRESSURE, required=False, label="Negative chamber")
    spacer_count = forms.IntegerField(required=False, min_value=0, max_value=20, label="Volume spacers")
    spacer_volume_cc = QuantityField(kind=VOLUME, required=False, maximum=100, label="Volume of one spacer")
    coil_rate_n_mm = QuantityField(
        kind=SPRING_RATE, required=False, minimum=1, maximum=400, label="Coil rate"
    )
    sag_mm = QuantityField(kind=LENGTH, required=False, maximum=250, label="Sag measured")
    notes = forms.CharField(required=False, max_length=300)

    def __init__(self, *args: Any, unit_model: UnitModel, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.unit_model = unit_model
        if unit_model.is_air:
            self.fields.pop("coil_rate_n_mm")
        else:
            for name in (
                "positive_pressure_kpa",
                "negative_pressure_kpa",
                "spacer_count",
                "spacer_volume_cc",
            ):
                self.fields.pop(name)

    def clean(self) -> dict[str, Any]:
        cleaned = super().clean()
        maximum = self.unit_model.max_pressure_kpa
        for name in ("positive_pressure_kpa", "negative_pressure_kpa"):
            value = cleaned.get(name)
            if maximum and value is not None and value > maximum:
                self.add_error(
                    name,
                    f"Above this model's maximum of {format_quantity(maximum, PRESSURE)} (spec sheet). "
                    "Never exceed the maker's maximum pressure.",
                )
        sag = cleaned.get("sag_mm")
        travel = self.unit_model.travel_mm
        if sag is not None and sag > travel:
            self.add_error("sag_mm", f"Sag cannot exceed the travel of {format_quantity(travel, LENGTH)}.")
        spacers = cleaned.get("spacer_count")
        if (
            spacers is not None
            and self.unit_model.max_spacers is not None
            and spacers > self.unit_model.max_spacers
        ):
            self.add_error(
                "spacer_count", f"This model takes at most {self.unit_model.max_spacers} volume spacers."
            )
        return cleaned

    def record_values(self) -> dict[str, Any]:
        names = [name for name in self.fields if name != "version"]
        return {
            name: self.cleaned_data.get(name) if name != "notes" else self.cleaned_data.get(name, "")
            for name in names
        }

    @staticmethod
    def initial_for(record: SpringRecord | None, unit_model: UnitModel) -> dict[str, Any]:
        if record is None:
            return {"spacer_volume_cc": unit_model.spacer_volume_cc}
        names = (
            "positive_pressure_kpa",
            "negative_pressure_kpa",
            "spacer_count",
            "spacer_volume_cc",
            "coil_rate_n_mm",
            "sag_mm",
            "notes",
        )
        return {"version": record.version, **{name: getattr(record, name) for name in names}}


class PartUsedForm(forms.Form):
    part = RecordChoiceField(queryset=Part.objects.none(), label="Part from stock")
    quantity = forms.DecimalField(min_value=0.01, max_value=1000, decimal_places=2, initial=1)
    lot = RecordChoiceField(queryset=StockLot.objects.none(), required=False)
    serial_number = forms.CharField(required=False, max_length=60, label="Serial (if it has one)")
    override_reason = forms.CharField(
        required=False, max_length=200, label="Reason to use more than is on hand (owner only)"
    )

    def __init__(self, *args: Any, may_override: bool = False, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["part"].queryset = (
            Part.objects.filter(active=True).exclude(kind=Part.Kind.OIL).order_by("name")
        )
        self.fields["part"].label_from_instance = lambda part: f"{part.part_number} · {part.name}"
        self.fields["lot"].queryset = StockLot.objects.exclude(part__kind=Part.Kind.OIL).select_related(
            "part"
        )
        self.fields["lot"].label_from_instance = lambda lot: f"{lot.part.part_number} · lot {lot.lot_code}"
        if not may_override:
            self.fields.pop("override_reason")

    def clean(self) -> dict[str, Any]:
        cleaned = super().clean()
        part, lot = cleaned.get("part"), cleaned.get("lot")
        if part is not None and lot is not None and lot.part_id != part.pk:
            self.add_error("lot", f"Lot {lot.lot_code} is not a lot of {part.name}.")
        quantity = cleaned.get("quantity")
        if (
            part is not None
            and quantity is not None
            and part.unit_of_measure == Part.UnitOfMeasure.EACH
            and quantity != int(quantity)
        ):
            self.add_error("quantity", f"{part.name} is counted in whole pieces.")
        return cleaned


class LabourForm(forms.Form):
    minutes = forms.IntegerField(min_value=1, max_value=16 * 60)
    charged_as_extra = forms.BooleanField(required=False, label="Extra work, charged beyond the quote")
    note = forms.CharField(required=False, max_length=200)


class VoidForm(forms.Form):
    reason = forms.CharField(max_length=200, label="Why is it wrong?")
