"""The owner's rules: keeping the due table right (the calc rules applied once per unit and service,
in bulk), sending each service reminder once, and the reminder's wording."""

from __future__ import annotations

import datetime
from collections import defaultdict
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

from django.conf import settings
from django.contrib.auth.models import AbstractBaseUser
from django.core import signing
from django.core.mail import EmailMessage
from django.db import IntegrityError, transaction
from django.db.models import Exists, Max, Min, OuterRef, QuerySet
from django.urls import reverse
from django.utils import timezone
from django.utils.formats import date_format

from shopdesk.calc import schedule
from shopdesk.customers.models import Unit
from shopdesk.owner.models import DueService, MessageWording, Reminder
from shopdesk.owner.wording import wording_check, wording_fill
from shopdesk.specs.models import ServiceInterval, ServiceType
from shopdesk.workshop.models import ServiceRecord, WorkOrder

BATCH = 2000


def _intervals_by_model(model_ids: Iterable[int]) -> dict[int, dict[int, ServiceInterval]]:
    result: dict[int, dict[int, ServiceInterval]] = defaultdict(dict)
    for interval in ServiceInterval.objects.filter(unit_model_id__in=set(model_ids)):
        result[interval.unit_model_id][interval.service_type_id] = interval
    return result


def _rows_for(
    unit: Unit,
    services: list[ServiceType],
    own: dict[int, ServiceInterval],
    last_done: dict[int, datetime.date],
    first_in: datetime.datetime | None,
) -> list[DueService]:
    # The same choices as workshop.selectors.service_intervals / unit_due_dates (tests hold them equal).
    model = unit.unit_model
    weekly = float(unit.hours_per_week) if unit.hours_per_week else None
    start = unit.purchased_on or timezone.localdate(first_in or unit.created_at)
    rows = []
    for service in services:
        if service.scope == ServiceType.Scope.AIR_SPRING and not model.is_air:
            continue
        if service.scope == ServiceType.Scope.LOWERS and model.kind != model.Kind.FORK:
            continue
        interval = own.get(service.pk)
        hours = interval.interval_hours if interval else service.default_interval_hours
        months = interval.interval_months if interval else service.default_interval_months
        if interval and hours is None and months is None:
            hours, months = service.default_interval_hours, service.default_interval_months
        if hours is None and months is None:
            continue
        if hours is not None and months is None and not weekly:
            continue
        last = last_done.get(service.pk)
        counted_from = last or start
        rows.append(
            DueService(
                unit=unit,
                service_type=service,
                last_done_on=last,
                counted_from=counted_from,
                interval_hours=hours,
                interval_months=months,
                next_due_on=schedule.next_due_on(
                    last_service_on=counted_from,
                    interval_hours=hours,
                    interval_months=months,
                    hours_per_week=weekly,
                ),
            )
        )
    return rows


def due_refresh_all(*, units: QuerySet[Unit] | None = None, batch: int = BATCH) -> int:
    """Recompute the due table for ``units`` (all by default), a batch at a time; returns rows written."""
    units = (units if units is not None else Unit.objects.all()).select_related("unit_model").order_by("pk")
    services = list(ServiceType.objects.filter(active=True).order_by("display_order", "name"))
    written = 0
    last_pk = 0
    while True:
        chunk = list(units.filter(pk__gt=last_pk)[:batch])
        if not chunk:
            return written
        last_pk = chunk[-1].pk
        ids = [unit.pk for unit in chunk]
        own = _intervals_by_model(unit.unit_model_id for unit in chunk)
        last_done: dict[int, dict[int, datetime.date]] = defaultdict(dict)
        for row in (
            ServiceRecord.objects.filter(unit_id__in=ids)
            .values("unit_id", "service_type_id")
            .annotate(last=Max("done_on"))
            .order_by()
        ):
            last_done[row["unit_id"]][row["service_type_id"]] = row["last"]
        first_in = dict(
            WorkOrder.objects.filter(unit_id__in=ids)
            .values("unit_id")
            .annotate(first=Min("checked_in_at"))
            .values_list("unit_id", "first")
            .order_by()
        )
        rows = []
        for unit in chunk:
            rows += _rows_for(
                unit, services, own.get(unit.unit_model_id, {}), last_done[unit.pk], first_in.get(unit.pk)
            )
        with transaction.atomic():
            DueService.objects.filter(unit_id__in=ids).delete()
            DueService.objects.bulk_create(rows)
        written += len(rows)


def due_refresh(*, unit: Unit) -> int:
    """Recompute one unit's due dates: called by the services that change its history or its rider's week."""
    return due_refresh_all(units=Unit.objects.filter(pk=unit.pk))


