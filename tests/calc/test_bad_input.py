"""Every public calculator refuses bad input with CalcInputError, and with nothing else.

For each function and each of its inputs, hypothesis draws bad values (plain numbers where a
quantity is needed, text, None, wrong units, NaN, infinity, negatives and zeros where they are
impossible, absurd sizes, quantities of another registry) while the other inputs stay valid.
Any other exception, a warning (they are errors here), or a returned result fails the test.
"""

from __future__ import annotations

import datetime
import math
from dataclasses import dataclass

import numpy as np
import pint
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from shopdesk.calc import air_spring, damper, oil, schedule
from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.units import Q_

pytestmark = pytest.mark.filterwarnings("error")

BAD = settings(max_examples=40, deadline=None)
FOREIGN = pint.get_application_registry()
UNITS_OF_OTHER_KINDS = ["mm", "kg", "s", "psi", "N", "mL", "mm**2/s", "kg/m**3", "degC", "mm**2", "N/mm"]
FINITE = st.floats(allow_nan=False, allow_infinity=False, min_value=-1e6, max_value=1e6)


@dataclass(frozen=True)
class Quantity:
    unit: str
    negative_ok: bool = False
    zero_ok: bool = False
    temperature: bool = False
    none_ok: bool = False


@dataclass(frozen=True)
class Number:
    negative_ok: bool = False
    zero_ok: bool = False
    none_ok: bool = False


@dataclass(frozen=True)
class Date:
    pass


def _same_kind(unit_a: str, unit_b: str) -> bool:
    return Q_(1, unit_a).dimensionality == Q_(1, unit_b).dimensionality


def bad_values(kind):
    common = [
        st.text(max_size=6),
        st.booleans(),
        st.just([1.0]),
        st.just(object()),
    ]
    if isinstance(kind, Quantity):
        unit = kind.unit
        choices = [
            *common,
            FINITE,  # a plain number without a unit
            st.integers(-1000, 1000),
            st.sampled_from([math.nan, math.inf, -math.inf]).map(lambda v: Q_(v, unit)),
            st.sampled_from([u for u in UNITS_OF_OTHER_KINDS if not _same_kind(u, unit)]).flatmap(
                lambda other: FINITE.map(lambda v: Q_(v, other))
            ),
            FINITE.map(lambda v: FOREIGN.Quantity(v, unit)),
            st.just(Q_(1e30, unit)),
        ]
        if not kind.none_ok:
            choices.append(st.none())
        if kind.temperature:
            choices += [
                st.floats(-1e6, -40.001).map(lambda v: Q_(v, "degC")),
                st.floats(150.001, 1e6).map(lambda v: Q_(v, "degC")),
            ]
        else:
            if not kind.negative_ok:
                choices.append(st.floats(-1e6, -1e-6).map(lambda v: Q_(v, unit)))
                choices.append(st.just(Q_(-1e30, unit)))
            if not kind.zero_ok:
                choices.append(st.just(Q_(0.0, unit)))
        return st.one_of(choices)
    if isinstance(kind, Number):
        choices = [
            *common,
            st.sampled_from([math.nan, math.inf, -math.inf, 1e30]),
            st.just(Q_(0.5, "dimensionless")),
            st.just(Q_(5, "mm")),
            st.just(np.array([0.5])),
        ]
        if not kind.none_ok:
            choices.append(st.none())
        if not kind.negative_ok:
            choices.append(st.floats(-1e6, -1e-6))
        if not kind.zero_ok:
            choices.append(st.just(0.0))
        return st.one_of(choices)
    return st.one_of(
        *common,
        st.none(),
        FINITE,
        st.just("2024-03-01"),
        st.just(datetime.datetime(2024, 3, 1, 12, 0)),
        st.just(np.datetime64("2024-03-01")),
    )


CST = "mm**2/s"
SPRING_FIELDS = {
    "piston_diameter": Q_(32, "mm"),
    "travel": Q_(160, "mm"),
    "positive_volume": Q_(250, "cc"),
    "negative_volume": Q_(60, "cc"),
    "negative_area": Q_(700, "mm**2"),
    "equalize_at": Q_(5, "mm"),
    "spacer_volume": Q_(10, "cc"),
    "polytropic_index": 1.1,
}
SPRING = air_spring.AirSpring(**SPRING_FIELDS)
OIL = oil.Oil(nu40=Q_(32, CST), nu100=Q_(5.4, CST), rho15=Q_(870, "kg/m**3"))
TEMPERATURE = Quantity("degC", temperature=True)

