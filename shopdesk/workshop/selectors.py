"""Read-side queries for the workshop's pages."""

from __future__ import annotations

import datetime
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any
from urllib.parse import quote, urlsplit

from django.db.models import Case, Count, F, Max, QuerySet, Value, When, Window
from django.db.models.functions import RowNumber
from django.urls import Resolver404, resolve, reverse
from django.utils import timezone

from shopdesk.calc import Q_, CalcInputError, schedule
from shopdesk.calc import shims as shim_calc
from shopdesk.calc.schedule import DueStatus
from shopdesk.customers.models import Unit
from shopdesk.specs.geometry import shim_stack_for
from shopdesk.specs.models import ServiceType, StackFields, Valve
from shopdesk.workshop import flow
from shopdesk.workshop.converters import JOB_NUMBER
from shopdesk.workshop.models import OPEN_STATUSES, ServiceRecord, ShimStackRecord, Status, WorkOrder

BOARD_LIMIT_PER_STATUS = 100


@dataclass(frozen=True)
class BoardCard:
    """One job on the status board: only what the card shows, worked out once here."""

    number: str
    address: str  # the job page
    move_address: str
    customer_name: str
    unit_name: str
    time_in: str  # "3 days", "5 hours"
    promised: str  # "12 Dec", or "—"
    is_late: bool
    technician: str  # who has it, or ""


@dataclass
class BoardColumn:
    status: Status
    jobs: list[BoardCard] = field(default_factory=list)
    total: int = 0
    moves: list[flow.Move] = field(default_factory=list)  # the board's buttons on each job here


def open_work_orders() -> QuerySet[WorkOrder]:
    return WorkOrder.objects.filter(status__in=OPEN_STATUSES).select_related(
        "customer", "unit__unit_model", "assigned_to"
    )


