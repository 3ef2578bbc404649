"""Shown values: the cached unit map gives what pint gives for every kind and display unit."""

from __future__ import annotations

import math

import pytest

from shopdesk.calc import Q_
from shopdesk.shop import quantities
from shopdesk.shop.quantities import FORCE, LENGTH, MASS, PRESSURE, SPRING_RATE, TORQUE, VOLUME, to_display

KINDS = [PRESSURE, VOLUME, LENGTH, MASS, TORQUE, SPRING_RATE, FORCE]


@pytest.mark.parametrize("kind", KINDS, ids=lambda kind: kind.stored_unit)
@pytest.mark.parametrize("value", [0.0, 1.0, 85.25, 1100.0, -3.5, 12345.678])
def test_a_shown_value_is_pint_s_conversion(kind, value) -> None:
    for unit in kind.decimals:
        # pint, converting the stored unit to the shown one directly (the reference)
        expected = Q_(value, kind.stored_unit).to(quantities._PINT_NAMES.get(unit, unit)).magnitude
        assert math.isclose(to_display(value, kind, unit), expected, rel_tol=1e-12, abs_tol=1e-12), unit


def test_known_conversions() -> None:
    # 1 psi = 6.894757 kPa (NIST SP 811, B.8); 1 US fl oz = 29.5735 mL (NIST Handbook 44, C)
    assert to_display(689.4757, PRESSURE, "psi") == pytest.approx(100.0, rel=1e-6)
    assert to_display(29.5735, VOLUME, "fl oz") == pytest.approx(1.0, rel=1e-5)
    assert to_display(25.4, LENGTH, "in") == pytest.approx(1.0, rel=1e-12)  # exact by definition
    assert to_display(None, PRESSURE) is None
