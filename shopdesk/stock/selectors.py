"""Read-side queries of stock that pages and the bench share.

What is on hand is always summed from the ledger; nothing stores it.
"""

from __future__ import annotations

from decimal import Decimal

from django.db.models import (
    BooleanField,
    Case,
    DecimalField,
    Exists,
    F,
    OuterRef,
    Q,
    QuerySet,
    Subquery,
    Sum,
    Value,
    When,
    Window,
)
from django.db.models.functions import Coalesce

from shopdesk.stock.models import Part, StockLot, StockMovement

RECENT_MOVEMENTS = 50
SEARCH_LENGTH = 100

_TOTAL = DecimalField(max_digits=14, decimal_places=2)


def _zero() -> Value:
    return Value(Decimal("0.00"), output_field=_TOTAL)


def _ledger_total(**match: OuterRef) -> Coalesce:
    """A correlated sum of the movements matching ``match``: zero when there are none."""
    movements = (
        StockMovement.objects.filter(**match)
        .order_by()
        .values(*match.keys())
        .annotate(total=Sum("quantity"))
        .values("total")
    )
    return Coalesce(Subquery(movements, output_field=_TOTAL), _zero(), output_field=_TOTAL)


def on_hand(part: Part) -> Decimal:
    """What the ledger says is on hand of ``part``, in its unit of measure."""
    total = StockMovement.objects.filter(part=part).aggregate(
        total=Coalesce(Sum("quantity"), _zero(), output_field=_TOTAL)
    )["total"]
    return Decimal(total).quantize(Decimal("0.01"))


def parts_with_on_hand() -> QuerySet[Part]:
    """Parts with ``on_hand`` summed from the ledger and ``low`` when it is at or below the
    reorder level, in one query whatever the number of parts."""
    return Part.objects.annotate(on_hand=_ledger_total(part=OuterRef("pk"))).annotate(
        low=Case(
            When(on_hand__lte=F("reorder_level"), then=Value(True)),
            default=Value(False),
            output_field=BooleanField(),
        )
    )


def part_list(*, query: str = "", low_only: bool = False, include_inactive: bool = False) -> QuerySet[Part]:
    """The stock page's parts: searched by part number or name, optionally low ones only."""
    parts = parts_with_on_hand().select_related("oil")
    if not include_inactive:
        parts = parts.filter(active=True)
    text = " ".join(query.split())[:SEARCH_LENGTH]
    if text:
        parts = parts.filter(Q(part_number__icontains=text.replace(" ", "")) | Q(name__icontains=text))
    if low_only:
        parts = parts.filter(low=True)
    return parts.order_by("part_number")


def part_for_page(part_id: int) -> Part | None:
    return parts_with_on_hand().select_related("oil").filter(pk=part_id).first()


def parts_for_use() -> QuerySet[Part]:
    """Active parts as the bench offers them, with what is on hand."""
    return parts_with_on_hand().filter(active=True).select_related("oil").order_by("name", "part_number")


def lots_for(part: Part) -> QuerySet[StockLot]:
    """The lots of ``part``, newest first, each with ``on_hand`` (what of the lot is left).

    Forms offer only these, so a lot that does not exist, or is another part's, is refused.
    """
    return (
        StockLot.objects.filter(part=part)
        .annotate(on_hand=_ledger_total(lot=OuterRef("pk")))
        .order_by("-received_on", "-id")
    )


def recent_movements(limit: int = RECENT_MOVEMENTS) -> QuerySet[StockMovement]:
    """The latest movements of all parts, with who, the part, the lot and the job."""
    return StockMovement.objects.select_related("part", "lot", "work_order", "by").order_by("-at", "-id")[
        :limit
    ]


def part_ledger(part: Part) -> QuerySet[StockMovement]:
    """The ledger of ``part``, newest first, with ``balance`` (on hand after each movement) and
    ``returned`` (a use that has since been returned)."""
    return (
        StockMovement.objects.filter(part=part)
        .select_related("part", "lot", "work_order", "by")
        .annotate(
            balance=Window(Sum("quantity"), order_by=[F("at").asc(), F("id").asc()], output_field=_TOTAL),
            returned=Exists(StockMovement.objects.filter(reverses=OuterRef("pk"))),
        )
        .order_by("-at", "-id")
    )
