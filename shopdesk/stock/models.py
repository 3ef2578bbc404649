"""Parts and oils in stock, their lots, and the ledger of stock movements.

The on-hand count of a part is the sum of its movements, never a field edited by hand:
receiving, using on a job, returning from a job and adjusting each write one movement
(``shopdesk.stock.services``). Quantities are in the part's unit of measure: a count for
parts sold by the item, millilitres for oil. Cost and price are per unit of measure, to
four decimal places so that a price per mL is exact (£0.0450/mL is £45.00 a litre);
a line's money is rounded to the cent once, by :meth:`Part.price_for`.
"""

from __future__ import annotations

from decimal import Decimal

from django.conf import settings
from django.core.exceptions import ValidationError
from django.core.validators import MaxValueValidator, MinValueValidator, RegexValidator
from django.db import models
from django.db.models import Q
from django.urls import reverse
from simple_history.models import HistoricalRecords

from shopdesk.shop.money import round_money

# The most one movement may move, in the part's unit of measure (10 L of oil, 10,000 items).
MAX_MOVEMENT = Decimal("10000")

QUANTITY_DIGITS = {"max_digits": 12, "decimal_places": 2}
PER_UNIT_MONEY_DIGITS = {"max_digits": 12, "decimal_places": 4}


class Part(models.Model):
    """Something the shop stocks under its own part number: a part, a seal kit, an oil."""

    class Kind(models.TextChoices):
        PART = "part", "Part"
        SEAL_KIT = "seal_kit", "Seal kit"
        OIL = "oil", "Oil"
        OTHER = "other", "Other"

    class UnitOfMeasure(models.TextChoices):
        EACH = "each", "each"
        ML = "ml", "mL"

    part_number = models.CharField(
        max_length=40,
        unique=True,
        validators=[
            RegexValidator(
                r"^[A-Z0-9][A-Z0-9./_-]*$",
                "Use letters, digits and - . / _ only, without spaces.",
            )
        ],
        error_messages={"unique": "Another part already has this part number."},
        help_text="The shop's own number, e.g. “SK-34-AIR”.",
    )
    name = models.CharField(max_length=120)
    kind = models.CharField(max_length=20, choices=Kind.choices, default=Kind.PART)
    unit_of_measure = models.CharField(
        max_length=10,
        choices=UnitOfMeasure.choices,
        default=UnitOfMeasure.EACH,
        help_text="Oil is counted in mL; everything else usually by the item.",
    )
    oil = models.ForeignKey(
        "specs.Oil",
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="parts",
        help_text="Oils only: the spec-sheet oil this stock item is.",
    )
    reorder_level = models.DecimalField(
        **QUANTITY_DIGITS,
        default=Decimal("0"),
        validators=[MinValueValidator(Decimal("0")), MaxValueValidator(Decimal("1000000"))],
        help_text="Flag the part as low when what is on hand falls to this, in its unit of measure.",
    )
    cost = models.DecimalField(
        **PER_UNIT_MONEY_DIGITS,
        default=Decimal("0"),
        validators=[MinValueValidator(Decimal("0"))],
        help_text="What the shop pays, per unit of measure (per mL for oil). The last receipt's cost.",
    )
    price = models.DecimalField(
        **PER_UNIT_MONEY_DIGITS,
        validators=[MinValueValidator(Decimal("0"))],
        help_text="What the customer pays before tax, per unit of measure (per mL for oil).",
    )
    active = models.BooleanField(default=True, help_text="Untick when the shop no longer stocks it.")
    history = HistoricalRecords()

    class Meta:
        ordering = ["part_number"]
        constraints = [
            models.CheckConstraint(
                condition=Q(reorder_level__gte=0) & Q(cost__gte=0) & Q(price__gte=0),
                name="part_amounts_not_negative",
                violation_error_message="Reorder level, cost and price cannot be negative.",
            ),
            models.CheckConstraint(
                condition=(Q(kind="oil") & Q(oil__isnull=False) & Q(unit_of_measure="ml"))
                | (~Q(kind="oil") & Q(oil__isnull=True)),
                name="part_oil_matches_kind",
                violation_error_message="An oil needs its spec-sheet oil and is counted in mL; "
                "other parts have no oil.",
            ),
        ]

    def __str__(self) -> str:
        return f"{self.part_number} {self.name}"

    def get_absolute_url(self) -> str:
        return reverse("stock:part", kwargs={"part_id": self.pk})

    @property
    def unit_label(self) -> str:
        return self.get_unit_of_measure_display()

    @property
    def is_counted_whole(self) -> bool:
        return self.unit_of_measure == self.UnitOfMeasure.EACH

    @property
    def price_per_litre(self) -> Decimal | None:
        """For a part counted in mL, its price per litre, to the cent; otherwise ``None``."""
        if self.unit_of_measure != self.UnitOfMeasure.ML or self.price is None:
            return None
        return round_money(self.price * 1000)

    def price_for(self, quantity: Decimal) -> Decimal:
        """The price of ``quantity`` (in the unit of measure), rounded to the cent once."""
        return round_money(self.price * quantity)

    def clean(self) -> None:
        self.part_number = "".join((self.part_number or "").split()).upper()
        self.name = " ".join((self.name or "").split())
        errors: dict[str, str] = {}
        if self.kind == self.Kind.OIL:
            if self.oil_id is None:
                errors["oil"] = "An oil needs its spec-sheet oil: pick it from the list."
            if self.unit_of_measure != self.UnitOfMeasure.ML:
                errors["unit_of_measure"] = "Oil is counted in mL, not by the item."
        elif self.oil_id is not None:
            errors["oil"] = "Only a part of kind oil has a spec-sheet oil; leave it empty or make it an oil."
        if self.pk is not None and "unit_of_measure" not in errors:
            # The ledger's quantities are in the unit of measure: it is fixed once there are any.
            stored = Part.objects.filter(pk=self.pk).values_list("unit_of_measure", flat=True).first()
            if stored is not None and stored != self.unit_of_measure and self.movements.exists():
                errors["unit_of_measure"] = (
                    f"This part has stock movements in {self.UnitOfMeasure(stored).label}: its unit of "
                    "measure cannot change. Make a new part instead."
                )
        if errors:
            raise ValidationError(errors)


