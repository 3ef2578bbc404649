"""Suspension oil: viscosity against temperature, grades, blends, density and volumes.

Viscosities are kinematic, in mm²/s (cSt); densities in kg/m³; volumes in mL;
temperatures in °C. Every function takes pint quantities of
:data:`shopdesk.calc.units.ureg` and raises :class:`CalcInputError` for input
it cannot use.

The viscosity index (ASTM D2270) is not computed here: it needs the standard's
table of L and H values for 2-70 mm²/s, which this library does not carry.
"""

from __future__ import annotations

import bisect
import math
from collections.abc import Sequence
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.units import Q_, Quantity, check_number, check_quantity

VISCOSITY = "[length] ** 2 / [time]"
DENSITY = "[mass] / [length] ** 3"

# ASTM D341 states its equations for 0.21 mm²/s up to 2e7 mm²/s.
LOWEST_VISCOSITY = 0.21
HIGHEST_VISCOSITY = 2.0e7
# No suspension or hydraulic oil is thicker than this at 40 °C; a typo is likelier.
HIGHEST_VISCOSITY_AT_40 = 10_000.0
LOWEST_TEMPERATURE = -40.0
HIGHEST_TEMPERATURE = 150.0
# ASTM D1250-80 Table 54D (lubricating oils) covers 800-1164 kg/m³ at 15 °C (from memory).
LOWEST_DENSITY = 800.0
HIGHEST_DENSITY = 1164.0
# Sane bounds for bench sizes, so that a slip of the keyboard is refused.
LARGEST_DIAMETER = 500.0  # mm
LONGEST_LENGTH = 2_000.0  # mm
LARGEST_VOLUME = 100_000.0  # mL
LARGEST_MASS = 100_000.0  # g

_KELVIN_AT_ZERO_CELSIUS = 273.15
_DATA_SHEET_TEMPERATURES = (40.0, 100.0)
_NO_ROD = Q_(0.0, "mm")


# --- The oil -------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Oil:
    """A suspension oil as its data sheet gives it.

    ``nu40`` and ``nu100`` are the kinematic viscosities at 40 °C and 100 °C
    (mm²/s, cSt), ``rho15`` the density at 15 °C (kg/m³). The inputs are kept
    as given; the methods return mm²/s and kg/m³.
    """

    nu40: Quantity
    nu100: Quantity
    rho15: Quantity

    def __post_init__(self) -> None:
        _check_viscosity_pair(self.nu40, self.nu100)
        _check_density(self.rho15)

    def viscosity(self, temperature: Quantity) -> Quantity:
        """Kinematic viscosity (mm²/s) at ``temperature``, by ASTM D341 (see :func:`viscosity_at`)."""
        return viscosity_at(nu40=self.nu40, nu100=self.nu100, temperature=temperature)

    def density(self, temperature: Quantity) -> Quantity:
        """Density (kg/m³) at ``temperature``, by API MPMS 11.1 (see :func:`density_at`)."""
        return density_at(rho15=self.rho15, temperature=temperature)

    def grade(self) -> int | None:
        """ISO 3448 viscosity grade (see :func:`iso_vg_grade`)."""
        return iso_vg_grade(self.nu40)


# --- Input checks --------------------------------------------------------------------------------


def _viscosity(value: Any, name: str, *, maximum: float = HIGHEST_VISCOSITY) -> float:
    return check_quantity(
        value,
        name=name,
        dimension=VISCOSITY,
        unit="mm**2/s",
        minimum=LOWEST_VISCOSITY,
        maximum=maximum,
        allow_minimum=True,
    )


def _check_viscosity_pair(nu40: Any, nu100: Any) -> tuple[float, float]:
    at_40 = _viscosity(nu40, "nu40", maximum=HIGHEST_VISCOSITY_AT_40)
    at_100 = _viscosity(nu100, "nu100", maximum=HIGHEST_VISCOSITY_AT_40)
    if not at_100 < at_40:
        raise CalcInputError(
            f"nu100 must be less than nu40 (oil thins when hot), got nu40 {at_40:g} mm²/s "
            f"and nu100 {at_100:g} mm²/s."
        )
    return at_40, at_100


