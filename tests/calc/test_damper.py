"""Sealed dampers: trapped gas, IFP pressure, IFP friction, cavitation (all pressures ABSOLUTE)."""

import math

import pytest

from shopdesk.calc.damper import (
    cavitation_margin,
    friction_at_shaft,
    ifp_pressure,
    max_force_before_cavitation,
    trapped_gas_pressure,
)
from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.oil import shaft_displacement
from shopdesk.calc.units import Q_

pytestmark = pytest.mark.filterwarnings("error")


def kpa(quantity):
    return quantity.to("kPa").magnitude


# --- Trapped gas ----------------------------------------------------------------------------------


@pytest.mark.parametrize(("index", "expected"), [(1.0, 166.85), (1.4, 203.68)])
def test_it_matches_the_polytropic_check_values(index, expected):
    # Polytropic p·Vⁿ; check value from REFERENCES.md: 20 mL at 101.325 kPa compressed by 7.854 mL
    result = trapped_gas_pressure(
        gas_volume=Q_(20, "mL"),
        initial_pressure=Q_(101.325, "kPa"),
        volume_change=shaft_displacement(shaft_diameter=Q_(10, "mm"), stroke=Q_(100, "mm")),
        polytropic_index=index,
    )
    assert kpa(result) == pytest.approx(expected, abs=0.01)


def test_an_expanding_pocket_follows_boyles_law():
    # Boyle's law: doubling the volume halves the absolute pressure
    result = trapped_gas_pressure(
        gas_volume=Q_(20, "mL"), initial_pressure=Q_(2, "bar"), volume_change=Q_(-20, "mL")
    )
    assert kpa(result) == pytest.approx(100.0, rel=1e-12)


def test_it_calls_a_full_pocket_a_hydraulic_lock():
    with pytest.raises(CalcInputError, match=r"Hydraulic lock.*fills the whole 20 mL gas pocket"):
        trapped_gas_pressure(
            gas_volume=Q_(20, "mL"), initial_pressure=Q_(1, "atm"), volume_change=Q_(20, "mL")
        )


def test_it_calls_a_nearly_full_pocket_a_hydraulic_lock_rather_than_overflow():
    with pytest.raises(CalcInputError, match=r"Hydraulic lock.*above 1000 bar"):
        trapped_gas_pressure(
            gas_volume=Q_(20, "mL"),
            initial_pressure=Q_(1, "atm"),
            volume_change=Q_(20 * (1 - 1e-15), "mL"),
            polytropic_index=1.4,
        )


def test_it_refuses_an_expansion_beyond_ten_times():
    with pytest.raises(CalcInputError, match="volume_change must be at least -180 mL"):
        trapped_gas_pressure(
            gas_volume=Q_(20, "mL"), initial_pressure=Q_(1, "atm"), volume_change=Q_(-181, "mL")
        )


def test_it_refuses_a_polytropic_index_outside_isothermal_to_adiabatic():
    with pytest.raises(CalcInputError, match=r"polytropic_index must be at most 1\.4"):
        trapped_gas_pressure(
            gas_volume=Q_(20, "mL"),
            initial_pressure=Q_(1, "atm"),
            volume_change=Q_(5, "mL"),
            polytropic_index=1.67,
        )


def test_it_refuses_a_zero_absolute_pressure():
    # A gauge reading of 0 passed as absolute: the message says the convention
    with pytest.raises(CalcInputError, match=r"initial_pressure \(absolute\) must be more than 0 kPa"):
        trapped_gas_pressure(
            gas_volume=Q_(20, "mL"), initial_pressure=Q_(0, "psi"), volume_change=Q_(5, "mL")
        )


# --- IFP ------------------------------------------------------------------------------------------

IFP_AREA = math.pi / 4 * 16**2  # mm², a 16 mm IFP


def test_the_ifp_spring_sets_the_static_pressure():
    # Force balance by hand: 5 N/mm × 10 mm preload = 50 N on 201.06 mm², spring side at atmosphere
    result = ifp_pressure(
        ifp_diameter=Q_(16, "mm"),
        spring_rate=Q_(5, "N/mm"),
        spring_preload=Q_(10, "mm"),
        shaft_diameter=Q_(10, "mm"),
        stroke=Q_(0, "mm"),
    )
    assert kpa(result) == pytest.approx(101.325 + 50 / IFP_AREA * 1000, rel=1e-12)
    assert kpa(result) == pytest.approx(350.0, abs=0.1)


def test_the_shaft_pushes_the_ifp_back():
    # The IFP moves 3927 mm³ / 201.06 mm² = 19.53 mm over a 10 mm shaft's 50 mm stroke
    result = ifp_pressure(
        ifp_diameter=Q_(16, "mm"),
        spring_rate=Q_(5, "N/mm"),
        spring_preload=Q_(10, "mm"),
        shaft_diameter=Q_(10, "mm"),
        stroke=Q_(50, "mm"),
    )
    movement = math.pi / 4 * 10**2 * 50 / IFP_AREA
    assert movement == pytest.approx(19.53, abs=0.01)
    assert kpa(result) == pytest.approx(101.325 + 5 * (10 + movement) / IFP_AREA * 1000, rel=1e-12)


