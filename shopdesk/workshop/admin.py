from django.contrib import admin

from shopdesk.workshop.models import Payment, RequestedService, WorkOrder, WorkOrderEvent


class RequestedServiceInline(admin.TabularInline):
    model = RequestedService
    extra = 0


class WorkOrderEventInline(admin.TabularInline):
    model = WorkOrderEvent
    extra = 0
    readonly_fields = ["at", "by", "kind", "from_status", "to_status", "message"]
    can_delete = False


class PaymentInline(admin.TabularInline):
    """Shown, never edited here: payments are taken and voided on the job page, through their rules."""

    model = Payment
    extra = 0
    max_num = 0
    can_delete = False
    fields = readonly_fields = [
        "taken_at",
        "taken_by",
        "amount",
        "method",
        "reference",
        "voided_at",
        "void_reason",
    ]


@admin.register(WorkOrder)
class WorkOrderAdmin(admin.ModelAdmin):
    """Read-mostly: statuses change only through the job's flow, on the job page or the board."""

    list_display = ["number", "customer", "unit", "status", "promised_on", "checked_in_at"]
    list_filter = ["status"]
    search_fields = ["number", "customer__name", "unit__serial_number"]
    list_select_related = ["customer", "unit__unit_model"]
    readonly_fields = [
        "number",
        "status",
        "customer",
        "unit",
        "checked_in_at",
        "checked_in_by",
        "status_changed_at",
    ]
    raw_id_fields = ["assigned_to"]
    inlines = [RequestedServiceInline, PaymentInline, WorkOrderEventInline]