# (name, callable, valid inputs, kind of each input)
CASES = [
    (
        "Oil",
        oil.Oil,
        {"nu40": Q_(32, CST), "nu100": Q_(5.4, CST), "rho15": Q_(870, "kg/m**3")},
        {"nu40": Quantity(CST), "nu100": Quantity(CST), "rho15": Quantity("kg/m**3")},
    ),
    ("Oil.viscosity", OIL.viscosity, {"temperature": Q_(20, "degC")}, {"temperature": TEMPERATURE}),
    ("Oil.density", OIL.density, {"temperature": Q_(20, "degC")}, {"temperature": TEMPERATURE}),
    (
        "viscosity_at",
        oil.viscosity_at,
        {"nu40": Q_(32, CST), "nu100": Q_(5.4, CST), "temperature": Q_(20, "degC")},
        {"nu40": Quantity(CST), "nu100": Quantity(CST), "temperature": TEMPERATURE},
    ),
    ("iso_vg_grade", oil.iso_vg_grade, {"nu40": Q_(32, CST)}, {"nu40": Quantity(CST)}),
    ("viscosity_blending_number", oil.viscosity_blending_number, {"nu": Q_(10, CST)}, {"nu": Quantity(CST)}),
    (
        "blend_fraction",
        oil.blend_fraction,
        {"nu_a": Q_(5, CST), "nu_b": Q_(20, CST), "nu_target": Q_(8, CST)},
        {"nu_a": Quantity(CST), "nu_b": Quantity(CST), "nu_target": Quantity(CST)},
    ),
    (
        "density_at",
        oil.density_at,
        {"rho15": Q_(870, "kg/m**3"), "temperature": Q_(40, "degC")},
        {"rho15": Quantity("kg/m**3"), "temperature": TEMPERATURE},
    ),
    (
        "mass_for_volume",
        oil.mass_for_volume,
        {"volume": Q_(100, "mL"), "rho15": Q_(870, "kg/m**3"), "temperature": Q_(20, "degC")},
        {"volume": Quantity("mL", zero_ok=True), "rho15": Quantity("kg/m**3"), "temperature": TEMPERATURE},
    ),
    (
        "volume_for_mass",
        oil.volume_for_mass,
        {"mass": Q_(87, "g"), "rho15": Q_(870, "kg/m**3"), "temperature": Q_(20, "degC")},
        {"mass": Quantity("g", zero_ok=True), "rho15": Quantity("kg/m**3"), "temperature": TEMPERATURE},
    ),
    (
        "shaft_displacement",
        oil.shaft_displacement,
        {"shaft_diameter": Q_(10, "mm"), "stroke": Q_(100, "mm")},
        {"shaft_diameter": Quantity("mm"), "stroke": Quantity("mm", zero_ok=True)},
    ),
    (
        "level_volume",
        oil.level_volume,
        {"bore_diameter": Q_(32, "mm"), "level_change": Q_(10, "mm"), "rod_diameter": Q_(20, "mm")},
        {
            "bore_diameter": Quantity("mm"),
            "level_change": Quantity("mm", zero_ok=True),
            "rod_diameter": Quantity("mm", zero_ok=True),
        },
    ),
    (
        "level_for_volume",
        oil.level_for_volume,
        {"bore_diameter": Q_(32, "mm"), "volume": Q_(5, "mL"), "rod_diameter": Q_(20, "mm")},
        {
            "bore_diameter": Quantity("mm"),
            "volume": Quantity("mL", zero_ok=True),
            "rod_diameter": Quantity("mm", zero_ok=True),
        },
    ),
    (
        "AirSpring",
        air_spring.AirSpring,
        SPRING_FIELDS,
        {
            "piston_diameter": Quantity("mm"),
            "travel": Quantity("mm"),
            "positive_volume": Quantity("cc"),
            "negative_volume": Quantity("cc", zero_ok=True),
            "negative_area": Quantity("mm**2", none_ok=True),
            "equalize_at": Quantity("mm", zero_ok=True),
            "spacer_volume": Quantity("cc", zero_ok=True),
            "polytropic_index": Number(),
        },
    ),
    (
        "AirSpring.force",
        SPRING.force,
        {"position": Q_(40, "mm"), "pressure": Q_(80, "psi")},
        {"position": Quantity("mm", zero_ok=True), "pressure": Quantity("psi", zero_ok=True)},
    ),
    (
        "AirSpring.curve",
        SPRING.curve,
        {"pressure": Q_(80, "psi"), "points": 101},
        {"pressure": Quantity("psi", zero_ok=True), "points": Number()},
    ),
    (
        "AirSpring.pressure_for_sag",
        SPRING.pressure_for_sag,
        {"load": Q_(300, "N"), "sag": 0.2, "maximum_pressure": Q_(300, "psi")},
        {"load": Quantity("N"), "sag": Number(), "maximum_pressure": Quantity("psi", none_ok=True)},
    ),
    (
        "AirSpring.with_spacers",
        SPRING.with_spacers,
        {"volume": Q_(10, "cc")},
        {"volume": Quantity("cc", zero_ok=True)},
    ),
    (
        "coil_rate_for_sag",
        air_spring.coil_rate_for_sag,
        {"load": Q_(700, "N"), "travel": Q_(160, "mm"), "sag": 0.25, "preload": Q_(5, "mm")},
        {
            "load": Quantity("N"),
            "travel": Quantity("mm"),
            "sag": Number(),
            "preload": Quantity("mm", zero_ok=True),
        },
    ),
    (
        "fork_load",
        air_spring.fork_load,
        {"rider_mass": Q_(80, "kg"), "share": 0.35},
        {"rider_mass": Quantity("kg"), "share": Number()},
    ),
    (
        "trapped_gas_pressure",
        damper.trapped_gas_pressure,
        {
            "gas_volume": Q_(20, "mL"),
            "initial_pressure": Q_(101.325, "kPa"),
            "volume_change": Q_(7.854, "mL"),
            "polytropic_index": 1.0,
        },
        {
            "gas_volume": Quantity("mL"),
            "initial_pressure": Quantity("kPa"),
            "volume_change": Quantity("mL", negative_ok=True, zero_ok=True),
            "polytropic_index": Number(),
        },
    ),
    (
        "ifp_pressure",
        damper.ifp_pressure,
        {
            "ifp_diameter": Q_(16, "mm"),
            "spring_rate": Q_(5, "N/mm"),
            "spring_preload": Q_(10, "mm"),
            "shaft_diameter": Q_(10, "mm"),
            "stroke": Q_(50, "mm"),
            "overfill": Q_(1, "mL"),
        },
        {
            "ifp_diameter": Quantity("mm"),
            "spring_rate": Quantity("N/mm", zero_ok=True),
            "spring_preload": Quantity("mm", zero_ok=True),
            "shaft_diameter": Quantity("mm"),
            "stroke": Quantity("mm", zero_ok=True),
            "overfill": Quantity("mL", negative_ok=True, zero_ok=True),
        },
    ),
    (
        "friction_at_shaft",
        damper.friction_at_shaft,
        {"ifp_friction": Q_(30, "N"), "shaft_diameter": Q_(10, "mm"), "ifp_diameter": Q_(18, "mm")},
        {
            "ifp_friction": Quantity("N", zero_ok=True),
            "shaft_diameter": Quantity("mm"),
            "ifp_diameter": Quantity("mm"),
        },
    ),
    (
        "cavitation_margin",
        damper.cavitation_margin,
        {
            "static_pressure": Q_(3, "bar"),
            "damping_force": Q_(100, "N"),
            "piston_area": Q_(500, "mm**2"),
            "threshold": Q_(30, "kPa"),
        },
        {
            "static_pressure": Quantity("bar"),
            "damping_force": Quantity("N", zero_ok=True),
            "piston_area": Quantity("mm**2"),
            "threshold": Quantity("kPa", zero_ok=True),
        },
    ),
    (
        "max_force_before_cavitation",
        damper.max_force_before_cavitation,
        {"static_pressure": Q_(3, "bar"), "piston_area": Q_(500, "mm**2"), "threshold": Q_(30, "kPa")},
        {
            "static_pressure": Quantity("bar"),
            "piston_area": Quantity("mm**2"),
            "threshold": Quantity("kPa", zero_ok=True),
        },
    ),
    (
        "next_due_on",
        schedule.next_due_on,
        {
            "last_service_on": datetime.date(2024, 3, 1),
            "interval_hours": 50,
            "interval_months": 12,
            "hours_per_week": 5,
        },
        {
            "last_service_on": Date(),
            "interval_hours": Number(none_ok=True),
            "interval_months": Number(none_ok=True),
            "hours_per_week": Number(zero_ok=True, none_ok=True),
        },
    ),
    (
        "due_status",
        schedule.due_status,
        {"due_on": datetime.date(2024, 3, 1), "today": datetime.date(2024, 2, 1), "soon_days": 30},
        {"due_on": Date(), "today": Date(), "soon_days": Number(zero_ok=True)},
    ),
]

