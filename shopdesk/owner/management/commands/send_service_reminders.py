"""``manage.py send_service_reminders [--dry-run]``: the reminders that are due, each sent once. For cron."""

from __future__ import annotations

from typing import Any

from django.core.management.base import BaseCommand, CommandError, CommandParser
from django.utils.formats import date_format

from shopdesk.owner.services import reminders_send


class Command(BaseCommand):
    help = (
        "Email a reminder for every service due within SHOP_REMINDER_SOON_DAYS (or overdue) to customers "
        "who agreed to reminders: one per unit, service and due date, recorded as it goes. Safe to run "
        "again, and from two machines at once."
    )

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("--dry-run", action="store_true", help="List what would be sent; send nothing.")

    def handle(self, *args: Any, **options: Any) -> None:
        try:
            run = reminders_send(dry_run=options["dry_run"])
        except Exception as error:  # the mail server: what was sent is recorded, the rest goes next run
            raise CommandError(
                f"Stopped: the mail did not go ({error.__class__.__name__}: {error}). Reminders sent "
                "before this are recorded; run the command again to send the rest."
            ) from error
        if options["dry_run"]:
            for due in run.would_send:
                self.stdout.write(
                    f"would send: {due.unit.customer.email} · {due.unit} · {due.service_type.name} "
                    f"due {date_format(due.next_due_on, 'j M Y')}"
                )
            self.stdout.write(f"Dry run: {len(run.would_send)} reminders would go; nothing was sent.")
            return
        message = f"Sent {len(run.sent)} reminders."
        if run.skipped:
            message += f" {run.skipped} were being sent by another run at the same time."
        self.stdout.write(self.style.SUCCESS(message))
