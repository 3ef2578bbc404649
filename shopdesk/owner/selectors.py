"""The owner's reads: what is due, with its status worked out in the query."""

from __future__ import annotations

import datetime

from django.db.models import Case, CharField, Count, Q, QuerySet, Value, When
from django.utils import timezone

from shopdesk.calc.schedule import DueStatus
from shopdesk.owner.models import DueService


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
    """Overdue and due-soon totals in one aggregate query."""
    today = today or timezone.localdate()
    soon = today + datetime.timedelta(days=soon_days)
    return DueService.objects.aggregate(
        overdue=Count("id", filter=Q(next_due_on__lt=today)),
        due_soon=Count("id", filter=Q(next_due_on__gte=today, next_due_on__lte=soon)),
    )
