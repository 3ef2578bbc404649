"""The calculator page's forms: oil fill, viscosity, blending and the air spring, and the page itself.

Each form is one section of the page (its prefix is the section's name); the sealed-damper
sections live in :mod:`shopdesk.calculators.damper_forms`, what they share in
:mod:`shopdesk.calculators.base`.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any, ClassVar

from django import forms
from django.conf import settings
from django.http import QueryDict

from shopdesk.calc import Q_, CalcInputError
from shopdesk.calc import oil as oil_calc
from shopdesk.calc.air_spring import AirSpring, fork_load
from shopdesk.calculators.base import (
    DENSITY,
    FORK_LOAD_SHARE,
    FORK_SAG,
    RIDER_MASS,
    TEMPERATURE,
    VISCOSITY,
    BlamedError,
    CalcQuantityField,
    CalculatorForm,
    Catalogue,
    CatalogueChoiceField,
    Outcome,
    PercentField,
    Reading,
    Table,
    other_pressure_unit,
    show,
    show_pressure,
)
from shopdesk.calculators.damper_forms import CavitationForm, IfpFrictionForm, TrappedGasForm
from shopdesk.shop.quantities import FORCE, LENGTH, MASS, PRESSURE, VOLUME, format_number, format_quantity
from shopdesk.specs.models import Oil, UnitModel


def _temperature_default() -> str:
    return f"{settings.SHOP_TEMPERATURE_C:g} °C"


def _oil_label(oil: Oil) -> str:
    return f"{oil.name} ({oil.viscosity_40c_mm2s:g} / {oil.viscosity_100c_mm2s:g} mm²/s)"


def _oil_select(label: str, empty_label: str) -> CatalogueChoiceField:
    return CatalogueChoiceField(label=label, empty_label=empty_label)


# --- 1. Oil fill: by weight ----------------------------------------------------------------------


class WeighForm(CalculatorForm):
    section = "weigh"
    title = "Oil by weight"
    intro = (
        "Grams to weigh for a spec volume, or the volume a weighed drain makes. The density is corrected "
        "to the oil's temperature."
    )
    oil = _oil_select("Oil", "— none: type its density —")
    density = CalcQuantityField(
        kind=DENSITY,
        label="Density at 15 °C",
        help_text="From the oil's data sheet; used when no oil is chosen.",
    )
    temperature = CalcQuantityField(kind=TEMPERATURE, minimum=None, label="Oil temperature")
    volume = CalcQuantityField(kind=VOLUME, label="Volume to fill", help_text="Gives the grams to weigh.")
    mass = CalcQuantityField(kind=MASS, label="Grams on the scale", help_text="Gives the volume they make.")

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["oil"].set_objects(self.catalogue.oils, _oil_label)

    def defaults(self) -> dict[str, Any]:
        return {"temperature": _temperature_default()}

    def field_for(self, parameter: str) -> str | None:
        if parameter == "rho15":
            return "oil" if self.cleaned_data.get("oil") else "density"
        return {"volume": "volume", "mass": "mass", "temperature": "temperature"}.get(parameter)

    def calculate(self, values: dict[str, Any]) -> Outcome:
        oil: Oil | None = values["oil"]
        density = oil.density_15c_kg_m3 if oil else values["density"]
        outcome = Outcome(missing=self.missing(values, "temperature"))
        if density is None:
            outcome.missing.insert(0, "an oil or its density")
        if values["volume"] is None and values["mass"] is None:
            outcome.missing.append("a volume to fill or the grams on the scale")
        if outcome.missing:
            return outcome
        rho15, temperature = Q_(density, "kg/m**3"), Q_(values["temperature"], "degC")
        at_temperature = oil_calc.density_at(rho15=rho15, temperature=temperature).to("kg/m**3").magnitude
        if values["volume"] is not None:
            grams = oil_calc.mass_for_volume(
                volume=Q_(values["volume"], "mL"), rho15=rho15, temperature=temperature
            )
            outcome.readings.append(
                Reading(
                    f"Weigh for {show(values['volume'], VOLUME)}",
                    show(grams.to("g").magnitude, MASS),
                    main=True,
                )
            )
        if values["mass"] is not None:
            millilitres = oil_calc.volume_for_mass(
                mass=Q_(values["mass"], "g"), rho15=rho15, temperature=temperature
            )
            outcome.readings.append(
                Reading(
                    f"{show(values['mass'], MASS)} on the scale is",
                    show(millilitres.to("mL").magnitude, VOLUME),
                    main=True,
                )
            )
        source = f"{oil.name}, {density:g} kg/m³ at 15 °C" if oil else f"{density:g} kg/m³ at 15 °C"
        outcome.readings.append(
            Reading(
                f"Density at {show(values['temperature'], TEMPERATURE)}",
                show(at_temperature, DENSITY),
                detail=f"from {source} (API MPMS 11.1 / ASTM D1250)",
            )
        )
        return outcome


# --- 1. Oil fill: by level -----------------------------------------------------------------------


class LevelForm(CalculatorForm):
    section = "level"
    title = "Oil by level"
    intro = (
        "The volume between two oil levels in a tube, or how far a volume moves the level. A rod or "
        "cartridge standing in the oil takes its share."
    )
    parameters: ClassVar[dict[str, str]] = {
        "bore_diameter": "bore_diameter",
        "rod_diameter": "rod_diameter",
        "level_change": "level_change",
        "volume": "volume",
    }
    bore_diameter = CalcQuantityField(kind=LENGTH, label="Bore", help_text="The tube's inner diameter.")
    rod_diameter = CalcQuantityField(
        kind=LENGTH, label="Rod or cartridge", help_text="Its diameter; empty when nothing stands in the oil."
    )
    level_change = CalcQuantityField(kind=LENGTH, label="Level change", help_text="Gives the volume.")
    volume = CalcQuantityField(kind=VOLUME, label="Volume", help_text="Gives the level change.")

    def calculate(self, values: dict[str, Any]) -> Outcome:
        outcome = Outcome(missing=self.missing(values, "bore_diameter"))
        if values["level_change"] is None and values["volume"] is None:
            outcome.missing.append("a level change or a volume")
        if outcome.missing:
            return outcome
        tube = {
            "bore_diameter": Q_(values["bore_diameter"], "mm"),
            "rod_diameter": Q_(values["rod_diameter"] or 0.0, "mm"),
        }
        if values["level_change"] is not None:
            millilitres = oil_calc.level_volume(level_change=Q_(values["level_change"], "mm"), **tube)
            outcome.readings.append(
                Reading(
                    f"{show(values['level_change'], LENGTH)} of level is",
                    show(millilitres.to("mL").magnitude, VOLUME),
                    main=True,
                )
            )
        if values["volume"] is not None:
            level = oil_calc.level_for_volume(volume=Q_(values["volume"], "mL"), **tube)
            outcome.readings.append(
                Reading(
                    f"{show(values['volume'], VOLUME)} changes the level by",
                    show(level.to("mm").magnitude, LENGTH),
                    main=True,
                )
            )
        outcome.notes.append("Volume = π/4 × (bore² − rod²) × level change.")
        return outcome


# --- 2. Viscosity at temperature -----------------------------------------------------------------


class ViscosityForm(CalculatorForm):
    section = "viscosity"
    title = "Viscosity at temperature"
    intro = (
        "An oil's kinematic viscosity at any temperature from its 40 °C and 100 °C values, and its ISO "
        "viscosity grade."
    )
    oil = _oil_select("Oil", "— none: type its viscosities —")
    nu40 = CalcQuantityField(
        kind=VISCOSITY, label="Viscosity at 40 °C", help_text="Kinematic, from the data sheet."
    )
    nu100 = CalcQuantityField(kind=VISCOSITY, label="Viscosity at 100 °C")
    temperature = CalcQuantityField(kind=TEMPERATURE, minimum=None, label="Temperature")

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["oil"].set_objects(self.catalogue.oils, _oil_label)

    def defaults(self) -> dict[str, Any]:
        return {"temperature": _temperature_default()}

    def field_for(self, parameter: str) -> str | None:
        if parameter in {"nu40", "nu100"}:
            return "oil" if self.cleaned_data.get("oil") else parameter
        return {"temperature": "temperature"}.get(parameter)

    def calculate(self, values: dict[str, Any]) -> Outcome:
        oil: Oil | None = values["oil"]
        if oil is not None:
            nu40, nu100 = oil.viscosity_40c_mm2s, oil.viscosity_100c_mm2s
            outcome = Outcome(missing=self.missing(values, "temperature"))
        else:
            nu40, nu100 = values["nu40"], values["nu100"]
            outcome = Outcome(missing=self.missing(values, "nu40", "nu100", "temperature"))
        if outcome.missing:
            return outcome
        at_40, at_100 = Q_(nu40, "mm**2/s"), Q_(nu100, "mm**2/s")
        nu = oil_calc.viscosity_at(nu40=at_40, nu100=at_100, temperature=Q_(values["temperature"], "degC"))
        grade = oil_calc.iso_vg_grade(at_40)
        outcome.readings.append(
            Reading(
                f"At {show(values['temperature'], TEMPERATURE)}",
                show(nu.to("mm**2/s").magnitude, VISCOSITY),
                detail="ASTM D341 (Walther), through the 40 °C and 100 °C points",
                main=True,
            )
        )
        outcome.readings.append(
            Reading(
                "ISO 3448 grade",
                f"ISO VG {grade}" if grade is not None else "none",
                detail=(
                    "{:g}–{:g} mm²/s at 40 °C".format(*oil_calc.ISO_VG_LIMITS[grade])
                    if grade is not None
                    else f"{nu40:g} mm²/s at 40 °C lies between the grades' ±10 % bands"
                ),
            )
        )
        if nu100 >= 2.0:
            index = oil_calc.viscosity_index(nu40=at_40, nu100=at_100)
            outcome.readings.append(
                Reading("Viscosity index", f"{index:.0f}", detail="ASTM D2270: higher thins less as it warms")
            )
        if oil is not None:
            outcome.notes.append(f"{oil.name}: {nu40:g} mm²/s at 40 °C, {nu100:g} mm²/s at 100 °C.")
        return outcome


# --- 3. Blend ------------------------------------------------------------------------------------


class BlendForm(CalculatorForm):
    section = "blend"
    title = "Blending two oils"
    intro = (
        "How much of each oil, by mass, gives a target viscosity. All three viscosities at one temperature."
    )
    groups: ClassVar[tuple[tuple[str, tuple[str, ...]], ...]] = (
        ("Oil A", ("oil_a", "nu_a")),
        ("Oil B", ("oil_b", "nu_b")),
        ("Blend", ("target", "temperature", "total_mass")),
    )
    oil_a = _oil_select("From the list", "— none: type its viscosity —")
    nu_a = CalcQuantityField(
        kind=VISCOSITY, label="Or its viscosity", help_text="At the blend's temperature."
    )
    oil_b = _oil_select("From the list", "— none: type its viscosity —")
    nu_b = CalcQuantityField(kind=VISCOSITY, label="Or its viscosity", help_text="At the same temperature.")
    target = CalcQuantityField(kind=VISCOSITY, label="Target viscosity", help_text="At the same temperature.")
    temperature = CalcQuantityField(
        kind=TEMPERATURE,
        minimum=None,
        label="Temperature",
        help_text="Where an oil comes from the list, its viscosity is taken at this temperature.",
    )
    total_mass = CalcQuantityField(
        kind=MASS, label="Blend to mix", help_text="Total grams; empty: shares only."
    )

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        for name in ("oil_a", "oil_b"):
            self.fields[name].set_objects(self.catalogue.oils, _oil_label)

    def defaults(self) -> dict[str, Any]:
        return {"temperature": "40 °C"}

    def field_for(self, parameter: str) -> str | None:
        data = self.cleaned_data
        return {
            "nu_a": "oil_a" if data.get("oil_a") else "nu_a",
            "nu_b": "oil_b" if data.get("oil_b") else "nu_b",
            "nu_target": "target",
            "temperature": "temperature",
        }.get(parameter)

    def _viscosity(self, values: dict[str, Any], side: str) -> float | None:
        """Oil ``side``'s viscosity (mm²/s) at the blend's temperature: from the list, or as typed."""
        oil: Oil | None = values[f"oil_{side}"]
        if oil is None:
            return values[f"nu_{side}"]
        if values["temperature"] is None:
            return None
        try:
            nu = oil_calc.viscosity_at(
                nu40=Q_(oil.viscosity_40c_mm2s, "mm**2/s"),
                nu100=Q_(oil.viscosity_100c_mm2s, "mm**2/s"),
                temperature=Q_(values["temperature"], "degC"),
            )
        except CalcInputError as error:
            # The temperature's own range belongs to its field; anything else is this oil's data.
            blamed = "temperature" if str(error).startswith("temperature") else f"oil_{side}"
            raise BlamedError(blamed, str(error)) from error
        return float(nu.to("mm**2/s").magnitude)

    def calculate(self, values: dict[str, Any]) -> Outcome:
        outcome = Outcome()
        viscosities = {side: self._viscosity(values, side) for side in ("a", "b")}
        for side in ("a", "b"):
            if viscosities[side] is None:
                outcome.missing.append(
                    "the temperature" if values[f"oil_{side}"] else f"oil {side.upper()} or its viscosity"
                )
        outcome.missing += self.missing(values, "target")
        a, b = viscosities["a"], viscosities["b"]
        if outcome.missing or a is None or b is None:
            return outcome
        nu_a, nu_b = Q_(a, "mm**2/s"), Q_(b, "mm**2/s")
        share_a = oil_calc.blend_fraction(nu_a=nu_a, nu_b=nu_b, nu_target=Q_(values["target"], "mm**2/s"))
        share_b = 1.0 - share_a
        check = oil_calc.blend_viscosity([(nu_a, share_a), (nu_b, share_b)])
        total = values["total_mass"]
        for side, share in (("A", share_a), ("B", share_b)):
            grams = f" · {show(total * share, MASS)}" if total is not None else ""
            outcome.readings.append(
                Reading(f"Oil {side}", f"{format_number(share * 100.0, 1)} % by mass{grams}", main=True)
            )
        outcome.readings.append(
            Reading(
                "Check: the blend's viscosity",
                show(float(check.to("mm**2/s").magnitude), VISCOSITY),
                detail="Refutas method (Maples, 2000), by mass fraction",
            )
        )
        for side in ("a", "b"):
            oil = values[f"oil_{side}"]
            if oil is not None:
                outcome.notes.append(
                    f"Oil {side.upper()}, {oil.name}: {format_number(viscosities[side], 2)} mm²/s at "
                    f"{show(values['temperature'], TEMPERATURE)} (ASTM D341)."
                )
        outcome.notes.append("Mix by weight: shares by volume differ with the oils' densities.")
        return outcome


# --- 4. Air spring -------------------------------------------------------------------------------


def _spacers(count: int) -> str:
    return "no spacers" if count == 0 else f"{count} spacer{'s' if count != 1 else ''}"


class AirSpringForm(CalculatorForm):
    section = "air"
    title = "Air spring: pressure for sag"
    parameters: ClassVar[dict[str, str]] = {
        "piston_diameter": "piston_diameter",
        "travel": "travel",
        "positive_volume": "positive_volume",
        "negative_volume": "negative_volume",
        "spacer_volume": "spacer_volume",
        "rider_mass": "rider_mass",
        "load": "rider_mass",
        "share": "share",
        "sag": "sag",
    }
    groups: ClassVar[tuple[tuple[str, tuple[str, ...]], ...]] = (
        (
            "Air spring",
            (
                "piston_diameter",
                "travel",
                "positive_volume",
                "negative_volume",
                "spacer_volume",
                "spacer_count",
            ),
        ),
        ("Rider", ("rider_mass", "share", "sag")),
    )
    unit_model = CatalogueChoiceField(empty_label="", widget=forms.HiddenInput)
    piston_diameter = CalcQuantityField(kind=LENGTH, label="Air piston diameter")
    travel = CalcQuantityField(kind=LENGTH, label="Travel")
    positive_volume = CalcQuantityField(
        kind=VOLUME, label="Positive chamber", help_text="At top-out, without spacers."
    )
    negative_volume = CalcQuantityField(
        kind=VOLUME, label="Negative chamber", help_text="At top-out; empty or 0 when there is none."
    )
    spacer_volume = CalcQuantityField(kind=VOLUME, label="Volume of one spacer")
    spacer_count = forms.IntegerField(required=False, min_value=0, max_value=20, label="Spacers fitted")
    rider_mass = CalcQuantityField(kind=RIDER_MASS, label="Rider's mass", help_text="Kitted, ready to ride.")
    share = PercentField(
        maximum_included=True,
        label="Share on this unit",
        help_text="Common practice: a fork carries about 30–40 % of the rider seated.",
    )
    sag = PercentField(
        label="Target sag", help_text="Common practice: fork 15–25 %, rear shock 25–35 % of travel."
    )

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["unit_model"].set_objects(self.catalogue.air_models)
        self.fields["spacer_count"].widget.attrs.update({"inputmode": "numeric", "autocomplete": "off"})

    def defaults(self) -> dict[str, Any]:
        return {"spacer_count": 0, "share": FORK_LOAD_SHARE, "sag": FORK_SAG}

    @staticmethod
    def geometry_of(model: UnitModel) -> dict[str, str]:
        """A spec sheet's geometry as typed values, in the units it is stored in (exact, no rounding)."""
        values = {
            "piston_diameter": (model.air_piston_diameter_mm, "mm"),
            "travel": (model.travel_mm, "mm"),
            "positive_volume": (model.positive_volume_cc, "mL"),
            "negative_volume": (model.negative_volume_cc, "mL"),
            "spacer_volume": (model.spacer_volume_cc, "mL"),
        }
        geometry = {
            name: f"{value:g} {unit}" if value is not None else "" for name, (value, unit) in values.items()
        }
        return {**geometry, "unit_model": str(model.pk)}

    def calculate(self, values: dict[str, Any]) -> Outcome:
        model: UnitModel | None = values["unit_model"]
        count = values["spacer_count"] or 0
        outcome = Outcome(
            missing=self.missing(
                values, "piston_diameter", "travel", "positive_volume", "rider_mass", "share", "sag"
            )
        )
        each = values["spacer_volume"]
        if count and each is None:
            outcome.missing.append("the volume of one spacer")
        if outcome.missing:
            return outcome
        if model is not None and model.max_spacers is not None and count > model.max_spacers:
            raise BlamedError("spacer_count", f"{model} takes at most {model.max_spacers} volume spacers.")

        def spring(spacers: int) -> AirSpring:
            return AirSpring(
                piston_diameter=Q_(values["piston_diameter"], "mm"),
                travel=Q_(values["travel"], "mm"),
                positive_volume=Q_(values["positive_volume"], "mL"),
                negative_volume=Q_(values["negative_volume"] or 0.0, "mL"),
                spacer_volume=Q_(spacers * (each or 0.0), "mL"),
            )

        main = spring(count)
        load = fork_load(rider_mass=Q_(values["rider_mass"], "kg"), share=values["share"])
        pressure = main.pressure_for_sag(load=load, sag=values["sag"])
        kpa = float(pressure.to("kPa").magnitude)
        newtons = float(load.to("N").magnitude)
        sag_mm = values["sag"] * values["travel"]  # the sag target as a length of travel
        outcome.readings += [
            Reading(
                "Set pressure",
                show_pressure(kpa, absolute=False),
                detail=f"= {format_quantity(kpa, PRESSURE, other_pressure_unit())}, as the pump reads it",
                main=True,
            ),
            Reading(
                "Load on the unit",
                show(newtons, FORCE),
                detail=f"{format_number(values['share'] * 100, 1)} % "
                f"of {show(values['rider_mass'], RIDER_MASS)} × standard gravity",
            ),
            Reading("Sag", f"{show(sag_mm, LENGTH)} of {show(values['travel'], LENGTH)}"),
        ]
        if model is not None and model.max_pressure_kpa and kpa > model.max_pressure_kpa:
            maximum = format_quantity(model.max_pressure_kpa, PRESSURE)
            outcome.warnings.append(
                f"{show_pressure(kpa, absolute=False)} is above the maximum of {maximum} for the "
                f"{model.name}: more volume spacers (less pressure for the same sag), more sag or a firmer "
                "spring is needed. Never fill above the maximum."
            )
        self._curves(
            outcome, spring=spring, count=count, pressure=pressure, load=load, sag=values["sag"], model=model
        )
        outcome.marks.append(
            (f"Sag {format_number(values['sag'] * 100, 1)} %: {show(newtons, FORCE)}", sag_mm, newtons)
        )
        outcome.notes.append(
            "Static sag: slow compression (isothermal). Both chambers at the set pressure at top-out. "
            "An estimate: check the sag on the bike."
        )
        if model is not None and model.kind == UnitModel.Kind.REAR_SHOCK:
            outcome.notes.append(
                "A rear shock carries the rider through the frame's leverage, which this page does not "
                "model: type the share as the load at the shock."
            )
        return outcome

    def _curves(
        self,
        outcome: Outcome,
        *,
        spring: Callable[[int], AirSpring],
        count: int,
        pressure: Any,
        load: Any,
        sag: float,
        model: UnitModel | None,
    ) -> None:
        """Force along the travel at ``pressure`` with the spacers fitted, one more and one fewer."""
        variants = [(count, "main")]
        if count >= 1:
            variants.append((count - 1, "softer"))
        if model is None or model.max_spacers is None or count + 1 <= model.max_spacers:
            variants.append((count + 1, "firmer"))
        elif model is not None:
            outcome.notes.append(
                f"No curve for one spacer more: the {model.name} takes at most {model.max_spacers}."
            )
        rows: list[tuple[str, ...]] = []
        for spacers, style in sorted(variants):
            label = _spacers(spacers) + (" (as set)" if spacers == count else "")
            try:
                variant = spring(spacers)
                curve = variant.curve(pressure=pressure)
            except CalcInputError as error:
                # One spacer more or fewer is a "what if", not the technician's input: say why it is
                # missing rather than refuse the page.
                outcome.notes.append(f"No curve for {_spacers(spacers)}: {error}")
                continue
            try:
                needed = format_quantity(
                    float(variant.pressure_for_sag(load=load, sag=sag).to("kPa").magnitude), PRESSURE
                )
            except CalcInputError:
                needed = "none up to 30 bar"
            forces = curve.forces.to("N").magnitude
            outcome.curves.append((label, curve.positions.to("mm").magnitude, forces, style))
            rows.append((label, needed, show(float(forces[-1]), FORCE)))
        outcome.table = Table(
            caption="One spacer more and one fewer",
            head=(
                "Spacers",
                "Pressure for the same sag",
                f"Force at full travel at {format_quantity(float(pressure.to('kPa').magnitude), PRESSURE)}",
            ),
            rows=rows,
        )