PARAMETERS = [
    pytest.param(function, valid, name, kind, id=f"{label}-{name}")
    for label, function, valid, kinds in CASES
    for name, kind in kinds.items()
]


def test_the_valid_inputs_are_valid():
    # Each bad-input test below changes one input of a call that works: check that it works.
    for _label, function, valid, _kinds in CASES:
        function(**valid)


@pytest.mark.parametrize(("function", "valid", "name", "kind"), PARAMETERS)
@BAD
@given(data=st.data())
def test_every_bad_input_raises_calc_input_error(function, valid, name, kind, data):
    value = data.draw(bad_values(kind), label=name)
    with pytest.raises(CalcInputError):
        function(**{**valid, name: value})


@BAD
@given(
    components=st.one_of(
        st.none(),
        st.just([]),
        st.text(max_size=4),
        st.just([(Q_(5, CST), 0.6, 1)]),
        st.just([(Q_(5, CST), 0.6), (Q_(20, CST), 0.5)]),  # fractions add to 1.1
        st.lists(st.tuples(bad_values(Quantity(CST)), st.just(1.0)), min_size=1, max_size=1),
        st.lists(st.tuples(st.just(Q_(5, CST)), bad_values(Number(zero_ok=True))), min_size=1, max_size=2),
        st.floats(1.001, 2.0).map(lambda x: [(Q_(5, CST), x), (Q_(20, CST), 1 - x)]),  # fraction above 1
    )
)
def test_bad_blends_raise_calc_input_error(components):
    with pytest.raises(CalcInputError):
        oil.blend_viscosity(components)


