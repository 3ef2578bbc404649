"""Read-side queries for the workshop's pages."""

from __future__ import annotations

import datetime
from dataclasses import dataclass, field

from django.db.models import Count, F, QuerySet, Window
from django.db.models.functions import RowNumber
from django.utils import timezone

from shopdesk.workshop import flow
from shopdesk.workshop.models import OPEN_STATUSES, Status, WorkOrder

BOARD_LIMIT_PER_STATUS = 100


@dataclass
class BoardColumn:
    status: Status
    jobs: list[WorkOrder] = field(default_factory=list)
    total: int = 0


def open_work_orders() -> QuerySet[WorkOrder]:
    return WorkOrder.objects.filter(status__in=OPEN_STATUSES).select_related(
        "customer", "unit__unit_model", "assigned_to"
    )


def status_board(*, today: datetime.date | None = None) -> list[BoardColumn]:
    """Open jobs grouped by status, oldest promise first; each column shows at most
    ``BOARD_LIMIT_PER_STATUS`` jobs and counts the rest. Two queries whatever the shop's size."""
    today = today or timezone.localdate()
    columns = {status: BoardColumn(status=status) for status in OPEN_STATUSES}
    counts = WorkOrder.objects.filter(status__in=OPEN_STATUSES).values_list("status").order_by()
    for status, total in counts.annotate(total=Count("id")):
        columns[Status(status)].total = total
    ranked = (
        open_work_orders()
        .annotate(
            rank=Window(
                RowNumber(),
                partition_by=[F("status")],
                order_by=[F("promised_on").asc(nulls_last=True), F("checked_in_at").asc()],
            )
        )
        .filter(rank__lte=BOARD_LIMIT_PER_STATUS)
        .order_by(F("promised_on").asc(nulls_last=True), "checked_in_at")
    )
    for job in ranked:
        job.is_late = job.promised_on is not None and job.promised_on < today
        job.moves = flow.moves_from(job.status)
        columns[Status(job.status)].jobs.append(job)
    return list(columns.values())


def work_order_for_page(number: str) -> QuerySet[WorkOrder]:
    return WorkOrder.objects.filter(number=number).select_related(
        "customer", "unit__unit_model", "checked_in_by", "assigned_to", "arrival"
    )
