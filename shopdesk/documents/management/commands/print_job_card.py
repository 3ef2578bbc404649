from pathlib import Path

from django.core.management.base import BaseCommand, CommandError

from shopdesk.documents.renderer import render_document
from shopdesk.workshop.models import WorkOrder


class Command(BaseCommand):
    help = "Write a work order's job card as a PDF."

    def add_arguments(self, parser):  # type: ignore[no-untyped-def]
        parser.add_argument("number")
        parser.add_argument("-o", "--output")

    def handle(self, *args, number: str, output: str | None, **options) -> None:  # type: ignore[no-untyped-def]
        work_order = WorkOrder.objects.filter(number=number).first()
        if work_order is None:
            raise CommandError(f"No job numbered {number}.")
        document = render_document(work_order, "job_card")
        path = Path(output or document.filename)
        path.write_bytes(document.content)
        self.stdout.write(str(path))
