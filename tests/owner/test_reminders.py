"""Service reminders: once per unit, service and due date, only with consent, safe to rerun."""

from __future__ import annotations

import io
import threading
import time
from collections import Counter

import pytest
from django.core import mail
from django.core.mail.backends.locmem import EmailBackend
from django.core.management import CommandError, call_command
from django.db import connection, connections
from django.test import override_settings

from shopdesk.owner.models import DueService, Reminder
from shopdesk.owner.services import ReminderRefused, reminder_send, reminders_send
from tests.conftest import skip_unless_postgresql

LOCMEM = "django.core.mail.backends.locmem.EmailBackend"


def _expected_reminders() -> set[tuple[int, int]]:
    """Due (overdue or within 30 days) services of customers who agreed and have an email."""
    import datetime

    from django.utils import timezone

    soon = timezone.localdate() + datetime.timedelta(days=30)
    return set(
        DueService.objects.filter(next_due_on__lte=soon, unit__customer__reminder_consent=True)
        .exclude(unit__customer__email="")
        .values_list("unit_id", "service_type_id")
    )


@pytest.mark.django_db
@override_settings(EMAIL_BACKEND=LOCMEM)
def test_it_sends_each_reminder_once_and_nothing_the_second_time(due_shop) -> None:
    expected = _expected_reminders()
    # Riders 0, 2 and 4 are overdue, rider 6 has no email: 0, 2, 4 get the lower-leg reminder.
    assert {unit_id for unit_id, _ in expected} == {due_shop[0].pk, due_shop[2].pk, due_shop[4].pk}
    call_command("send_service_reminders", stdout=io.StringIO())
    assert len(mail.outbox) == len(expected)
    assert {(r.unit_id, r.service_type_id) for r in Reminder.objects.filter(state="sent")} == expected
    first = mail.outbox[0]
    due = DueService.objects.select_related("unit", "service_type").get(
        unit__customer__email=first.to[0], service_type__name="Lower-leg service"
    )
    assert str(due.unit) in first.body and "Lower-leg service" in first.subject
    assert f"{due.next_due_on.day} " in first.body and str(due.next_due_on.year) in first.body
    assert "/owner/unsubscribe/" in first.body and first.extra_headers["List-Unsubscribe"].startswith("<http")
    # The unit's due dates ride along as a calendar file (read back with icalendar).
    from icalendar import Calendar

    filename, content, mimetype = first.attachments[0]
    assert filename.endswith(".ics") and mimetype.startswith("text/calendar")
    starts = {event.decoded("dtstart") for event in Calendar.from_ical(content).walk("VEVENT")}
    assert due.next_due_on in starts

    call_command("send_service_reminders", stdout=io.StringIO())
    assert len(mail.outbox) == len(expected)  # nothing new
    assert Reminder.objects.count() == len(expected)


@pytest.mark.django_db
@override_settings(EMAIL_BACKEND=LOCMEM)
def test_it_never_reminds_a_customer_who_said_no(due_shop) -> None:
    reminders_send()
    reminded = {message.to[0] for message in mail.outbox}
    assert reminded == {"rider0@example.com", "rider2@example.com", "rider4@example.com"}
    refused = DueService.objects.select_related("unit__customer", "unit__unit_model", "service_type").filter(
        unit=due_shop[1]
    )[0]
    with pytest.raises(ReminderRefused, match="has not agreed"):
        reminder_send(due=refused)
    assert not Reminder.objects.filter(unit=due_shop[1]).exists()


@pytest.mark.django_db
@override_settings(EMAIL_BACKEND=LOCMEM)
def test_a_dry_run_sends_and_records_nothing(due_shop, capsys) -> None:
    call_command("send_service_reminders", "--dry-run")
    out = capsys.readouterr().out
    assert "3 reminders would go" in out and "rider0@example.com" in out
    assert mail.outbox == [] and not Reminder.objects.exists()


class FailingAfter(EmailBackend):
    """The locmem backend, which fails on the (limit + 1)th message as a mail server going down would."""

    limit = 1

    def send_messages(self, messages):  # type: ignore[no-untyped-def]
        if len(mail.outbox) >= self.limit:
            raise ConnectionRefusedError("the mail server went away")
        return super().send_messages(messages)


@pytest.mark.django_db
def test_stopped_halfway_the_rerun_sends_the_rest_once(due_shop) -> None:
    expected = _expected_reminders()
    with (
        override_settings(EMAIL_BACKEND="tests.owner.test_reminders.FailingAfter"),
        pytest.raises(CommandError, match="run the command again"),
    ):
        call_command("send_service_reminders")
    assert len(mail.outbox) == 1
    # The one sent is recorded; the one that failed gave its claim back.
    assert Reminder.objects.filter(state="sent").count() == 1
    assert not Reminder.objects.filter(state="claimed").exists()
    with override_settings(EMAIL_BACKEND=LOCMEM):
        call_command("send_service_reminders", stdout=io.StringIO())
    sent_to = Counter(message.to[0] for message in mail.outbox)
    assert len(mail.outbox) == len(expected) and set(sent_to.values()) == {1}


@pytest.mark.django_db
@override_settings(EMAIL_BACKEND=LOCMEM)
def test_a_claim_left_by_a_dead_run_is_taken_over_only_when_stale(due_shop) -> None:
    import datetime

    from django.utils import timezone

    due = DueService.objects.select_related("unit__customer", "unit__unit_model", "service_type").get(
        unit=due_shop[0], service_type__name="Lower-leg service"
    )
    claimed = Reminder.objects.create(
        unit=due.unit,
        service_type=due.service_type,
        due_on=due.next_due_on,
        email="x@example.com",
        claimed_at=timezone.now() - datetime.timedelta(minutes=2),
    )
    assert reminder_send(due=due) is None  # a fresh claim: another run is on it
    assert mail.outbox == []
    Reminder.objects.filter(pk=claimed.pk).update(claimed_at=timezone.now() - datetime.timedelta(hours=1))
    reminder = reminder_send(due=due)
    assert reminder is not None and reminder.pk == claimed.pk and reminder.state == "sent"
    assert len(mail.outbox) == 1 and mail.outbox[0].to == ["rider0@example.com"]


class SlowLocmem(EmailBackend):
    """Takes a while per message, so that two runs overlap."""

    def send_messages(self, messages):  # type: ignore[no-untyped-def]
        time.sleep(0.05)
        return super().send_messages(messages)


@pytest.mark.django_db(transaction=True)
@override_settings(EMAIL_BACKEND="tests.owner.test_reminders.SlowLocmem")
def test_two_runs_at_once_send_each_reminder_once(due_shop) -> None:
    skip_unless_postgresql()
    expected = _expected_reminders()
    start = threading.Barrier(2)
    errors: list[BaseException] = []

    def run() -> None:
        try:
            start.wait()
            reminders_send()
        except BaseException as error:  # reported below, not lost in the thread
            errors.append(error)
        finally:
            connections.close_all()

    threads = [threading.Thread(target=run) for _ in range(2)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert errors == []
    keys = Counter((m.to[0], m.subject) for m in mail.outbox)
    assert len(mail.outbox) == len(expected) and set(keys.values()) == {1}
    assert Reminder.objects.filter(state="sent").count() == len(expected)
    assert connection.vendor == "postgresql"
