from django.contrib import admin

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


@admin.register(StackPreset)
class StackPresetAdmin(admin.ModelAdmin):
    list_display = ["unit_model", "valve", "name", "clamp_mm", "created_by", "created_at"]
    list_filter = ["valve", "unit_model"]
    search_fields = ["name", "unit_model__maker", "unit_model__name"]