@BAD
@given(
    positions=st.one_of(
        st.lists(FINITE, min_size=1, max_size=5).filter(lambda xs: min(xs) < 0 or max(xs) > 160),
        st.lists(st.sampled_from([math.nan, math.inf, -math.inf, 10.0]), min_size=1, max_size=5).filter(
            lambda xs: not all(math.isfinite(x) for x in xs)
        ),
        st.just([]),
    ),
    unit=st.sampled_from(["mm", "kg"]),
)
def test_bad_position_arrays_raise_calc_input_error(positions, unit):
    with pytest.raises(CalcInputError):
        SPRING.force(position=Q_(np.array(positions, dtype=float), unit), pressure=Q_(80, "psi"))


@pytest.mark.parametrize(
    ("function", "inputs"),
    [
        # Cases the models cannot represent, each with otherwise plausible numbers
        (oil.viscosity_at, {"nu40": Q_(5, CST), "nu100": Q_(8, CST), "temperature": Q_(20, "degC")}),
        (oil.blend_fraction, {"nu_a": Q_(5, CST), "nu_b": Q_(5, CST), "nu_target": Q_(5, CST)}),
        (
            oil.level_volume,
            {"bore_diameter": Q_(20, "mm"), "level_change": Q_(1, "mm"), "rod_diameter": Q_(25, "mm")},
        ),
        (
            air_spring.AirSpring,
            {"piston_diameter": Q_(32, "mm"), "travel": Q_(160, "mm"), "positive_volume": Q_(100, "cc")},
        ),
        (
            air_spring.AirSpring,
            {
                "piston_diameter": Q_(32, "mm"),
                "travel": Q_(160, "mm"),
                "positive_volume": Q_(250, "cc"),
                "negative_area": Q_(900, "mm**2"),  # larger than the 804 mm² piston
            },
        ),
        (
            air_spring.AirSpring,
            {
                "piston_diameter": Q_(32, "mm"),
                "travel": Q_(160, "mm"),
                "positive_volume": Q_(250, "cc"),
                "equalize_at": Q_(160, "mm"),
            },
        ),
        (
            damper.trapped_gas_pressure,
            {"gas_volume": Q_(20, "mL"), "initial_pressure": Q_(1, "atm"), "volume_change": Q_(25, "mL")},
        ),
        (
            damper.ifp_pressure,
            {
                "ifp_diameter": Q_(10, "mm"),
                "spring_rate": Q_(5, "N/mm"),
                "spring_preload": Q_(10, "mm"),
                "shaft_diameter": Q_(12, "mm"),
                "stroke": Q_(50, "mm"),
            },
        ),
        (
            schedule.next_due_on,
            {
                "last_service_on": datetime.date(2024, 3, 1),
                "interval_hours": None,
                "interval_months": None,
                "hours_per_week": 5,
            },
        ),
    ],
)
def test_cases_the_model_cannot_represent_raise_calc_input_error(function, inputs):
    with pytest.raises(CalcInputError):
        function(**inputs)
