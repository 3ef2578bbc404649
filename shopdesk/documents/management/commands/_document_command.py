"""What print_job_card and print_service_report share: find the job, render, write the file."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from django.core.management.base import BaseCommand, CommandError, CommandParser

from shopdesk.documents.renderer import render_document
from shopdesk.documents.selectors import DocumentRefused
from shopdesk.workshop.models import WorkOrder


class DocumentCommand(BaseCommand):
    kind = ""

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("number", help="The job number, e.g. 2026-0042.")
        parser.add_argument("-o", "--output", help="Where to write the PDF (default: its own file name).")

    def handle(self, *args: Any, number: str, output: str | None, **options: Any) -> None:
        work_order = (
            WorkOrder.objects.filter(number=number.strip())
            .select_related("customer", "unit__unit_model", "checked_in_by", "arrival")
            .first()
        )
        if work_order is None:
            raise CommandError(f"No job numbered {number}.")
        try:
            document = render_document(work_order, self.kind)
        except DocumentRefused as refusal:
            raise CommandError(str(refusal)) from None
        path = Path(output or document.filename)
        try:
            path.write_bytes(document.content)
        except OSError as error:
            raise CommandError(f"Could not write {path}: {error.strerror}.") from None
        self.stdout.write(str(path))
