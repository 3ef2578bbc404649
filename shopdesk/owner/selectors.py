"""The owner's reads: what is due, with its status worked out in the query, and the shop at a glance."""

from __future__ import annotations

import datetime
from dataclasses import dataclass, field

from django.db.models import Case, CharField, Count, Exists, OuterRef, Q, QuerySet, Subquery, Value, When
from django.utils import timezone

from shopdesk.calc.schedule import DueStatus
from shopdesk.customers.models import Unit
from shopdesk.owner import wording
from shopdesk.owner.models import DueService, MessageWording, Reminder
from shopdesk.shop.ids import id_from
from shopdesk.stock.models import Part
from shopdesk.stock.selectors import parts_with_on_hand
from shopdesk.workshop.models import OPEN_STATUSES, Status, WorkOrder

PAGE_SIZE = 50
LOW_STOCK_SHOWN = 8


def due_services(*, today: datetime.date | None = None, soon_days: int = 30) -> QuerySet[DueService]:
    """Every unit's due services with ``status`` as ``shopdesk.calc.schedule.due_status`` gives it."""
    today = today or timezone.localdate()
    soon = today + datetime.timedelta(days=soon_days)
    return (
        DueService.objects.select_related("unit__customer", "unit__unit_model", "service_type")
        .annotate(
            status=Case(
                When(next_due_on__lt=today, then=Value(DueStatus.OVERDUE.value)),
                When(next_due_on__lte=soon, then=Value(DueStatus.DUE_SOON.value)),
                default=Value(DueStatus.OK.value),
                output_field=CharField(),
            )
        )
        .order_by("next_due_on", "id")
    )


def due_counts(*, today: datetime.date | None = None, soon_days: int = 30) -> dict[str, int]:
    """Overdue and due-soon totals (two counting queries)."""
    today = today or timezone.localdate()
    # Two counts, each a range on the (next_due_on, id) index, rather than one pass over every row.
    return {
        "overdue": DueService.objects.filter(_window(DueStatus.OVERDUE, today, soon_days)).count(),
        "due_soon": DueService.objects.filter(_window(DueStatus.DUE_SOON, today, soon_days)).count(),
    }


@dataclass(frozen=True)
class DueFilters:
    """The dashboard's filters, already checked by ``owner.forms.DueFilterForm``."""

    service_type_id: int | None = None
    unit_model_id: int | None = None
    consent: bool | None = None  # None: everyone
    not_contacted_days: int | None = None  # no reminder sent to the customer in this many days


def _filtered(
    rows: QuerySet[DueService], filters: DueFilters, *, now: datetime.datetime
) -> QuerySet[DueService]:
    if filters.service_type_id is not None:
        rows = rows.filter(service_type_id=filters.service_type_id)
    # The unit-level filters become one "unit_id IN (…)" set, worked out once: joined row by row
    # instead, a count over 100,000 units' due rows takes seconds.
    units = Unit.objects.all()
    if filters.unit_model_id is not None:
        units = units.filter(unit_model_id=filters.unit_model_id)
    if filters.consent is not None:
        units = units.filter(customer__reminder_consent=filters.consent)
    if filters.not_contacted_days is not None:
        since = now - datetime.timedelta(days=filters.not_contacted_days)
        contacted = Reminder.objects.filter(
            unit__customer_id=OuterRef("customer_id"), state=Reminder.State.SENT, sent_at__gte=since
        )
        units = units.filter(~Exists(contacted))  # an anti-join: NOT IN (…) is slow on PostgreSQL
    if units.query.where:
        rows = rows.filter(unit_id__in=units.values("pk"))
    return rows


def _window(kind: DueStatus, today: datetime.date, soon_days: int) -> Q:
    if kind == DueStatus.OVERDUE:
        return Q(next_due_on__lt=today)
    return Q(next_due_on__gte=today, next_due_on__lte=today + datetime.timedelta(days=soon_days))


@dataclass
class DuePage:
    rows: list[DueService]
    total: int
    next_cursor: str | None  # "YYYY-MM-DD.id" of the last row shown, when more follow
    counts: dict[str, int] = field(default_factory=dict)


def cursor_parse(raw: str) -> tuple[datetime.date, int] | None:
    """A page cursor ``"2026-03-14.1234"``, or None when it is not one."""
    day, _, ident = raw.partition(".")
    number = id_from(ident)  # ASCII digits: int() took "١٢", "+5", "1_0" and any length
    try:
        return (datetime.date.fromisoformat(day), number) if number is not None else None
    except ValueError:
        return None


