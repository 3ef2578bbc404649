"""A spec sheet's geometry as the calculation library's objects."""

from __future__ import annotations

from shopdesk.calc import Q_, CalcInputError
from shopdesk.calc.air_spring import AirSpring
from shopdesk.specs.models import UnitModel


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
