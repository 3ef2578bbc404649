"""The workshop's rules: checking a unit in, numbering jobs, and moving a job along its flow.

Each rule is one function, called by views, admin actions and commands alike.
"""

from __future__ import annotations

import datetime
from collections.abc import Iterable, Mapping
from decimal import Decimal
from typing import Any

from django.conf import settings
from django.contrib.auth.models import AbstractBaseUser
from django.core.exceptions import PermissionDenied, ValidationError
from django.db import transaction
from django.utils import timezone

from shopdesk.customers.models import Unit
from shopdesk.owner.services import due_refresh
from shopdesk.shop.money import Total, total_with_tax
from shopdesk.specs.models import ServiceType
from shopdesk.workshop import flow
from shopdesk.workshop.models import (
    ArrivalSettings,
    NumberSequence,
    RequestedService,
    ServiceRecord,
    Status,
    WorkOrder,
    WorkOrderEvent,
)
from shopdesk.workshop.services.bench import final_checks_create, missing_before_ready, service_history_write


class MoveRefused(Exception):
    """A status change the flow or the job's state does not allow; the message says why."""


def quote(*, service_types: Iterable[ServiceType], tax_rate: Decimal | None = None) -> Total:
    """The price of the services asked for, with tax, rounded once."""
    rate = settings.SHOP_TAX_RATE if tax_rate is None else tax_rate
    return total_with_tax((service.price for service in service_types), tax_rate=rate)


def work_order_next_number(*, year: int) -> tuple[int, str]:
    """Take the next number of ``year``. Must run inside the check-in transaction.

    The sequence row is locked (``select_for_update`` on PostgreSQL; SQLite's immediate
    transactions hold the write lock), so two desks never get the same number, and a
    rolled-back check-in gives its number back: numbers are gap-free.
    """
    # get_or_create retries its get when another desk creates the year's row at the same moment.
    row, _ = NumberSequence.objects.select_for_update().get_or_create(year=year)
    row.last_number += 1
    row.save(update_fields=["last_number"])
    return row.last_number, f"{year}-{row.last_number:04d}"


def work_order_check_in(
    *,
    unit: Unit,
    by: AbstractBaseUser,
    service_types: Iterable[ServiceType],
    complaint: str = "",
    came_with: str = "",
    promised_on: datetime.date | None = None,
    arrival: Mapping[str, Any] | None = None,
    now: datetime.datetime | None = None,
) -> WorkOrder:
    """Check a unit in: number the job, record the services quoted and the settings on arrival."""
    services = list(service_types)
    if not services:
        raise ValidationError({"service_types": "Tick at least one service."})
    now = now or timezone.now()
    with transaction.atomic():
        year = timezone.localtime(now).year
        sequence, number = work_order_next_number(year=year)
        work_order = WorkOrder(
            number=number,
            year=year,
            sequence=sequence,
            customer_id=unit.customer_id,
            unit=unit,
            status=Status.CHECKED_IN,
            complaint=complaint.strip(),
            came_with=came_with.strip(),
            promised_on=promised_on,
            tax_rate=settings.SHOP_TAX_RATE,
            checked_in_at=now,
            checked_in_by=by,
            status_changed_at=now,
        )
        work_order.full_clean()
        work_order.save()
        settings_on_arrival = ArrivalSettings(work_order=work_order, **dict(arrival or {}))
        settings_on_arrival.full_clean(exclude=["work_order"])
        settings_on_arrival.save()
        RequestedService.objects.bulk_create(
            RequestedService(
                work_order=work_order,
                service_type=service,
                price=service.price,
                labour_minutes=service.labour_minutes,
            )
            for service in services
        )
        WorkOrderEvent.objects.create(
            work_order=work_order,
            at=now,
            by=by,
            kind=WorkOrderEvent.Kind.CHECKED_IN,
            to_status=Status.CHECKED_IN,
            message="Checked in for " + ", ".join(service.name for service in services) + ".",
        )
        final_checks_create(work_order=work_order)
    return work_order


def work_order_move(
    *,
    work_order: WorkOrder,
    target: str,
    by: AbstractBaseUser,
    note: str = "",
    now: datetime.datetime | None = None,
) -> WorkOrder:
    """Move a job to ``target`` if the flow allows it and the user may; stamp the timeline.

    Raises :class:`MoveRefused` with the reason, or ``PermissionDenied``.
    """
    now = now or timezone.now()
    with transaction.atomic():
        # Lock the job so that two clicks at once cannot both move it from the same status.
        locked = WorkOrder.objects.select_for_update().get(pk=work_order.pk)
        move = flow.find_move(locked.status, target)
        if move is None:
            target_label = Status(target).label if target in Status.values else repr(target)
            raise MoveRefused(
                f"{locked.number} is {locked.get_status_display().lower()}: "
                f"it cannot move to “{target_label.lower()}”."
            )
        if not any(by.has_perm(permission) for permission in move.permissions):
            raise PermissionDenied(f"You may not move jobs to “{move.target.label.lower()}”.")
        if move.target == Status.READY_FOR_PICKUP:
            missing = missing_before_ready(locked)
            if missing:
                raise MoveRefused("Not ready for pickup yet: " + " ".join(missing))
        previous = locked.status
        if move.target == Status.READY_FOR_PICKUP:
            # The work is done: it enters the unit's service history and drives its next due dates.
            service_history_write(work_order=locked, done_on=timezone.localdate(now))
        if move.target == Status.CANCELLED:
            ServiceRecord.objects.filter(work_order=locked).delete()
        if move.target in (Status.READY_FOR_PICKUP, Status.CANCELLED):
            due_refresh(unit=locked.unit)  # the owner's due table follows the history
        locked.status = move.target
        locked.status_changed_at = now
        locked.save(update_fields=["status", "status_changed_at"])
        WorkOrderEvent.objects.create(
            work_order=locked,
            at=now,
            by=by,
            kind=WorkOrderEvent.Kind.STATUS,
            from_status=previous,
            to_status=move.target,
            message=note.strip()[:500],
        )
    work_order.status = locked.status
    work_order.status_changed_at = locked.status_changed_at
    return work_order


def work_order_take(
    *, work_order: WorkOrder, by: AbstractBaseUser, now: datetime.datetime | None = None
) -> WorkOrder:
    """A technician takes a job: it is assigned to them and, if it was waiting, goes on the bench."""
    if not by.has_perm(flow.BENCH):
        raise PermissionDenied("Only bench technicians take jobs.")
    now = now or timezone.now()
    with transaction.atomic():
        locked = WorkOrder.objects.select_for_update().get(pk=work_order.pk)
        if not locked.is_open or locked.status == Status.READY_FOR_PICKUP:
            raise MoveRefused(
                f"{locked.number} is {locked.get_status_display().lower()}: there is nothing to take."
            )
        if locked.assigned_to_id != by.pk:
            locked.assigned_to = by
            locked.save(update_fields=["assigned_to"])
            WorkOrderEvent.objects.create(
                work_order=locked,
                at=now,
                by=by,
                kind=WorkOrderEvent.Kind.ASSIGNED,
                message=f"Taken by {by.get_full_name() or by.get_username()}.",
            )
        if locked.status == Status.CHECKED_IN:
            work_order_move(work_order=locked, target=Status.ON_THE_BENCH, by=by, now=now)
    work_order.refresh_from_db()
    return work_order