# --- The page ------------------------------------------------------------------------------------

SECTIONS: dict[str, type[CalculatorForm]] = {
    form.section: form
    for form in (
        WeighForm,
        LevelForm,
        ViscosityForm,
        BlendForm,
        AirSpringForm,
        TrappedGasForm,
        CavitationForm,
        IfpFrictionForm,
    )
}


class UnitModelPickerForm(forms.Form):
    """Choose a unit model to fill the air-spring section from its spec sheet (GET ``model=<id>``)."""

    model = CatalogueChoiceField(label="Unit model", empty_label="— none: type the geometry —")

    def __init__(
        self,
        data: Mapping[str, Any] | None = None,
        *,
        catalogue: Catalogue,
        initial: dict[str, Any] | None = None,
    ) -> None:
        super().__init__(data, initial=initial)
        self.fields["model"].set_objects(catalogue.air_models)


@dataclass
class CalculatorPage:
    """The page's forms for one request: the submitted section bound, the others showing defaults."""

    forms: dict[str, CalculatorForm]
    picker: UnitModelPickerForm
    unit_model: UnitModel | None  # the air-spring section's model, if one is chosen
    section: str | None  # the section the request submitted, if any
    model_picked: bool  # the request came from the unit-model select

    def outcomes(self) -> dict[str, Outcome | None]:
        return {name: form.outcome() for name, form in self.forms.items()}