def due_refresh_for_intervals(*, unit_model_id: int | None = None) -> int:
    """Recompute the due dates an interval change moves: one spec sheet's units, or every unit when a
    service type's defaults, scope or active flag changed. Called by the admin that edits them."""
    units = Unit.objects.all() if unit_model_id is None else Unit.objects.filter(unit_model_id=unit_model_id)
    return due_refresh_all(units=units)


# --- Reminders ----------------------------------------------------------------------------------
#
# One reminder per unit, service type and due date, to customers who agreed and have an email.
# Each is claimed before it is sent: a Reminder row inserted in its own transaction, the unique
# constraint (unit, service type, due date) refusing a second claim. A send that fails with an
# error gives its claim back (the row is deleted), so the next run tries again. A claim left behind
# by a process that died between claiming and sending stays "claimed" and is taken over by a later
# run once it is older than CLAIM_STALE_AFTER, with a conditional update on its claimed_at: only one
# run wins that too. (If a process died after the mail server took the message but before marking
# it sent, that one reminder is sent again: the price of never losing one.)

CLAIM_STALE_AFTER = datetime.timedelta(minutes=15)
UNSUBSCRIBE_SALT = "shopdesk.owner.unsubscribe"


class ReminderRefused(Exception):
    """A reminder that may not go: no consent, no email, or already sent; the message says why."""


def wording_save(*, subject: str, body: str) -> MessageWording:
    """Save the reminder's wording (one row); the form has checked its placeholders."""
    wording_check(subject)
    wording_check(body)
    with transaction.atomic():
        wording = MessageWording.objects.select_for_update().order_by("pk").first() or MessageWording()
        wording.subject, wording.body = subject, body
        wording.full_clean()
        wording.save()
    return wording


def unsubscribe_token(*, customer_id: int) -> str:
    return signing.dumps({"customer": customer_id}, salt=UNSUBSCRIBE_SALT, compress=True)


def unsubscribe_customer_id(token: str) -> int:
    """The customer a token was made for. Raises ``signing.BadSignature`` (forged) or
    ``signing.SignatureExpired`` (older than SHOP_UNSUBSCRIBE_MAX_AGE_DAYS)."""
    max_age = datetime.timedelta(days=settings.SHOP_UNSUBSCRIBE_MAX_AGE_DAYS)
    value = signing.loads(token, salt=UNSUBSCRIBE_SALT, max_age=max_age)
    if not isinstance(value, dict) or not isinstance(value.get("customer"), int):
        raise signing.BadSignature("Not an unsubscribe token.")
    return value["customer"]


def reminder_message(*, due: DueService, wording_text: tuple[str, str] | None = None) -> EmailMessage:
    """The email for one due service, in the owner's wording (or the defaults)."""
    from shopdesk.owner.selectors import wording_current

    if wording_text is None:
        current = wording_current()
        wording_text = (current.subject, current.body)
    subject, body = wording_text
    customer = due.unit.customer
    url = settings.SHOP_BASE_URL + reverse(
        "owner:unsubscribe", kwargs={"token": unsubscribe_token(customer_id=customer.pk)}
    )
    values = {
        "customer": customer.name,
        "unit": str(due.unit),
        "service": due.service_type.name,
        "due_date": date_format(due.next_due_on, "j F Y"),
        "shop": settings.SHOP_NAME,
        "unsubscribe_url": url,
    }
    message = EmailMessage(
        subject=" ".join(wording_fill(subject, values).split()),
        body=wording_fill(body, values),
        to=[customer.email],
        headers={"List-Unsubscribe": f"<{url}>"},
    )
    # The unit's due dates as a calendar file, for the customer to import.
    from shopdesk.owner.calendar import unit_calendar_render

    rows = (
        DueService.objects.filter(unit_id=due.unit_id).select_related("service_type").order_by("next_due_on")
    )
    filename, _, content = unit_calendar_render(unit=due.unit, rows=rows)
    message.attach(filename, content.decode(), "text/calendar")
    return message


def reminder_candidates(*, today: datetime.date | None = None, soon_days: int | None = None):  # type: ignore[no-untyped-def]
    """Due services that should be reminded: due within ``soon_days`` or overdue, the customer agreed
    and has an email, and no reminder was sent for this due date. In due-date order."""
    today = today or timezone.localdate()
    soon_days = settings.SHOP_REMINDER_SOON_DAYS if soon_days is None else soon_days
    sent = Reminder.objects.filter(
        unit_id=OuterRef("unit_id"),
        service_type_id=OuterRef("service_type_id"),
        due_on=OuterRef("next_due_on"),
        state=Reminder.State.SENT,
    )
    return (
        DueService.objects.filter(
            next_due_on__lte=today + datetime.timedelta(days=soon_days),
            unit__customer__reminder_consent=True,
        )
        .exclude(unit__customer__email="")
        .filter(~Exists(sent))
        .select_related("unit__customer", "unit__unit_model", "service_type")
        .order_by("next_due_on", "id")
    )


