"""Stock fixtures: a seal kit counted by the item and an oil counted in mL, each with stock."""

from __future__ import annotations

from decimal import Decimal

import pytest

from shopdesk.stock.models import Part
from shopdesk.stock.services import stock_receive


@pytest.fixture
def seal_kit(db: None) -> Part:
    """An air-spring seal kit: 24.00 each, reorder at 2, nothing in stock yet."""
    return Part.objects.create(
        part_number="SK-34-AIR",
        name="Air spring seal kit, 34 mm",
        kind=Part.Kind.SEAL_KIT,
        unit_of_measure=Part.UnitOfMeasure.EACH,
        reorder_level=Decimal("2"),
        cost=Decimal("11.5000"),
        price=Decimal("24.0000"),
    )


@pytest.fixture
def oil_part(oil) -> Part:
    """The test 5 wt oil as a stock item: 0.0450 per mL (45.00 a litre), reorder at 500 mL."""
    return Part.objects.create(
        part_number="OIL-5WT",
        name="Damper oil 5 wt",
        kind=Part.Kind.OIL,
        unit_of_measure=Part.UnitOfMeasure.ML,
        oil=oil,
        reorder_level=Decimal("500"),
        cost=Decimal("0.0210"),
        price=Decimal("0.0450"),
    )


@pytest.fixture
def stocked_kit(seal_kit: Part, owner) -> Part:
    """The seal kit with 5 received in lot L-2401."""
    stock_receive(part=seal_kit, quantity=5, by=owner, lot_code="L-2401")
    return seal_kit


@pytest.fixture
def stocked_oil(oil_part: Part, owner) -> Part:
    """The oil with one litre received in lot B-77."""
    stock_receive(part=oil_part, quantity=Decimal("1000"), by=owner, lot_code="B-77")
    return oil_part
