"""``manage.py seed_bulk``: a large invented shop, made in bulk, that the shop's rules can carry on from."""

from __future__ import annotations

from io import StringIO

import pytest
from django.contrib.auth.models import User
from django.core.management import call_command
from django.core.management.base import CommandError
from django.db import transaction
from django.db.models import Count, Max
from django.utils import timezone

from shopdesk.customers.models import Customer, Unit
from shopdesk.shop.demo import demo_document_read
from shopdesk.specs.models import ServiceType, UnitModel
from shopdesk.workshop.models import (
    OPEN_STATUSES,
    ArrivalSettings,
    NumberSequence,
    RequestedService,
    Status,
    WorkOrder,
    WorkOrderEvent,
)
from shopdesk.workshop.services import work_order_check_in

pytestmark = pytest.mark.django_db

RESERVED_EMAIL_DOMAINS = {"example.com", "example.org", "example.net"}


def _bulk(customers: int = 50, seed: int = 7) -> str:
    out = StringIO()
    call_command("seed_bulk", customers=customers, seed=seed, stdout=out)
    return out.getvalue()


@pytest.fixture
def demo_counts() -> dict[str, int]:
    document = demo_document_read()
    return {
        "customers": len(document["customers"]),
        "units": sum(len(customer["units"]) for customer in document["customers"]),
        "work_orders": len(document["work_orders"]),
    }


def test_it_makes_n_customers_one_and_a_half_n_units_and_four_n_work_orders(demo_counts) -> None:
    output = _bulk(customers=50)
    # The demo shop was missing: it was loaded first, for its spec sheets, services and users.
    assert "loading it first" in output
    assert UnitModel.objects.exists() and User.objects.filter(username="desk").exists()
    assert Customer.objects.count() - demo_counts["customers"] == 50
    assert Unit.objects.count() - demo_counts["units"] == 75
    assert WorkOrder.objects.count() - demo_counts["work_orders"] == 200
    assert "Made 50 customers, 75 units, 200 work orders" in output


def test_it_fills_what_the_per_row_rules_would_have() -> None:
    _bulk(customers=50)
    work_orders = WorkOrder.objects.filter(unit__serial_number__startswith="BULK-")
    assert work_orders.count() == 200
    # Numbers are unique, match their year and sequence, and each year's sequence stands at its last.
    numbers = list(work_orders.values_list("number", "year", "sequence"))
    assert len({number for number, _, _ in numbers}) == len(numbers)
    assert all(number == f"{year}-{sequence:04d}" for number, year, sequence in numbers)
    for year, last in WorkOrder.objects.values_list("year").annotate(last=Max("sequence")):
        assert NumberSequence.objects.get(year=year).last_number == last
    # One or two services, one check-in event and the settings on arrival per job.
    per_job = work_orders.annotate(
        lines=Count("services", distinct=True), timeline=Count("events", distinct=True)
    )
    assert {job.lines for job in per_job} <= {1, 2}
    assert {job.timeline for job in per_job} == {1}
    assert WorkOrderEvent.objects.filter(work_order__in=work_orders, kind="checked_in").count() == 200
    assert ArrivalSettings.objects.filter(work_order__in=work_orders).count() == 200
    assert RequestedService.objects.filter(work_order__in=work_orders).count() >= 200
    # Mostly collected, a few open.
    open_jobs = work_orders.filter(status__in=OPEN_STATUSES).count()
    assert 1 <= open_jobs <= 6
    assert work_orders.filter(status=Status.COLLECTED).count() > 150
    assert not work_orders.filter(checked_in_at__gt=timezone.now()).exists()
    # save() is skipped by bulk_create: the search digits are filled by hand.
    for phone, digits in Customer.objects.exclude(phone="").values_list("phone", "phone_digits"):
        assert digits == "".join(ch for ch in phone if ch.isdigit())
    # Serial numbers are unique per model (the database constraint would refuse otherwise).
    assert Unit.objects.values("unit_model", "serial_number").distinct().count() == Unit.objects.count()


def test_it_lets_the_next_check_in_continue_the_years_sequence() -> None:
    _bulk(customers=50)
    year = timezone.localdate().year
    last = NumberSequence.objects.get(year=year).last_number
    unit = Unit.objects.filter(serial_number__startswith="BULK-").exclude(
        work_orders__status__in=OPEN_STATUSES
    )[0]
    work_order = work_order_check_in(
        unit=unit,
        by=User.objects.get(username="desk"),
        service_types=[ServiceType.objects.get(scope=ServiceType.Scope.DAMPER)],
        complaint="Knocks on rebound.",
    )
    assert work_order.number == f"{year}-{last + 1:04d}"
    assert WorkOrder.objects.filter(number=work_order.number).count() == 1


def test_it_uses_only_reserved_email_domains() -> None:
    _bulk(customers=50)
    emails = [email for email in Customer.objects.values_list("email", flat=True) if email]
    assert len(emails) > 40
    assert {email.rsplit("@", 1)[1] for email in emails} <= RESERVED_EMAIL_DOMAINS


def test_it_makes_the_same_shop_from_the_same_seed() -> None:
    call_command("seed_demo", stdout=StringIO())

    class RolledBack(Exception):
        pass

    def shop(seed: int) -> list[tuple[str, str, str]]:
        try:
            with transaction.atomic():
                _bulk(customers=20, seed=seed)
                made = list(
                    WorkOrder.objects.filter(unit__serial_number__startswith="BULK-")
                    .order_by("year", "sequence")
                    .values_list("number", "customer__name", "status")
                )
                raise RolledBack
        except RolledBack:
            return made

    assert shop(11) == shop(11)
    assert shop(11) != shop(12)


@pytest.mark.parametrize("customers", ["0", "-3", "many", "2.5"])
def test_it_refuses_a_customer_count_that_is_not_a_positive_whole_number(customers: str) -> None:
    with pytest.raises(CommandError, match="positive whole number"):
        call_command("seed_bulk", f"--customers={customers}", stdout=StringIO())
    assert not Customer.objects.exists()


def test_it_refuses_to_run_without_a_customer_count() -> None:
    with pytest.raises(CommandError, match="--customers"):
        call_command("seed_bulk", stdout=StringIO())
