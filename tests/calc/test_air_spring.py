"""Air spring force, sag pressure, spacers; coil rate and rider load."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from shopdesk.calc.air_spring import AirSpring, coil_rate_for_sag, fork_load
from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.units import Q_

pytestmark = pytest.mark.filterwarnings("error")

QUICK = settings(max_examples=60, deadline=None)
ATMOSPHERE = 101_325.0  # Pa, ISO 2533
PSI = 6894.757293168  # Pa, NIST SP 811

AREA_32 = math.pi / 4 * 0.032**2  # m², a 32 mm piston


def plain_spring(**changes):
    values = {"piston_diameter": Q_(32, "mm"), "travel": Q_(160, "mm"), "positive_volume": Q_(250, "cc")}
    values.update(changes)
    return AirSpring(**values)


def dual_spring(**changes):
    values = {
        "piston_diameter": Q_(32, "mm"),
        "travel": Q_(160, "mm"),
        "positive_volume": Q_(250, "cc"),
        "negative_volume": Q_(60, "cc"),
    }
    values.update(changes)
    return AirSpring(**values)


def newtons(quantity):
    return quantity.to("N").magnitude


# --- Gas law by hand ----------------------------------------------------------------------------


def test_a_positive_chamber_follows_boyles_law():
    # Boyle's law p1·V1 = p2·V2 on absolute pressure (REFERENCES.md, polytropic n = 1), by hand:
    # 5 bar gauge in 250 cc, 50 mm of a 32 mm piston sweeps 40.21 cc
    swept = AREA_32 * 0.050
    absolute = (5e5 + ATMOSPHERE) * 250e-6 / (250e-6 - swept)
    expected = (absolute - ATMOSPHERE) * AREA_32
    result = plain_spring().force(position=Q_(50, "mm"), pressure=Q_(5, "bar"))
    assert newtons(result) == pytest.approx(expected, rel=1e-12)
    assert newtons(result) == pytest.approx(494.82, abs=0.01)  # 6.0133 bar × 250/209.79 = 7.1659 bar abs


def test_a_fast_stroke_follows_the_adiabatic_law():
    # Polytropic p·V^1.4 constant for air (REFERENCES.md), by hand
    swept = AREA_32 * 0.120
    absolute = (5e5 + ATMOSPHERE) * (250e-6 / (250e-6 - swept)) ** 1.4
    result = plain_spring(polytropic_index=1.4).force(position=Q_(120, "mm"), pressure=Q_(5, "bar"))
    assert newtons(result) == pytest.approx((absolute - ATMOSPHERE) * AREA_32, rel=1e-12)


def test_without_a_negative_chamber_the_top_out_force_is_gauge_pressure_times_area():
    # F = p_gauge·A: the piston's other face sees atmosphere; 100 psi on a 32 mm piston
    result = plain_spring().force(position=Q_(0, "mm"), pressure=Q_(100, "psi"))
    assert newtons(result) == pytest.approx(100 * PSI * AREA_32, rel=1e-12)
    assert newtons(result) == pytest.approx(554.51, abs=0.01)


def test_equalised_chambers_of_equal_area_cancel_at_top_out():
    # Model choice: with equalize_at = 0 both chambers hold the set pressure at top-out
    assert newtons(dual_spring().force(position=Q_(0, "mm"), pressure=Q_(80, "psi"))) == pytest.approx(
        0.0, abs=1e-9
    )


def test_a_negative_chamber_follows_boyles_law():
    # Boyle's law on both chambers, by hand: the negative chamber (60 cc at top-out) grows by area × x
    x = 0.040
    set_absolute = 80 * PSI + ATMOSPHERE
    positive = set_absolute * 250e-6 / (250e-6 - AREA_32 * x)
    negative = set_absolute * 60e-6 / (60e-6 + AREA_32 * x)
    expected = (positive - ATMOSPHERE) * AREA_32 - (negative - ATMOSPHERE) * AREA_32
    result = dual_spring().force(position=Q_(40, "mm"), pressure=Q_(80, "psi"))
    assert newtons(result) == pytest.approx(expected, rel=1e-12)


def test_a_port_below_top_out_pulls_the_unit_into_its_travel():
    # Model choice: chambers share one pressure at equalize_at; above it the negative chamber is
    # squeezed and the positive one eased, so the net force at top-out is negative (Boyle's law)
    spring = dual_spring(equalize_at=Q_(8, "mm"))
    at_top_out = newtons(spring.force(position=Q_(0, "mm"), pressure=Q_(80, "psi")))
    at_port = newtons(spring.force(position=Q_(8, "mm"), pressure=Q_(80, "psi")))
    set_absolute = 80 * PSI + ATMOSPHERE
    shared = set_absolute * 250e-6 / (250e-6 - AREA_32 * 0.008)
    negative_at_top_out = shared * (60e-6 + AREA_32 * 0.008) / 60e-6
    assert at_top_out == pytest.approx((80 * PSI) * AREA_32 - (negative_at_top_out - ATMOSPHERE) * AREA_32)
    assert at_top_out < 0.0
    assert at_port == pytest.approx(0.0, abs=1e-9)  # equal pressures on equal areas


def test_a_smaller_negative_annulus_leaves_a_net_push_at_the_port():
    # At the port both chambers share p_e: F = (p_e − p_atm)·(A_pos − A_neg)
    spring = dual_spring(negative_area=Q_(600, "mm**2"))
    result = newtons(spring.force(position=Q_(0, "mm"), pressure=Q_(80, "psi")))
    assert result == pytest.approx(80 * PSI * (AREA_32 - 600e-6), rel=1e-12)


def test_the_ideal_gas_law_holds_within_one_percent_up_to_20_bar():
    # CoolProp (PyPI coolprop) air at 20 °C: Z = 0.99654 at 10 bar, 0.99363 at 20 bar (REFERENCES.md)
    try:
        from CoolProp.CoolProp import PropsSI
    except ImportError:
        pytest.skip("CoolProp is not installed; it is only a reference for the ideal-gas assumption")
    kelvin = 293.15
    assert PropsSI("Z", "T", kelvin, "P", 10e5, "Air") == pytest.approx(0.99654, abs=5e-5)
    assert PropsSI("Z", "T", kelvin, "P", 20e5, "Air") == pytest.approx(0.99363, abs=5e-5)
    for bar in np.linspace(1.0, 20.0, 20):
        assert abs(PropsSI("Z", "T", kelvin, "P", bar * 1e5, "Air") - 1.0) < 0.01
    # And the model's answer: halve the volume of 10 bar air slowly; the real gas ends within 1 %.
    density = PropsSI("Dmass", "T", kelvin, "P", 10e5, "Air")
    real = PropsSI("P", "T", kelvin, "Dmass", 2 * density, "Air")
    swept = 125e-6 / AREA_32
    ideal = plain_spring(travel=Q_(swept * 1e3 + 1, "mm")).force(
        position=Q_(swept * 1e3, "mm"), pressure=Q_(10e5 - ATMOSPHERE, "Pa")
    )
    ideal_absolute = newtons(ideal) / AREA_32 + ATMOSPHERE
    assert ideal_absolute == pytest.approx(20e5, rel=1e-9)
    assert abs(ideal_absolute / real - 1.0) < 0.01


# --- Curve and vectors --------------------------------------------------------------------------


def test_the_curve_runs_from_top_out_to_full_travel():
    spring = dual_spring(spacer_volume=Q_(20, "cc"))
    curve = spring.curve(pressure=Q_(80, "psi"))
    positions = curve.positions.to("mm").magnitude
    assert len(positions) == 101
    assert positions[0] == 0.0 and positions[-1] == pytest.approx(160.0)
    for index in (0, 37, 100):
        single = spring.force(position=Q_(positions[index], "mm"), pressure=Q_(80, "psi"))
        assert curve.forces[index].to("N").magnitude == pytest.approx(newtons(single), rel=1e-12)


def test_force_takes_an_array_of_positions():
    spring = dual_spring()
    positions = Q_(np.array([0.0, 40.0, 160.0]), "mm")
    forces = spring.force(position=positions, pressure=Q_(80, "psi")).to("N").magnitude
    expected = [newtons(spring.force(position=Q_(x, "mm"), pressure=Q_(80, "psi"))) for x in (0, 40, 160)]
    assert forces == pytest.approx(expected, rel=1e-12)


def test_it_refuses_positions_outside_the_travel():
    with pytest.raises(CalcInputError, match="position must lie within the travel, 0 to 160 mm"):
        dual_spring().force(position=Q_(np.array([10.0, 161.0]), "mm"), pressure=Q_(80, "psi"))
    with pytest.raises(CalcInputError, match="position must be at most 160 mm"):
        dual_spring().force(position=Q_(161, "mm"), pressure=Q_(80, "psi"))


# --- Sag ----------------------------------------------------------------------------------------


@pytest.mark.parametrize("equalize_at", [0.0, 10.0])
def test_the_sag_pressure_gives_the_sag(equalize_at):
    spring = dual_spring(equalize_at=Q_(equalize_at, "mm"), spacer_volume=Q_(15, "cc"))
    load = fork_load(rider_mass=Q_(80, "kg"), share=0.35)
    pressure = spring.pressure_for_sag(load=load, sag=0.2)
    assert spring.force(position=Q_(32, "mm"), pressure=pressure).to("N").magnitude == pytest.approx(
        newtons(load), rel=1e-9
    )


def test_the_sag_pressure_agrees_with_a_numerical_root():
    # scipy brentq on the same force model: the closed form must land on the root
    from scipy.optimize import brentq

    spring = dual_spring(polytropic_index=1.4, equalize_at=Q_(6, "mm"))
    load = Q_(300, "N")
    root = brentq(
        lambda psi: newtons(spring.force(position=Q_(40, "mm"), pressure=Q_(psi, "psi"))) - 300.0,
        0.0,
        400.0,
        xtol=1e-10,
    )
    assert spring.pressure_for_sag(load=load, sag=0.25).to("psi").magnitude == pytest.approx(root, rel=1e-8)


def test_it_refuses_a_sag_that_needs_more_than_the_maximum_pressure():
    with pytest.raises(CalcInputError, match="No pressure up to maximum_pressure 100 psi"):
        plain_spring().pressure_for_sag(load=Q_(2000, "N"), sag=0.2, maximum_pressure=Q_(100, "psi"))


def test_it_refuses_a_load_lighter_than_the_spring_at_zero_pressure():
    # At 0 psi gauge a closed chamber still compresses atmospheric air (Boyle's law)
    with pytest.raises(CalcInputError, match="Even at 0 psi"):
        plain_spring().pressure_for_sag(load=Q_(1, "N"), sag=0.5)


def test_it_refuses_a_sag_point_before_the_port():
    with pytest.raises(CalcInputError, match="before the equalisation port"):
        dual_spring(equalize_at=Q_(20, "mm")).pressure_for_sag(load=Q_(300, "N"), sag=0.05)


# --- Spacers ------------------------------------------------------------------------------------


def test_spacers_take_up_positive_volume():
    # A 20 cc spacer leaves 230 cc: Boyle's law at full travel, by hand
    spring = plain_spring().with_spacers(Q_(20, "cc"))
    assert spring.spacer_volume.to("cc").magnitude == pytest.approx(20.0)
    air = 230e-6
    absolute = (5e5 + ATMOSPHERE) * air / (air - AREA_32 * 0.160)
    result = spring.force(position=Q_(160, "mm"), pressure=Q_(5, "bar"))
    assert newtons(result) == pytest.approx((absolute - ATMOSPHERE) * AREA_32, rel=1e-9)


def test_it_refuses_spacers_that_would_leave_no_room_for_the_stroke():
    # 32 mm piston × 160 mm travel sweeps 128.7 cc
    with pytest.raises(CalcInputError, match=r"swept to nothing.*128\.7 cc"):
        plain_spring().with_spacers(Q_(125, "cc"))


@QUICK
@given(
    low=st.floats(0.0, 400.0),
    high=st.floats(0.0, 400.0),
    equalize_at=st.floats(0.0, 30.0),
    past_port=st.floats(0.0, 1.0),
    negative_cc=st.sampled_from([0.0, 20.0, 80.0]),
    index=st.floats(1.0, 1.4),
)
def test_more_pressure_never_gives_less_force(low, high, equalize_at, past_port, negative_cc, index):
    # From the equalisation port onward the positive chamber is above and the negative below the shared
    # pressure, so the net force rises with the set pressure
    low, high = sorted((low, high))
    spring = dual_spring(
        negative_volume=Q_(negative_cc, "cc"), equalize_at=Q_(equalize_at, "mm"), polytropic_index=index
    )
    position = Q_(equalize_at + past_port * (160.0 - equalize_at), "mm")
    assert spring.force(position=position, pressure=Q_(low, "psi")) <= spring.force(
        position=position, pressure=Q_(high, "psi")
    )


@QUICK
@given(
    fewer=st.floats(0.0, 100.0),
    more=st.floats(0.0, 100.0),
    pressure=st.floats(0.0, 400.0),
    index=st.floats(1.0, 1.4),
)
def test_more_spacer_volume_never_lowers_the_end_of_travel_force(fewer, more, pressure, index):
    fewer, more = sorted((fewer, more))
    spring = dual_spring(polytropic_index=index)
    end = Q_(160, "mm")
    assert spring.with_spacers(Q_(fewer, "cc")).force(position=end, pressure=Q_(pressure, "psi")) <= (
        spring.with_spacers(Q_(more, "cc")).force(position=end, pressure=Q_(pressure, "psi"))
    )


# --- Coil spring and rider load -----------------------------------------------------------------


def test_it_finds_the_coil_rate_for_sag():
    # Hooke's law F = k·x, by hand: 700 N over 25 % of 160 mm = 40 mm → 17.5 N/mm
    assert coil_rate_for_sag(load=Q_(700, "N"), travel=Q_(160, "mm"), sag=0.25).to(
        "N/mm"
    ).magnitude == pytest.approx(17.5)
    # with 5 mm preload the spring is compressed 45 mm at sag
    assert coil_rate_for_sag(load=Q_(700, "N"), travel=Q_(160, "mm"), sag=0.25, preload=Q_(5, "mm")).to(
        "N/mm"
    ).magnitude == pytest.approx(700 / 45)


def test_the_fork_load_is_mass_times_standard_gravity_times_share():
    # Standard gravity 9.80665 m/s² (CGPM 1901, exact); share 0.35 seated is common practice
    assert newtons(fork_load(rider_mass=Q_(80, "kg"), share=0.35)) == pytest.approx(
        80 * 9.80665 * 0.35, rel=1e-15
    )
    assert newtons(fork_load(rider_mass=Q_(176.37, "lb"), share=1.0)) == pytest.approx(784.5, abs=0.1)


def test_it_refuses_a_share_above_one():
    with pytest.raises(CalcInputError, match="share must be at most 1"):
        fork_load(rider_mass=Q_(80, "kg"), share=1.2)
