"""The owner finds an overdue unit on the dashboard and sends its reminder from the row."""

from __future__ import annotations

import datetime
from decimal import Decimal

import pytest
from django.core import mail
from django.test import override_settings
from django.utils import timezone

from shopdesk.customers.models import Customer, Unit
from shopdesk.owner.models import Reminder
from shopdesk.owner.services import due_refresh_all
from tests.browser.conftest import sign_in
from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


@override_settings(EMAIL_BACKEND="django.core.mail.backends.locmem.EmailBackend")
def test_owner_finds_an_overdue_unit_and_sends_a_reminder(
    page, screenshot, owner, air_fork_model, service_types
) -> None:
    from playwright.sync_api import expect

    late = Customer.objects.create(name="Nia Overdue", email="nia@example.com", reminder_consent=True)
    Unit.objects.create(
        customer=late,
        unit_model=air_fork_model,
        serial_number="LATE-1",
        model_year=2023,
        travel_mm=140,
        hours_per_week=Decimal("0"),
        purchased_on=timezone.localdate() - datetime.timedelta(days=420),
    )
    quiet = Customer.objects.create(name="Ola Nothanks", email="ola@example.com", reminder_consent=False)
    Unit.objects.create(
        customer=quiet,
        unit_model=air_fork_model,
        serial_number="LATE-2",
        model_year=2023,
        travel_mm=140,
        hours_per_week=Decimal("0"),
        purchased_on=timezone.localdate() - datetime.timedelta(days=430),
    )
    due_refresh_all()

    sign_in(page, "owner", PASSWORD)
    page.click("nav >> text=Owner")
    page.wait_for_url("**/owner/")
    row = page.locator("tr", has_text="Nia Overdue")
    expect(row).to_contain_text("Lower-leg service")
    expect(row).to_contain_text("days late")
    # The customer who said no is listed, without a button.
    expect(page.locator("tr", has_text="Ola Nothanks").locator("button")).to_have_count(0)
    screenshot("owner-1-dashboard")

    row.locator("button:text('Send reminder')").click()
    expect(page.locator("#messages")).to_contain_text("Reminder sent to Nia Overdue")
    row = page.locator("tr", has_text="Nia Overdue")
    expect(row.locator(".badge")).to_contain_text("sent")
    expect(row.locator("button")).to_have_count(0)
    screenshot("owner-2-reminder-sent")

    reminder = Reminder.objects.get()
    assert reminder.state == "sent" and reminder.sent_by == owner and reminder.email == "nia@example.com"
    assert len(mail.outbox) == 1 and "LATE-1" in mail.outbox[0].body
