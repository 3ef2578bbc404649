"""``manage.py seed_demo``: load the demo shop, Hollow Pine Suspension Works, once."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from django.core.exceptions import ValidationError
from django.core.management.base import BaseCommand, CommandError, CommandParser

from shopdesk.shop.demo import DEMO_FILE, DemoDocumentError, DemoResult, demo_document_read, demo_shop_load


class Command(BaseCommand):
    help = (
        "Load the demo shop (spec sheets, customers, units, work orders in every status) through the "
        "shop's own rules, with one user per role. Safe to run again: a loaded demo is left as it is."
    )

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument(
            "--file", type=Path, default=DEMO_FILE, help=f"The demo document (default: {DEMO_FILE})."
        )

    def handle(self, *args: Any, **options: Any) -> None:
        path: Path = options["file"]
        if not path.is_file():
            raise CommandError(f"No demo document at {path}.")
        try:
            result = demo_shop_load(document=demo_document_read(path))
        except (DemoDocumentError, ValidationError) as error:
            raise CommandError(f"The demo shop was not loaded (nothing was saved): {error}") from error
        self.report(result)

    def report(self, result: DemoResult) -> None:
        if result.loaded:
            made = ", ".join(f"{count} {what}" for what, count in result.counts.items())
            self.stdout.write(self.style.SUCCESS(f"Loaded the demo shop: {made}."))
        else:
            self.stdout.write("The demo shop is already loaded.")
        for user in result.users:
            self.stdout.write(f"Sign in as {user.role}: {user.username} / {user.password}")
