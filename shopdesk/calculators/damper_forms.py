"""The sealed-damper calculators: trapped gas, cavitation margin, IFP friction at the shaft.

``shopdesk.calc.damper`` works in ABSOLUTE pressure; these forms take gauge pressure as a gauge
reads it and add one standard atmosphere (ISO 2533, 101.325 kPa) before they call it.
"""

from __future__ import annotations

from typing import Any, ClassVar

from django import forms

from shopdesk.calc import Q_, CalcInputError
from shopdesk.calc import damper as damper_calc
from shopdesk.calc import oil as oil_calc
from shopdesk.calculators.base import (
    ATMOSPHERE_KPA,
    CAVITATION_THRESHOLD_KPA,
    SMALL_FORCE,
    Alarm,
    BlamedError,
    CalcQuantityField,
    CalculatorForm,
    Outcome,
    Reading,
    number_with_unit,
    show,
    show_pressure,
)
from shopdesk.shop.quantities import FORCE, LENGTH, PRESSURE, VOLUME, format_number

# --- 5. Sealed cavity: trapped gas ---------------------------------------------------------------

_COMPRESSION = [("1.0", "Slow (n = 1, isothermal)"), ("1.4", "Fast (n = 1.4, adiabatic)")]


class TrappedGasForm(CalculatorForm):
    section = "gas"
    title = "Sealed cavity: trapped gas"
    intro = (
        "The pressure of a gas pocket in a sealed damper after oil or the shaft takes up some of its "
        "room. Type gauge pressure as the gauge reads it: the gas law needs absolute pressure, so the "
        "page adds 1 standard atmosphere (101.325 kPa) before it calculates."
    )
    groups: ClassVar[tuple[tuple[str, tuple[str, ...]], ...]] = (
        ("The gas pocket", ("gas_volume", "initial_pressure", "compression")),
        ("What goes in", ("volume_change", "shaft_diameter", "stroke", "overfill")),
    )
    gas_volume = CalcQuantityField(
        kind=VOLUME, label="Gas volume", help_text="Air or nitrogen left in the cavity."
    )
    initial_pressure = CalcQuantityField(
        kind=PRESSURE,
        minimum=-ATMOSPHERE_KPA,
        allow_minimum=False,
        label="Initial pressure (gauge)",
        help_text="As a gauge reads it: 0 when sealed at atmospheric pressure.",
    )
    compression = forms.TypedChoiceField(
        choices=_COMPRESSION,
        coerce=float,
        required=False,
        empty_value=None,
        label="Compression",
        help_text="Slow: at rest or bleeding. Fast: on the trail.",
    )
    volume_change = CalcQuantityField(
        kind=VOLUME,
        minimum=None,
        label="Volume change",
        help_text="Oil or shaft entering the pocket; negative: it grows. Or give shaft and stroke.",
    )
    shaft_diameter = CalcQuantityField(kind=LENGTH, label="Shaft diameter")
    stroke = CalcQuantityField(kind=LENGTH, label="Stroke", help_text="How far the shaft enters.")
    overfill = CalcQuantityField(
        kind=VOLUME,
        minimum=None,
        label="Overfill",
        help_text="Oil beyond the spec fill; negative: underfill.",
    )

    def defaults(self) -> dict[str, Any]:
        return {"initial_pressure": f"0 {PRESSURE.display_unit}", "compression": "1.0"}

    def field_for(self, parameter: str) -> str | None:
        data = self.cleaned_data
        if parameter == "volume_change":
            if data.get("volume_change") is not None:
                return "volume_change"
            return "stroke" if data.get("stroke") is not None else "overfill"
        return {
            "gas_volume": "gas_volume",
            "initial_pressure": "initial_pressure",
            "shaft_diameter": "shaft_diameter",
            "stroke": "stroke",
        }.get(parameter)

    def calculate(self, values: dict[str, Any]) -> Outcome:
        outcome = Outcome(missing=self.missing(values, "gas_volume", "initial_pressure"))
        by_shaft = values["shaft_diameter"] is not None or values["stroke"] is not None
        if values["volume_change"] is not None and by_shaft:
            raise BlamedError(None, "Give a volume change, or a shaft diameter and a stroke: not both.")
        if by_shaft:
            outcome.missing += self.missing(values, "shaft_diameter", "stroke")
        elif values["volume_change"] is None and values["overfill"] is None:
            outcome.missing.append("a volume change, or a shaft diameter and a stroke")
        if outcome.missing:
            return outcome
        if by_shaft:
            displaced = oil_calc.shaft_displacement(
                shaft_diameter=Q_(values["shaft_diameter"], "mm"), stroke=Q_(values["stroke"], "mm")
            )
            entering = float(displaced.to("mL").magnitude)
            outcome.readings.append(
                Reading("Shaft displacement", show(entering, VOLUME), detail="π/4 × shaft² × stroke")
            )
        else:
            entering = values["volume_change"] or 0.0
        change = entering + (values["overfill"] or 0.0)
        initial_absolute = values["initial_pressure"] + ATMOSPHERE_KPA
        try:
            pressure = damper_calc.trapped_gas_pressure(
                gas_volume=Q_(values["gas_volume"], "mL"),
                initial_pressure=Q_(initial_absolute, "kPa"),
                volume_change=Q_(change, "mL"),
                polytropic_index=values["compression"] or 1.0,
            )
        except CalcInputError as error:
            if not str(error).startswith("Hydraulic lock"):
                raise
            self.add_library_error(error)
            outcome.readings.clear()
            outcome.alarm = Alarm(
                "Hydraulic lock.",
                f"{show(change, VOLUME)} of oil would fill the whole {show(values['gas_volume'], VOLUME)} "
                "gas pocket: the damper cannot take that fill or stroke. Do not force it; drain to the spec "
                "fill.",
            )
            return outcome
        absolute = float(pressure.to("kPa").magnitude)
        in_kpa = f"{show_pressure(absolute, absolute=True)} · {number_with_unit(absolute, 'kPa', 1)} absolute"
        outcome.readings += [
            Reading(
                "Pressure after",
                show_pressure(absolute - ATMOSPHERE_KPA, absolute=False),
                detail=in_kpa,
                main=True,
            ),
            Reading("Volume change", show(change, VOLUME)),
            Reading(
                "Initial pressure",
                show_pressure(values["initial_pressure"], absolute=False),
                detail=f"{number_with_unit(initial_absolute, 'kPa', 1)} absolute",
            ),
        ]
        outcome.notes.append("Polytropic law p·Vⁿ = constant, on absolute pressure.")
        return outcome