def test_overfill_acts_like_shaft_displacement():
    # Oil is oil: 3.927 mL of overfill moves the IFP as far as 50 mm of a 10 mm shaft
    common = {"ifp_diameter": Q_(16, "mm"), "spring_rate": Q_(5, "N/mm"), "spring_preload": Q_(10, "mm")}
    by_shaft = ifp_pressure(**common, shaft_diameter=Q_(10, "mm"), stroke=Q_(50, "mm"))
    by_overfill = ifp_pressure(
        **common,
        shaft_diameter=Q_(10, "mm"),
        stroke=Q_(0, "mm"),
        overfill=Q_(math.pi / 4 * 100 * 50 / 1000, "mL"),
    )
    assert kpa(by_overfill) == pytest.approx(kpa(by_shaft), rel=1e-12)


def test_it_refuses_an_underfill_that_leaves_the_spring_slack():
    # 10 mm preload × 201.06 mm² = 2.011 mL of underfill takes the preload away
    with pytest.raises(CalcInputError, match=r"spring would go slack.*at least -2\.011 mL"):
        ifp_pressure(
            ifp_diameter=Q_(16, "mm"),
            spring_rate=Q_(5, "N/mm"),
            spring_preload=Q_(10, "mm"),
            shaft_diameter=Q_(10, "mm"),
            stroke=Q_(0, "mm"),
            overfill=Q_(-2.1, "mL"),
        )


def test_it_refuses_a_shaft_as_wide_as_the_ifp():
    with pytest.raises(CalcInputError, match="shaft_diameter must be smaller than ifp_diameter"):
        friction_at_shaft(ifp_friction=Q_(30, "N"), shaft_diameter=Q_(16, "mm"), ifp_diameter=Q_(16, "mm"))


def test_ifp_friction_reaches_the_shaft_by_the_area_ratio():
    # Area ratio (10/18)² = 0.3086, about one third for usual sizes (common practice)
    result = friction_at_shaft(
        ifp_friction=Q_(30, "N"), shaft_diameter=Q_(10, "mm"), ifp_diameter=Q_(18, "mm")
    )
    assert result.to("N").magnitude == pytest.approx(30 * 100 / 324, rel=1e-12)
    assert result.to("N").magnitude == pytest.approx(9.259, abs=1e-3)


# --- Cavitation -----------------------------------------------------------------------------------


def test_the_low_side_loses_force_over_area():
    # Force balance by hand: 100 N over 500 mm² is 200 kPa; 3 bar abs static leaves 100 kPa
    result = cavitation_margin(
        static_pressure=Q_(3, "bar"),
        damping_force=Q_(100, "N"),
        piston_area=Q_(500, "mm**2"),
        threshold=Q_(30, "kPa"),
    )
    assert kpa(result.low_side_pressure) == pytest.approx(100.0, rel=1e-12)
    assert kpa(result.margin) == pytest.approx(70.0, rel=1e-12)
    assert not result.will_cavitate


def test_a_negative_margin_is_a_result_not_an_error():
    # Unpressurised damper (1 atm) making 100 N on 500 mm²: the low side would be −98.7 kPa
    result = cavitation_margin(
        static_pressure=Q_(1, "atm"),
        damping_force=Q_(100, "N"),
        piston_area=Q_(500, "mm**2"),
        threshold=Q_(30, "kPa"),
    )
    assert kpa(result.low_side_pressure) == pytest.approx(101.325 - 200.0, rel=1e-12)
    assert kpa(result.margin) == pytest.approx(101.325 - 230.0, rel=1e-12)
    assert result.will_cavitate


def test_the_largest_force_leaves_the_low_side_at_the_threshold():
    # (static − threshold) × area by hand: (300 − 30) kPa × 500 mm² = 135 N
    largest = max_force_before_cavitation(
        static_pressure=Q_(3, "bar"), piston_area=Q_(500, "mm**2"), threshold=Q_(30, "kPa")
    )
    assert largest.to("N").magnitude == pytest.approx(135.0, rel=1e-12)
    at_largest = cavitation_margin(
        static_pressure=Q_(3, "bar"),
        damping_force=largest,
        piston_area=Q_(500, "mm**2"),
        threshold=Q_(30, "kPa"),
    )
    assert kpa(at_largest.margin) == pytest.approx(0.0, abs=1e-9)


def test_a_damper_below_the_threshold_has_no_force_to_spare():
    largest = max_force_before_cavitation(
        static_pressure=Q_(20, "kPa"), piston_area=Q_(500, "mm**2"), threshold=Q_(30, "kPa")
    )
    assert largest.to("N").magnitude == 0.0


def test_it_refuses_a_length_for_an_area():
    with pytest.raises(CalcInputError, match="piston_area must be a surface area"):
        max_force_before_cavitation(
            static_pressure=Q_(3, "bar"), piston_area=Q_(500, "mm"), threshold=Q_(30, "kPa")
        )
