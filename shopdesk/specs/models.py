"""Spec sheets: unit models with their chambers and torque values, oils and service types.

Every number is stored in one fixed unit, named in the field.
"""

from __future__ import annotations

from decimal import Decimal

from django.conf import settings
from django.core.exceptions import ValidationError
from django.core.validators import MaxValueValidator, MinValueValidator
from django.db import models
from django.db.models import Q


class Oil(models.Model):
    """A suspension oil as its data sheet gives it."""

    name = models.CharField(
        max_length=120, unique=True, help_text="As the shop calls it, e.g. “Fork oil 5W”."
    )
    maker = models.CharField(max_length=80, blank=True)
    viscosity_40c_mm2s = models.FloatField(
        "kinematic viscosity at 40 °C (mm²/s)", validators=[MinValueValidator(1.0), MaxValueValidator(1000.0)]
    )
    viscosity_100c_mm2s = models.FloatField(
        "kinematic viscosity at 100 °C (mm²/s)", validators=[MinValueValidator(0.5), MaxValueValidator(200.0)]
    )
    density_15c_kg_m3 = models.FloatField(
        "density at 15 °C (kg/m³)", validators=[MinValueValidator(600.0), MaxValueValidator(1200.0)]
    )
    notes = models.TextField(blank=True)

    class Meta:
        ordering = ["name"]
        constraints = [
            models.CheckConstraint(
                condition=Q(viscosity_100c_mm2s__lt=models.F("viscosity_40c_mm2s")),
                name="oil_thinner_when_hot",
                violation_error_message="Viscosity at 100 °C must be lower than at 40 °C.",
            )
        ]

    def __str__(self) -> str:
        return self.name


class ServiceType(models.Model):
    """A service the shop sells, with its default interval and price."""

    class Scope(models.TextChoices):
        LOWERS = "lowers", "Lower legs"
        AIR_SPRING = "air_spring", "Air spring"
        DAMPER = "damper", "Damper"
        FULL = "full", "Full rebuild"
        REVALVE = "revalve", "Revalve"
        OTHER = "other", "Other"

    name = models.CharField(max_length=80, unique=True)
    scope = models.CharField(max_length=20, choices=Scope.choices, default=Scope.OTHER)
    default_interval_hours = models.PositiveIntegerField(
        null=True, blank=True, validators=[MinValueValidator(1), MaxValueValidator(5000)]
    )
    default_interval_months = models.PositiveIntegerField(
        null=True, blank=True, validators=[MinValueValidator(1), MaxValueValidator(120)]
    )
    price = models.DecimalField(max_digits=9, decimal_places=2, validators=[MinValueValidator(Decimal("0"))])
    labour_minutes = models.PositiveIntegerField(default=60, validators=[MaxValueValidator(24 * 60)])
    display_order = models.PositiveSmallIntegerField(default=0)
    active = models.BooleanField(default=True)

    class Meta:
        ordering = ["display_order", "name"]

    def __str__(self) -> str:
        return self.name


