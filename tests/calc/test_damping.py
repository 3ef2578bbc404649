"""Damping estimate for one valve: orifice flow through the bleed and the shim curtain."""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.oil import Oil
from shopdesk.calc.shims import Piston, Shim, ShimStack, damping_force, orifice_flow, stack_stiffness
from shopdesk.calc.units import Q_

pytestmark = pytest.mark.filterwarnings("error")

QUICK = settings(max_examples=40, deadline=None)
CD = 0.611  # REFERENCES.md: π/(π + 2) ≈ 0.611 (von Mises, as quoted in Merritt 1967, from memory)
# REFERENCES.md, API MPMS 11.1 check value: ρ15 = 870 kg/m³ gives 854.22 kg/m³ at 40 °C.
RHO_AT_40 = 854.22
OIL = Oil(nu40=Q_(32.0, "mm**2/s"), nu100=Q_(5.4, "mm**2/s"), rho15=Q_(870.0, "kg/m**3"))
AT_40 = Q_(40.0, "degC")


def mm(value: float) -> Q_:
    return Q_(value, "mm")


def speeds(values) -> Q_:
    return Q_(np.asarray(values, dtype=float), "m/s")


def piston(**changes) -> Piston:
    values = {
        "diameter": mm(20.0),
        "shaft_diameter": mm(8.0),
        "port_area": Q_(30.0, "mm**2"),
        "port_radius": mm(7.0),
        "bleed_diameter": mm(1.0),
    }
    return Piston(**{**values, **changes})


def stack(**changes) -> ShimStack:
    values = {
        "shims": [Shim(mm(17), mm(0.15), 2), Shim(mm(15), mm(0.15)), Shim(mm(13), mm(0.2))],
        "clamp_diameter": mm(8),
    }
    return ShimStack(**{**values, **changes})


ANNULUS_M2 = math.pi / 4 * (0.020**2 - 0.008**2)


# --- The orifice equation ------------------------------------------------------------------------


def test_orifice_flow_matches_the_reference_check():
    # REFERENCES.md: d = 1.0 mm, Δp = 10 bar, ρ = 870 kg/m³, Cd = 0.611 gives 2.3008e-5 m³/s.
    flow = orifice_flow(
        diameter=mm(1.0), pressure_drop=Q_(10, "bar"), density=Q_(870, "kg/m**3"), discharge_coefficient=CD
    )
    assert flow.to("m**3/s").magnitude == pytest.approx(2.3008e-5, rel=5e-5)


def test_orifice_flow_by_area_and_the_default_coefficient():
    by_area = orifice_flow(
        area=Q_(math.pi / 4, "mm**2"), pressure_drop=Q_(10, "bar"), density=Q_(870, "kg/m**3")
    )
    by_diameter = orifice_flow(diameter=mm(1.0), pressure_drop=Q_(10, "bar"), density=Q_(870, "kg/m**3"))
    assert by_area.magnitude == pytest.approx(by_diameter.magnitude, rel=1e-12)
    # Default Cd is π/(π + 2) (von Mises, as quoted in Merritt 1967, from memory).
    assert by_area.to("m**3/s").magnitude == pytest.approx(2.3008e-5 / CD * math.pi / (math.pi + 2), rel=5e-5)


# --- The damping curve ------------------------------------------------------------------------


def test_a_locked_stack_leaves_the_bleed_alone_on_the_orifice_equation():
    # Shims locked shut (a preload far above any pressure here): F = A·ρ/2·(Q/(Cd·A_bleed))²,
    # Q = A·v, the orifice equation of REFERENCES.md solved for Δp.
    velocities = np.linspace(0.0, 0.3, 50)
    curve = damping_force(
        stack=stack(preload=Q_(10_000, "N")),
        piston=piston(),
        velocity=speeds(velocities),
        oil=OIL,
        temperature=AT_40,
        discharge_coefficient=CD,
    )
    bleed_m2 = math.pi / 4 * 0.001**2
    expected = ANNULUS_M2 * RHO_AT_40 / 2 * (ANNULUS_M2 * velocities / (CD * bleed_m2)) ** 2
    np.testing.assert_allclose(curve.forces.to("N").magnitude, expected, rtol=2e-5)
    assert curve.forces.to("N").magnitude[-1] == pytest.approx(3067.7, rel=1e-4)  # 116 bar on 264 mm²
    assert (curve.lifts.magnitude == 0.0).all() and (curve.bleed_share == 1.0).all()
    assert any("stays shut" in warning for warning in curve.warnings)


