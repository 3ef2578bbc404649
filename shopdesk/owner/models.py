"""The owner's tables: each unit's next due date per service, kept up to date, and the reminder log."""

from __future__ import annotations

from django.conf import settings
from django.db import models

from shopdesk.customers.models import Unit
from shopdesk.specs.models import ServiceType


class DueService(models.Model):
    """When a unit is next due for a service, by the rules of ``shopdesk.calc.schedule``.

    Maintained by ``owner.services.due_refresh`` whenever the history or the unit changes, so the
    owner's lists are plain indexed queries on ``next_due_on``.
    """

    unit = models.ForeignKey(Unit, on_delete=models.CASCADE, related_name="due_services")
    service_type = models.ForeignKey(ServiceType, on_delete=models.CASCADE, related_name="+")
    last_done_on = models.DateField(null=True, blank=True)
    counted_from = models.DateField()
    interval_hours = models.PositiveIntegerField(null=True, blank=True)
    interval_months = models.PositiveIntegerField(null=True, blank=True)
    next_due_on = models.DateField()

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["unit", "service_type"], name="one_due_date_per_unit_service")
        ]
        indexes = [models.Index(fields=["next_due_on", "id"], name="due_service_by_date")]
        permissions = [
            ("view_dashboard", "Can see the owner's dashboard and the shop's numbers"),
            ("send_reminder", "Can send service reminders"),
        ]

    def __str__(self) -> str:
        return f"{self.unit_id}/{self.service_type_id} due {self.next_due_on}"


class Reminder(models.Model):
    """One reminder per unit, service type and due date: claimed before it is sent, stamped when sent."""

    class State(models.TextChoices):
        CLAIMED = "claimed", "claimed"
        SENT = "sent", "sent"

    unit = models.ForeignKey(Unit, on_delete=models.CASCADE, related_name="reminders")
    service_type = models.ForeignKey(ServiceType, on_delete=models.CASCADE, related_name="+")
    due_on = models.DateField()
    email = models.EmailField()
    state = models.CharField(max_length=10, choices=State.choices, default=State.CLAIMED)
    claimed_at = models.DateTimeField()
    sent_at = models.DateTimeField(null=True, blank=True)
    sent_by = models.ForeignKey(
        settings.AUTH_USER_MODEL,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="+",
        help_text="Who pressed “Send reminder”; empty when the nightly command sent it.",
    )

    class Meta:
        constraints = [
            models.UniqueConstraint(
                fields=["unit", "service_type", "due_on"], name="one_reminder_per_due_date"
            )
        ]
        indexes = [models.Index(fields=["unit", "-sent_at"], name="reminder_by_unit_sent")]

    def __str__(self) -> str:
        return f"reminder {self.unit_id}/{self.service_type_id} {self.due_on} ({self.state})"


class MessageWording(models.Model):
    """The reminder's wording as the owner edited it: one row, with placeholders ``{unit}`` and the like.

    ``owner.wording`` holds the defaults and the placeholders allowed; ``owner.selectors.wording_current``
    gives the saved wording or the defaults.
    """

    subject = models.CharField(max_length=200)
    body = models.TextField(max_length=4000)
    updated_at = models.DateTimeField(auto_now=True)

    def __str__(self) -> str:
        return self.subject
