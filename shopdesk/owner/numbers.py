"""The shop's numbers, each table one aggregate query in SQL (selectors for ``/owner/numbers/``).

A job counts as completed when it became *ready for pickup* (the moment in its timeline, a
``WorkOrderEvent`` to that status) and was not cancelled afterwards. Turnaround runs from check-in
to that moment. Revenue is the services' quoted prices before tax, the month being the month the
job was completed; parts and oil are what the stock ledger says was used on jobs, less returns.
"""

from __future__ import annotations

import datetime
from dataclasses import dataclass
from decimal import Decimal

from django.db.models import (
    Avg,
    Count,
    DecimalField,
    DurationField,
    ExpressionWrapper,
    F,
    FloatField,
    Max,
    OuterRef,
    Q,
    Subquery,
    Sum,
    Value,
)
from django.db.models.functions import Cast, Coalesce, TruncMonth, TruncWeek
from django.utils import timezone

from shopdesk.stock.models import StockMovement
from shopdesk.workshop.models import LabourEntry, RequestedService, Status, WorkOrderEvent

MONEY = DecimalField(max_digits=14, decimal_places=2)


@dataclass(frozen=True)
class Period:
    start: datetime.datetime
    end: datetime.datetime

    @classmethod
    def last_months(cls, months: int, *, now: datetime.datetime | None = None) -> Period:
        now = now or timezone.now()
        first = timezone.localdate(now).replace(day=1)
        year, month = divmod(first.year * 12 + first.month - 1 - (months - 1), 12)
        start = datetime.datetime.combine(datetime.date(year, month + 1, 1), datetime.time())
        return cls(start=timezone.make_aware(start), end=now)


def _ready_events(period: Period):  # type: ignore[no-untyped-def]
    return WorkOrderEvent.objects.filter(
        kind=WorkOrderEvent.Kind.STATUS,
        to_status=Status.READY_FOR_PICKUP,
        at__gte=period.start,
        at__lte=period.end,
    ).exclude(work_order__status=Status.CANCELLED)


def _ready_at():  # type: ignore[no-untyped-def]
    """The first moment a job became ready for pickup, as a subquery on the job."""
    return Subquery(
        WorkOrderEvent.objects.filter(
            work_order=OuterRef("work_order_id"),
            kind=WorkOrderEvent.Kind.STATUS,
            to_status=Status.READY_FOR_PICKUP,
        )
        .order_by("at")
        .values("at")[:1]
    )


def jobs_per_week(period: Period) -> list[dict]:
    """Per week (Monday): jobs completed, average and slowest turnaround (check-in to ready)."""
    turnaround = ExpressionWrapper(F("at") - F("work_order__checked_in_at"), output_field=DurationField())
    rows = (
        _ready_events(period)
        .annotate(week=TruncWeek("at"), turnaround=turnaround)
        .values("week")
        .annotate(
            jobs=Count("work_order_id", distinct=True), average=Avg("turnaround"), slowest=Max("turnaround")
        )
        .order_by("week")
    )
    return [
        {
            "week": timezone.localdate(row["week"])
            if isinstance(row["week"], datetime.datetime)
            else row["week"],
            "jobs": row["jobs"],
            "average_days": _days(row["average"]),
            "slowest_days": _days(row["slowest"]),
        }
        for row in rows
    ]


def _days(value: datetime.timedelta | float | int | None) -> float | None:
    if value is None:
        return None
    if not isinstance(value, datetime.timedelta):
        value = datetime.timedelta(microseconds=float(value))  # SQLite averages durations as microseconds
    return round(value.total_seconds() / 86400, 1)


def turnaround_overall(period: Period) -> dict:
    turnaround = ExpressionWrapper(F("at") - F("work_order__checked_in_at"), output_field=DurationField())
    row = (
        _ready_events(period)
        .annotate(turnaround=turnaround)
        .aggregate(
            jobs=Count("work_order_id", distinct=True), average=Avg("turnaround"), slowest=Max("turnaround")
        )
    )
    return {"jobs": row["jobs"], "average_days": _days(row["average"]), "slowest_days": _days(row["slowest"])}


def _completed_lines(period: Period):  # type: ignore[no-untyped-def]
    return (
        RequestedService.objects.exclude(work_order__status=Status.CANCELLED)
        .annotate(ready_at=_ready_at())
        .filter(ready_at__gte=period.start, ready_at__lte=period.end)
    )