class StockLot(models.Model):
    """A batch of a part as it came in, with the code printed on it (oils, seal kits)."""

    part = models.ForeignKey(Part, on_delete=models.PROTECT, related_name="lots")
    lot_code = models.CharField(max_length=60, help_text="As printed on the bottle or the bag.")
    received_on = models.DateField()
    notes = models.CharField(max_length=200, blank=True)

    class Meta:
        ordering = ["part", "-received_on", "-id"]
        constraints = [
            models.UniqueConstraint(
                fields=["part", "lot_code"],
                name="lot_code_unique_per_part",
                violation_error_message="This part already has a lot with this code.",
            )
        ]

    def __str__(self) -> str:
        return f"{self.lot_code} ({self.received_on:%d %b %Y})"

    def clean(self) -> None:
        self.lot_code = " ".join((self.lot_code or "").split()).upper()
        if not self.lot_code:
            raise ValidationError({"lot_code": "Enter the lot code as printed on the item."})


class StockMovement(models.Model):
    """One line of the stock ledger. Written by ``shopdesk.stock.services`` only, never edited."""

    class Kind(models.TextChoices):
        RECEIVED = "received", "Received"
        USED = "used", "Used on a job"
        RETURNED = "returned", "Returned from a job"
        ADJUSTED = "adjusted", "Adjusted"

    part = models.ForeignKey(Part, on_delete=models.PROTECT, related_name="movements")
    lot = models.ForeignKey(
        StockLot, on_delete=models.PROTECT, null=True, blank=True, related_name="movements"
    )
    quantity = models.DecimalField(
        **QUANTITY_DIGITS,
        validators=[MinValueValidator(-MAX_MOVEMENT), MaxValueValidator(MAX_MOVEMENT)],
        help_text="Signed, in the part's unit of measure: positive into stock, negative out of it.",
    )
    kind = models.CharField(max_length=20, choices=Kind.choices)
    reason = models.CharField(max_length=300, blank=True)
    work_order = models.ForeignKey(
        "workshop.WorkOrder", on_delete=models.PROTECT, null=True, blank=True, related_name="stock_movements"
    )
    reverses = models.ForeignKey(
        "self",
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="reversals",
        help_text="For a return: the use on a job that it undoes.",
    )
    overrode_on_hand = models.BooleanField(
        default=False, help_text="The owner allowed using more than was on hand (the reason says why)."
    )
    unit_cost = models.DecimalField(
        **PER_UNIT_MONEY_DIGITS,
        null=True,
        blank=True,
        validators=[MinValueValidator(Decimal("0"))],
        help_text="For a receipt: what the shop paid per unit of measure.",
    )
    by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="stock_movements")
    at = models.DateTimeField(db_index=True)

    class Meta:
        ordering = ["-at", "-id"]
        indexes = [models.Index(fields=["part", "at"], name="stock_movement_part_at")]
        constraints = [
            models.UniqueConstraint(
                fields=["reverses"],
                name="movement_reversed_once",
                violation_error_message="This use has already been returned.",
            ),
            models.CheckConstraint(
                condition=(Q(kind="received") & Q(quantity__gt=0) & Q(work_order__isnull=True))
                | (Q(kind="used") & Q(quantity__lt=0) & Q(work_order__isnull=False))
                | (Q(kind="returned") & Q(quantity__gt=0) & Q(work_order__isnull=False))
                | (Q(kind="adjusted") & ~Q(quantity=0) & Q(work_order__isnull=True)),
                name="movement_sign_matches_kind",
                violation_error_message="A receipt or return adds stock, a use takes it away; "
                "uses and returns belong to a job.",
            ),
            models.CheckConstraint(
                condition=(Q(kind="returned") & Q(reverses__isnull=False))
                | (~Q(kind="returned") & Q(reverses__isnull=True)),
                name="movement_only_returns_reverse",
                violation_error_message="Only a return undoes a use, and every return undoes one.",
            ),
        ]
        permissions = [
            ("receive_stock", "Can receive stock"),
            ("adjust_stock", "Can adjust stock counts"),
            ("override_stock", "Can use more than is on hand"),
        ]

    def __str__(self) -> str:
        return f"{self.at:%Y-%m-%d %H:%M} {self.get_kind_display()} {self.quantity} × {self.part.part_number}"
