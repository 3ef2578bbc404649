"""Work orders: the job a unit comes in for, its requested services and its timeline."""

from __future__ import annotations

from decimal import Decimal

from django.conf import settings
from django.core.validators import MaxValueValidator, MinValueValidator
from django.db import models
from django.urls import reverse
from simple_history.models import HistoricalRecords

from shopdesk.customers.models import Customer, SetupFields, Unit
from shopdesk.specs.models import ServiceType


class Status(models.TextChoices):
    CHECKED_IN = "checked_in", "Checked in"
    WAITING_FOR_PARTS = "waiting_for_parts", "Waiting for parts"
    ON_THE_BENCH = "on_the_bench", "On the bench"
    FINAL_CHECK = "final_check", "Final check"
    READY_FOR_PICKUP = "ready_for_pickup", "Ready for pickup"
    COLLECTED = "collected", "Collected"
    CANCELLED = "cancelled", "Cancelled"


OPEN_STATUSES = (
    Status.CHECKED_IN,
    Status.WAITING_FOR_PARTS,
    Status.ON_THE_BENCH,
    Status.FINAL_CHECK,
    Status.READY_FOR_PICKUP,
)


class NumberSequence(models.Model):
    """The last work-order number given out in a year. Incremented inside the check-in transaction,
    so a rolled-back check-in gives its number back and numbers stay gap-free."""

    year = models.PositiveSmallIntegerField(primary_key=True)
    last_number = models.PositiveIntegerField(default=0)

    def __str__(self) -> str:
        return f"{self.year}: {self.last_number}"


class WorkOrder(models.Model):
    number = models.CharField(max_length=12, unique=True, editable=False)
    year = models.PositiveSmallIntegerField(editable=False)
    sequence = models.PositiveIntegerField(editable=False)
    customer = models.ForeignKey(Customer, on_delete=models.PROTECT, related_name="work_orders")
    unit = models.ForeignKey(Unit, on_delete=models.PROTECT, related_name="work_orders")
    status = models.CharField(max_length=20, choices=Status.choices, default=Status.CHECKED_IN, db_index=True)
    complaint = models.TextField(blank=True, help_text="What the customer says is wrong, in their words.")
    came_with = models.CharField(
        "came with the unit", max_length=200, blank=True, help_text="E.g. “shock pump, spare volume spacer”."
    )
    promised_on = models.DateField(null=True, blank=True)
    tax_rate = models.DecimalField(
        max_digits=5,
        decimal_places=4,
        validators=[MinValueValidator(Decimal("0")), MaxValueValidator(Decimal("0.5"))],
    )
    checked_in_at = models.DateTimeField()
    checked_in_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="work_orders_checked_in"
    )
    assigned_to = models.ForeignKey(
        settings.AUTH_USER_MODEL,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="work_orders_assigned",
    )
    status_changed_at = models.DateTimeField()

    class Meta:
        ordering = ["-year", "-sequence"]
        constraints = [models.UniqueConstraint(fields=["year", "sequence"], name="work_order_number_unique")]
        indexes = [models.Index(fields=["status", "promised_on"])]
        permissions = [
            ("check_in_workorder", "Can check units in"),
            ("move_on_bench_workorder", "Can move jobs along the bench"),
            ("hand_back_workorder", "Can hand units back to the customer"),
            ("cancel_workorder", "Can cancel jobs"),
        ]

    def __str__(self) -> str:
        return self.number

    def get_absolute_url(self) -> str:
        return reverse("workshop:work-order", kwargs={"number": self.number})

    @property
    def is_open(self) -> bool:
        return self.status in OPEN_STATUSES


class ArrivalSettings(SetupFields):
    """The unit's settings as it came in, to be set back before it goes out."""

    work_order = models.OneToOneField(WorkOrder, on_delete=models.CASCADE, related_name="arrival")

    def __str__(self) -> str:
        return f"Settings on arrival, {self.work_order}"


class RequestedService(models.Model):
    """A service asked for on a work order, with its price when quoted."""

    work_order = models.ForeignKey(WorkOrder, on_delete=models.CASCADE, related_name="services")
    service_type = models.ForeignKey(ServiceType, on_delete=models.PROTECT, related_name="+")
    price = models.DecimalField(max_digits=9, decimal_places=2, validators=[MinValueValidator(Decimal("0"))])
    labour_minutes = models.PositiveIntegerField()

    class Meta:
        ordering = ["service_type__display_order", "id"]
        constraints = [
            models.UniqueConstraint(fields=["work_order", "service_type"], name="service_once_per_work_order")
        ]

    def __str__(self) -> str:
        return f"{self.work_order}: {self.service_type}"


class WorkOrderEvent(models.Model):
    """One line of a job's timeline: who did what, when."""

    class Kind(models.TextChoices):
        CHECKED_IN = "checked_in", "Checked in"
        STATUS = "status", "Status changed"
        ASSIGNED = "assigned", "Assigned"
        NOTE = "note", "Note"
        RECORD = "record", "Bench record"
        PAYMENT = "payment", "Payment"

    work_order = models.ForeignKey(WorkOrder, on_delete=models.CASCADE, related_name="events")
    at = models.DateTimeField(db_index=True)
    by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    kind = models.CharField(max_length=20, choices=Kind.choices)
    from_status = models.CharField(max_length=20, choices=Status.choices, blank=True)
    to_status = models.CharField(max_length=20, choices=Status.choices, blank=True)
    message = models.CharField(max_length=500, blank=True)

    class Meta:
        ordering = ["at", "id"]

    def __str__(self) -> str:
        return f"{self.work_order} {self.at:%Y-%m-%d %H:%M} {self.get_kind_display()}"


class Payment(models.Model):
    """Money taken for a job at the front desk. Nothing is deleted: a wrong entry is voided by the
    owner with a reason and stays on the job; what is still owed is the job's total less the
    payments that stand."""

    class Method(models.TextChoices):
        CARD = "card", "Card"
        CASH = "cash", "Cash"
        BANK_TRANSFER = "bank_transfer", "Bank transfer"
        OTHER = "other", "Other"

    work_order = models.ForeignKey(WorkOrder, on_delete=models.PROTECT, related_name="payments")
    amount = models.DecimalField(
        max_digits=9, decimal_places=2, validators=[MinValueValidator(Decimal("0.01"))]
    )
    method = models.CharField(max_length=20, choices=Method.choices)
    reference = models.CharField(
        max_length=100, blank=True, help_text="E.g. the card slip's number or the transfer's reference."
    )
    taken_at = models.DateTimeField()
    taken_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    voided_at = models.DateTimeField(null=True, blank=True)
    voided_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    void_reason = models.CharField(max_length=200, blank=True)
    history = HistoricalRecords()

    class Meta:
        ordering = ["taken_at", "id"]
        permissions = [("void_payment", "Can void a payment taken in error")]

    def __str__(self) -> str:
        return f"{self.work_order}: {self.amount} by {self.get_method_display().lower()}"

    @property
    def is_void(self) -> bool:
        return self.voided_at is not None
