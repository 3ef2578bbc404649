"""The documents app's records: the owner's wording for the customer, and batches of job cards."""

from __future__ import annotations

import datetime
import string

from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import models
from django.utils import timezone

# The placeholders the owner may use in the wording, filled in per job.
PLACEHOLDERS = ("customer", "number", "shop", "unit")


def check_placeholders(text: str) -> None:
    """Refuse a placeholder the report cannot fill, or a brace that is not a placeholder."""
    try:
        fields = [name for _, name, spec, conversion in string.Formatter().parse(text) if name is not None]
    except ValueError:
        raise ValidationError(
            "A brace does not close: write placeholders as {customer}, or double a brace to print it ({{)."
        ) from None
    unknown = sorted({name for name in fields if name not in PLACEHOLDERS})
    if unknown:
        raise ValidationError(
            f"Unknown placeholder {{{unknown[0]}}}: use "
            + ", ".join("{" + name + "}" for name in PLACEHOLDERS)
            + "."
        )


class DocumentWording(models.Model):
    """One block of the shop's own words on the customer's service report, edited by the owner."""

    class Block(models.TextChoices):
        GREETING = "greeting", "Greeting (top of the report)"
        NOTE = "note", "Note (under the work done)"
        CLOSING = "closing", "Closing (foot of the report)"

    DEFAULTS = {
        Block.GREETING: "Hello {customer}, thank you for bringing your {unit} to {shop}. "
        "This is what we found and what we did on job {number}.",
        Block.NOTE: "Ride it gently for the first few hours while the new seals bed in, and check the "
        "air pressure again after your first ride.",
        Block.CLOSING: "Questions about the work? Call or drop in and quote job {number}. "
        "Thank you for riding with {shop}.",
    }

    block = models.CharField(max_length=20, choices=Block.choices, unique=True)
    text = models.TextField(
        max_length=1000,
        blank=True,
        validators=[check_placeholders],
        help_text="Leave empty for the shop's default. Placeholders: "
        + ", ".join("{" + name + "}" for name in PLACEHOLDERS)
        + ".",
    )

    class Meta:
        ordering = ["block"]
        verbose_name = "wording on the service report"
        verbose_name_plural = "wording on the service report"

    def __str__(self) -> str:
        return self.get_block_display()


class PrintBatch(models.Model):
    """Job cards for several jobs as one PDF, rendered in the background; the page polls its status.

    The finished PDF is kept on the row, not on one server's disk, so that any app server can hand
    it over; batches are kept ``KEPT_FOR`` and then removed when a new batch starts."""

    # A batch of 200 cards renders in well under a minute; one still unfinished after this was
    # left by a server that stopped (a restart, a recycled worker) and will not finish.
    STALLED_AFTER = datetime.timedelta(minutes=10)
    KEPT_FOR = datetime.timedelta(days=30)

    class State(models.TextChoices):
        WAITING = "waiting", "Waiting"
        RENDERING = "rendering", "Rendering"
        DONE = "done", "Done"
        FAILED = "failed", "Failed"

    created_at = models.DateTimeField()
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    numbers = models.JSONField(help_text="The job numbers, in print order.")
    base_url = models.CharField(max_length=200)
    state = models.CharField(max_length=20, choices=State.choices, default=State.WAITING)
    done_count = models.PositiveIntegerField(default=0)
    file_name = models.CharField(max_length=200, blank=True)
    pdf = models.BinaryField(blank=True, editable=False, help_text="The finished PDF.")
    error = models.CharField(max_length=500, blank=True)
    finished_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        ordering = ["-created_at", "-id"]
        permissions = [
            ("print_job_card", "Can print job cards"),
            ("print_service_report", "Can print service reports"),
        ]

    def __str__(self) -> str:
        return f"Job cards, {len(self.numbers)} jobs, {self.created_at:%Y-%m-%d %H:%M}"

    @property
    def total(self) -> int:
        return len(self.numbers)

    @property
    def finished(self) -> bool:
        return self.state in (self.State.DONE, self.State.FAILED)

    @property
    def stalled(self) -> bool:
        """Unfinished long after it started: the server rendering it stopped; print it again."""
        return not self.finished and timezone.now() - self.created_at > self.STALLED_AFTER
