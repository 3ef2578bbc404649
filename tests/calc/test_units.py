"""The unit registry, form-input parsing and the input checks the calculators share."""

import math

import pint
import pytest

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.units import Q_, STANDARD_ATMOSPHERE, check_number, check_quantity, parse_quantity, ureg

pytestmark = pytest.mark.filterwarnings("error")


def test_it_defines_psi_exactly():
    # NIST SP 811 Appendix B: 1 psi = 0.45359237 kg × 9.80665 m/s² / (0.0254 m)²; REFERENCES.md
    exact = 0.45359237 * 9.80665 / 0.0254**2
    assert exact == pytest.approx(6894.757293168, rel=1e-12)
    assert Q_(1, "psi").to("Pa").magnitude == pytest.approx(exact, rel=1e-12)


def test_it_defines_bar_and_the_standard_atmosphere_exactly():
    # NIST SP 811; ISO 2533: 1 bar = 100 000 Pa and 1 atm = 101 325 Pa by definition
    assert Q_(1, "bar").to("Pa").magnitude == pytest.approx(100_000.0, rel=1e-15)
    assert Q_(1, "atm").to("Pa").magnitude == pytest.approx(101_325.0, rel=1e-15)
    assert STANDARD_ATMOSPHERE.to("Pa").magnitude == 101_325.0


def test_it_reads_a_bare_number_in_the_default_unit():
    quantity = parse_quantity("85", default_unit="psi", dimension="[pressure]")
    assert quantity.to("psi").magnitude == pytest.approx(85.0)


@pytest.mark.parametrize(
    ("text", "dimension", "unit", "expected"),
    [
        ("85 psi", "[pressure]", "Pa", 85 * 6894.757293168),  # NIST SP 811 psi
        ("5.9bar", "[pressure]", "Pa", 590_000.0),  # 1 bar = 1e5 Pa exactly
        ("120 cc", "[volume]", "mL", 120.0),  # 1 cc = 1 cm³ = 1 mL
        ("4 fl oz", "[volume]", "mL", 4 * 29.5735295625),  # US fluid ounce, NIST Handbook 44 (from memory)
        ("0,15 mm", "[length]", "mm", 0.15),  # decimal comma
    ],
)
def test_it_reads_a_number_with_its_unit(text, dimension, unit, expected):
    quantity = parse_quantity(text, default_unit="mm", dimension=dimension)
    assert quantity.to(unit).magnitude == pytest.approx(expected, rel=1e-9)


def test_it_refuses_a_mass_typed_as_a_pressure():
    with pytest.raises(CalcInputError, match="not a pressure"):
        parse_quantity("85 kg", default_unit="psi", dimension="[pressure]")


@pytest.mark.parametrize(
    "text",
    # The last five once escaped pint's unit parser as AssertionError or tokenize.TokenError.
    ["", "   ", "psi 85", "nan psi", "85 furlongs-per-what", "2¥\x94", "5 (", "5 )", '5 "', "5 psi)"],
)
def test_it_refuses_unreadable_text(text):
    with pytest.raises(CalcInputError):
        parse_quantity(text, default_unit="psi", dimension="[pressure]")


def test_it_returns_the_magnitude_in_the_unit_asked_for():
    assert check_quantity(Q_(1, "in"), name="stroke", dimension="[length]", unit="mm") == pytest.approx(25.4)


def test_it_names_the_input_and_its_range():
    with pytest.raises(CalcInputError, match=r"stroke must be more than 0 mm, got -3 mm"):
        check_quantity(Q_(-3, "mm"), name="stroke", dimension="[length]", unit="mm")
    with pytest.raises(CalcInputError, match=r"sag must be at most 1"):
        check_number(1.5, name="sag", maximum=1.0)


@pytest.mark.parametrize(
    "value",
    [5.0, "5 mm", None, Q_(5, "kg"), Q_(math.nan, "mm"), Q_(math.inf, "mm")],
    ids=["float", "text", "none", "wrong-dimension", "nan", "inf"],
)
def test_it_refuses_what_is_not_a_finite_length(value):
    with pytest.raises(CalcInputError, match="stroke"):
        check_quantity(value, name="stroke", dimension="[length]", unit="mm")


def test_it_refuses_a_quantity_of_another_registry():
    # Quantities of two registries cannot be mixed; pint's application registry is not ours.
    foreign = pint.get_application_registry().Quantity(5, "mm")
    assert foreign._REGISTRY is not ureg
    with pytest.raises(CalcInputError, match="stroke"):
        check_quantity(foreign, name="stroke", dimension="[length]", unit="mm")


@pytest.mark.parametrize("value", [True, math.nan, -math.inf, "3", [3]])
def test_it_refuses_what_is_not_a_finite_number(value):
    with pytest.raises(CalcInputError, match="share"):
        check_number(value, name="share")
