"""``manage.py seed_demo``: the demo shop, loaded once through the shop's own rules."""

from __future__ import annotations

import copy
import json
import re
from io import StringIO

import pytest
from django.contrib.auth.models import User
from django.core.management import call_command
from django.db.models import Count, Max
from django.urls import reverse
from django.utils import timezone

from shopdesk.accounts import roles
from shopdesk.customers.models import Customer, Unit
from shopdesk.shop.demo import DEMO_FILE, DemoDocumentError, demo_document_read, demo_shop_load
from shopdesk.specs.models import Chamber, Oil, ServiceInterval, ServiceType, TorqueValue, UnitModel
from shopdesk.workshop.models import (
    OPEN_STATUSES,
    ArrivalSettings,
    NumberSequence,
    RequestedService,
    ServiceRecord,
    Status,
    WorkOrder,
    WorkOrderEvent,
)

pytestmark = pytest.mark.django_db

RESERVED_EMAIL_DOMAINS = {"example.com", "example.org", "example.net"}
# Phone numbers reserved for fiction: UK 01632 960000–960999, US 555-0100–0199.
RESERVED_PHONE = re.compile(r"^(01632 ?960 ?\d{3}|(\+1 )?\(\d{3}\) 555-01\d{2})$")
DEMO_PASSWORDS = {
    "desk": "desk-demo-pass-2026",
    "bench": "bench-demo-pass-2026",
    "owner": "owner-demo-pass-2026",
}


def _seed() -> str:
    out = StringIO()
    call_command("seed_demo", stdout=out)
    return out.getvalue()


def _counts() -> dict[str, int]:
    return {
        model.__name__: model.objects.count()
        for model in (
            User,
            Oil,
            ServiceType,
            UnitModel,
            Chamber,
            TorqueValue,
            ServiceInterval,
            Customer,
            Unit,
            WorkOrder,
            ArrivalSettings,
            RequestedService,
            WorkOrderEvent,
            ServiceRecord,
            NumberSequence,
        )
    }


def test_it_loads_the_spec_sheets_the_issue_asks_for() -> None:
    _seed()
    models = list(
        UnitModel.objects.annotate(chamber_count=Count("chambers"), torque_count=Count("torque_values"))
    )
    assert len({model.maker for model in models}) >= 3
    assert len(models) >= 6
    assert {model.kind for model in models} == set(UnitModel.Kind.values)
    assert {model.spring_kind for model in models} == set(UnitModel.SpringKind.values)
    assert {model.damper_kind for model in models} >= {
        "open_bath",
        "bladder",
        "ifp_spring",
        "emulsion",
        "ifp_gas",
    }
    for model in models:
        assert model.chamber_count > 0, model
        assert model.torque_count > 0, model
        assert model.torque_values.filter(safety_critical=True).exists(), model
        assert model.intervals.exists(), model
        if model.is_air:
            assert model.max_pressure_kpa and model.positive_volume_cc and model.air_piston_diameter_mm, model
    revalve = ServiceType.objects.get(scope=ServiceType.Scope.REVALVE)
    assert revalve.default_interval_hours is None and revalve.default_interval_months is None
    lowers = ServiceType.objects.get(scope=ServiceType.Scope.LOWERS)
    assert (lowers.default_interval_hours, lowers.default_interval_months) == (50, 12)


def test_it_loads_customers_units_and_jobs_in_every_status() -> None:
    output = _seed()
    assert "Loaded the demo shop" in output
    assert Customer.objects.count() == 20
    assert Unit.objects.count() == 30
    assert WorkOrder.objects.count() >= 25
    assert set(WorkOrder.objects.values_list("status", flat=True)) == set(Status.values)
    # Customers reached in different ways, with and without consent to reminders.
    assert Customer.objects.filter(phone="").exists() and Customer.objects.filter(email="").exists()
    assert {True, False} == set(Customer.objects.values_list("reminder_consent", flat=True))
    # Some open jobs are late.
    today = timezone.localdate()
    assert WorkOrder.objects.filter(status__in=OPEN_STATUSES, promised_on__lt=today).exists()


def test_it_checks_jobs_in_and_moves_them_through_the_services() -> None:
    _seed()
    for work_order in WorkOrder.objects.all():
        assert work_order.number == f"{work_order.year}-{work_order.sequence:04d}"
        assert work_order.checked_in_at <= work_order.status_changed_at <= timezone.now()
        assert work_order.arrival is not None
        events = list(work_order.events.all())
        assert events[0].kind == WorkOrderEvent.Kind.CHECKED_IN
        if work_order.status != Status.CHECKED_IN:
            assert events[-1].to_status == work_order.status
    # Each year's sequence stands at its last number, so the next check-in continues it.
    per_year = WorkOrder.objects.values_list("year").annotate(count=Count("id"), last=Max("sequence"))
    for year, count, last in per_year:
        assert count == last == NumberSequence.objects.get(year=year).last_number  # gap-free
    # Jobs that went past ready for pickup wrote the unit's service history.
    collected = WorkOrder.objects.filter(status=Status.COLLECTED)
    assert collected.exists()
    assert all(job.service_records.exists() for job in collected)


def test_it_leaves_the_counts_unchanged_on_a_second_run() -> None:
    _seed()
    before = _counts()
    output = _seed()
    assert "The demo shop is already loaded." in output
    assert _counts() == before


def test_it_makes_one_user_per_role_who_can_sign_in(client) -> None:
    first_output = _seed()
    second_output = _seed()
    groups = {"desk": roles.FRONT_DESK, "bench": roles.TECHNICIAN, "owner": roles.OWNER}
    for username, group in groups.items():
        user = User.objects.get(username=username)
        assert list(user.groups.values_list("name", flat=True)) == [group]
        assert user.first_name and user.last_name
        assert not user.is_superuser
        # Through the sign-in page: django-axes checks every sign-in against its request.
        response = client.post(
            reverse("accounts:sign-in"),
            {"username": username, "password": DEMO_PASSWORDS[username]},
        )
        assert response.status_code == 302, username
        assert client.session.get("_auth_user_id") == str(user.pk)
        client.logout()
        for output in (first_output, second_output):
            assert f"{username} / {DEMO_PASSWORDS[username]}" in output
    assert User.objects.get(username="owner").is_staff
    assert not User.objects.get(username="desk").is_staff


def test_it_uses_only_reserved_emails_and_phone_numbers() -> None:
    _seed()
    emails = [email for email in Customer.objects.values_list("email", flat=True) if email]
    emails += list(User.objects.values_list("email", flat=True))
    assert emails
    assert {email.rsplit("@", 1)[1] for email in emails} <= RESERVED_EMAIL_DOMAINS
    for phone in Customer.objects.exclude(phone="").values_list("phone", flat=True):
        assert RESERVED_PHONE.match(phone), phone
    # And nowhere in the document either, notes included.
    text = DEMO_FILE.read_text(encoding="utf-8")
    for domain in re.findall(r"@([\w.-]+)", text):
        assert domain in RESERVED_EMAIL_DOMAINS, domain
    assert json.loads(text)["shop"] == {"name": "Hollow Pine Suspension Works", "town": "Carrow Vale"}


def test_it_leaves_nothing_behind_when_the_document_is_wrong() -> None:
    document = copy.deepcopy(demo_document_read())
    document["work_orders"][-1]["unit"] = "NO-SUCH-SERIAL"
    with pytest.raises(DemoDocumentError, match="NO-SUCH-SERIAL"):
        demo_shop_load(document=document)
    assert UnitModel.objects.count() == 0
    assert Customer.objects.count() == 0
    assert WorkOrder.objects.count() == 0