def _claim(due: DueService, *, now: datetime.datetime) -> Reminder | None:
    """Claim the reminder of ``due``; None when another run holds it or it was sent."""
    try:
        with transaction.atomic():
            return Reminder.objects.create(
                unit_id=due.unit_id,
                service_type_id=due.service_type_id,
                due_on=due.next_due_on,
                email=due.unit.customer.email,
                state=Reminder.State.CLAIMED,
                claimed_at=now,
            )
    except IntegrityError:
        pass  # the unique constraint: someone claimed it first
    taken = Reminder.objects.filter(
        unit_id=due.unit_id,
        service_type_id=due.service_type_id,
        due_on=due.next_due_on,
        state=Reminder.State.CLAIMED,
        claimed_at__lt=now - CLAIM_STALE_AFTER,
    ).update(claimed_at=now, email=due.unit.customer.email)
    if taken != 1:
        return None
    return Reminder.objects.get(
        unit_id=due.unit_id, service_type_id=due.service_type_id, due_on=due.next_due_on
    )


def reminder_send(
    *,
    due: DueService,
    by: AbstractBaseUser | None = None,
    connection: Any = None,
    wording_text: tuple[str, str] | None = None,
    now: datetime.datetime | None = None,
) -> Reminder | None:
    """Send the reminder of one due service once. Returns the sent Reminder, or None when another run
    holds the claim. Raises :class:`ReminderRefused` when it may not go, and lets the mail backend's
    error through after giving the claim back."""
    customer = due.unit.customer
    if not customer.reminder_consent:
        raise ReminderRefused(f"{customer.name} has not agreed to reminders.")
    if not customer.email:
        raise ReminderRefused(f"{customer.name} has no email address.")
    now = now or timezone.now()
    message = reminder_message(due=due, wording_text=wording_text)
    claim = _claim(due, now=now)
    if claim is None:
        sent = Reminder.objects.filter(
            unit_id=due.unit_id, service_type_id=due.service_type_id, due_on=due.next_due_on
        ).first()
        if sent is not None and sent.state == Reminder.State.SENT:
            raise ReminderRefused(
                f"A reminder for this due date was already sent on {date_format(timezone.localtime(sent.sent_at), 'j M Y')}."
            )
        return None
    message.connection = connection
    try:
        message.send()
    except Exception:
        # The mail did not go: give the claim back so that the next run sends it.
        Reminder.objects.filter(
            pk=claim.pk, state=Reminder.State.CLAIMED, claimed_at=claim.claimed_at
        ).delete()
        raise
    Reminder.objects.filter(pk=claim.pk, claimed_at=claim.claimed_at).update(
        state=Reminder.State.SENT, sent_at=now, sent_by=by
    )
    claim.refresh_from_db()
    return claim


@dataclass
class ReminderRun:
    sent: list[Reminder]
    skipped: int  # held or sent by another run at the same time, or consent withdrawn meanwhile
    would_send: list[DueService]  # a dry run's list


def reminders_send(
    *,
    dry_run: bool = False,
    today: datetime.date | None = None,
    soon_days: int | None = None,
    connection: Any = None,
) -> ReminderRun:
    """Send every reminder that is due (``manage.py send_service_reminders``); a dry run sends nothing
    and claims nothing. A mail error stops the run; what was sent stays recorded, the rest goes next run."""
    from shopdesk.owner.selectors import wording_current

    candidates = reminder_candidates(today=today, soon_days=soon_days)
    if dry_run:
        return ReminderRun(sent=[], skipped=0, would_send=list(candidates))
    current = wording_current()
    run = ReminderRun(sent=[], skipped=0, would_send=[])
    last_pk = 0
    while True:
        # In batches by id, so that a long run neither holds a cursor open nor rereads what it sent.
        batch = list(candidates.filter(pk__gt=last_pk).order_by("pk")[:BATCH])
        if not batch:
            return run
        last_pk = batch[-1].pk
        for due in batch:
            try:
                reminder = reminder_send(
                    due=due, connection=connection, wording_text=(current.subject, current.body)
                )
            except ReminderRefused:
                reminder = None  # consent withdrawn or sent by another run since the list was read
            if reminder is None:
                run.skipped += 1
            else:
                run.sent.append(reminder)