class UnitModel(models.Model):
    """A spec sheet: one model of fork or rear shock, as the shop types its maker and name."""

    class Kind(models.TextChoices):
        FORK = "fork", "Fork"
        REAR_SHOCK = "rear_shock", "Rear shock"

    class SpringKind(models.TextChoices):
        AIR = "air", "Air"
        COIL = "coil", "Coil"

    class DamperKind(models.TextChoices):
        OPEN_BATH = "open_bath", "Open bath"
        BLADDER = "bladder", "Sealed cartridge with bladder"
        IFP_SPRING = "ifp_spring", "Sealed cartridge, spring-backed IFP"
        IFP_GAS = "ifp_gas", "Sealed cartridge, gas-charged IFP"
        EMULSION = "emulsion", "Emulsion"

    maker = models.CharField(max_length=80)
    name = models.CharField(max_length=120)
    year_from = models.PositiveSmallIntegerField(
        validators=[MinValueValidator(1980), MaxValueValidator(2100)]
    )
    year_to = models.PositiveSmallIntegerField(
        null=True, blank=True, validators=[MinValueValidator(1980), MaxValueValidator(2100)]
    )
    kind = models.CharField(max_length=20, choices=Kind.choices)
    spring_kind = models.CharField(max_length=10, choices=SpringKind.choices)
    damper_kind = models.CharField(max_length=20, choices=DamperKind.choices)

    # Geometry for the calculators. A rear shock's travel is its stroke.
    travel_mm = models.FloatField(validators=[MinValueValidator(10), MaxValueValidator(250)])
    stanchion_diameter_mm = models.FloatField(
        null=True,
        blank=True,
        validators=[MinValueValidator(20), MaxValueValidator(45)],
        help_text="Forks: the upper tube's outer diameter.",
    )
    air_piston_diameter_mm = models.FloatField(
        null=True,
        blank=True,
        validators=[MinValueValidator(10), MaxValueValidator(80)],
        help_text="Air springs: the diameter the positive chamber's pressure acts on.",
    )
    positive_volume_cc = models.FloatField(
        null=True,
        blank=True,
        validators=[MinValueValidator(1), MaxValueValidator(2000)],
        help_text="Air springs: positive chamber at top-out, without volume spacers.",
    )
    negative_volume_cc = models.FloatField(
        null=True,
        blank=True,
        validators=[MinValueValidator(0), MaxValueValidator(2000)],
        help_text="Air springs: negative chamber at top-out; empty or zero when there is none.",
    )
    spacer_volume_cc = models.FloatField(
        null=True,
        blank=True,
        validators=[MinValueValidator(0.1), MaxValueValidator(100)],
        help_text="Volume of one volume spacer for this model.",
    )
    max_spacers = models.PositiveSmallIntegerField(null=True, blank=True, validators=[MaxValueValidator(20)])
    shaft_diameter_mm = models.FloatField(
        null=True,
        blank=True,
        validators=[MinValueValidator(3), MaxValueValidator(25)],
        help_text="Damper shaft entering the sealed cartridge or shock body.",
    )
    damper_piston_diameter_mm = models.FloatField(
        null=True, blank=True, validators=[MinValueValidator(8), MaxValueValidator(60)]
    )
    ifp_diameter_mm = models.FloatField(
        null=True, blank=True, validators=[MinValueValidator(8), MaxValueValidator(80)]
    )
    max_pressure_kpa = models.FloatField(
        "maximum pressure (kPa, gauge)",
        null=True,
        blank=True,
        validators=[MinValueValidator(50), MaxValueValidator(4000)],
        help_text="From the maker's service data. Never exceed it.",
    )
    service_types = models.ManyToManyField(ServiceType, through="ServiceInterval", blank=True)
    notes = models.TextField(blank=True)

    class Meta:
        ordering = ["maker", "name", "year_from"]
        constraints = [
            models.UniqueConstraint(fields=["maker", "name", "year_from"], name="unit_model_unique"),
            models.CheckConstraint(
                condition=Q(year_to__isnull=True) | Q(year_to__gte=models.F("year_from")),
                name="unit_model_years_in_order",
                violation_error_message="The last model year cannot be before the first.",
            ),
        ]

    def __str__(self) -> str:
        years = f"{self.year_from}–{self.year_to}" if self.year_to else f"{self.year_from}–"
        return f"{self.maker} {self.name} ({years})"

    @property
    def is_air(self) -> bool:
        return self.spring_kind == self.SpringKind.AIR

    @property
    def is_sealed(self) -> bool:
        return self.damper_kind in {
            self.DamperKind.BLADDER,
            self.DamperKind.IFP_SPRING,
            self.DamperKind.IFP_GAS,
        }

    def clean(self) -> None:
        errors: dict[str, str] = {}
        if self.is_air and not self.positive_volume_cc:
            errors["positive_volume_cc"] = "An air spring needs its positive chamber volume."
        if self.is_air and not self.air_piston_diameter_mm:
            errors["air_piston_diameter_mm"] = "An air spring needs its piston diameter."
        if self.is_air and not self.max_pressure_kpa:
            errors["max_pressure_kpa"] = "An air spring needs the maker's maximum pressure."
        if self.shaft_diameter_mm and self.ifp_diameter_mm and self.shaft_diameter_mm >= self.ifp_diameter_mm:
            errors["ifp_diameter_mm"] = "The IFP must be larger than the shaft."
        if self.year_to and self.year_from and self.year_to < self.year_from:
            errors["year_to"] = "The last model year cannot be before the first."
        if errors:
            raise ValidationError(errors)