def _check_density(rho15: Any) -> float:
    return check_quantity(
        rho15,
        name="rho15",
        dimension=DENSITY,
        unit="kg/m**3",
        minimum=LOWEST_DENSITY,
        maximum=HIGHEST_DENSITY,
        allow_minimum=True,
    )


def _celsius(temperature: Any) -> float:
    return check_quantity(
        temperature,
        name="temperature",
        dimension="[temperature]",
        unit="degC",
        minimum=LOWEST_TEMPERATURE,
        maximum=HIGHEST_TEMPERATURE,
        allow_minimum=True,
    )


def _length(value: Any, name: str, *, allow_zero: bool = False, maximum: float = LONGEST_LENGTH) -> float:
    return check_quantity(
        value, name=name, dimension="[length]", unit="mm", maximum=maximum, allow_minimum=allow_zero
    )


# --- Viscosity against temperature: ASTM D341 -----------------------------------------------------


def _walther_z(nu: float) -> float:
    return nu + 0.7 + math.exp(-1.47 - 1.84 * nu - 0.51 * nu * nu)


def _viscosity_from_z(z: float) -> float:
    w = z - 0.7
    return w - math.exp(-0.7487 - 3.295 * w + 0.6119 * w * w - 0.3193 * w * w * w)


def _log_log(nu: float) -> float:
    return math.log10(math.log10(_walther_z(nu)))


def viscosity_at(*, nu40: Quantity, nu100: Quantity, temperature: Quantity) -> Quantity:
    """Kinematic viscosity (mm²/s) of an oil at ``temperature`` from its 40 °C and 100 °C values.

    ASTM D341, Walther form: log10(log10 Z) = A − B·log10 T (T in kelvin),
    with Z = ν + 0.7 + exp(−1.47 − 1.84ν − 0.51ν²) and its published inverse
    ν = (Z − 0.7) − exp(−0.7487 − 3.295(Z−0.7) + 0.6119(Z−0.7)² − 0.3193(Z−0.7)³).
    A and B are fitted through the two data-sheet points.

    ``temperature`` must lie in −40..150 °C. A result outside the standard's
    range (0.21 to 2e7 mm²/s) raises :class:`CalcInputError`. The correction
    pair is not exactly reversible: for oils thinner than about 3 mm²/s the
    data-sheet points come back within about 1e-3 relative.
    """
    at_40, at_100 = _check_viscosity_pair(nu40, nu100)
    celsius = _celsius(temperature)
    x40, x100 = (math.log10(t + _KELVIN_AT_ZERO_CELSIUS) for t in _DATA_SHEET_TEMPERATURES)
    y40, y100 = _log_log(at_40), _log_log(at_100)
    slope = (y40 - y100) / (x100 - x40)
    y = y40 - slope * (math.log10(celsius + _KELVIN_AT_ZERO_CELSIUS) - x40)
    range_text = f"{LOWEST_VISCOSITY:g} to {HIGHEST_VISCOSITY:g} mm²/s"
    if y > math.log10(math.log10(_walther_z(HIGHEST_VISCOSITY))):
        raise CalcInputError(
            f"At {celsius:g} °C this oil would be thicker than {HIGHEST_VISCOSITY:g} mm²/s, "
            f"outside ASTM D341's range ({range_text}); check nu40 and nu100."
        )
    z = 10.0 ** (10.0**y)
    nu = _viscosity_from_z(z)
    if not nu >= LOWEST_VISCOSITY:
        raise CalcInputError(
            f"At {celsius:g} °C this oil would be thinner than {LOWEST_VISCOSITY:g} mm²/s, "
            f"outside ASTM D341's range ({range_text}); use a temperature nearer 40..100 °C."
        )
    return Q_(nu, "mm**2/s")


# --- Viscosity grades: ISO 3448 -------------------------------------------------------------------

