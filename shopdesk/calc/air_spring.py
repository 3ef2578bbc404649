"""Air springs and coil springs: force along the travel, sag pressure, coil rate, rider load.

Pressure convention: every pressure this module takes or returns is GAUGE
pressure, as a shock pump reads it. The gas law runs on absolute pressure
inside: p_abs = p_gauge + 1 standard atmosphere (101 325 Pa, ISO 2533).

The gas follows the polytropic law p·Vⁿ = constant (n = 1 slow and
isothermal, n = 1.4 fast and adiabatic for air). Air at 20 °C stays within
1 % of an ideal gas up to 20 bar, so the ideal-gas law is used throughout.

Model of the two chambers (a choice; see :class:`AirSpring`):

* Position x runs from 0 at top-out to ``travel`` at full compression.
* The positive chamber holds ``positive_volume − spacer_volume`` at top-out
  and loses piston area × x as the unit compresses.
* The negative chamber holds ``negative_volume`` at top-out and gains
  ``negative_area`` × x as the unit compresses.
* The set pressure is what the pump reads on the positive chamber at
  top-out after the unit has been cycled through the equalisation port at
  ``equalize_at``: there both chambers share one pressure. With
  ``equalize_at`` = 0 (the default) both chambers hold the set pressure at
  top-out.
* Each face of the piston that is not in a chamber sees atmosphere (the
  stanchion and lowers are vented), so the net force is
  (p_pos − p_atm)·A_pos − (p_neg − p_atm)·A_neg. Without a negative chamber
  the second term is absent.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pint

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.units import Q_, STANDARD_ATMOSPHERE, Quantity, check_number, check_quantity, ureg

STANDARD_GRAVITY = Q_(9.80665, "m/s**2")  # CGPM 1901, exact by definition
# Common practice: unit maximums on spec sheets stay under about 25 bar; the
# spec sheet's own maximum always rules.
DEFAULT_MAXIMUM_PRESSURE = Q_(30.0, "bar")
HIGHEST_PRESSURE_BAR = 100.0  # gauge; no shock pump reads more
HIGHEST_COMPRESSION_RATIO = 100.0  # real air springs run about 3:1 to 6:1
LARGEST_DIAMETER_MM = 300.0
LONGEST_TRAVEL_MM = 1_000.0
LARGEST_VOLUME_CC = 100_000.0
HIGHEST_LOAD_N = 100_000.0
HEAVIEST_RIDER_KG = 500.0

_ZERO_VOLUME = Q_(0.0, "cc")
_ZERO_LENGTH = Q_(0.0, "mm")
_ATMOSPHERE_PA = STANDARD_ATMOSPHERE.to("Pa").magnitude


def _length_mm(
    value: Any, name: str, *, allow_zero: bool = False, maximum: float = LONGEST_TRAVEL_MM
) -> float:
    return check_quantity(
        value, name=name, dimension="[length]", unit="mm", maximum=maximum, allow_minimum=allow_zero
    )


def _volume_cc(value: Any, name: str, *, allow_zero: bool = False) -> float:
    return check_quantity(
        value, name=name, dimension="[volume]", unit="cc", maximum=LARGEST_VOLUME_CC, allow_minimum=allow_zero
    )


def _force_n(value: Any, name: str) -> float:
    return check_quantity(value, name=name, dimension="[force]", unit="N", maximum=HIGHEST_LOAD_N)


def _sag_fraction(value: Any) -> float:
    return check_number(value, name="sag", minimum=0.0, maximum=1.0, allow_maximum=False)


def _gauge_pa(value: Any, name: str) -> float:
    bar = check_quantity(
        value,
        name=name,
        dimension="[pressure]",
        unit="bar",
        maximum=HIGHEST_PRESSURE_BAR,
        allow_minimum=True,
    )
    return bar * 1e5


@dataclass(frozen=True)
class AirSpringCurve:
    """Net spring force along the travel at one set pressure (gauge)."""

    pressure: Quantity
    positions: Quantity
    forces: Quantity


@dataclass(frozen=True)
class AirSpring:
    """An air spring: positive chamber, optional negative chamber, volume spacers.

    ``piston_diameter`` sets the positive piston area. ``positive_volume`` is
    the positive chamber at top-out without spacers; ``spacer_volume`` the
    volume of the spacers fitted. ``negative_volume`` is the negative chamber
    at top-out (zero: no negative chamber); ``negative_area`` the negative
    piston annulus (the positive piston's area when ``None``; it cannot exceed
    it, as the annulus is the piston less its shaft). ``equalize_at`` is the
    point of travel of the equalisation port (no effect without a negative
    chamber). ``polytropic_index`` runs from
    1.0 (slow, isothermal) to 1.4 (fast, adiabatic air).

    Pressures are GAUGE. The model is described in the module docstring.
    """

    piston_diameter: Quantity
    travel: Quantity
    positive_volume: Quantity
    negative_volume: Quantity = _ZERO_VOLUME
    negative_area: Quantity | None = None
    equalize_at: Quantity = _ZERO_LENGTH
    spacer_volume: Quantity = _ZERO_VOLUME
    polytropic_index: float = 1.0
    _si: _Geometry = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        diameter = _length_mm(self.piston_diameter, "piston_diameter", maximum=LARGEST_DIAMETER_MM)
        travel = _length_mm(self.travel, "travel")
        positive = _volume_cc(self.positive_volume, "positive_volume")
        negative = _volume_cc(self.negative_volume, "negative_volume", allow_zero=True)
        spacers = _volume_cc(self.spacer_volume, "spacer_volume", allow_zero=True)
        equalize_at = _length_mm(self.equalize_at, "equalize_at", allow_zero=True)
        index = check_number(
            self.polytropic_index, name="polytropic_index", minimum=1.0, maximum=1.4, allow_minimum=True
        )
        area = math.pi / 4.0 * diameter * diameter  # mm²
        if self.negative_area is None:
            negative_area = area
        else:
            negative_area = check_quantity(
                self.negative_area,
                name="negative_area",
                dimension="[length] ** 2",
                unit="mm**2",
                maximum=area,
            )
        if not equalize_at < travel:
            raise CalcInputError(
                f"equalize_at must lie within the travel, 0 to less than {travel:g} mm, "
                f"got {equalize_at:g} mm."
            )
        if not spacers < positive:
            raise CalcInputError(
                f"spacer_volume must be less than positive_volume ({positive:g} cc), got {spacers:g} cc."
            )
        swept = area * travel / 1000.0  # cc
        air_at_top_out = positive - spacers
        if not air_at_top_out > swept:
            raise CalcInputError(
                f"The positive chamber would be swept to nothing: positive_volume {positive:g} cc less "
                f"spacer_volume {spacers:g} cc must exceed piston area × travel, {swept:.4g} cc."
            )
        if air_at_top_out / (air_at_top_out - swept) > HIGHEST_COMPRESSION_RATIO:
            raise CalcInputError(
                f"The positive chamber would compress more than {HIGHEST_COMPRESSION_RATIO:g}:1 at full "
                f"travel ({air_at_top_out:.4g} cc to {air_at_top_out - swept:.4g} cc); "
                f"check positive_volume, spacer_volume and travel."
            )
        geometry = _Geometry(
            positive_area=area * 1e-6,
            negative_area=negative_area * 1e-6,
            travel=travel * 1e-3,
            positive_top_out=air_at_top_out * 1e-6,
            negative_top_out=negative * 1e-6,
            equalize_at=equalize_at * 1e-3,
            index=index,
        )
        object.__setattr__(self, "_si", geometry)

    def force(self, *, position: Quantity, pressure: Quantity) -> Quantity:
        """Net spring force (N) at ``position`` (0 = top-out .. travel) for a GAUGE set ``pressure``.

        ``position`` may be a single length or an array of lengths; the result
        matches. Negative force near top-out is the negative chamber pulling the
        unit into its travel. Polytropic gas law (p·Vⁿ constant) on absolute
        pressure; the model is described in the module docstring.
        """
        x = _positions_m(position, self._si.travel)
        gain, offset = self._si.linear_force(x)
        absolute = _gauge_pa(pressure, "pressure") + _ATMOSPHERE_PA
        return Q_(absolute * gain - offset, "N")

    def curve(self, *, pressure: Quantity, points: int = 101) -> AirSpringCurve:
        """Net spring force (N) at ``points`` evenly spaced positions from top-out to full travel.

        ``pressure`` is the GAUGE set pressure; ``points`` 2..10 001.
        """
        count = check_number(points, name="points", minimum=2, maximum=10_001, allow_minimum=True)
        if count != int(count):
            raise CalcInputError(f"points must be a whole number from 2 to 10001, got {count:g}.")
        absolute = _gauge_pa(pressure, "pressure") + _ATMOSPHERE_PA
        x = np.linspace(0.0, self._si.travel, int(count))
        gain, offset = self._si.linear_force(x)
        return AirSpringCurve(
            pressure=pressure.to("psi"),
            positions=Q_(x * 1e3, "mm"),
            forces=Q_(absolute * gain - offset, "N"),
        )

    def pressure_for_sag(
        self, *, load: Quantity, sag: float, maximum_pressure: Quantity | None = None
    ) -> Quantity:
        """GAUGE set pressure (psi) that lets ``load`` (a force) sink the unit to ``sag``.

        ``sag`` is a share of travel, 0 < sag < 1 (common practice: 0.15-0.25 for
        a fork, 0.25-0.35 for a rear shock). The net force is linear in the
        absolute set pressure, so the answer is closed-form. No pressure from 0
        up to ``maximum_pressure`` (default 30 bar, above the usual spec-sheet
        maximums) that gives the sag raises :class:`CalcInputError`.
        """
        force = _force_n(load, "load")
        share = _sag_fraction(sag)
        ceiling = DEFAULT_MAXIMUM_PRESSURE if maximum_pressure is None else maximum_pressure
        ceiling_pa = _gauge_pa(ceiling, "maximum_pressure")
        if ceiling_pa <= 0.0:
            raise CalcInputError("maximum_pressure must be more than 0 bar, got 0 bar.")
        x = share * self._si.travel
        gain, offset = self._si.linear_force(x)
        if not gain > 0.0:
            raise CalcInputError(
                f"At {share:.0%} sag ({x * 1e3:.4g} mm) the net force does not rise with pressure: the "
                f"point lies before the equalisation port ({self._si.equalize_at * 1e3:g} mm) or at "
                f"top-out. Choose a larger sag."
            )
        gauge = (force + offset) / gain - _ATMOSPHERE_PA
        if gauge < 0.0:
            at_zero = _ATMOSPHERE_PA * gain - offset
            raise CalcInputError(
                f"Even at 0 psi the spring holds {at_zero:.4g} N at {share:.0%} sag, more than the load "
                f"{force:.4g} N: no pressure gives that sag."
            )
        if gauge > ceiling_pa:
            raise CalcInputError(
                f"No pressure up to maximum_pressure {ceiling.to('psi'):.0f~P} gives {share:.0%} sag under "
                f"{force:.4g} N: it would take {Q_(gauge, 'Pa').to('psi'):.0f~P}."
            )
        return Q_(gauge, "Pa").to("psi")

    def with_spacers(self, volume: Quantity) -> AirSpring:
        """The same spring with ``volume`` (cc, at least 0) of volume spacers added."""
        added = _volume_cc(volume, "volume", allow_zero=True)
        total = self.spacer_volume.to("cc").magnitude + added
        return dataclasses.replace(self, spacer_volume=Q_(total, "cc"))


@dataclass(frozen=True)
class _Geometry:
    """An air spring in SI floats (m, m², m³), for the arithmetic."""

    positive_area: float
    negative_area: float
    travel: float
    positive_top_out: float
    negative_top_out: float
    equalize_at: float
    index: float

    def linear_force(self, x: Any) -> tuple[Any, float]:
        """(gain, offset) such that net force (N) = absolute set pressure (Pa) × gain − offset."""
        n = self.index
        positive_ratio = (self.positive_top_out / (self.positive_top_out - self.positive_area * x)) ** n
        gain = positive_ratio * self.positive_area
        if self.negative_top_out == 0.0:
            return gain, _ATMOSPHERE_PA * self.positive_area
        # Pressure at the equalisation port, relative to the set pressure.
        shared = (
            self.positive_top_out / (self.positive_top_out - self.positive_area * self.equalize_at)
        ) ** n
        negative_at_port = self.negative_top_out + self.negative_area * self.equalize_at
        negative_ratio = shared * (negative_at_port / (self.negative_top_out + self.negative_area * x)) ** n
        gain = gain - negative_ratio * self.negative_area
        return gain, _ATMOSPHERE_PA * (self.positive_area - self.negative_area)


def _positions_m(position: Any, travel_m: float) -> Any:
    """Check one position or an array of positions (length, 0..travel) and return metres."""
    travel_mm = travel_m * 1e3
    if isinstance(position, pint.Quantity) and position._REGISTRY is ureg and np.ndim(position.magnitude) > 0:
        if not position.check("[length]"):
            raise CalcInputError(f"position must be a length (mm or in), got {position.units:~P}.")
        try:
            millimetres = np.asarray(position.to("mm").magnitude, dtype=float)
        except (TypeError, ValueError, pint.errors.PintError):
            raise CalcInputError("position must be an array of numbers with a length unit.") from None
        if millimetres.size == 0:
            raise CalcInputError("position must hold at least one point of travel.")
        if not np.all(np.isfinite(millimetres)):
            raise CalcInputError("position must hold finite numbers only.")
        lowest, highest = float(millimetres.min()), float(millimetres.max())
        if lowest < 0.0 or highest > travel_mm:
            raise CalcInputError(
                f"position must lie within the travel, 0 to {travel_mm:g} mm, "
                f"got {lowest:g} to {highest:g} mm."
            )
        return millimetres * 1e-3
    millimetres_one = check_quantity(
        position, name="position", dimension="[length]", unit="mm", maximum=travel_mm, allow_minimum=True
    )
    return millimetres_one * 1e-3


def coil_rate_for_sag(
    *, load: Quantity, travel: Quantity, sag: float, preload: Quantity = _ZERO_LENGTH
) -> Quantity:
    """Coil spring rate (N/mm) that sinks to ``sag`` (share of ``travel``) under ``load`` (a force).

    Hooke's law: the spring compresses by sag × travel + preload under the
    load, so rate = load / (sag·travel + preload). Load and travel are at the
    spring: for a rear shock, the shock's stroke and the force at the shock
    after the frame's leverage.
    """
    force = _force_n(load, "load")
    length = _length_mm(travel, "travel")
    share = _sag_fraction(sag)
    preload_mm = _length_mm(preload, "preload", allow_zero=True, maximum=length)
    return Q_(force / (share * length + preload_mm), "N/mm")


def fork_load(*, rider_mass: Quantity, share: float) -> Quantity:
    """Force (N) the unit carries: rider mass × standard gravity (9.80665 m/s², exact) × share.

    ``share`` (0 < share ≤ 1) is a shop setting, not a constant. Common practice:
    a fork carries about 0.30-0.40 of the rider's weight seated, about 0.45
    standing; a rear shock the rest (before leverage).
    """
    kilograms = check_quantity(
        rider_mass, name="rider_mass", dimension="[mass]", unit="kg", maximum=HEAVIEST_RIDER_KG
    )
    fraction = check_number(share, name="share", minimum=0.0, maximum=1.0)
    return Q_(kilograms * STANDARD_GRAVITY.magnitude * fraction, "N")