def test_force_rises_with_velocity():
    curve = damping_force(stack=stack(), piston=piston(), velocity=speeds(np.linspace(0, 3, 50)), oil=OIL)
    forces = curve.forces.to("N").magnitude
    assert forces[0] == 0.0
    assert (np.diff(forces) > 0.0).all()
    assert (np.diff(curve.lifts.magnitude) >= 0.0).all()


def test_the_curve_balances_flow_at_each_point():
    # No bleed: all flow through the curtain, 2π·r·h wide (REFERENCES.md, common practice), lift
    # h = (Δp·A_port − preload)/k for this one-stage stack; solved here from the returned pressures.
    valve = piston(bleed_diameter=mm(0))
    shims = stack(preload=Q_(20, "N"))
    k = stack_stiffness(shims).to("N/m").magnitude
    curve = damping_force(
        stack=shims,
        piston=valve,
        velocity=speeds([0.05, 0.5, 2.0]),
        oil=OIL,
        temperature=AT_40,
        discharge_coefficient=CD,
    )
    for speed, drop in zip([0.05, 0.5, 2.0], curve.pressures.to("Pa").magnitude, strict=True):
        lift = (drop * 30e-6 - 20.0) / k
        curtain = min(2 * math.pi * 0.0085 * lift, 30e-6)
        flow = CD * curtain * math.sqrt(2 * drop / RHO_AT_40)
        assert flow == pytest.approx(ANNULUS_M2 * speed, rel=1e-5)
    assert (curve.forces.magnitude > 20.0 / 30e-6 * ANNULUS_M2 * 0.999).all()  # never below cracking


def test_a_stiffer_stack_gives_more_force_at_high_velocity():
    soft = damping_force(stack=stack(), piston=piston(), velocity=speeds([2.0]), oil=OIL)
    stiff = damping_force(
        stack=stack(shims=[Shim(mm(17), mm(0.2), 3), Shim(mm(15), mm(0.15)), Shim(mm(13), mm(0.2))]),
        piston=piston(),
        velocity=speeds([2.0]),
        oil=OIL,
    )
    assert stiff.forces.magnitude[0] > 1.2 * soft.forces.magnitude[0]


def test_a_larger_bleed_gives_less_force_at_low_velocity():
    small = damping_force(stack=stack(preload=Q_(30, "N")), piston=piston(), velocity=speeds([0.05]), oil=OIL)
    large = damping_force(
        stack=stack(preload=Q_(30, "N")),
        piston=piston(bleed_diameter=mm(1.5)),
        velocity=speeds([0.05]),
        oil=OIL,
    )
    # Bleed alone at this speed: force ∝ 1/A_bleed², (1.0/1.5)⁴ = 0.1975 (orifice equation).
    assert large.forces.magnitude[0] == pytest.approx(small.forces.magnitude[0] * (1 / 1.5) ** 4, rel=1e-6)


def test_ports_cap_the_curtain():
    # A very soft stack opens the curtain past the port area: the ports then set the flow
    # (common practice), Δp = ρ/2·(Q/(Cd·(A_bleed + A_port)))².
    soft = ShimStack([Shim(mm(17), mm(0.05))], mm(8))
    curve = damping_force(
        stack=soft,
        piston=piston(),
        velocity=speeds([3.0]),
        oil=OIL,
        temperature=AT_40,
        discharge_coefficient=CD,
    )
    open_m2 = 30e-6 + math.pi / 4 * 0.001**2
    expected = RHO_AT_40 / 2 * (ANNULUS_M2 * 3.0 / (CD * open_m2)) ** 2
    assert curve.pressures.to("Pa").magnitude[0] == pytest.approx(expected, rel=2e-5)
    assert any("ports set the flow" in warning for warning in curve.warnings)
    assert curve.beyond_small_deflection[0]