# Grade: (lowest, highest) kinematic viscosity at 40 °C in mm²/s, midpoint ±10 %.
ISO_VG_LIMITS: dict[int, tuple[float, float]] = {
    2: (1.98, 2.42),
    3: (2.88, 3.52),
    5: (4.14, 5.06),
    7: (6.12, 7.48),
    10: (9.00, 11.0),
    15: (13.5, 16.5),
    22: (19.8, 24.2),
    32: (28.8, 35.2),
    46: (41.4, 50.6),
    68: (61.2, 74.8),
    100: (90.0, 110.0),
    150: (135.0, 165.0),
    220: (198.0, 242.0),
    320: (288.0, 352.0),
    460: (414.0, 506.0),
    680: (612.0, 748.0),
    1000: (900.0, 1100.0),
    1500: (1350.0, 1650.0),
    2200: (1980.0, 2420.0),
    3200: (2880.0, 3520.0),
}


def iso_vg_grade(nu40: Quantity) -> int | None:
    """ISO 3448 viscosity grade (VG number) of an oil, from its kinematic viscosity at 40 °C.

    Each grade is a midpoint with limits ±10 %, limits included. Returns the
    grade number (``32`` for VG32), or ``None`` when ``nu40`` falls between
    bands or outside VG2..VG3200.
    """
    at_40 = check_quantity(nu40, name="nu40", dimension=VISCOSITY, unit="mm**2/s", maximum=HIGHEST_VISCOSITY)
    for grade, (lowest, highest) in ISO_VG_LIMITS.items():
        if lowest <= at_40 <= highest:
            return grade
    return None


# --- Blending: Refutas ----------------------------------------------------------------------------

_REFUTAS_SCALE = 14.534
_REFUTAS_OFFSET = 10.975


def viscosity_blending_number(nu: Quantity) -> float:
    """Refutas viscosity blending number (VBN) of an oil of kinematic viscosity ``nu``.

    VBN = 14.534·ln(ln(ν + 0.8)) + 10.975, ν in mm²/s, natural logarithms
    (Maples, *Petroleum Refinery Process Economics*, 2nd ed., 2000).
    """
    return _vbn(_viscosity(nu, "viscosity"))


def _vbn(nu: float) -> float:
    return _REFUTAS_SCALE * math.log(math.log(nu + 0.8)) + _REFUTAS_OFFSET


def _viscosity_from_vbn(vbn: float) -> float:
    return math.exp(math.exp((vbn - _REFUTAS_OFFSET) / _REFUTAS_SCALE)) - 0.8


def blend_viscosity(components: Sequence[tuple[Quantity, float]]) -> Quantity:
    """Kinematic viscosity (mm²/s) of a blend, by the Refutas method.

    ``components`` lists ``(viscosity, mass_fraction)`` pairs, the viscosities
    at one and the same temperature, the mass fractions (0..1) summing to 1
    within 1e-6. The blend's VBN is the mass-weighted sum of the components'
    VBNs (Maples, *Petroleum Refinery Process Economics*, 2nd ed., 2000).
    """
    if isinstance(components, (str, bytes)) or not isinstance(components, Sequence) or not components:
        raise CalcInputError(
            f"components must be a non-empty list of (viscosity, mass fraction) pairs, got {components!r}."
        )
    total_vbn = 0.0
    total_fraction = 0.0
    for index, component in enumerate(components, start=1):
        if not isinstance(component, (tuple, list)) or len(component) != 2:
            raise CalcInputError(
                f"component {index} must be a (viscosity, mass fraction) pair, got {component!r}."
            )
        viscosity, fraction = component
        nu = _viscosity(viscosity, f"viscosity of component {index}")
        share = check_number(
            fraction, name=f"mass fraction of component {index}", minimum=0.0, maximum=1.0, allow_minimum=True
        )
        total_vbn += share * _vbn(nu)
        total_fraction += share
    if abs(total_fraction - 1.0) > 1e-6:
        raise CalcInputError(f"The mass fractions must add up to 1 (within 1e-6), got {total_fraction:.9g}.")
    return Q_(_viscosity_from_vbn(total_vbn), "mm**2/s")


