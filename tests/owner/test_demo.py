"""The demo shop shows the owner's point at once: due units, consent both ways, reminders, months of work."""

from __future__ import annotations

import pytest

from shopdesk.customers.models import Customer
from shopdesk.owner import numbers
from shopdesk.owner.models import DueService, Reminder
from shopdesk.owner.selectors import due_counts
from shopdesk.shop.demo import demo_shop_load


@pytest.mark.django_db
def test_the_demo_shop_has_what_the_owner_looks_at(client) -> None:
    result = demo_shop_load()
    assert result.counts["reminders sent"] == 3
    counts = due_counts()
    assert counts["overdue"] >= 10 and counts["due_soon"] >= 3
    assert Customer.objects.filter(reminder_consent=True).exists()
    assert Customer.objects.filter(reminder_consent=False).exists()
    # Every reminder is for the due date the table holds now, so the dashboard shows it as sent.
    for reminder in Reminder.objects.all():
        assert reminder.state == "sent" and reminder.sent_at is not None
        assert DueService.objects.filter(
            unit=reminder.unit, service_type=reminder.service_type, next_due_on=reminder.due_on
        ).exists()
    months = numbers.revenue_by_month(numbers.Period.last_months(12))
    assert len(months) >= 6  # completed jobs in at least six of the last twelve months
    # Never-serviced units are in the table too, counted from their purchase.
    assert DueService.objects.filter(last_done_on__isnull=True).exists()