def test_the_shaft_option_pushes_the_shaft_area():
    # A base valve passes the oil the shaft displaces: Q = (π/4)·d_shaft²·v (REFERENCES.md, displacement).
    base_valve = piston(displacing="shaft")
    assert base_valve.displacing_area.to("mm**2").magnitude == pytest.approx(math.pi / 4 * 64)
    curve = damping_force(
        stack=stack(preload=Q_(10_000, "N")),
        piston=base_valve,
        velocity=speeds([1.0]),
        oil=OIL,
        temperature=AT_40,
        discharge_coefficient=CD,
    )
    shaft_m2 = math.pi / 4 * 0.008**2
    expected = shaft_m2 * RHO_AT_40 / 2 * (shaft_m2 / (CD * math.pi / 4 * 0.001**2)) ** 2
    assert curve.forces.to("N").magnitude[0] == pytest.approx(expected, rel=2e-5)


def test_no_bleed_and_a_shut_stack_is_a_hydraulic_lock():
    with pytest.raises(CalcInputError, match="hydraulic lock"):
        damping_force(
            stack=stack(preload=Q_(100_000, "N")),
            piston=piston(bleed_diameter=mm(0)),
            velocity=speeds([0.0, 0.1]),
            oil=OIL,
        )


def test_one_velocity_works_and_zero_gives_zero():
    curve = damping_force(stack=stack(), piston=piston(), velocity=Q_(0.0, "m/s"), oil=OIL)
    assert curve.forces.magnitude.tolist() == [0.0]
    in_mm = damping_force(stack=stack(), piston=piston(), velocity=Q_(500.0, "mm/s"), oil=OIL)
    in_m = damping_force(stack=stack(), piston=piston(), velocity=Q_(0.5, "m/s"), oil=OIL)
    assert in_mm.forces.magnitude[0] == pytest.approx(in_m.forces.magnitude[0], rel=1e-9)


def test_colder_denser_oil_gives_more_force_in_proportion():
    # Orifice flow: at a set flow Δp ∝ ρ. Density from the oil (API MPMS 11.1).
    locked = stack(preload=Q_(10_000, "N"))
    cold = damping_force(
        stack=locked, piston=piston(), velocity=speeds([0.2]), oil=OIL, temperature=Q_(0, "degC")
    )
    warm = damping_force(stack=locked, piston=piston(), velocity=speeds([0.2]), oil=OIL, temperature=AT_40)
    ratio = (OIL.density(Q_(0, "degC")) / OIL.density(AT_40)).to("").magnitude
    assert cold.forces.magnitude[0] / warm.forces.magnitude[0] == pytest.approx(ratio, rel=1e-6)
    assert ratio > 1.0


# --- Bad input --------------------------------------------------------------------------------


def bad_values(good_unit: str, low: float, high: float, *, low_allowed: bool = False):
    below = st.floats(-1e6, low, exclude_max=low_allowed)  # the minimum itself is bad unless allowed
    return st.one_of(
        st.floats(allow_nan=True, allow_infinity=True),
        st.just(None),
        st.text(max_size=4),
        st.floats(0.1, 10.0).map(lambda x: Q_(x, "kg")),
        st.sampled_from([math.nan, math.inf, -math.inf]).map(lambda x: Q_(x, good_unit)),
        below.map(lambda x: Q_(x, good_unit)),
        st.floats(high, 1e12, exclude_min=True).map(lambda x: Q_(x, good_unit)),
    )


