"""The owner's due table against the calculator (shopdesk.calc.schedule) and the per-unit selector."""

from __future__ import annotations

import datetime
import random
from decimal import Decimal

import pytest
from django.utils import timezone

from shopdesk.calc import schedule
from shopdesk.customers.models import Customer, Unit
from shopdesk.owner.models import DueService
from shopdesk.owner.selectors import due_counts, due_services
from shopdesk.owner.services import due_refresh, due_refresh_all
from shopdesk.specs.models import ServiceInterval
from shopdesk.workshop.models import ServiceRecord
from shopdesk.workshop.selectors import unit_due_dates

TODAY = datetime.date(2026, 6, 15)


@pytest.fixture
def random_units(air_fork_model, service_types):
    rng = random.Random(7)
    ServiceInterval.objects.create(
        unit_model=air_fork_model, service_type=service_types[1], interval_hours=None, interval_months=18
    )
    units = []
    for number in range(40):
        customer = Customer.objects.create(name=f"Rider {number}", email=f"r{number}@example.com")
        unit = Unit.objects.create(
            customer=customer,
            unit_model=air_fork_model,
            serial_number=f"S-{number}",
            model_year=2022,
            travel_mm=140,
            hours_per_week=Decimal(rng.choice(["0", "2.5", "4.0", "7.0", "13.5"])),
            # 31 January and leap days exercise the month-end clamp.
            purchased_on=rng.choice([None, datetime.date(2024, 1, 31), datetime.date(2024, 2, 29)]),
        )
        for service in service_types:
            if rng.random() < 0.6:
                ServiceRecord.objects.create(
                    unit=unit,
                    service_type=service,
                    done_on=TODAY - datetime.timedelta(days=rng.randint(0, 900)),
                )
        units.append(unit)
    return units


@pytest.mark.django_db
def test_it_matches_the_calculator_for_every_unit(random_units) -> None:
    due_refresh_all()
    rows = {(row.unit_id, row.service_type_id): row for row in due_services(today=TODAY)}
    expected = 0
    for unit in random_units:
        for due in unit_due_dates(unit, today=TODAY):
            expected += 1
            row = rows[(unit.pk, due.service_type.pk)]
            # The rule itself: shopdesk.calc.schedule.next_due_on on the same inputs.
            assert row.next_due_on == schedule.next_due_on(
                last_service_on=due.counted_from,
                interval_hours=due.interval_hours,
                interval_months=due.interval_months,
                hours_per_week=float(unit.hours_per_week) if unit.hours_per_week else None,
            )
            assert row.next_due_on == due.next_due_on
            assert row.status == schedule.due_status(due_on=row.next_due_on, today=TODAY).value
    assert len(rows) == expected > 40
    counts = due_counts(today=TODAY)
    assert counts["overdue"] == sum(1 for row in rows.values() if row.status == "overdue")
    assert counts["due_soon"] == sum(1 for row in rows.values() if row.status == "due soon")


@pytest.mark.django_db
def test_it_counts_a_never_serviced_unit_from_its_purchase(unit, service_types) -> None:
    unit.purchased_on = datetime.date(2025, 1, 31)
    unit.save()
    due_refresh(unit=unit)
    lowers = DueService.objects.get(unit=unit, service_type=service_types[0])
    assert lowers.last_done_on is None
    assert lowers.counted_from == datetime.date(2025, 1, 31)
    # 50 h at 4 h a week = floor(87.5) = 87 days, earlier than 12 months.
    assert lowers.next_due_on == datetime.date(2025, 1, 31) + datetime.timedelta(days=87)


@pytest.mark.django_db
def test_it_follows_a_job_becoming_ready_and_being_cancelled(
    work_order, technician, front_desk, oil_part
) -> None:
    from shopdesk.workshop import services
    from shopdesk.workshop.models import Status
    from tests.conftest import finish_bench_work

    finish_bench_work(work_order, technician, oil_part)
    for target in (Status.FINAL_CHECK, Status.READY_FOR_PICKUP):
        services.work_order_move(work_order=work_order, target=target, by=technician)
    done = set(DueService.objects.filter(unit=work_order.unit).values_list("last_done_on", flat=True))
    assert done == {timezone.localdate()}
    services.work_order_move(work_order=work_order, target=Status.CANCELLED, by=front_desk)
    assert set(DueService.objects.filter(unit=work_order.unit).values_list("last_done_on", flat=True)) == {
        None
    }


@pytest.mark.django_db
def test_seed_bulk_fills_the_due_table_as_a_rebuild_would() -> None:
    from io import StringIO

    from django.core.management import call_command

    call_command("seed_bulk", customers=20, stdout=StringIO())
    seeded = set(DueService.objects.values_list("unit_id", "service_type_id", "next_due_on"))
    assert len(seeded) > 20
    due_refresh_all()
    assert set(DueService.objects.values_list("unit_id", "service_type_id", "next_due_on")) == seeded
