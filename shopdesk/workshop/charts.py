"""The spring curves a job's records describe, drawn for the job page and the service report."""

from __future__ import annotations

from typing import Any

from shopdesk.calc import Q_, CalcInputError
from shopdesk.shop.plots import air_spring_plot
from shopdesk.specs.geometry import air_spring_for
from shopdesk.workshop.models import SpringRecord


def spring_plot(unit_model: Any, live: dict[str, SpringRecord]) -> str:
    """Force against travel before and after, on one SVG, when the records hold a pressure."""
    curves = []
    for stage, record in sorted(live.items()):
        if record.positive_pressure_kpa is None:
            continue
        spring = air_spring_for(
            unit_model, spacer_count=record.spacer_count, spacer_volume_cc=record.spacer_volume_cc
        )
        if spring is None:
            continue
        try:
            curve = spring.curve(pressure=Q_(record.positive_pressure_kpa, "kPa"), points=61)
        except CalcInputError:
            continue
        label = f"{SpringRecord.Stage(stage).label}: {record.spacer_count or 0} spacers"
        curves.append(
            (
                label,
                curve.positions.to("mm").magnitude,
                curve.forces.to("N").magnitude,
                "main" if stage == "after" else "plain",
            )
        )
    if not curves:
        return ""
    return air_spring_plot(curves=curves)
