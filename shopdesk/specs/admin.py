from django.contrib import admin

from shopdesk.owner.services import due_refresh_for_intervals
from shopdesk.specs.models import (
    Chamber,
    Oil,
    ServiceInterval,
    ServiceType,
    StackPreset,
    TorqueValue,
    UnitModel,
)


class ChamberInline(admin.TabularInline):
    model = Chamber
    extra = 0


class TorqueValueInline(admin.TabularInline):
    model = TorqueValue
    extra = 0


class ServiceIntervalInline(admin.TabularInline):
    model = ServiceInterval
    extra = 0


@admin.register(UnitModel)
class UnitModelAdmin(admin.ModelAdmin):
    list_display = [
        "maker",
        "name",
        "year_from",
        "year_to",
        "kind",
        "spring_kind",
        "damper_kind",
        "travel_mm",
    ]
    list_filter = ["kind", "spring_kind", "damper_kind", "maker"]
    search_fields = ["maker", "name"]
    inlines = [ChamberInline, TorqueValueInline, ServiceIntervalInline]

    def save_related(self, request, form, formsets, change):  # type: ignore[no-untyped-def]
        super().save_related(request, form, formsets, change)
        # The spec sheet's own intervals (the inline) and its kind move its units' due dates.
        intervals_changed = any(
            formset.model is ServiceInterval and formset.has_changed() for formset in formsets
        )
        if intervals_changed or not change or {"kind", "spring_kind"} & set(form.changed_data):
            due_refresh_for_intervals(unit_model_id=form.instance.pk)


@admin.register(Oil)
class OilAdmin(admin.ModelAdmin):
    list_display = ["name", "maker", "viscosity_40c_mm2s", "viscosity_100c_mm2s", "density_15c_kg_m3"]
    search_fields = ["name", "maker"]


@admin.register(ServiceType)
class ServiceTypeAdmin(admin.ModelAdmin):
    list_display = [
        "name",
        "scope",
        "price",
        "labour_minutes",
        "default_interval_hours",
        "default_interval_months",
        "active",
    ]
    list_editable = ["active"]

    # A default interval, the scope or the active flag moves the due dates of every unit.
    DUE_FIELDS = frozenset({"default_interval_hours", "default_interval_months", "scope", "active"})

    def save_model(self, request, obj, form, change):  # type: ignore[no-untyped-def]
        super().save_model(request, obj, form, change)
        if not change or self.DUE_FIELDS & set(form.changed_data):
            due_refresh_for_intervals()

    def delete_model(self, request, obj):  # type: ignore[no-untyped-def]
        super().delete_model(request, obj)
        due_refresh_for_intervals()

    def delete_queryset(self, request, queryset):  # type: ignore[no-untyped-def]
        super().delete_queryset(request, queryset)
        due_refresh_for_intervals()


@admin.register(StackPreset)
class StackPresetAdmin(admin.ModelAdmin):
    list_display = ["unit_model", "valve", "name", "clamp_mm", "created_by", "created_at"]
    list_filter = ["valve", "unit_model"]
    search_fields = ["name", "unit_model__maker", "unit_model__name"]