def blend_fraction(*, nu_a: Quantity, nu_b: Quantity, nu_target: Quantity) -> float:
    """Mass fraction (0..1) of oil A in a blend of A and B that has viscosity ``nu_target``.

    The inverse of :func:`blend_viscosity` for two oils (Refutas; Maples,
    2000). All three viscosities at the same temperature. The rest of the
    blend (1 − fraction) is oil B. A target outside the two oils' range, or two
    oils of the same viscosity, raises :class:`CalcInputError`.
    """
    a = _viscosity(nu_a, "nu_a")
    b = _viscosity(nu_b, "nu_b")
    target = _viscosity(nu_target, "nu_target")
    vbn_a, vbn_b = _vbn(a), _vbn(b)
    if vbn_a == vbn_b:
        raise CalcInputError(
            f"nu_a and nu_b are the same viscosity ({a:g} mm²/s): no blend of them can change it."
        )
    # A target computed from a blend of the two may land a rounding error outside them.
    slack = 1e-12 * max(a, b)
    if not min(a, b) - slack <= target <= max(a, b) + slack:
        raise CalcInputError(
            f"nu_target must lie between the two oils, {min(a, b):g} to {max(a, b):g} mm²/s, "
            f"got {target:g} mm²/s."
        )
    fraction = (_vbn(target) - vbn_b) / (vbn_a - vbn_b)
    return min(1.0, max(0.0, fraction))


# --- Density: API MPMS 11.1 / ASTM D1250, lubricating oils ---------------------------------------


def density_at(*, rho15: Quantity, temperature: Quantity) -> Quantity:
    """Density (kg/m³) of a lubricating oil at ``temperature`` from its density at 15 °C.

    API MPMS Chapter 11.1 / ASTM D1250 (Table 54D, lubricating oils):
    α15 = 0.6278/ρ15 per °C (ρ15 in kg/m³), ΔT = T − 15 °C,
    CTL = exp(−α15·ΔT·(1 + 0.8·α15·ΔT)), ρ = ρ15·CTL. ``rho15`` in 800..1164
    kg/m³, ``temperature`` in −40..150 °C.
    """
    density_15 = _check_density(rho15)
    celsius = _celsius(temperature)
    return Q_(density_15 * _volume_correction(density_15, celsius), "kg/m**3")


def _volume_correction(density_15: float, celsius: float) -> float:
    alpha = 0.6278 / density_15
    rise = celsius - 15.0
    return math.exp(-alpha * rise * (1.0 + 0.8 * alpha * rise))


def mass_for_volume(*, volume: Quantity, rho15: Quantity, temperature: Quantity) -> Quantity:
    """Mass (g) of ``volume`` of oil measured at ``temperature`` (density by :func:`density_at`).

    A shop weighs oil on a scale rather than reading a cylinder: this gives the
    grams that make up a spec volume. ``volume`` 0..100 L.
    """
    millilitres = _volume(volume, "volume")
    density = density_at(rho15=rho15, temperature=temperature).to("g/mL").magnitude
    return Q_(millilitres * density, "g")


def volume_for_mass(*, mass: Quantity, rho15: Quantity, temperature: Quantity) -> Quantity:
    """Volume (mL) of ``mass`` of oil at ``temperature`` (density by :func:`density_at`).

    The inverse of :func:`mass_for_volume`: what a weighed drain amounts to.
    ``mass`` 0..100 kg.
    """
    grams = check_quantity(
        mass, name="mass", dimension="[mass]", unit="g", maximum=LARGEST_MASS, allow_minimum=True
    )
    density = density_at(rho15=rho15, temperature=temperature).to("g/mL").magnitude
    return Q_(grams / density, "mL")


def _volume(value: Any, name: str) -> float:
    return check_quantity(
        value, name=name, dimension="[volume]", unit="mL", maximum=LARGEST_VOLUME, allow_minimum=True
    )


# --- Displacement and oil levels ------------------------------------------------------------------


def shaft_displacement(*, shaft_diameter: Quantity, stroke: Quantity) -> Quantity:
    """Volume (mL) a damper shaft of ``shaft_diameter`` displaces entering by ``stroke``.

    (π/4)·d²·s: the oil a sealed cartridge must make room for.
    """
    diameter = _length(shaft_diameter, "shaft_diameter", maximum=LARGEST_DIAMETER)
    length = _length(stroke, "stroke", allow_zero=True)
    return Q_(math.pi / 4.0 * diameter * diameter * length / 1000.0, "mL")


