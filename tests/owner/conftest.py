"""A small shop with units overdue and due soon, customers with and without consent."""

from __future__ import annotations

import datetime
from decimal import Decimal

import pytest
from django.utils import timezone

from shopdesk.customers.models import Customer, Unit
from shopdesk.owner.services import due_refresh_all


@pytest.fixture
def due_shop(air_fork_model, service_types):
    """Eight customers, one unit each, ridden 0 h a week (so months alone set the dates):
    bought 400 days ago (the 12-month lower-leg service overdue) or 350 days ago (due within 30 days).
    Even numbers agreed to reminders; number 6 has no email."""
    today = timezone.localdate()
    units = []
    for number in range(8):
        customer = Customer.objects.create(
            name=f"Rider {number}",
            phone=f"01632 960 {number:03d}",
            email="" if number == 6 else f"rider{number}@example.com",
            reminder_consent=number % 2 == 0,
        )
        units.append(
            Unit.objects.create(
                customer=customer,
                unit_model=air_fork_model,
                serial_number=f"DUE-{number}",
                model_year=2023,
                travel_mm=140,
                hours_per_week=Decimal("0"),
                purchased_on=today - datetime.timedelta(days=400 if number < 5 else 350),
            )
        )
    due_refresh_all()
    return units


def more_overdue_units(count: int) -> None:
    """``count`` more units of the first unit model, bought 400 days ago, their due dates refreshed."""
    from shopdesk.specs.models import UnitModel

    today = timezone.localdate()
    model = UnitModel.objects.order_by("pk").first()
    base = Customer.objects.count()
    for number in range(base, base + count):
        customer = Customer.objects.create(name=f"Extra {number}", email=f"extra{number}@example.com")
        Unit.objects.create(
            customer=customer,
            unit_model=model,
            serial_number=f"MORE-{number}",
            model_year=2023,
            travel_mm=140,
            hours_per_week=Decimal("0"),
            purchased_on=today - datetime.timedelta(days=400),
        )
    due_refresh_all()