class Chamber(models.Model):
    """One oil volume of a unit model: a lower leg, the damper, an air spring's lube."""

    class Kind(models.TextChoices):
        LOWERS = "lowers", "Lower leg bath"
        DAMPER = "damper", "Damper"
        SPRING = "spring", "Spring side"
        RESERVOIR = "reservoir", "Reservoir"

    unit_model = models.ForeignKey(UnitModel, on_delete=models.CASCADE, related_name="chambers")
    name = models.CharField(max_length=80, help_text="E.g. “Lower leg, damper side”.")
    kind = models.CharField(max_length=20, choices=Kind.choices)
    sealed = models.BooleanField(default=False, help_text="A sealed cartridge (bladder or IFP).")
    oil = models.ForeignKey(Oil, on_delete=models.PROTECT, null=True, blank=True, related_name="chambers")
    volume_ml = models.FloatField(
        null=True, blank=True, validators=[MinValueValidator(0.5), MaxValueValidator(1000)]
    )
    level_mm = models.FloatField(
        null=True,
        blank=True,
        validators=[MinValueValidator(10), MaxValueValidator(400)],
        help_text="Open bath: oil level from the top of the stanchion, fork fully compressed, spring out.",
    )
    display_order = models.PositiveSmallIntegerField(default=0)

    class Meta:
        ordering = ["unit_model", "display_order", "id"]
        constraints = [
            models.CheckConstraint(
                condition=Q(volume_ml__isnull=False) | Q(level_mm__isnull=False),
                name="chamber_has_volume_or_level",
                violation_error_message="Give the chamber's oil volume or its oil level.",
            )
        ]

    def __str__(self) -> str:
        return f"{self.unit_model}: {self.name}"


class TorqueValue(models.Model):
    """A fastener and its torque from the maker's service data."""

    unit_model = models.ForeignKey(UnitModel, on_delete=models.CASCADE, related_name="torque_values")
    fastener = models.CharField(max_length=80)
    torque_nm = models.FloatField(validators=[MinValueValidator(0.2), MaxValueValidator(200)])
    safety_critical = models.BooleanField(
        default=False, help_text="Crown, steerer or axle fasteners: a wrong torque can hurt the rider."
    )
    display_order = models.PositiveSmallIntegerField(default=0)

    class Meta:
        ordering = ["unit_model", "display_order", "id"]

    def __str__(self) -> str:
        return f"{self.fastener}: {self.torque_nm:g} N·m"


class ServiceInterval(models.Model):
    """A unit model's own interval for a service type; the service type's default applies otherwise."""

    unit_model = models.ForeignKey(UnitModel, on_delete=models.CASCADE, related_name="intervals")
    service_type = models.ForeignKey(ServiceType, on_delete=models.CASCADE, related_name="model_intervals")
    interval_hours = models.PositiveIntegerField(
        null=True, blank=True, validators=[MinValueValidator(1), MaxValueValidator(5000)]
    )
    interval_months = models.PositiveIntegerField(
        null=True, blank=True, validators=[MinValueValidator(1), MaxValueValidator(120)]
    )

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["unit_model", "service_type"], name="one_interval_per_service")
        ]

    def __str__(self) -> str:
        return f"{self.unit_model} · {self.service_type}"


# --- Shim stacks --------------------------------------------------------------------------------


class Valve(models.TextChoices):
    """Where a shim stack sits in a damper."""

    COMPRESSION_BASE = "compression_base", "Compression base valve"
    COMPRESSION_PISTON = "compression_piston", "Compression stack on the piston (mid-valve)"
    REBOUND = "rebound", "Rebound stack on the piston"


def _check_shim_lines(value: object) -> None:
    """The stored lines of a stack: a list of {"od": mm, "thickness": mm, "count": n}."""
    if not isinstance(value, list) or not value:
        raise ValidationError("A stack needs at least one line of shims.")
    for number, line in enumerate(value, start=1):
        if not isinstance(line, dict) or set(line) != {"od", "thickness", "count"}:
            raise ValidationError(f"Line {number} must give od, thickness and count.")