def bench_minutes_by_service(period: Period) -> list[dict]:
    """Per service type: jobs, minutes quoted, and bench minutes logged. A job's logged minutes
    are shared among its services in proportion to their quoted minutes."""
    quoted_on_job = (
        RequestedService.objects.filter(work_order=OuterRef("work_order_id"))
        .order_by()
        .values("work_order")
        .annotate(total=Sum("labour_minutes"))
        .values("total")
    )
    logged_on_job = (
        LabourEntry.objects.filter(work_order=OuterRef("work_order_id"), voided_at__isnull=True)
        .order_by()
        .values("work_order")
        .annotate(total=Sum("minutes"))
        .values("total")
    )
    share = Cast(F("labour_minutes"), FloatField()) / Cast(F("job_quoted"), FloatField())
    rows = (
        _completed_lines(period)
        .annotate(
            job_quoted=Subquery(quoted_on_job),
            job_logged=Coalesce(Subquery(logged_on_job), Value(0)),
        )
        .filter(job_quoted__gt=0)
        .values("service_type__name", "service_type__display_order")
        .annotate(
            jobs=Count("work_order_id", distinct=True),
            quoted=Sum("labour_minutes"),
            logged=Sum(Cast(F("job_logged"), FloatField()) * share),
        )
        .order_by("service_type__display_order", "service_type__name")
    )
    return [
        {
            "service": row["service_type__name"],
            "jobs": row["jobs"],
            "quoted_minutes": row["quoted"],
            "bench_minutes": round(row["logged"] or 0),
            "over_quote_percent": round(100 * ((row["logged"] or 0) - row["quoted"]) / row["quoted"])
            if row["quoted"]
            else None,
        }
        for row in rows
    ]


def revenue_by_service(period: Period) -> list[dict]:
    rows = (
        _completed_lines(period)
        .values("service_type__name", "service_type__display_order")
        .annotate(jobs=Count("work_order_id", distinct=True), revenue=Sum("price"))
        .order_by("service_type__display_order", "service_type__name")
    )
    return [
        {
            "service": row["service_type__name"],
            "jobs": row["jobs"],
            "revenue": Decimal(row["revenue"]).quantize(Decimal("0.01")),
        }
        for row in rows
    ]


def every_week(period: Period, rows: list[dict]) -> list[tuple[datetime.date, int]]:
    """Jobs completed in each week of the period, Monday to Monday, a week with none as 0: a chart
    of the weeks that had jobs would put a quiet month's weeks side by side with no gap."""
    counts = {row["week"]: row["jobs"] for row in rows}
    monday = timezone.localdate(period.start)
    monday -= datetime.timedelta(days=monday.weekday())
    last = timezone.localdate(period.end)
    weeks = []
    while monday <= last:
        weeks.append((monday, counts.get(monday, 0)))
        monday += datetime.timedelta(days=7)
    return weeks


def every_month(period: Period, rows: list[dict]) -> list[tuple[datetime.date, Decimal]]:
    """Revenue in each month of the period, a month with none as 0.00."""
    revenue = {row["month"]: row["revenue"] for row in rows}
    month = timezone.localdate(period.start).replace(day=1)
    last = timezone.localdate(period.end)
    months = []
    while month <= last:
        months.append((month, revenue.get(month, Decimal("0.00"))))
        month = (month + datetime.timedelta(days=32)).replace(day=1)
    return months


def revenue_by_month(period: Period) -> list[dict]:
    rows = (
        _completed_lines(period)
        .annotate(month=TruncMonth("ready_at"))
        .values("month")
        .annotate(jobs=Count("work_order_id", distinct=True), revenue=Sum("price"))
        .order_by("month")
    )
    return [
        {
            "month": timezone.localdate(row["month"])
            if isinstance(row["month"], datetime.datetime)
            else row["month"],
            "jobs": row["jobs"],
            "revenue": Decimal(row["revenue"]).quantize(Decimal("0.01")),
        }
        for row in rows
    ]


def parts_used(period: Period) -> list[dict]:
    """Per part: what was used on jobs in the period, less what came back, and its value at price."""
    rows = (
        StockMovement.objects.filter(
            kind__in=(StockMovement.Kind.USED, StockMovement.Kind.RETURNED),
            at__gte=period.start,
            at__lte=period.end,
        )
        .values("part__part_number", "part__name", "part__kind", "part__unit_of_measure", "part__price")
        .annotate(
            used=Sum("quantity"),
            jobs=Count("work_order_id", distinct=True, filter=Q(kind=StockMovement.Kind.USED)),
        )
        .order_by("part__kind", "part__part_number")
    )
    result = []
    for row in rows:
        used = -Decimal(row["used"])
        if used == 0:
            continue
        result.append(
            {
                "part_number": row["part__part_number"],
                "name": row["part__name"],
                "kind": row["part__kind"],
                "quantity": used.quantize(Decimal("0.01")),
                "unit": row["part__unit_of_measure"],
                "jobs": row["jobs"],
                "value": (used * Decimal(row["part__price"])).quantize(Decimal("0.01")),
            }
        )
    return result
