"""Keeping the due table right, in bulk: the calc rules applied once per unit and service."""

from __future__ import annotations

import datetime
from collections import defaultdict
from collections.abc import Iterable

from django.db import transaction
from django.db.models import Max, Min, QuerySet
from django.utils import timezone

from shopdesk.calc import schedule
from shopdesk.customers.models import Unit
from shopdesk.owner.models import DueService
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
