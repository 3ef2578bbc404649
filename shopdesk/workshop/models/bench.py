"""The bench's records on a job: oil per chamber, spring before and after, parts, labour, checks.

Nothing on a job is deleted: a wrong record is voided with a reason and stays visible. Every
change keeps who, when and the old values (django-simple-history), and each record carries a
``version`` so that a second person's save over the first is refused, not silently applied.
"""

from __future__ import annotations

from decimal import Decimal

from django.conf import settings
from django.core.validators import MaxValueValidator, MinValueValidator
from django.db import models
from django.db.models import Q
from simple_history.models import HistoricalRecords

from shopdesk.customers.models import Unit
from shopdesk.specs.models import Chamber, ServiceType, StackFields
from shopdesk.workshop.models.jobs import WorkOrder


class BenchRecord(models.Model):
    work_order = models.ForeignKey(WorkOrder, on_delete=models.PROTECT, related_name="%(class)s_set")
    recorded_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    recorded_at = models.DateTimeField()
    version = models.PositiveIntegerField(default=1)
    voided_at = models.DateTimeField(null=True, blank=True)
    voided_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    void_reason = models.CharField(max_length=200, blank=True)

    class Meta:
        abstract = True

    @property
    def is_void(self) -> bool:
        return self.voided_at is not None


