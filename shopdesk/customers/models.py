"""Customers and their units (forks and rear shocks)."""

from __future__ import annotations

import re
from decimal import Decimal

from django.core.validators import MaxValueValidator, MinValueValidator
from django.db import models
from django.db.models.functions import Upper

from shopdesk.specs.models import UnitModel


def phone_digits(phone: str) -> str:
    """The digits of a phone number, for search: "+44 (0)1632 960 123" -> "4401632960123"."""
    return re.sub(r"\D", "", phone or "")


class Customer(models.Model):
    name = models.CharField(max_length=120)
    phone = models.CharField(max_length=40, blank=True)
    phone_digits = models.CharField(max_length=40, blank=True, db_index=True, editable=False)
    email = models.EmailField(blank=True)
    notes = models.TextField(blank=True)
    reminder_consent = models.BooleanField(
        default=False, help_text="The customer agreed to be reminded when a service is due."
    )
    consent_changed_at = models.DateTimeField(null=True, blank=True, editable=False)
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["name", "id"]
        indexes = [models.Index(Upper("name"), name="customer_name_upper"), models.Index(fields=["email"])]

    def __str__(self) -> str:
        return self.name

    def save(self, *args, **kwargs) -> None:  # type: ignore[no-untyped-def]
        self.phone_digits = phone_digits(self.phone)
        super().save(*args, **kwargs)


class SetupFields(models.Model):
    """A unit's spring and clicker settings. Pressures are gauge, as a shock pump reads them."""

    positive_pressure_kpa = models.FloatField(
        "air pressure (kPa, gauge)", null=True, blank=True, validators=[MinValueValidator(0)]
    )
    negative_pressure_kpa = models.FloatField(
        "negative chamber pressure (kPa, gauge)", null=True, blank=True, validators=[MinValueValidator(0)]
    )
    spacer_count = models.PositiveSmallIntegerField(null=True, blank=True, validators=[MaxValueValidator(20)])
    coil_rate_n_mm = models.FloatField(
        "coil spring rate (N/mm)",
        null=True,
        blank=True,
        validators=[MinValueValidator(1), MaxValueValidator(400)],
    )
    rebound_clicks = models.PositiveSmallIntegerField(
        null=True, blank=True, validators=[MaxValueValidator(60)], help_text="Counted from fully closed."
    )
    compression_clicks = models.PositiveSmallIntegerField(
        null=True, blank=True, validators=[MaxValueValidator(60)], help_text="Counted from fully closed."
    )
    high_speed_compression_clicks = models.PositiveSmallIntegerField(
        null=True, blank=True, validators=[MaxValueValidator(60)], help_text="Counted from fully closed."
    )

    class Meta:
        abstract = True

    SETUP_FIELDS = (
        "positive_pressure_kpa",
        "negative_pressure_kpa",
        "spacer_count",
        "coil_rate_n_mm",
        "rebound_clicks",
        "compression_clicks",
        "high_speed_compression_clicks",
    )


class Unit(SetupFields):
    """A customer's fork or rear shock. Its setup fields hold the current settings."""

    customer = models.ForeignKey(Customer, on_delete=models.PROTECT, related_name="units")
    unit_model = models.ForeignKey(UnitModel, on_delete=models.PROTECT, related_name="units")
    serial_number = models.CharField(max_length=60)
    model_year = models.PositiveSmallIntegerField(
        validators=[MinValueValidator(1980), MaxValueValidator(2100)]
    )
    travel_mm = models.FloatField(validators=[MinValueValidator(10), MaxValueValidator(250)])
    hours_per_week = models.DecimalField(
        "riding hours per week",
        max_digits=4,
        decimal_places=1,
        default=Decimal("4.0"),
        validators=[MinValueValidator(Decimal("0")), MaxValueValidator(Decimal("60"))],
        help_text="The rider's usual week, to estimate hours since the last service.",
    )
    purchased_on = models.DateField(null=True, blank=True)
    notes = models.TextField(blank=True)
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["customer__name", "id"]
        constraints = [
            models.UniqueConstraint(fields=["unit_model", "serial_number"], name="serial_unique_per_model")
        ]
        indexes = [models.Index(Upper("serial_number"), name="unit_serial_upper")]

    def __str__(self) -> str:
        return f"{self.unit_model.maker} {self.unit_model.name} #{self.serial_number}"
