from __future__ import annotations

from decimal import Decimal

from django.contrib import admin
from django.db.models import QuerySet
from django.http import HttpRequest
from simple_history.admin import SimpleHistoryAdmin

from shopdesk.stock import selectors
from shopdesk.stock.models import Part, StockLot, StockMovement


class StockLotInline(admin.TabularInline):
    model = StockLot
    extra = 0
    fields = ["lot_code", "received_on", "notes"]


@admin.register(Part)
class PartAdmin(SimpleHistoryAdmin):
    list_display = [
        "part_number",
        "name",
        "kind",
        "unit_of_measure",
        "on_hand",
        "reorder_level",
        "cost",
        "price",
        "active",
    ]
    list_filter = ["kind", "active"]
    search_fields = ["part_number", "name"]
    inlines = [StockLotInline]

    def get_queryset(self, request: HttpRequest) -> QuerySet[Part]:
        # The count is the ledger's sum, one query for the whole list.
        return selectors.parts_with_on_hand()

    @admin.display(description="On hand", ordering="on_hand")
    def on_hand(self, part: Part) -> Decimal:
        return part.on_hand  # type: ignore[attr-defined]


@admin.register(StockLot)
class StockLotAdmin(admin.ModelAdmin):
    list_display = ["lot_code", "part", "received_on", "notes"]
    list_select_related = ["part"]
    search_fields = ["lot_code", "part__part_number", "part__name"]
    list_filter = ["received_on"]


@admin.register(StockMovement)
class StockMovementAdmin(admin.ModelAdmin):
    """The ledger, to read. Movements are written by the stock services only and never change."""

    list_display = ["at", "part", "kind", "quantity", "lot", "work_order", "by", "reason"]
    list_select_related = ["part", "lot", "work_order", "by"]
    list_filter = ["kind", "overrode_on_hand"]
    search_fields = ["part__part_number", "part__name", "work_order__number", "reason"]
    date_hierarchy = "at"

    def get_readonly_fields(self, request: HttpRequest, obj: StockMovement | None = None) -> list[str]:
        return [field.name for field in self.model._meta.fields]

    def has_add_permission(self, request: HttpRequest) -> bool:
        return False

    def has_change_permission(self, request: HttpRequest, obj: StockMovement | None = None) -> bool:
        return False

    def has_delete_permission(self, request: HttpRequest, obj: StockMovement | None = None) -> bool:
        return False