class OilRecord(BenchRecord):
    """What came out of one chamber and what went in."""

    class Condition(models.TextChoices):
        CLEAN = "clean", "Clean"
        DARK = "dark", "Dark (worn)"
        GREY_METAL = "grey_metal", "Grey, with metal"
        MILKY_WATER = "milky_water", "Milky, with water"
        FOAMY = "foamy", "Foamy (air in it)"

    chamber = models.ForeignKey(Chamber, on_delete=models.PROTECT, related_name="+")
    drained_ml = models.FloatField(
        null=True, blank=True, validators=[MinValueValidator(0), MaxValueValidator(1000)]
    )
    drained_weighed_g = models.FloatField(
        null=True,
        blank=True,
        validators=[MinValueValidator(0), MaxValueValidator(1000)],
        help_text="What the scale showed, when the drained oil was weighed.",
    )
    condition = models.CharField(max_length=20, choices=Condition.choices, blank=True)
    filled_ml = models.FloatField(
        null=True, blank=True, validators=[MinValueValidator(0), MaxValueValidator(1000)]
    )
    oil_part = models.ForeignKey(
        "stock.Part", on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    oil_lot = models.ForeignKey(
        "stock.StockLot", on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    fill_confirmed = models.BooleanField(
        default=False, help_text="The technician confirmed a fill outside the tolerance of the spec."
    )
    movement = models.ForeignKey(
        "stock.StockMovement", on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    notes = models.CharField(max_length=300, blank=True)
    history = HistoricalRecords()

    class Meta:
        ordering = ["chamber__display_order", "id"]
        constraints = [
            models.UniqueConstraint(
                fields=["work_order", "chamber"],
                condition=Q(voided_at__isnull=True),
                name="one_live_oil_record",
            )
        ]

    def __str__(self) -> str:
        return f"{self.work_order}: oil, {self.chamber.name}"


class SpringRecord(BenchRecord):
    """The spring setup before the work or after it. Pressures are gauge, as a shock pump reads."""

    class Stage(models.TextChoices):
        BEFORE = "before", "Before"
        AFTER = "after", "After"

    stage = models.CharField(max_length=10, choices=Stage.choices)
    positive_pressure_kpa = models.FloatField(null=True, blank=True, validators=[MinValueValidator(0)])
    negative_pressure_kpa = models.FloatField(null=True, blank=True, validators=[MinValueValidator(0)])
    spacer_count = models.PositiveSmallIntegerField(null=True, blank=True, validators=[MaxValueValidator(20)])
    spacer_volume_cc = models.FloatField(
        "volume of one spacer (cc)",
        null=True,
        blank=True,
        validators=[MinValueValidator(0), MaxValueValidator(100)],
    )
    coil_rate_n_mm = models.FloatField(
        null=True, blank=True, validators=[MinValueValidator(1), MaxValueValidator(400)]
    )
    sag_mm = models.FloatField("sag measured (mm)", null=True, blank=True, validators=[MinValueValidator(0)])
    notes = models.CharField(max_length=300, blank=True)
    history = HistoricalRecords()

    class Meta:
        ordering = ["work_order", "stage"]
        constraints = [
            models.UniqueConstraint(
                fields=["work_order", "stage"],
                condition=Q(voided_at__isnull=True),
                name="one_live_spring_record",
            )
        ]

    def __str__(self) -> str:
        return f"{self.work_order}: spring {self.stage}"


class PartUsed(BenchRecord):
    """A part fitted on the job. Using it wrote a stock movement; voiding it returns the part."""

    part = models.ForeignKey("stock.Part", on_delete=models.PROTECT, related_name="+")
    quantity = models.DecimalField(
        max_digits=10, decimal_places=2, validators=[MinValueValidator(Decimal("0.01"))]
    )
    lot = models.ForeignKey(
        "stock.StockLot", on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    serial_number = models.CharField(max_length=60, blank=True)
    unit_price = models.DecimalField(max_digits=10, decimal_places=4)
    movement = models.ForeignKey("stock.StockMovement", on_delete=models.PROTECT, related_name="+")
    return_movement = models.ForeignKey(
        "stock.StockMovement", on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    history = HistoricalRecords()

    class Meta:
        ordering = ["id"]

    def __str__(self) -> str:
        return f"{self.work_order}: {self.quantity} × {self.part}"


class LabourEntry(BenchRecord):
    """Minutes a technician spent on the job. Extra labour, beyond the quoted services, is charged."""

    technician = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    minutes = models.PositiveIntegerField(validators=[MinValueValidator(1), MaxValueValidator(16 * 60)])
    charged_as_extra = models.BooleanField(
        default=False, help_text="Work beyond the quoted services, charged at the shop's labour rate."
    )
    note = models.CharField(max_length=200, blank=True)
    history = HistoricalRecords()

    class Meta:
        ordering = ["id"]

    def __str__(self) -> str:
        return f"{self.work_order}: {self.minutes} min"


class FinalCheck(models.Model):
    """One line of the job's final checklist, made from the services on the job."""

    work_order = models.ForeignKey(WorkOrder, on_delete=models.PROTECT, related_name="final_checks")
    code = models.CharField(max_length=40)
    label = models.CharField(max_length=200)
    display_order = models.PositiveSmallIntegerField(default=0)
    done_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    done_at = models.DateTimeField(null=True, blank=True)
    history = HistoricalRecords()

    class Meta:
        ordering = ["display_order", "id"]
        constraints = [models.UniqueConstraint(fields=["work_order", "code"], name="one_check_per_code")]

    def __str__(self) -> str:
        return f"{self.work_order}: {self.label}"

    @property
    def done(self) -> bool:
        return self.done_at is not None


class ServiceRecord(models.Model):
    """A service done to a unit: the history that drives its next due dates."""

    unit = models.ForeignKey(Unit, on_delete=models.PROTECT, related_name="service_records")
    service_type = models.ForeignKey(ServiceType, on_delete=models.PROTECT, related_name="+")
    done_on = models.DateField()
    unit_hours = models.DecimalField(
        "estimated riding hours since the previous service of this type",
        max_digits=7,
        decimal_places=1,
        null=True,
        blank=True,
    )
    work_order = models.ForeignKey(
        WorkOrder, on_delete=models.PROTECT, null=True, blank=True, related_name="service_records"
    )
    as_part_of = models.ForeignKey(
        ServiceType,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="+",
        help_text="Done as part of a larger service (a full rebuild covers the lowers, spring and damper).",
    )

    class Meta:
        ordering = ["-done_on", "id"]
        indexes = [models.Index(fields=["unit", "service_type", "-done_on"])]
        constraints = [
            models.UniqueConstraint(
                fields=["work_order", "service_type"],
                condition=Q(work_order__isnull=False),
                name="service_recorded_once_per_job",
            )
        ]

    def __str__(self) -> str:
        return f"{self.unit}: {self.service_type} on {self.done_on}"


class ShimStackRecord(BenchRecord, StackFields):
    """A valve's shim stack as found (before) or as built (after) on a revalve.

    ``static_pressure_kpa`` (gauge) is the damper's pressure at rest behind the piston (a gas
    charge, a spring-backed IFP, a bladder near top-out): with it the page estimates the
    cavitation margin on the rebound stroke.
    """

    class Stage(models.TextChoices):
        BEFORE = "before", "Before"
        AFTER = "after", "After"

    stage = models.CharField(max_length=10, choices=Stage.choices)
    static_pressure_kpa = models.FloatField(
        "damper static pressure (kPa, gauge)",
        null=True,
        blank=True,
        validators=[MinValueValidator(0), MaxValueValidator(4000)],
    )
    notes = models.CharField(max_length=300, blank=True)
    history = HistoricalRecords()

    class Meta:
        ordering = ["work_order", "valve", "stage"]
        constraints = [
            models.UniqueConstraint(
                fields=["work_order", "valve", "stage"],
                condition=Q(voided_at__isnull=True),
                name="one_live_stack_record",
            )
        ]

    def __str__(self) -> str:
        return f"{self.work_order}: {self.get_valve_display().lower()}, {self.get_stage_display().lower()}"