@QUICK
@given(
    field=st.sampled_from(["pressure_drop", "density", "diameter", "discharge_coefficient"]), data=st.data()
)
def test_orifice_flow_refuses_bad_input(field, data):
    good = {
        "pressure_drop": Q_(10, "bar"),
        "density": Q_(870, "kg/m**3"),
        "diameter": mm(1.0),
        "discharge_coefficient": CD,
    }
    bad = {
        "pressure_drop": bad_values("bar", 0.0, 10_000.0, low_allowed=True),
        "density": bad_values("kg/m**3", 500.0, 2000.0, low_allowed=True),
        "diameter": bad_values("mm", 0.0, 1000.0),
        "discharge_coefficient": st.one_of(
            st.floats(-5, 0),
            st.floats(1.0, 5.0, exclude_min=True),
            st.just(math.nan),
            st.just("0.6"),
            st.just(True),
        ),
    }[field]
    value = data.draw(bad)
    if field == "diameter" and value is None:
        value = "none"  # no diameter and no area is its own error, tested below
    with pytest.raises(CalcInputError):
        orifice_flow(**{**good, field: value})


def test_orifice_flow_wants_a_diameter_or_an_area():
    for sizes in ({}, {"diameter": mm(1), "area": Q_(1, "mm**2")}):
        with pytest.raises(CalcInputError, match="diameter or its area"):
            orifice_flow(pressure_drop=Q_(1, "bar"), density=Q_(870, "kg/m**3"), **sizes)


@QUICK
@given(
    field=st.sampled_from(
        ["diameter", "shaft_diameter", "port_area", "port_radius", "bleed_diameter", "displacing"]
    ),
    data=st.data(),
)
def test_a_piston_refuses_bad_input(field, data):
    bad = {
        "diameter": bad_values("mm", 8.0, 200.0),  # must stay above the 8 mm shaft
        "shaft_diameter": bad_values("mm", 0.0, 14.0),  # the port at 7 mm radius must lie outside it
        "port_area": bad_values("mm**2", 0.0, math.pi / 4 * (400 - 64)),
        "port_radius": bad_values("mm", 4.0, 10.0),
        # Its area must stay under the 263.9 mm² annulus: d < 18.3303 mm.
        "bleed_diameter": bad_values("mm", 0.0, 18.331, low_allowed=True),
        "displacing": st.sampled_from(["piston", "", None, 1]),
    }[field]
    with pytest.raises(CalcInputError):
        piston(**{field: data.draw(bad)})


@QUICK
@given(
    velocity=st.one_of(
        bad_values("m/s", 0.0, 10.0, low_allowed=True),
        st.sampled_from([[0.1, math.nan], [0.1, -0.2], [0.5, 11.0], [[0.1, 0.2]], []]).map(speeds),
        st.just([0.1, 0.2]),
    )
)
def test_damping_force_refuses_bad_velocities(velocity):
    with pytest.raises(CalcInputError):
        damping_force(stack=stack(), piston=piston(), velocity=velocity, oil=OIL)


@pytest.mark.parametrize(
    "changes",
    [
        {"stack": "17x0.15"},
        {"piston": None},
        {"oil": "5wt"},
        {"temperature": 20.0},
        {"temperature": Q_(20, "Pa")},
        {"temperature": Q_(-60, "degC")},  # outside the oil model's −40..150 °C
        {"discharge_coefficient": 0.0},
        {"discharge_coefficient": math.nan},
        {"pressure_limit": Q_(0, "bar")},
        {"pressure_limit": 1000},
        {"stack": ShimStack([Shim(mm(22), mm(0.1))], mm(8))},  # shim larger than the 20 mm piston
        {"stack": ShimStack([Shim(mm(13), mm(0.1))], mm(8))},  # face shim does not cover the ports
        {"stack": ShimStack([Shim(mm(17), mm(0.1))], mm(15))},  # ports inside the clamp
    ],
)
def test_damping_force_refuses_bad_input(changes):
    arguments = {"stack": stack(), "piston": piston(), "velocity": speeds([0.5]), "oil": OIL, **changes}
    with pytest.raises(CalcInputError):
        damping_force(**arguments)


def test_the_shim_model_does_not_import_django():
    # STYLE.md: shopdesk/calc never imports Django; prove it with no settings configured.
    code = "import sys, shopdesk.calc.shims, shopdesk.calc.plates; sys.exit('django' in sys.modules)"
    root = Path(__file__).resolve().parents[2]
    assert subprocess.run([sys.executable, "-c", code], cwd=root, check=False).returncode == 0
