"""Sealed dampers: trapped gas, spring-backed IFP pressure, IFP friction, cavitation margin.

Pressure convention: every pressure this module takes or returns is ABSOLUTE
(gas-law arithmetic needs it). Add 1 standard atmosphere (101 325 Pa) to a
gauge reading before passing it in.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.units import Q_, STANDARD_ATMOSPHERE, Quantity, check_number, check_quantity

# Ideal gas and seal models mean nothing far beyond this; a damper runs at tens of bar.
HIGHEST_PRESSURE_KPA = 100_000.0  # 1000 bar absolute
# A gas pocket may expand to at most this many times its volume (shaft leaving the body).
LARGEST_EXPANSION = 10.0
LARGEST_DIAMETER_MM = 300.0
LONGEST_STROKE_MM = 1_000.0
LARGEST_VOLUME_ML = 100_000.0
HIGHEST_FORCE_N = 1_000_000.0
STIFFEST_SPRING_N_PER_MM = 100_000.0

_ATMOSPHERE_KPA = STANDARD_ATMOSPHERE.to("kPa").magnitude
_ZERO_VOLUME = Q_(0.0, "mL")


def _absolute_kpa(value: Any, name: str, *, allow_zero: bool = False) -> float:
    return check_quantity(
        value,
        name=f"{name} (absolute)",
        dimension="[pressure]",
        unit="kPa",
        maximum=HIGHEST_PRESSURE_KPA,
        allow_minimum=allow_zero,
    )


def _diameter_mm(value: Any, name: str) -> float:
    return check_quantity(value, name=name, dimension="[length]", unit="mm", maximum=LARGEST_DIAMETER_MM)


def _area_mm2(value: Any, name: str) -> float:
    return check_quantity(
        value,
        name=name,
        dimension="[length] ** 2",
        unit="mm**2",
        maximum=math.pi / 4 * LARGEST_DIAMETER_MM**2,
    )


def _force_n(value: Any, name: str) -> float:
    return check_quantity(
        value, name=name, dimension="[force]", unit="N", maximum=HIGHEST_FORCE_N, allow_minimum=True
    )


def _check_shaft_inside(shaft: float, ifp: float) -> None:
    if not shaft < ifp:
        raise CalcInputError(
            f"shaft_diameter must be smaller than ifp_diameter ({ifp:g} mm), got {shaft:g} mm."
        )


def trapped_gas_pressure(
    *,
    gas_volume: Quantity,
    initial_pressure: Quantity,
    volume_change: Quantity,
    polytropic_index: float = 1.0,
) -> Quantity:
    """ABSOLUTE pressure (kPa) of a trapped gas pocket after its volume shrinks by ``volume_change``.

    Polytropic process p·Vⁿ = constant: p = p₀·(V₀/(V₀ − ΔV))ⁿ, with
    ``initial_pressure`` p₀ ABSOLUTE, n from 1.0 (slow, isothermal) to 1.4
    (fast, adiabatic air or nitrogen). A negative ``volume_change`` is an
    expansion, allowed until the pocket is 10 times its volume. If the change
    reaches the whole pocket the oil fills it: hydraulic lock, refused with
    :class:`CalcInputError`, as is a result above 1000 bar.
    """
    volume = check_quantity(
        gas_volume, name="gas_volume", dimension="[volume]", unit="mL", maximum=LARGEST_VOLUME_ML
    )
    start = _absolute_kpa(initial_pressure, "initial_pressure")
    change = check_quantity(
        volume_change,
        name="volume_change",
        dimension="[volume]",
        unit="mL",
        minimum=-(LARGEST_EXPANSION - 1.0) * volume,
        allow_minimum=True,
    )
    index = check_number(
        polytropic_index, name="polytropic_index", minimum=1.0, maximum=1.4, allow_minimum=True
    )
    if change >= volume:
        raise CalcInputError(
            f"Hydraulic lock: volume_change {change:g} mL fills the whole {volume:g} mL gas pocket with oil. "
            f"volume_change must be less than gas_volume."
        )
    ratio = volume / (volume - change)
    # Compare in logarithms so that a near-lock cannot overflow before it is refused.
    if math.log(start) + index * math.log(ratio) > math.log(HIGHEST_PRESSURE_KPA):
        raise CalcInputError(
            f"Hydraulic lock: volume_change {change:g} mL leaves {volume - change:.3g} mL of the "
            f"{volume:g} mL gas pocket, a pressure above {HIGHEST_PRESSURE_KPA / 100:g} bar."
        )
    return Q_(start * ratio**index, "kPa")


def ifp_pressure(
    *,
    ifp_diameter: Quantity,
    spring_rate: Quantity,
    spring_preload: Quantity,
    shaft_diameter: Quantity,
    stroke: Quantity,
    overfill: Quantity = _ZERO_VOLUME,
) -> Quantity:
    """ABSOLUTE oil pressure (kPa) behind a coil-spring-backed internal floating piston (IFP).

    The IFP moves by (shaft displacement + ``overfill``) / IFP area, with shaft
    displacement (π/4)·shaft²·stroke; the spring then pushes with
    rate × (preload + movement), and p = p_atm + force / IFP area: the spring
    side of the IFP is vented to atmosphere. Seal friction is left out (see
    :func:`friction_at_shaft`). A negative ``overfill`` (underfill) is allowed
    while the spring stays compressed.
    """
    ifp = _diameter_mm(ifp_diameter, "ifp_diameter")
    shaft = _diameter_mm(shaft_diameter, "shaft_diameter")
    _check_shaft_inside(shaft, ifp)
    rate = check_quantity(
        spring_rate,
        name="spring_rate",
        dimension="[mass] / [time] ** 2",
        unit="N/mm",
        minimum=0.0,
        maximum=STIFFEST_SPRING_N_PER_MM,
        allow_minimum=True,
    )
    preload = check_quantity(
        spring_preload,
        name="spring_preload",
        dimension="[length]",
        unit="mm",
        maximum=LONGEST_STROKE_MM,
        allow_minimum=True,
    )
    travel = check_quantity(
        stroke, name="stroke", dimension="[length]", unit="mm", maximum=LONGEST_STROKE_MM, allow_minimum=True
    )
    extra = check_quantity(
        overfill,
        name="overfill",
        dimension="[volume]",
        unit="mL",
        minimum=-LARGEST_VOLUME_ML,
        maximum=LARGEST_VOLUME_ML,
        allow_minimum=True,
    )
    ifp_area = math.pi / 4.0 * ifp * ifp  # mm²
    shaft_volume = math.pi / 4.0 * shaft * shaft * travel  # mm³
    compression = preload + (shaft_volume + extra * 1000.0) / ifp_area  # mm
    if compression < 0.0:
        least = -(preload * ifp_area + shaft_volume) / 1000.0
        raise CalcInputError(
            f"With overfill {extra:g} mL the IFP spring would go slack: overfill must be at least "
            f"{least:.4g} mL for this preload and stroke."
        )
    force = rate * compression  # N
    return Q_(_ATMOSPHERE_KPA + force / ifp_area * 1000.0, "kPa")


def friction_at_shaft(
    *, ifp_friction: Quantity, shaft_diameter: Quantity, ifp_diameter: Quantity
) -> Quantity:
    """Share (N) of the IFP's seal friction that the damper shaft feels.

    The IFP moves shaft area / IFP area as far as the shaft, so its friction
    force reaches the shaft scaled by that ratio (about one third for usual
    sizes, common practice).
    """
    friction = _force_n(ifp_friction, "ifp_friction")
    shaft = _diameter_mm(shaft_diameter, "shaft_diameter")
    ifp = _diameter_mm(ifp_diameter, "ifp_diameter")
    _check_shaft_inside(shaft, ifp)
    return Q_(friction * (shaft / ifp) ** 2, "N")


@dataclass(frozen=True)
class CavitationMargin:
    """Pressure left on the low-pressure side of a damper piston (ABSOLUTE, kPa).

    ``margin`` below zero means the low side falls under the threshold: the oil
    will release air or cavitate. ``low_side_pressure`` below zero means the oil
    would have to be in tension, which it cannot: it cavitates.
    """

    low_side_pressure: Quantity
    margin: Quantity

    @property
    def will_cavitate(self) -> bool:
        return bool(self.margin.magnitude < 0.0)


def cavitation_margin(
    *, static_pressure: Quantity, damping_force: Quantity, piston_area: Quantity, threshold: Quantity
) -> CavitationMargin:
    """Low-side pressure and margin (ABSOLUTE, kPa) of a damper piston making ``damping_force``.

    low side = static − force / piston area; margin = low side − threshold.
    The threshold is a shop setting: oil open to the air releases dissolved
    air near the pressure it last stood at (Henry's law); common practice puts
    the threshold at some tens of kPa absolute.
    """
    static = _absolute_kpa(static_pressure, "static_pressure")
    force = _force_n(damping_force, "damping_force")
    area = _area_mm2(piston_area, "piston_area")
    limit = _absolute_kpa(threshold, "threshold", allow_zero=True)
    low_side = static - force / area * 1000.0
    return CavitationMargin(low_side_pressure=Q_(low_side, "kPa"), margin=Q_(low_side - limit, "kPa"))


def max_force_before_cavitation(
    *, static_pressure: Quantity, piston_area: Quantity, threshold: Quantity
) -> Quantity:
    """Largest damping force (N) before the low side of the piston drops to ``threshold``.

    (static − threshold) × piston area, pressures ABSOLUTE; zero when the static
    pressure is already at or below the threshold.
    """
    static = _absolute_kpa(static_pressure, "static_pressure")
    area = _area_mm2(piston_area, "piston_area")
    limit = _absolute_kpa(threshold, "threshold", allow_zero=True)
    return Q_(max(0.0, static - limit) * area / 1000.0, "N")
