"""The status board's cards: what each shows, worked out in the selector."""

from __future__ import annotations

import datetime

import pytest
from django.urls import reverse
from django.utils import timezone

from shopdesk.workshop.models import Status, WorkOrder
from shopdesk.workshop.selectors import status_board, time_in
from shopdesk.workshop.services import work_order_check_in

NOW = datetime.datetime(2026, 12, 3, 15, 0, tzinfo=datetime.UTC)


@pytest.mark.parametrize(
    ("ago", "shown"),
    [
        (datetime.timedelta(seconds=20), "0 minutes"),
        (datetime.timedelta(minutes=1), "1 minute"),
        (datetime.timedelta(minutes=59, seconds=59), "59 minutes"),
        (datetime.timedelta(hours=1), "1 hour"),
        (datetime.timedelta(hours=47, minutes=59), "47 hours"),
        (datetime.timedelta(days=2), "2 days"),
        (datetime.timedelta(days=40, hours=23), "40 days"),
        (-datetime.timedelta(minutes=5), "0 minutes"),  # a clock a little ahead is not "−5 minutes"
    ],
)
def test_time_in_counts_minutes_then_hours_then_days(ago: datetime.timedelta, shown: str) -> None:
    assert time_in(NOW - ago, NOW) == shown


def test_a_card_shows_the_job_its_customer_unit_promise_and_technician(
    front_desk, technician, unit, service_types
) -> None:
    job = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    promised = timezone.localdate() + datetime.timedelta(days=3)
    WorkOrder.objects.filter(pk=job.pk).update(
        promised_on=promised, assigned_to=technician, status=Status.ON_THE_BENCH
    )
    unassigned = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)

    columns = {column.status: column for column in status_board(may=technician.has_perm)}
    [card] = columns[Status.ON_THE_BENCH].jobs
    assert card.number == job.number
    assert card.address == reverse("workshop:work-order", kwargs={"number": job.number})
    assert card.move_address == reverse("workshop:move", kwargs={"number": job.number})
    assert card.customer_name == unit.customer.name
    assert card.unit_name == f"{unit.unit_model.maker} {unit.unit_model.name}"
    assert card.promised == promised.strftime("%d %b").lstrip("0")
    assert card.is_late is False
    assert card.technician == technician.get_full_name()
    [waiting] = columns[Status.CHECKED_IN].jobs
    assert waiting.number == unassigned.number
    assert (waiting.technician, waiting.promised) == ("", "—")


def test_one_form_per_card_carries_each_move_as_its_button(client, technician, work_order) -> None:
    client.force_login(technician)
    body = client.get(reverse("workshop:board")).content.decode()
    card = body[body.index(f'data-job="{work_order.number}"') :].split("</article>")[0]
    assert card.count("<form") == 1
    assert 'name="to" value="on_the_bench"' in card and 'name="to" value="waiting_for_parts"' in card
    assert "With " not in card  # nobody has taken it yet