def due_page(
    *,
    kind: DueStatus,
    filters: DueFilters,
    after: tuple[datetime.date, int] | None = None,
    today: datetime.date | None = None,
    soon_days: int = 30,
    page_size: int = PAGE_SIZE,
) -> DuePage:
    """One page of the overdue or due-soon list, latest first, and the totals of both lists.

    Keyset pagination on the ``(next_due_on, id)`` index: a page costs the same at 100,000 units
    as at 100, whatever page it is. Four queries: the page's ids, its rows (with each row's last
    reminder sent as a subquery) and a count of each list.
    """
    now = timezone.now()
    today = today or timezone.localdate(now)
    base = _filtered(DueService.objects.all(), filters, now=now)
    rows = base.filter(_window(kind, today, soon_days))
    if after is not None:
        day, ident = after
        # (next_due_on, id) > (day, ident), written so that the first term is a range on the index:
        # with the OR alone, SQLite gathers every later row and sorts them before taking a page.
        rows = rows.filter(Q(next_due_on__gte=day) & (Q(next_due_on__gt=day) | Q(id__gt=ident)))
    last_sent = (
        Reminder.objects.filter(
            unit_id=OuterRef("unit_id"),
            service_type_id=OuterRef("service_type_id"),
            state=Reminder.State.SENT,
        )
        .order_by("-sent_at")
        .values("sent_at")[:1]
    )
    sent_for_this_date = Reminder.objects.filter(
        unit_id=OuterRef("unit_id"),
        service_type_id=OuterRef("service_type_id"),
        due_on=OuterRef("next_due_on"),
        state=Reminder.State.SENT,
    )
    # The page's ids first, on the date index alone; then those rows with what the page shows.
    # In one query, the joins and subqueries lead SQLite to sort every matching row first.
    ids = list(rows.order_by("next_due_on", "id").values_list("pk", flat=True)[: page_size + 1])
    shown = list(
        DueService.objects.filter(pk__in=ids)
        .select_related("unit__customer", "unit__unit_model", "service_type")
        .annotate(last_reminder_at=Subquery(last_sent), reminded=Exists(sent_for_this_date))
        .order_by("next_due_on", "id")
    )
    more = len(shown) > page_size
    shown = shown[:page_size]
    for row in shown:
        row.days_late = (today - row.next_due_on).days
        row.days_left = -row.days_late
    counts = {
        "overdue": base.filter(_window(DueStatus.OVERDUE, today, soon_days)).count(),
        "due_soon": base.filter(_window(DueStatus.DUE_SOON, today, soon_days)).count(),
    }
    total = counts["overdue"] if kind == DueStatus.OVERDUE else counts["due_soon"]
    cursor = f"{shown[-1].next_due_on.isoformat()}.{shown[-1].pk}" if more and shown else None
    return DuePage(rows=shown, total=total, next_cursor=cursor, counts=counts)


@dataclass
class AtAGlance:
    open_work: int
    late: int
    waiting_for_parts: int
    ready_for_pickup: int
    low_stock: list[Part]
    low_stock_total: int


def at_a_glance(*, today: datetime.date | None = None) -> AtAGlance:
    """Open work, late jobs (past their promised date), jobs waiting for parts, low stock: three queries."""
    today = today or timezone.localdate()
    jobs = WorkOrder.objects.filter(status__in=OPEN_STATUSES).aggregate(
        open_work=Count("id"),
        late=Count(
            "id", filter=Q(promised_on__lt=today) & ~Q(status=Status.READY_FOR_PICKUP)
        ),  # a unit ready for pickup is not late work
        waiting=Count("id", filter=Q(status=Status.WAITING_FOR_PARTS)),
        ready=Count("id", filter=Q(status=Status.READY_FOR_PICKUP)),
    )
    low = parts_with_on_hand().filter(active=True, low=True).order_by("part_number")
    low_shown = list(low[:LOW_STOCK_SHOWN])
    low_total = len(low_shown) if len(low_shown) < LOW_STOCK_SHOWN else low.count()
    return AtAGlance(
        open_work=jobs["open_work"],
        late=jobs["late"],
        waiting_for_parts=jobs["waiting"],
        ready_for_pickup=jobs["ready"],
        low_stock=low_shown,
        low_stock_total=low_total,
    )


@dataclass(frozen=True)
class Wording:
    subject: str
    body: str
    saved: bool  # False: the defaults


def wording_current() -> Wording:
    saved = MessageWording.objects.order_by("pk").first()
    if saved is None:
        return Wording(subject=wording.DEFAULT_SUBJECT, body=wording.DEFAULT_BODY, saved=False)
    return Wording(subject=saved.subject, body=saved.body, saved=True)


def unit_due_rows(unit: Unit) -> QuerySet[DueService]:
    """One unit's due table, soonest first (for its calendar file)."""
    return DueService.objects.filter(unit=unit).select_related("service_type").order_by("next_due_on", "id")