# --- 5. Cavitation margin ------------------------------------------------------------------------


class CavitationForm(CalculatorForm):
    section = "cavitation"
    title = "Cavitation margin"
    intro = (
        "How far the low-pressure side of a damper piston stays above the pressure where the oil releases"
        " air. Type the static pressure as gauge; the page works in absolute pressure (gauge + 101.325 "
        "kPa)."
    )
    parameters: ClassVar[dict[str, str]] = {
        "static_pressure": "static_pressure",
        "damping_force": "damping_force",
        "piston_area": "piston_diameter",
        "bore_diameter": "piston_diameter",
        "rod_diameter": "shaft_diameter",
        "threshold": "threshold",
    }
    static_pressure = CalcQuantityField(
        kind=PRESSURE,
        minimum=-ATMOSPHERE_KPA,
        allow_minimum=False,
        label="Static pressure (gauge)",
        help_text="The damper at rest: 0 unpressurised, else its gas or IFP charge.",
    )
    damping_force = CalcQuantityField(kind=FORCE, label="Damping force")
    piston_diameter = CalcQuantityField(kind=LENGTH, label="Damper piston diameter")
    shaft_diameter = CalcQuantityField(
        kind=LENGTH,
        label="Shaft diameter",
        help_text="On the shaft side of the piston; empty: the full face.",
    )
    threshold = CalcQuantityField(
        kind=PRESSURE,
        label="Threshold (absolute)",
        help_text=(
            f"Common practice: some tens of kPa absolute (shop default {CAVITATION_THRESHOLD_KPA:g} kPa)."
        ),
    )

    def defaults(self) -> dict[str, Any]:
        return {
            "static_pressure": f"0 {PRESSURE.display_unit}",
            "threshold": f"{CAVITATION_THRESHOLD_KPA:g} kPa",
        }

    def calculate(self, values: dict[str, Any]) -> Outcome:
        outcome = Outcome(
            missing=self.missing(values, "static_pressure", "damping_force", "piston_diameter", "threshold")
        )
        if outcome.missing:
            return outcome
        # The area the pressure acts on is the volume per unit of stroke of that annulus.
        unit_stroke = Q_(1.0, "mm")
        area = (
            oil_calc.level_volume(
                bore_diameter=Q_(values["piston_diameter"], "mm"),
                rod_diameter=Q_(values["shaft_diameter"] or 0.0, "mm"),
                level_change=unit_stroke,
            )
            / unit_stroke
        ).to("mm**2")
        static = Q_(values["static_pressure"] + ATMOSPHERE_KPA, "kPa")
        threshold = Q_(values["threshold"], "kPa")
        margin = damper_calc.cavitation_margin(
            static_pressure=static,
            damping_force=Q_(values["damping_force"], "N"),
            piston_area=area,
            threshold=threshold,
        )
        largest = damper_calc.max_force_before_cavitation(
            static_pressure=static, piston_area=area, threshold=threshold
        )
        low = float(margin.low_side_pressure.to("kPa").magnitude)
        left = float(margin.margin.to("kPa").magnitude)
        outcome.readings += [
            Reading(
                "Largest damping force before the threshold",
                show(float(largest.to("N").magnitude), FORCE),
                main=True,
            ),
            Reading(
                "Low-side pressure",
                show_pressure(low, absolute=True),
                detail=f"{number_with_unit(low, 'kPa', 1)} absolute",
            ),
            Reading("Margin above the threshold", number_with_unit(left, "kPa", 1)),
            Reading(
                "Piston area",
                number_with_unit(float(area.magnitude), "mm²", 1),
                detail="piston less shaft" if values["shaft_diameter"] else "full piston face",
            ),
            Reading("Static pressure", show_pressure(float(static.to("kPa").magnitude), absolute=True)),
        ]
        if margin.will_cavitate:
            tension = " (the oil would have to be in tension)" if low < 0 else ""
            outcome.warnings.append(
                f"The low side falls below the threshold{tension}: the oil will release air or cavitate, "
                "and the rider hears or feels a knock. More static pressure or less damping force is needed."
            )
        return outcome


