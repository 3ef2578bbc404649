from django.contrib import admin
from django.utils import timezone

from shopdesk.customers.models import Customer, Unit


class UnitInline(admin.TabularInline):
    model = Unit
    extra = 0
    fields = ["unit_model", "serial_number", "model_year", "travel_mm", "hours_per_week"]
    show_change_link = True


@admin.register(Customer)
class CustomerAdmin(admin.ModelAdmin):
    list_display = ["name", "phone", "email", "reminder_consent", "created_at"]
    search_fields = ["name", "phone", "email"]
    list_filter = ["reminder_consent"]
    inlines = [UnitInline]

    def save_model(self, request, obj, form, change):  # type: ignore[no-untyped-def]
        # As customer_save does: consent given or withdrawn is stamped with its moment.
        if "reminder_consent" in form.changed_data or (not change and obj.reminder_consent):
            obj.consent_changed_at = timezone.now()
        super().save_model(request, obj, form, change)


@admin.register(Unit)
class UnitAdmin(admin.ModelAdmin):
    list_display = ["serial_number", "unit_model", "customer", "model_year"]
    search_fields = ["serial_number", "customer__name"]
    list_select_related = ["unit_model", "customer"]
    raw_id_fields = ["customer"]