class StackFields(models.Model):
    """One shim stack and the valve under it, as the technician measures them, in mm and N.

    The lines run from the piston face outward; ``crossover_after_line`` is how many lines sit in
    front of the crossover ring (the face shims). Port geometry and the bleed are what the damping
    estimate needs; the piston and shaft come from the spec sheet unless typed here.
    """

    valve = models.CharField(max_length=20, choices=Valve.choices)
    shims = models.JSONField(validators=[_check_shim_lines])
    clamp_mm = models.FloatField(
        "clamp diameter (mm)", validators=[MinValueValidator(1), MaxValueValidator(200)]
    )
    crossover_od_mm = models.FloatField(
        "crossover OD (mm)", null=True, blank=True, validators=[MinValueValidator(1), MaxValueValidator(200)]
    )
    crossover_thickness_mm = models.FloatField(
        "crossover thickness (mm)",
        null=True,
        blank=True,
        validators=[MinValueValidator(0.05), MaxValueValidator(0.5)],
    )
    crossover_after_line = models.PositiveSmallIntegerField(
        "face lines in front of the crossover", null=True, blank=True, validators=[MinValueValidator(1)]
    )
    preload_n = models.FloatField("preload (N)", default=0.0, validators=[MinValueValidator(0)])
    floating_rate_n_mm = models.FloatField(
        "floating stack spring rate (N/mm)",
        null=True,
        blank=True,
        validators=[MinValueValidator(0.01), MaxValueValidator(1.0e6)],
    )
    piston_diameter_mm = models.FloatField(
        null=True, blank=True, validators=[MinValueValidator(5), MaxValueValidator(200)]
    )
    port_area_mm2 = models.FloatField(
        "port area (mm²)",
        null=True,
        blank=True,
        validators=[MinValueValidator(0.1), MaxValueValidator(10000)],
    )
    port_radius_mm = models.FloatField(
        "port outer radius (mm)",
        null=True,
        blank=True,
        validators=[MinValueValidator(0.5), MaxValueValidator(100)],
    )
    bleed_mm = models.FloatField(
        "bleed diameter (mm)", null=True, blank=True, validators=[MinValueValidator(0), MaxValueValidator(20)]
    )

    class Meta:
        abstract = True

    STACK_FIELDS = (
        "shims",
        "clamp_mm",
        "crossover_od_mm",
        "crossover_thickness_mm",
        "crossover_after_line",
        "preload_n",
        "floating_rate_n_mm",
        "piston_diameter_mm",
        "port_area_mm2",
        "port_radius_mm",
        "bleed_mm",
    )

    def stack_values(self) -> dict[str, object]:
        return {name: getattr(self, name) for name in self.STACK_FIELDS}

    def lines_text(self) -> str:
        """The stack in the bench's shorthand: "3 × 24 × 0.15, 1 × 22 × 0.10 / clamp 10"."""
        lines = ", ".join(f"{line['count']} × {line['od']:g} × {line['thickness']:g}" for line in self.shims)
        return f"{lines} / clamp {self.clamp_mm:g} mm"


class StackPreset(StackFields):
    """A named stack of the shop's library for one unit model: its baseline, a rider type."""

    unit_model = models.ForeignKey(UnitModel, on_delete=models.CASCADE, related_name="stack_presets")
    name = models.CharField(max_length=80, help_text="E.g. “Baseline” or “Heavy rider, park”.")
    notes = models.CharField(max_length=300, blank=True)
    created_by = models.ForeignKey(
        settings.AUTH_USER_MODEL,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="+",
        editable=False,
    )
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["unit_model", "valve", "name"]
        constraints = [
            models.UniqueConstraint(
                fields=["unit_model", "valve", "name"],
                name="one_stack_preset_name",
                violation_error_message="The library already has a stack of that name for this valve.",
            )
        ]

    def __str__(self) -> str:
        return f"{self.unit_model}: {self.get_valve_display()}, {self.name}"