# --- 6. IFP friction at the shaft ----------------------------------------------------------------


class IfpFrictionForm(CalculatorForm):
    section = "friction"
    title = "IFP friction at the shaft"
    intro = (
        "How much of an internal floating piston's seal friction the damper shaft feels: the IFP moves "
        "shaft area / IFP area as far as the shaft."
    )
    parameters: ClassVar[dict[str, str]] = {
        "ifp_friction": "ifp_friction",
        "shaft_diameter": "shaft_diameter",
        "ifp_diameter": "ifp_diameter",
    }
    ifp_friction = CalcQuantityField(kind=SMALL_FORCE, label="IFP seal friction")
    shaft_diameter = CalcQuantityField(kind=LENGTH, label="Shaft diameter")
    ifp_diameter = CalcQuantityField(kind=LENGTH, label="IFP diameter")

    def calculate(self, values: dict[str, Any]) -> Outcome:
        outcome = Outcome(missing=self.missing(values, "ifp_friction", "shaft_diameter", "ifp_diameter"))
        if outcome.missing:
            return outcome
        at_shaft = damper_calc.friction_at_shaft(
            ifp_friction=Q_(values["ifp_friction"], "N"),
            shaft_diameter=Q_(values["shaft_diameter"], "mm"),
            ifp_diameter=Q_(values["ifp_diameter"], "mm"),
        )
        newtons = float(at_shaft.to("N").magnitude)
        share = (
            f"{format_number(newtons / values['ifp_friction'] * 100.0, 1)} % of the IFP's friction, "
            if values["ifp_friction"]
            else ""
        )
        outcome.readings.append(
            Reading(
                "Friction felt at the shaft",
                show(newtons, SMALL_FORCE),
                detail=f"{share}scaled by shaft area / IFP area",
                main=True,
            )
        )
        return outcome