def _annulus_mm2(bore_diameter: Any, rod_diameter: Any) -> float:
    bore = _length(bore_diameter, "bore_diameter", maximum=LARGEST_DIAMETER)
    rod = _length(rod_diameter, "rod_diameter", allow_zero=True, maximum=LARGEST_DIAMETER)
    if not rod < bore:
        raise CalcInputError(
            f"rod_diameter must be smaller than bore_diameter ({bore:g} mm), got {rod:g} mm."
        )
    return math.pi / 4.0 * (bore * bore - rod * rod)


def level_volume(
    *, bore_diameter: Quantity, level_change: Quantity, rod_diameter: Quantity = _NO_ROD
) -> Quantity:
    """Oil volume (mL) between two levels ``level_change`` apart in a tube of ``bore_diameter``.

    A rod (damper cartridge, shaft) of ``rod_diameter`` standing in the tube
    takes its share: volume = (π/4)·(bore² − rod²)·level change. Use it to turn
    an open-bath spec level into millilitres, or a level error into a top-up.
    """
    area = _annulus_mm2(bore_diameter, rod_diameter)
    change = _length(level_change, "level_change", allow_zero=True)
    return Q_(area * change / 1000.0, "mL")


def level_for_volume(
    *, bore_diameter: Quantity, volume: Quantity, rod_diameter: Quantity = _NO_ROD
) -> Quantity:
    """Change of oil level (mm) that ``volume`` makes in a tube of ``bore_diameter`` around a rod.

    The inverse of :func:`level_volume`.
    """
    area = _annulus_mm2(bore_diameter, rod_diameter)
    millilitres = _volume(volume, "volume")
    level = millilitres * 1000.0 / area
    if level > LONGEST_LENGTH:
        raise CalcInputError(
            f"volume {millilitres:g} mL would raise the level by {level:g} mm, more than "
            f"{LONGEST_LENGTH:g} mm: check bore_diameter and volume."
        )
    return Q_(level, "mm")


# --- Viscosity index (ASTM D2270) -------------------------------------------------------------


@lru_cache(maxsize=1)
def _viscosity_index_table() -> tuple[tuple[float, ...], tuple[float, ...], tuple[float, ...]]:
    rows = []
    with open(Path(__file__).with_name("data") / "viscosity_index_l_h.csv", encoding="utf-8") as table:
        for line in table:
            if line.startswith(("#", "nu100")) or not line.strip():
                continue
            rows.append(tuple(float(cell) for cell in line.split(",")))
    nus, lows, highs = zip(*rows, strict=True)
    return nus, lows, highs


def viscosity_index(*, nu40: Quantity, nu100: Quantity) -> float:
    """Viscosity index of an oil from its kinematic viscosities at 40 °C and 100 °C (mm²/s).

    ASTM D2270 (ISO 2909): L and H from the standard's Table 1 for ν100 of 2–70 mm²/s,
    interpolated linearly (the table's own steps), or its formulas above 70 mm²/s;
    VI = (L − ν40)/(L − H)·100 while ν40 > H, else the procedure B form
    ((10^N − 1)/0.00715 + 100 with N = (log H − log ν40)/log ν100). Not defined below 2 mm²/s.
    """
    thick, thin = _check_viscosity_pair(nu40, nu100)
    if thin < 2.0:
        raise CalcInputError(
            f"nu100 must be at least 2 mm²/s for a viscosity index (ASTM D2270), got {thin:g} mm²/s."
        )
    if thin <= 70.0:
        nus, lows, highs = _viscosity_index_table()
        position = bisect.bisect_left(nus, thin)
        if nus[position] == thin:
            low, high = lows[position], highs[position]
        else:
            share = (thin - nus[position - 1]) / (nus[position] - nus[position - 1])
            low = lows[position - 1] + share * (lows[position] - lows[position - 1])
            high = highs[position - 1] + share * (highs[position] - highs[position - 1])
    else:
        low = (0.8353 * thin + 14.67) * thin - 216.0
        high = (0.1684 * thin + 11.85) * thin - 97.0
    if thick > high:
        return (low - thick) / (low - high) * 100.0
    exponent = (math.log(high) - math.log(thick)) / math.log(thin)
    return (10**exponent - 1.0) / 0.00715 + 100.0
