"""A spec sheet's geometry as the calculation library's objects."""

from __future__ import annotations

from typing import Any

from shopdesk.calc import Q_, CalcInputError
from shopdesk.calc.air_spring import AirSpring
from shopdesk.calc.oil import Oil as CalcOil
from shopdesk.calc.shims import Crossover, Piston, Shim, ShimStack
from shopdesk.specs.models import Oil, StackFields, UnitModel, Valve


def air_spring_for(
    unit_model: UnitModel,
    *,
    spacer_count: int | None = None,
    spacer_volume_cc: float | None = None,
    travel_mm: float | None = None,
) -> AirSpring | None:
    """The unit model's air spring with the given spacers, or None for a coil unit or missing geometry."""
    if not unit_model.is_air or not unit_model.air_piston_diameter_mm or not unit_model.positive_volume_cc:
        return None
    each = spacer_volume_cc if spacer_volume_cc is not None else (unit_model.spacer_volume_cc or 0.0)
    try:
        return AirSpring(
            piston_diameter=Q_(unit_model.air_piston_diameter_mm, "mm"),
            travel=Q_(travel_mm or unit_model.travel_mm, "mm"),
            positive_volume=Q_(unit_model.positive_volume_cc, "cm**3"),
            negative_volume=Q_(unit_model.negative_volume_cc or 0.0, "cm**3"),
            spacer_volume=Q_((spacer_count or 0) * each, "cm**3"),
        )
    except CalcInputError:
        return None  # geometry the model cannot represent (e.g. spacers filling the chamber)


def shim_stack_for(fields: StackFields | Any) -> ShimStack:
    """The stack a record, a library preset or a form's values (any object with the StackFields attributes) describes. Raises CalcInputError for one the model refuses."""
    shims = [
        Shim(Q_(line["od"], "mm"), Q_(line["thickness"], "mm"), int(line["count"])) for line in fields.shims
    ]
    crossover = None
    if fields.crossover_od_mm is not None:
        crossover = Crossover(
            Q_(fields.crossover_od_mm, "mm"), Q_(fields.crossover_thickness_mm or 0.0, "mm")
        )
    return ShimStack(
        shims,
        clamp_diameter=Q_(fields.clamp_mm, "mm"),
        crossover=crossover,
        crossover_position=fields.crossover_after_line if crossover is not None else None,
        preload=Q_(fields.preload_n or 0.0, "N"),
        floating_spring_rate=(
            Q_(fields.floating_rate_n_mm, "N/mm") if fields.floating_rate_n_mm is not None else None
        ),
    )


# Which area pushes oil through each valve per unit of shaft speed: a base valve passes only the
# oil the entering shaft displaces; a stack on the piston sees the annulus (piston less shaft).
VALVE_DISPLACING = {
    Valve.COMPRESSION_BASE: "shaft",
    Valve.COMPRESSION_PISTON: "annulus",
    Valve.REBOUND: "annulus",
}


def piston_for(fields: StackFields, unit_model: UnitModel) -> Piston | None:
    """The piston under the stack, from the record and the spec sheet; None while a size is missing."""
    diameter = fields.piston_diameter_mm or unit_model.damper_piston_diameter_mm
    shaft = unit_model.shaft_diameter_mm
    if not (diameter and shaft and fields.port_area_mm2 and fields.port_radius_mm):
        return None
    return Piston(
        diameter=Q_(diameter, "mm"),
        shaft_diameter=Q_(shaft, "mm"),
        port_area=Q_(fields.port_area_mm2, "mm**2"),
        port_radius=Q_(fields.port_radius_mm, "mm"),
        bleed_diameter=Q_(fields.bleed_mm or 0.0, "mm"),
        displacing=VALVE_DISPLACING[Valve(fields.valve)],
    )


def oil_for(oil: Oil) -> CalcOil:
    """A spec-sheet oil as the calculation library's oil (viscosities and density from its data sheet)."""
    return CalcOil(
        nu40=Q_(oil.viscosity_40c_mm2s, "mm**2/s"),
        nu100=Q_(oil.viscosity_100c_mm2s, "mm**2/s"),
        rho15=Q_(oil.density_15c_kg_m3, "kg/m**3"),
    )