def time_in(since: datetime.datetime, now: datetime.datetime) -> str:
    """How long a job has been in the shop, as a board shows it: minutes, then hours, then days."""
    minutes = max(0, int((now - since).total_seconds() // 60))
    if minutes < 60:
        return f"{minutes} minute{'' if minutes == 1 else 's'}"
    hours = minutes // 60
    if hours < 48:
        return f"{hours} hour{'' if hours == 1 else 's'}"
    return f"{hours // 24} days"


def _person(first: str | None, last: str | None, username: str | None) -> str:
    """A user's full name as ``get_full_name`` gives it, else the user name; "" for nobody."""
    return "" if username is None else f"{first} {last}".strip() or username


def _job_addresses(url_name: str) -> Callable[[str], str]:
    """reverse() once and fill in each job's number: reverse() for every card was a fifth of the
    board's time. The marker is a job number no job has (the ``<job:number>`` converter takes
    only job numbers), found once in the reversed address."""
    marker = "0000-0000000"
    before, _, after = reverse(url_name, kwargs={"number": marker}).partition(marker)
    return lambda number: before + quote(number, safe="") + after


def status_board(*, may: Callable[[str], bool], today: datetime.date | None = None) -> list[BoardColumn]:
    """Open jobs grouped by status, oldest promise first; each column shows at most
    ``BOARD_LIMIT_PER_STATUS`` jobs and counts the rest. Two queries whatever the shop's size.
    Each column carries the moves out of its status that ``may`` (a user's ``has_perm``) allows;
    cancelling is done from the job page, not the board."""
    now = timezone.localtime()
    today = today or now.date()
    columns = {
        status: BoardColumn(
            status=status,
            moves=[
                move
                for move in flow.moves_from(status)
                if move.target != Status.CANCELLED and any(may(name) for name in move.permissions)
            ],
        )
        for status in OPEN_STATUSES
    }
    counts = WorkOrder.objects.filter(status__in=OPEN_STATUSES).values_list("status").order_by()
    for status, total in counts.annotate(total=Count("id")):
        columns[Status(status)].total = total
    ranked = (
        WorkOrder.objects.filter(status__in=OPEN_STATUSES)
        .annotate(
            rank=Window(
                RowNumber(),
                partition_by=[F("status")],
                order_by=[F("promised_on").asc(nulls_last=True), F("checked_in_at").asc()],
            )
        )
        .filter(rank__lte=BOARD_LIMIT_PER_STATUS)
        .order_by(F("promised_on").asc(nulls_last=True), "checked_in_at")
        .values_list(
            "number",
            "status",
            "promised_on",
            "checked_in_at",
            "customer__name",
            "unit__unit_model__maker",
            "unit__unit_model__name",
            "assigned_to__first_name",
            "assigned_to__last_name",
            "assigned_to__username",
        )
    )
    job_address, move_address = _job_addresses("workshop:work-order"), _job_addresses("workshop:move")
    for number, status, promised_on, checked_in_at, customer, maker, model, first, last, username in ranked:
        columns[Status(status)].jobs.append(
            BoardCard(
                number=number,
                address=job_address(number),
                move_address=move_address(number),
                customer_name=customer,
                unit_name=f"{maker} {model}",
                time_in=time_in(checked_in_at, now),
                promised=f"{promised_on.day} {promised_on:%b}" if promised_on else "—",
                is_late=promised_on is not None and promised_on < today,
                technician=_person(first, last, username),
            )
        )
    return list(columns.values())


def work_order_for_page(number: str) -> QuerySet[WorkOrder]:
    return WorkOrder.objects.filter(number=number).select_related(
        "customer", "unit__unit_model", "checked_in_by", "assigned_to", "arrival"
    )


@dataclass(frozen=True)
class DueDate:
    service_type: ServiceType
    last_done_on: datetime.date | None
    counted_from: datetime.date
    interval_hours: int | None
    interval_months: int | None
    next_due_on: datetime.date
    status: DueStatus


def service_intervals(unit: Unit) -> list[tuple[ServiceType, int | None, int | None]]:
    """The services that fall due on this unit, each with the interval that applies.

    The spec sheet's own interval wins; otherwise the service type's default. A coil unit has no
    air-spring service and a rear shock no lower-leg service; a service with no interval at all (a revalve) never falls due.
    """
    own = {
        interval.service_type_id: interval
        for interval in unit.unit_model.intervals.select_related("service_type")
    }
    result = []
    for service in ServiceType.objects.filter(active=True).order_by("display_order", "name"):
        if service.scope == ServiceType.Scope.AIR_SPRING and not unit.unit_model.is_air:
            continue
        if service.scope == ServiceType.Scope.LOWERS and unit.unit_model.kind != unit.unit_model.Kind.FORK:
            continue  # a rear shock has no lower legs
        interval = own.get(service.pk)
        hours = interval.interval_hours if interval else service.default_interval_hours
        months = interval.interval_months if interval else service.default_interval_months
        if interval and hours is None and months is None:
            hours, months = service.default_interval_hours, service.default_interval_months
        if hours is None and months is None:
            continue
        result.append((service, hours, months))
    return result


def unit_start_date(unit: Unit) -> datetime.date:
    """Where due dates count from when the shop has never serviced the unit."""
    if unit.purchased_on:
        return unit.purchased_on
    first = unit.work_orders.order_by("checked_in_at").values_list("checked_in_at", flat=True).first()
    return timezone.localdate(first or unit.created_at)


def unit_due_dates(unit: Unit, *, today: datetime.date | None = None, soon_days: int = 30) -> list[DueDate]:
    """Per service type, the last service, the next due date and its status (shopdesk.calc.schedule)."""
    today = today or timezone.localdate()
    last_done = {
        row["service_type"]: row["last"]
        for row in ServiceRecord.objects.filter(unit=unit)
        .values("service_type")
        .annotate(last=Max("done_on"))
    }
    start = None
    due_dates = []
    for service, hours, months in service_intervals(unit):
        last = last_done.get(service.pk)
        if last is None and start is None:
            start = unit_start_date(unit)
        counted_from = last or start
        weekly = float(unit.hours_per_week) if unit.hours_per_week else None
        if hours is not None and months is None and not weekly:
            continue  # an hours-only interval means nothing for a unit that is not ridden
        due = schedule.next_due_on(
            last_service_on=counted_from, interval_hours=hours, interval_months=months, hours_per_week=weekly
        )
        due_dates.append(
            DueDate(
                service_type=service,
                last_done_on=last,
                counted_from=counted_from,
                interval_hours=hours,
                interval_months=months,
                next_due_on=due,
                status=schedule.due_status(due_on=due, today=today, soon_days=soon_days),
            )
        )
    return due_dates


def work_order_from_scan(text: str) -> WorkOrder | None:
    """The job a scanner typed: its number ("2026-0042") or its address from a job card's QR code.

    Only the address's path counts (a card printed under another host name still opens the job
    here); anything else is not a scan and the search goes on as typed.
    """
    text = text.strip()
    number = None
    if JOB_NUMBER.fullmatch(text):  # ASCII digits only, as the <job:number> converter
        number = text
    elif "/jobs/" in text and len(text) < 300:
        path = urlsplit(text if "://" in text or text.startswith("/") else "//" + text).path
        try:
            match = resolve(path)
        except Resolver404:
            return None
        if match.view_name == "workshop:work-order":
            number = match.kwargs["number"]
    if number is None:
        return None
    return WorkOrder.objects.filter(number=number).first()


BENCH_STATUSES = (Status.CHECKED_IN, Status.WAITING_FOR_PARTS, Status.ON_THE_BENCH, Status.FINAL_CHECK)


@dataclass(frozen=True)
class QueueRow:
    """One job in the bench queue: only what its row shows, worked out once here."""

    number: str
    address: str  # the job page
    take_address: str
    customer_name: str
    unit_name: str
    status: str
    promised: str  # "Sat 12 Dec", or "—"
    is_late: bool
    is_mine: bool
    technician: str  # who has it, or ""


def bench_queue(*, user: Any, today: datetime.date | None = None, limit: int = 200) -> list[QueueRow]:
    """Jobs waiting and on the bench: the user's own first, then by promised date (none last), oldest in.
    One query; like the status board, the rows are plain data."""
    today = today or timezone.localdate()
    mine = Case(When(assigned_to=user, then=Value(0)), default=Value(1))
    jobs = (
        WorkOrder.objects.filter(status__in=BENCH_STATUSES)
        .annotate(mine_first=mine)
        .order_by("mine_first", F("promised_on").asc(nulls_last=True), "checked_in_at")
        .values_list(
            "number",
            "status",
            "promised_on",
            "customer__name",
            "unit__unit_model__maker",
            "unit__unit_model__name",
            "assigned_to_id",
            "assigned_to__first_name",
            "assigned_to__last_name",
            "assigned_to__username",
        )[:limit]
    )
    job_address, take_address = _job_addresses("workshop:work-order"), _job_addresses("workshop:take")
    return [
        QueueRow(
            number=number,
            address=job_address(number),
            take_address=take_address(number),
            customer_name=customer,
            unit_name=f"{maker} {model}",
            status=Status(status).label,
            promised=f"{promised_on:%a} {promised_on.day} {promised_on:%b}" if promised_on else "—",
            is_late=promised_on is not None and promised_on < today,
            is_mine=assigned_to_id is not None and assigned_to_id == getattr(user, "pk", None),
            technician=_person(first, last, username),
        )
        for number, status, promised_on, customer, maker, model, assigned_to_id, first, last, username in jobs
    ]


def unit_service_history(unit: Unit, *, limit: int = 100) -> list[ServiceRecord]:
    return list(
        ServiceRecord.objects.filter(unit=unit)
        .select_related("service_type", "as_part_of", "work_order")
        .order_by("-done_on", "id")[:limit]
    )


# --- Revalves -----------------------------------------------------------------------------------

COMPARE_LIFT_MM = 0.25  # compare stacks at the load that lifts the stack before this far (common practice)


def stack_comparison(before: StackFields, after: StackFields) -> tuple[float, tuple[str, ...]] | None:
    """The load the two stacks are compared at (N) and the comparison in words; None if one cannot be modelled."""
    try:
        old, new = shim_stack_for(before), shim_stack_for(after)
        reference = old.load_for_lift(Q_(COMPARE_LIFT_MM, "mm"))
        return float(reference.magnitude), shim_calc.compare(old, new, reference_load=reference).lines
    except CalcInputError:
        return None


def stack_summaries(work_order: WorkOrder) -> list[dict[str, Any]]:
    """For the job page: each valve with its live stacks in shorthand and the comparison in words."""
    records = [r for r in ShimStackRecord.objects.filter(work_order=work_order) if not r.is_void]
    rows = []
    for valve, label in Valve.choices:
        live = {r.stage: r for r in records if r.valve == valve}
        words: tuple[str, ...] = ()
        if len(live) == 2:
            compared = stack_comparison(live["before"], live["after"])
            words = compared[1][:1] if compared else ()
        rows.append({"valve": valve, "label": label, "records": live, "words": words})
    return rows


def unit_revalves(unit: Unit) -> list[dict[str, Any]]:
    """Every revalve in a unit's history, newest first: per job and valve, the stacks and the change."""
    records = (
        ShimStackRecord.objects.filter(work_order__unit=unit, voided_at__isnull=True)
        .exclude(work_order__status=Status.CANCELLED)
        .select_related("work_order")
        .order_by("-work_order__checked_in_at", "valve", "stage")
    )
    grouped: dict[tuple[int, str], dict[str, Any]] = {}
    for record in records:
        row = grouped.setdefault(
            (record.work_order_id, record.valve),
            {"work_order": record.work_order, "valve": record.get_valve_display(), "stages": {}},
        )
        row["stages"][record.stage] = record
    rows = []
    for row in grouped.values():
        before, after = row["stages"].get("before"), row["stages"].get("after")
        compared = stack_comparison(before, after) if before and after else None
        rows.append({**row, "before": before, "after": after, "words": compared[1] if compared else ()})
    return rows