def calculator_page(query: QueryDict, *, catalogue: Catalogue) -> CalculatorPage:
    """Build the page's forms from the query string.

    ``section=<name>`` binds that section's form. ``model=<id>`` (the unit-model select) fills the
    air-spring geometry from the spec sheet: as initial values when it comes alone (a plain GET),
    or over the air-spring values that came with it (htmx includes the section's form), so that
    the rider's values survive a change of model.
    """
    model_picked = "model" in query
    section = "air" if model_picked else query.get("section")
    if section not in SECTIONS:
        section = None
    picker = UnitModelPickerForm(query if model_picked else None, catalogue=catalogue)
    forms_: dict[str, CalculatorForm] = {}
    for name, form_class in SECTIONS.items():
        if name == "air" and model_picked:
            forms_[name] = _air_form_for_model(query, picker, catalogue)
        elif name == section:
            forms_[name] = form_class(query, catalogue=catalogue)
        else:
            forms_[name] = form_class(catalogue=catalogue)
    air = forms_["air"]
    if air.is_bound:
        air.is_valid()
        unit_model = air.cleaned_data.get("unit_model")
    else:
        unit_model = catalogue.air_model(air.initial.get("unit_model"))
    if not model_picked:
        picker = UnitModelPickerForm(
            catalogue=catalogue, initial={"model": unit_model.pk if unit_model else ""}
        )
    return CalculatorPage(
        forms=forms_, picker=picker, unit_model=unit_model, section=section, model_picked=model_picked
    )


def _air_form_for_model(query: QueryDict, picker: UnitModelPickerForm, catalogue: Catalogue) -> AirSpringForm:
    model = picker.cleaned_data.get("model") if picker.is_valid() else None
    geometry = AirSpringForm.geometry_of(model) if model is not None else {"unit_model": ""}
    prefix = AirSpringForm.section
    if not any(key.startswith(f"{prefix}-") for key in query):
        return AirSpringForm(catalogue=catalogue, initial=geometry)
    data = query.copy()
    for name, value in geometry.items():
        data[f"{prefix}-{name}"] = value
    return AirSpringForm(data, catalogue=catalogue)
